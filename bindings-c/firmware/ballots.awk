# Random ballots for tally (one a line), fixed seed: run as
#   awk -v members=N -v count=K -v seed=S -f ballots.awk
# Mostly valid two-state index lists and four-state `=` lines, with a few
# of each kind of bad ballot (an index out of range, a member twice, a
# letter that is not a vote, text that is not a list) so that the error
# paths are compared too.
BEGIN {
    srand(seed);
    for (b = 0; b < count; b++) {
        r = rand();
        if (r < 0.45) {
            line = "";
            for (i = 0; i < members; i++)
                if (rand() < 0.55) line = line (line == "" ? "" : (rand() < 0.5 ? " " : ",")) i;
            print line;
        } else if (r < 0.9) {
            line = "=";
            n = members - int(rand() * 3); # trailing members left out are absent
            if (n < 0) n = 0;
            for (i = 0; i < n; i++) {
                v = rand();
                line = line (v < 0.5 ? "Y" : v < 0.75 ? "N" : v < 0.9 ? "A" : "-");
            }
            print line;
        } else if (r < 0.93) {
            print int(rand() * members) " " members + int(rand() * 5);
        } else if (r < 0.96) {
            m = int(rand() * members);
            print m "," m;
        } else if (r < 0.98) {
            print "=YNX";
        } else {
            print "all of them";
        }
    }
}

/*
 * tally: a firmware-style example of the clout C ABI.
 *
 * Loads a compiled rule image into static memory and decides the ballots
 * read from standard input, one per line. A two-state ballot lists the
 * indices of the members voting yes, separated by spaces or commas (an
 * empty line is a ballot with no yes votes). A four-state ballot starts
 * with `=` and gives one letter per member in order: Y (yes), N (no),
 * A (abstain) or - (absent); members beyond the letters are absent. Every
 * buffer is static: the program never calls malloc, and gives stdio static
 * buffers so the C library does not either.
 *
 *   tally RULE.img < ballots.txt
 *
 * Output, one line per ballot:
 *   ballot N: passes; sums S0 S1 ...; met M0 M1 ...          (two states)
 *   ballot N: passes; yes/no/abstain Y/N/A ...; met M0 ...   (four states)
 *   ballot N: rejected: REASON
 * Exit status: 0, or 1 when some ballot was rejected, or 2 when the image
 * cannot be loaded. Built and run by bindings-c/tests/abi.rs.
 *
 * Firmware builds (bindings-c/firmware/) compile the image in instead of
 * reading a file: define TALLY_IMAGE_HEADER as a header written by
 * `clout compile --c-header` (the array `rule_image`, RULE_IMAGE_LEN and
 * RULE_WORDS), and MAX_YES / MAX_LINE to shrink the buffers.
 */
#ifndef TALLY_IMAGE_HEADER
#define _POSIX_C_SOURCE 200809L
#include <fcntl.h>
#include <unistd.h>
#endif

#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "clout.h"

#define MAX_CONDITIONS 64
#ifndef MAX_YES
#define MAX_YES 4096
#endif
#ifndef MAX_LINE
#define MAX_LINE 16384
#endif

#ifdef TALLY_IMAGE_HEADER
#include TALLY_IMAGE_HEADER
static uint64_t rule_memory[RULE_WORDS]; /* exactly what this image needs */
#else
#define MAX_IMAGE_BYTES 65536
#define MAX_WEIGHTS (64 * 64) /* members x attributes of the largest rule held */
static uint8_t image[MAX_IMAGE_BYTES];
static uint64_t rule_memory[CLOUT_RULE_HEADER_WORDS + MAX_WEIGHTS];
#endif
static uint32_t yes[MAX_YES];
static uint64_t sums[MAX_CONDITIONS];
static uint8_t votes[MAX_YES];
static clout_group_sums group_sums[MAX_CONDITIONS];
static char line[MAX_LINE];
static char message[CLOUT_MESSAGE_MAX];
static char stdin_buffer[4096], stdout_buffer[4096];

/* The decimal digits of `value` (static storage, overwritten by the next
 * call). Small C libraries for firmware often print no 64-bit integers
 * with printf, so the program writes them itself. */
static const char *u64_text(uint64_t value) {
    static char text[21];
    char *p = text + sizeof text - 1;
    *p = '\0';
    do {
        *--p = (char)('0' + value % 10);
        value /= 10;
    } while (value != 0);
    return p;
}

/* The message of a result code (static storage). */
static const char *describe(clout_result code) {
    size_t written;
    if (clout_result_message(code, message, sizeof message, &written) != CLOUT_RESULT_OK) return "?";
    return message;
}

#ifndef TALLY_IMAGE_HEADER
/* Reads the whole file into image[]; returns its length, or -1. */
static long read_image(const char *path) {
    size_t len = 0;
    int fd = open(path, O_RDONLY);
    if (fd < 0) return -1;
    for (;;) {
        ssize_t got = read(fd, image + len, sizeof image - len);
        if (got < 0) {
            close(fd);
            return -1;
        }
        if (got == 0) break;
        len += (size_t)got;
        if (len == sizeof image) { /* full: the file must end here */
            uint8_t extra;
            if (read(fd, &extra, 1) != 0) {
                close(fd);
                return -1;
            }
            break;
        }
    }
    close(fd);
    return (long)len;
}
#endif

/* Parses member indices from line[] into yes[]; returns their number, or
 * -1 for text that is not an index list. */
static long parse_ballot(void) {
    size_t n = 0;
    const char *p = line;
    while (*p != '\0' && *p != '\n') {
        if (*p == ' ' || *p == '\t' || *p == ',' || *p == '\r') {
            p++;
            continue;
        }
        if (*p < '0' || *p > '9' || n == MAX_YES) return -1;
        {
            uint64_t value = 0;
            while (*p >= '0' && *p <= '9') {
                value = value * 10 + (uint64_t)(*p - '0');
                if (value > UINT32_MAX) return -1;
                p++;
            }
            yes[n++] = (uint32_t)value;
        }
    }
    return (long)n;
}

/* Parses `=YNA-...` from line[] into votes[]; returns the number of
 * members given, or -1 for a letter that is not a vote. */
static long parse_votes(void) {
    size_t n = 0;
    const char *p = line + 1;
    while (*p != '\0' && *p != '\n' && *p != '\r') {
        uint8_t v;
        switch (*p) {
        case 'Y': v = CLOUT_VOTE_YES; break;
        case 'N': v = CLOUT_VOTE_NO; break;
        case 'A': v = CLOUT_VOTE_ABSTAIN; break;
        case '-': v = CLOUT_VOTE_ABSENT; break;
        case ' ': p++; continue;
        default: return -1;
        }
        if (n == MAX_YES) return -1;
        votes[n++] = v;
        p++;
    }
    return (long)n;
}

/* Decides one four-state ballot from line[] and prints its line. */
static int decide_votes(const clout_rule *rule, uint32_t members, unsigned long ballot) {
    clout_outcome outcome;
    clout_result code;
    uint32_t k;
    long count = parse_votes();
    if (count < 0) {
        printf("ballot %lu: rejected: a vote letter other than Y, N, A or -\n", ballot);
        return 1;
    }
    while ((uint32_t)count < members && count < MAX_YES) votes[count++] = CLOUT_VOTE_ABSENT;
    code = clout_decide_votes(rule, votes, (size_t)count, group_sums, MAX_CONDITIONS, &outcome);
    if (code != CLOUT_RESULT_OK) {
        printf("ballot %lu: rejected: %s\n", ballot, describe(code));
        return 1;
    }
    printf("ballot %lu: %s; yes/no/abstain", ballot, outcome.passed ? "passes" : "fails");
    for (k = 0; k < outcome.conditions; k++) {
        printf(" %s", u64_text(group_sums[k].yes));
        printf("/%s", u64_text(group_sums[k].no));
        printf("/%s", u64_text(group_sums[k].abstain));
    }
    printf("; met");
    for (k = 0; k < outcome.conditions; k++) printf(" %u", (unsigned)((outcome.met >> k) & 1));
    printf("\n");
    return 0;
}

int main(int argc, char **argv) {
    const clout_rule *rule = NULL;
    clout_rule_sizes info;
    clout_outcome outcome;
    clout_result code;
    long image_len, count;
    unsigned long ballot = 0;
    int rejected = 0;
    uint32_t k;

    setvbuf(stdin, stdin_buffer, _IOFBF, sizeof stdin_buffer);
    setvbuf(stdout, stdout_buffer, _IOLBF, sizeof stdout_buffer);
#ifdef TALLY_IMAGE_HEADER
    const uint8_t *image = rule_image;
    const char *source = "the built-in image";
    image_len = (long)RULE_IMAGE_LEN;
    (void)argc;
    (void)argv;
#else
    const char *source = argc == 2 ? argv[1] : "";
    if (argc != 2) {
        fprintf(stderr, "usage: %s RULE.img < ballots\n", argv[0]);
        return 2;
    }
    image_len = read_image(argv[1]);
    if (image_len < 0) {
        fprintf(stderr, "tally: cannot read %s (missing, or larger than %d bytes)\n", argv[1], MAX_IMAGE_BYTES);
        return 2;
    }
#endif
    code = clout_rule_load(image, (size_t)image_len, rule_memory, sizeof rule_memory / sizeof rule_memory[0],
                           &rule);
    if (code == CLOUT_RESULT_OK) code = clout_rule_info(rule, &info);
    if (code != CLOUT_RESULT_OK) {
        fprintf(stderr, "tally: cannot load %s: %s\n", source, describe(code));
        return 2;
    }
    printf("rule: %u members, %u weight attributes, %u conditions\n", (unsigned)info.members,
           (unsigned)info.attributes, (unsigned)info.conditions);

    while (fgets(line, sizeof line, stdin) != NULL) {
        ballot++;
        if (strchr(line, '\n') == NULL && !feof(stdin)) {
            int c;
            while ((c = getchar()) != '\n' && c != EOF) {
            }
            printf("ballot %lu: rejected: line longer than %d bytes\n", ballot, MAX_LINE - 1);
            rejected = 1;
            continue;
        }
        if (line[0] == '=') {
            rejected |= decide_votes(rule, info.members, ballot);
            continue;
        }
        count = parse_ballot();
        if (count < 0) {
            printf("ballot %lu: rejected: not a list of member indices\n", ballot);
            rejected = 1;
            continue;
        }
        code = clout_decide_members(rule, yes, (size_t)count, sums, MAX_CONDITIONS, &outcome);
        if (code != CLOUT_RESULT_OK) {
            printf("ballot %lu: rejected: %s\n", ballot, describe(code));
            rejected = 1;
            continue;
        }
        printf("ballot %lu: %s; sums", ballot, outcome.passed ? "passes" : "fails");
        for (k = 0; k < outcome.conditions; k++) printf(" %s", u64_text(sums[k]));
        printf("; met");
        for (k = 0; k < outcome.conditions; k++) printf(" %u", (unsigned)((outcome.met >> k) & 1));
        printf("\n");
    }
    return rejected ? 1 : 0;
}

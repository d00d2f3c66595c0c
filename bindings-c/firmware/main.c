/*
 * The tally example (../examples/tally.c) as Cortex-M4 firmware: the rule
 * image is compiled into flash (TALLY_IMAGE_HEADER, written by
 * `clout compile --c-header`), ballots come from standard input through
 * semihosting, decisions go to standard output, line for line what the
 * host build prints. Afterwards the firmware measures the stack each C ABI
 * call needs, on a painted stack, and prints it to standard error:
 *
 *   stack: clout_rule_load N, clout_decide N, ... (bytes)
 *
 * Before anything else the firmware compares the image's roster digest
 * with the one the header was written with (rule_roster_digest), as a
 * device refuses an image compiled for another roster.
 *
 * Built and run by run.sh under qemu-system-arm (mps2-an386).
 */
#define main tally_main
#include "../examples/tally.c"
#undef main

#define PAINT 0xA5u
#define PAINTED_BYTES 65536u

static uint64_t measure_words[1];
static uint32_t measure_members[64];
static uint8_t measure_votes[64];
static uint32_t measure_critical[64];
static const clout_rule *measure_rule;
static uint32_t measure_count;

static void call_load(void) {
    const clout_rule *r;
    (void)clout_rule_load(rule_image, RULE_IMAGE_LEN, rule_memory, RULE_WORDS, &r);
}
static void call_decide(void) {
    clout_outcome o;
    (void)clout_decide(measure_rule, measure_words, 1, sums, MAX_CONDITIONS, &o);
}
static void call_decide_members(void) {
    clout_outcome o;
    (void)clout_decide_members(measure_rule, measure_members, measure_count, sums, MAX_CONDITIONS, &o);
}
static void call_decide_votes(void) {
    clout_outcome o;
    (void)clout_decide_votes(measure_rule, measure_votes, measure_count, group_sums, MAX_CONDITIONS, &o);
}
static void call_critical(void) {
    size_t n;
    (void)clout_critical(measure_rule, measure_words, 1, measure_critical, 64, &n);
}

/* Paints PAINTED_BYTES below the stack pointer, runs `call`, and returns
 * how far below the stack pointer it wrote: the stack `call` needs,
 * including the few bytes of its caller frame above. Nothing else runs
 * meanwhile (no interrupt is enabled). */
static uint32_t __attribute__((noinline)) stack_needed(void (*call)(void)) {
    volatile uint8_t *top;
    uint32_t i;
    __asm__ volatile("mov %0, sp" : "=r"(top));
    for (i = 1; i <= PAINTED_BYTES; i++) top[-(int32_t)i] = PAINT;
    call();
    for (i = PAINTED_BYTES; i > 0; i--)
        if (top[-(int32_t)i] != PAINT) return i;
    return 0;
}

int main(void) {
    static char *argv[] = {"tally", NULL};
    uint8_t digest[CLOUT_ROSTER_DIGEST_LEN];
    clout_rule_sizes sizes;
    uint32_t i, members;
    int status;

    if (clout_image_roster_digest(rule_image, RULE_IMAGE_LEN, digest, sizeof digest) != CLOUT_RESULT_OK ||
        memcmp(digest, rule_roster_digest, sizeof digest) != 0) {
        fprintf(stderr, "firmware: the image was compiled for another roster\n");
        return 2;
    }
    status = tally_main(1, argv);

    if (clout_rule_load(rule_image, RULE_IMAGE_LEN, rule_memory, RULE_WORDS, &measure_rule) != CLOUT_RESULT_OK ||
        clout_rule_info(measure_rule, &sizes) != CLOUT_RESULT_OK)
        return 2;
    /* The largest ballot: every member votes yes. */
    members = sizes.members < 64 ? sizes.members : 64;
    measure_words[0] = members == 64 ? UINT64_MAX : (((uint64_t)1 << members) - 1);
    for (i = 0; i < members; i++) {
        measure_members[i] = i;
        measure_votes[i] = CLOUT_VOTE_YES;
    }
    measure_count = members;
    fprintf(stderr, "stack: clout_rule_load %lu, clout_decide %lu, clout_decide_members %lu, ",
            (unsigned long)stack_needed(call_load), (unsigned long)stack_needed(call_decide),
            (unsigned long)stack_needed(call_decide_members));
    fprintf(stderr, "clout_decide_votes %lu, clout_critical %lu\n", (unsigned long)stack_needed(call_decide_votes),
            (unsigned long)stack_needed(call_critical));
    return status;
}

/*
 * C test suite of the clout C ABI. Built and run by bindings-c/tests/abi.rs
 * (cargo test), which writes the rule images into the folder given as the
 * only argument. One test_* function per case; prints one line per test and
 * a closing "c: N passed, M failed" line; exits 0 only when all pass.
 */
#define _GNU_SOURCE /* ucontext, for the painted-stack measurement */

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <ucontext.h>

#include "clout.h"

static const char *image_dir;
static int under_valgrind; /* second argument "valgrind": skip the stack measurement */

#define CHECK(cond)                                                                 \
    do {                                                                            \
        if (!(cond)) {                                                              \
            fprintf(stderr, "%s:%d: check failed: %s\n", __FILE__, __LINE__, #cond); \
            return 0;                                                               \
        }                                                                           \
    } while (0)

#define CHECK_CODE(call, expected)                                                          \
    do {                                                                                    \
        clout_result got_ = (call);                                                         \
        if (got_ != (expected)) {                                                           \
            fprintf(stderr, "%s:%d: %s returned %u, expected %u (%s)\n", __FILE__, __LINE__, \
                    #call, (unsigned)got_, (unsigned)(expected), #expected);                \
            return 0;                                                                       \
        }                                                                                   \
    } while (0)

static int close_to(double x, double y) { return fabs(x - y) < 1e-12; }

/* Reads a whole image file into buf; returns its length, or 0 on failure. */
static size_t read_image(const char *name, uint8_t *buf, size_t cap) {
    char path[4096];
    FILE *f;
    size_t len;
    snprintf(path, sizeof path, "%s/%s", image_dir, name);
    f = fopen(path, "rb");
    if (f == NULL) {
        fprintf(stderr, "cannot open %s\n", path);
        return 0;
    }
    len = fread(buf, 1, cap, f);
    if (!feof(f) && fgetc(f) != EOF) {
        fprintf(stderr, "%s is larger than %zu bytes\n", path, cap);
        len = 0;
    }
    fclose(f);
    return len;
}

static uint8_t image[1 << 16];
static size_t image_len;

/* Loads an image file into a library-allocated rule. */
static clout_rule *load(const char *name) {
    clout_rule *rule = NULL;
    image_len = read_image(name, image, sizeof image);
    if (image_len == 0 || clout_rule_new(image, image_len, &rule) != CLOUT_RESULT_OK) {
        fprintf(stderr, "cannot load %s\n", name);
        return NULL;
    }
    return rule;
}

static uint64_t bits(const unsigned *members, size_t n) {
    uint64_t w = 0;
    size_t i;
    for (i = 0; i < n; i++) w |= (uint64_t)1 << members[i];
    return w;
}

/* [12; 4,4,4,2,2,1]: the Council of Ministers of the EEC, 1958.
 * Felsenthal & Machover 1998, The Measurement of Voting Power, ch. 3:
 * swings 10,10,10,6,6,0; normalized Banzhaf 5/21,5/21,5/21,3/21,3/21,0;
 * Shapley-Shubik 7/30,7/30,7/30,3/20,3/20,0. */
static int test_eec_power(void) {
    static const uint64_t swings_expected[6] = {10, 10, 10, 6, 6, 0};
    static const double banzhaf_expected[6] = {5.0 / 21, 5.0 / 21, 5.0 / 21, 3.0 / 21, 3.0 / 21, 0};
    static const double ss_expected[6] = {7.0 / 30, 7.0 / 30, 7.0 / 30, 3.0 / 20, 3.0 / 20, 0};
    uint64_t swings[6];
    double banzhaf[6], ss[6];
    int i;
    clout_rule *rule = load("eec.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_power(rule, swings, banzhaf, ss, 6), CLOUT_RESULT_OK);
    for (i = 0; i < 6; i++) {
        CHECK(swings[i] == swings_expected[i]);
        CHECK(close_to(banzhaf[i], banzhaf_expected[i]));
        CHECK(close_to(ss[i], ss_expected[i]));
    }
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* [39; 7,7,7,7,7,1 x10]: the UN Security Council after 1965.
 * Felsenthal & Machover 1998, The Measurement of Voting Power; Taylor &
 * Zwicker 1999, Simple Games: swings 848 (permanent) and 84 (elected);
 * Shapley-Shubik 421/2145 and 4/2145. */
static int test_committee_power(void) {
    uint64_t swings[15];
    double banzhaf[15], ss[15];
    int i;
    clout_rule *rule = load("committee.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_power(rule, swings, banzhaf, ss, 15), CLOUT_RESULT_OK);
    for (i = 0; i < 15; i++) {
        CHECK(swings[i] == (i < 5 ? 848u : 84u));
        CHECK(close_to(ss[i], i < 5 ? 421.0 / 2145 : 4.0 / 2145));
        CHECK(close_to(banzhaf[i], (double)swings[i] / (5 * 848 + 10 * 84)));
    }
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* Outcomes of [12; 4,4,4,2,2,1] by hand: 4+4+2+2 = 12 passes, 4+4+1 = 9 fails. */
static int test_eec_decide(void) {
    static const unsigned pass[4] = {0, 1, 3, 4};
    static const uint32_t pass_list[4] = {4, 0, 3, 1};
    static const unsigned fail[3] = {0, 1, 5};
    uint64_t yes, sums[1];
    clout_outcome out;
    clout_rule *rule = load("eec.img");
    CHECK(rule != NULL);
    yes = bits(pass, 4);
    CHECK_CODE(clout_decide(rule, &yes, 1, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && out.conditions == 1 && out.met == 1 && sums[0] == 12);
    CHECK_CODE(clout_decide_members(rule, pass_list, 4, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && sums[0] == 12);
    yes = bits(fail, 3);
    CHECK_CODE(clout_decide(rule, &yes, 1, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && out.met == 0 && sums[0] == 9);
    CHECK_CODE(clout_decide_members(rule, pass_list, 0, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && sums[0] == 0);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* Critical members of [12; 4,4,4,2,2,1] by hand: in {0,1,3,4} (exactly 12)
 * every yes-voter; in the failing {0,1} (8) only member 2, whose 4 seats
 * would make 12. */
static int test_eec_critical(void) {
    static const unsigned tight[4] = {0, 1, 3, 4};
    static const unsigned short_of[2] = {0, 1};
    uint64_t yes;
    uint32_t crit[6];
    size_t count = 99;
    clout_rule *rule = load("eec.img");
    CHECK(rule != NULL);
    yes = bits(tight, 4);
    CHECK_CODE(clout_critical(rule, &yes, 1, crit, 6, &count), CLOUT_RESULT_OK);
    CHECK(count == 4 && crit[0] == 0 && crit[1] == 1 && crit[2] == 3 && crit[3] == 4);
    yes = bits(short_of, 2);
    CHECK_CODE(clout_critical(rule, &yes, 1, crit, 6, &count), CLOUT_RESULT_OK);
    CHECK(count == 1 && crit[0] == 2);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* A fictional allotment board (seats 3,2,2,1,1; conditions seats >= 5,
 * plots >= 3, seats >= 8; passes with (c0 and c1) or c2), by hand. */
static int test_compound_rule_sums(void) {
    static const uint32_t two_big[2] = {0, 1};       /* seats 5, plots 2 */
    static const uint32_t three[3] = {0, 1, 3};      /* seats 6, plots 3 */
    static const uint32_t four_small[4] = {1, 2, 3, 4}; /* seats 6, plots 4 */
    uint64_t sums[3];
    clout_outcome out;
    clout_rule_sizes info;
    clout_rule *rule = load("board.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_rule_info(rule, &info), CLOUT_RESULT_OK);
    CHECK(info.members == 5 && info.attributes == 2 && info.conditions == 3 && info.nodes == 5);
    CHECK_CODE(clout_decide_members(rule, two_big, 2, sums, 3, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && out.met == 1 && sums[0] == 5 && sums[1] == 2 && sums[2] == 5);
    CHECK_CODE(clout_decide_members(rule, three, 3, sums, 3, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && out.met == 3 && sums[0] == 6 && sums[1] == 3);
    CHECK_CODE(clout_decide_members(rule, four_small, 4, sums, 3, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && out.met == 3 && sums[1] == 4);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* A fictional majority of those present: more yes than no (Y - N >= 1) over
 * weights 2, 1, 1, as a four-state condition. By hand: yes 2, no 1, abstain 1
 * gives 2 - 1 >= 1 (passes); no 2 against yes 2 gives 0 (fails); yes 2 with
 * the rest absent gives 2 (passes). As a two-state ballot member 0 alone
 * faces 2 against (fails), which is what clout_decide reports. */
static int test_four_state_votes(void) {
    static const uint8_t split[3] = {CLOUT_VOTE_YES, CLOUT_VOTE_NO, CLOUT_VOTE_ABSTAIN};
    static const uint8_t tied[3] = {CLOUT_VOTE_NO, CLOUT_VOTE_YES, CLOUT_VOTE_YES};
    static const uint8_t alone[3] = {CLOUT_VOTE_YES, CLOUT_VOTE_ABSENT, CLOUT_VOTE_ABSENT};
    static const uint8_t bad[3] = {CLOUT_VOTE_YES, 7, CLOUT_VOTE_NO};
    static const uint8_t four[4] = {CLOUT_VOTE_YES, CLOUT_VOTE_NO, CLOUT_VOTE_NO, CLOUT_VOTE_NO};
    clout_group_sums sums[1];
    uint64_t yes = 1, binary[1];
    clout_outcome out;
    clout_rule *rule = load("present.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_decide_votes(rule, split, 3, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && out.met == 1 && sums[0].yes == 2 && sums[0].no == 1 && sums[0].abstain == 1);
    CHECK_CODE(clout_decide_votes(rule, tied, 3, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && sums[0].yes == 2 && sums[0].no == 2 && sums[0].abstain == 0);
    CHECK_CODE(clout_decide_votes(rule, alone, 3, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && sums[0].yes == 2 && sums[0].no == 0);
    CHECK_CODE(clout_decide(rule, &yes, 1, binary, 1, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && binary[0] == 2);
    CHECK_CODE(clout_decide_votes(rule, bad, 3, sums, 1, &out), CLOUT_RESULT_BALLOT_VOTE);
    CHECK_CODE(clout_decide_votes(rule, split, 2, sums, 1, &out), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK_CODE(clout_decide_votes(rule, four, 4, sums, 1, &out), CLOUT_RESULT_BALLOT_MEMBER);
    CHECK_CODE(clout_decide_votes(rule, split, 3, sums, 0, &out), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK_CODE(clout_decide_votes(NULL, split, 3, sums, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_votes(rule, NULL, 3, sums, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_votes(rule, split, 3, NULL, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_votes(rule, split, 3, sums, 1, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* The no-heap path: rule memory is a static array sized by the header's
 * constant; such a rule cannot be passed to clout_rule_free. */
static int test_caller_memory(void) {
    static uint64_t mem[CLOUT_RULE_HEADER_WORDS + 10];
    static const uint32_t three[3] = {0, 1, 3};
    const clout_rule *rule = NULL;
    size_t words = 0;
    uint64_t sums[3];
    clout_outcome out;
    image_len = read_image("board.img", image, sizeof image);
    CHECK(image_len > 0);
    CHECK_CODE(clout_rule_words(image, image_len, &words), CLOUT_RESULT_OK);
    CHECK(words == CLOUT_RULE_HEADER_WORDS + 5 * 2);
    CHECK_CODE(clout_rule_load(image, image_len, mem, words - 1, &rule), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK(rule == NULL);
    CHECK_CODE(clout_rule_load(image, image_len, mem, words, &rule), CLOUT_RESULT_OK);
    CHECK(rule != NULL);
    memset(image, 0, image_len); /* the image is no longer needed */
    CHECK_CODE(clout_decide_members(rule, three, 3, sums, 3, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && sums[0] == 6 && sums[1] == 3 && sums[2] == 6);
    CHECK_CODE(clout_rule_free((clout_rule *)rule), CLOUT_RESULT_NOT_HEAP_RULE);
    return 1;
}

/* A rule of 100 members ([51; 1 x100]) takes a two-word ballot. */
static int test_wide_rule(void) {
    uint64_t yes[2] = {~(uint64_t)0, 0};
    uint64_t sums[1], swings[100];
    double banzhaf[100], ss[100];
    uint32_t crit[100];
    size_t count = 0;
    clout_outcome out;
    clout_rule *rule = load("assembly.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_decide(rule, yes, 2, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(out.passed && sums[0] == 64);
    yes[0] = ((uint64_t)1 << 50) - 1; /* 50 yes */
    CHECK_CODE(clout_decide(rule, yes, 2, sums, 1, &out), CLOUT_RESULT_OK);
    CHECK(!out.passed && sums[0] == 50);
    /* every no-voter would make the 51st yes */
    CHECK_CODE(clout_critical(rule, yes, 2, crit, 100, &count), CLOUT_RESULT_OK);
    CHECK(count == 50 && crit[0] == 50 && crit[49] == 99);
    CHECK_CODE(clout_decide(rule, yes, 1, sums, 1, &out), CLOUT_RESULT_BUFFER_TOO_SMALL);
    yes[1] = (uint64_t)1 << 36; /* member 100 does not exist */
    CHECK_CODE(clout_decide(rule, yes, 2, sums, 1, &out), CLOUT_RESULT_BALLOT_MEMBER);
    CHECK_CODE(clout_power(rule, swings, banzhaf, ss, 100), CLOUT_RESULT_POWER_CAPACITY);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* 64 members with distinct weights near 2^50: beyond the exact engines' budget. */
static int test_too_costly(void) {
    uint64_t swings[64];
    double banzhaf[64], ss[64];
    clout_rule *rule = load("costly.img");
    CHECK(rule != NULL);
    swings[0] = 77;
    CHECK_CODE(clout_power(rule, swings, banzhaf, ss, 64), CLOUT_RESULT_TOO_COSTLY);
    CHECK(swings[0] == 77); /* untouched on failure */
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

/* Each kind of damage has its own code (docs/image-format.md, "Checks"). */
static int test_damaged_images(void) {
    static const struct {
        const char *file;
        clout_result code;
    } cases[] = {
        {"damaged-magic.img", CLOUT_RESULT_IMAGE_MAGIC},
        {"damaged-truncated.img", CLOUT_RESULT_IMAGE_TRUNCATED},
        {"damaged-version.img", CLOUT_RESULT_IMAGE_VERSION},
        {"damaged-trailing.img", CLOUT_RESULT_IMAGE_TRAILING_BYTES},
        {"damaged-checksum.img", CLOUT_RESULT_IMAGE_CHECKSUM},
        {"damaged-width.img", CLOUT_RESULT_IMAGE_WIDTH},
        {"damaged-layout.img", CLOUT_RESULT_IMAGE_LAYOUT},
        {"damaged-node-kind.img", CLOUT_RESULT_IMAGE_NODE_KIND},
        {"damaged-condition-kind.img", CLOUT_RESULT_IMAGE_CONDITION_KIND},
        {"damaged-no-members.img", CLOUT_RESULT_NO_MEMBERS},
        {"damaged-too-many-members.img", CLOUT_RESULT_TOO_MANY_MEMBERS},
        {"damaged-too-many-attributes.img", CLOUT_RESULT_TOO_MANY_ATTRIBUTES},
        {"damaged-too-many-conditions.img", CLOUT_RESULT_TOO_MANY_CONDITIONS},
        {"damaged-too-many-nodes.img", CLOUT_RESULT_TOO_MANY_NODES},
        {"damaged-too-deep.img", CLOUT_RESULT_TOO_DEEP},
        {"damaged-weight-sum.img", CLOUT_RESULT_WEIGHT_SUM_OVERFLOW},
        {"damaged-unknown-attribute.img", CLOUT_RESULT_UNKNOWN_ATTRIBUTE},
        {"damaged-unknown-condition.img", CLOUT_RESULT_UNKNOWN_CONDITION},
        {"damaged-malformed-formula.img", CLOUT_RESULT_MALFORMED_FORMULA},
        {"damaged-empty-operator.img", CLOUT_RESULT_EMPTY_OPERATOR},
        {"damaged-non-monotone.img", CLOUT_RESULT_NON_MONOTONE},
    };
    static uint64_t mem[CLOUT_RULE_HEADER_WORDS + 64];
    size_t n = sizeof cases / sizeof cases[0], i, j, words, written;
    char text[CLOUT_DESCRIPTION_MAX];
    for (i = 0; i < n; i++) {
        clout_rule *rule = (clout_rule *)&n; /* a sentinel: must stay untouched */
        const clout_rule *loaded = NULL;
        for (j = 0; j < i; j++) CHECK(cases[j].code != cases[i].code);
        image_len = read_image(cases[i].file, image, sizeof image);
        CHECK(image_len > 0);
        words = 12345;
        CHECK_CODE(clout_image_check(image, image_len), cases[i].code);
        CHECK_CODE(clout_rule_words(image, image_len, &words), cases[i].code);
        CHECK(words == 12345);
        CHECK_CODE(clout_rule_new(image, image_len, &rule), cases[i].code);
        CHECK(rule == (clout_rule *)&n);
        CHECK_CODE(clout_rule_load(image, image_len, mem, sizeof mem / sizeof mem[0], &loaded), cases[i].code);
        CHECK(loaded == NULL);
        CHECK_CODE(clout_image_describe(image, image_len, text, sizeof text, &written), CLOUT_RESULT_OK);
        CHECK(strlen(text) == written);
        CHECK(strstr(text, "damaged: ") != NULL || strstr(text, "unreadable: ") != NULL);
    }
    return 1;
}

static int test_describe(void) {
    char text[CLOUT_DESCRIPTION_MAX], tiny[8] = "";
    size_t written = 0, untouched = 7;
    image_len = read_image("eec.img", image, sizeof image);
    CHECK(image_len == 81);
    CHECK_CODE(clout_image_check(image, image_len), CLOUT_RESULT_OK);
    CHECK_CODE(clout_image_describe(image, image_len, text, sizeof text, &written), CLOUT_RESULT_OK);
    CHECK(strstr(text, "6 members, 1 weight attributes, 1 conditions") != NULL);
    CHECK(strstr(text, "intact: every check passed") != NULL);
    CHECK_CODE(clout_image_describe(image, image_len, tiny, sizeof tiny, &untouched),
               CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK(untouched == 7 && tiny[0] == '\0');
    return 1;
}

/* The roster digest: the same from the image and from the loaded rule, the
 * bytes docs/image-format.md gives for [12; 4,4,4,2,2,1] without names
 * (computed there with Python's hashlib); a version-1 image still loads but
 * has none. */
static int test_roster_digest(void) {
    static const uint8_t expected[CLOUT_ROSTER_DIGEST_LEN] = {
        0x83, 0xcf, 0x7c, 0xc4, 0xcf, 0xab, 0x02, 0x8f, 0xb1, 0x0c, 0xa0, 0x4d, 0x3f, 0x11, 0x45, 0x4a,
        0xc9, 0x8e, 0x6a, 0x91, 0x87, 0xd0, 0xd5, 0x59, 0xd5, 0x67, 0xc6, 0x5c, 0x3e, 0x31, 0xbd, 0x17};
    uint8_t from_image[CLOUT_ROSTER_DIGEST_LEN], from_rule[CLOUT_ROSTER_DIGEST_LEN], shortbuf[31];
    uint64_t mem[CLOUT_RULE_HEADER_WORDS + 6];
    const clout_rule *rule;
    image_len = read_image("eec.img", image, sizeof image);
    CHECK_CODE(clout_image_roster_digest(image, image_len, from_image, sizeof from_image), CLOUT_RESULT_OK);
    CHECK(memcmp(from_image, expected, sizeof expected) == 0);
    CHECK_CODE(clout_image_roster_digest(image, image_len, shortbuf, sizeof shortbuf), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK_CODE(clout_rule_load(image, image_len, mem, CLOUT_RULE_HEADER_WORDS + 6, &rule), CLOUT_RESULT_OK);
    CHECK_CODE(clout_rule_roster_digest(rule, from_rule, sizeof from_rule), CLOUT_RESULT_OK);
    CHECK(memcmp(from_rule, expected, sizeof expected) == 0);
    image_len = read_image("eec-v1.img", image, sizeof image);
    CHECK(image_len == 45);
    CHECK_CODE(clout_image_roster_digest(image, image_len, from_image, sizeof from_image),
               CLOUT_RESULT_IMAGE_NO_ROSTER);
    CHECK_CODE(clout_rule_load(image, image_len, mem, CLOUT_RULE_HEADER_WORDS + 6, &rule), CLOUT_RESULT_OK);
    CHECK_CODE(clout_rule_roster_digest(rule, from_rule, sizeof from_rule), CLOUT_RESULT_IMAGE_NO_ROSTER);
    return 1;
}

static int test_null_arguments(void) {
    clout_rule *rule = load("eec.img");
    uint64_t yes = 1, sums[1], swings[6], mem[CLOUT_RULE_HEADER_WORDS + 6];
    uint32_t list[1] = {0}, crit[6];
    double b[6], s[6];
    size_t n;
    char text[CLOUT_MESSAGE_MAX];
    clout_outcome out;
    clout_rule_sizes info;
    const clout_rule *loaded;
    CHECK(rule != NULL);
    CHECK_CODE(clout_image_check(NULL, 0), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_image_describe(NULL, 0, text, sizeof text, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_image_describe(image, image_len, NULL, 0, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_image_describe(image, image_len, text, sizeof text, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_words(NULL, 0, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_words(image, image_len, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_load(NULL, 0, mem, sizeof mem / sizeof mem[0], &loaded), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_load(image, image_len, NULL, 0, &loaded), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_load(image, image_len, mem, sizeof mem / sizeof mem[0], NULL),
               CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_new(NULL, 0, &rule), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_new(image, image_len, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_info(NULL, &info), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_info(rule, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide(NULL, &yes, 1, sums, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide(rule, NULL, 1, sums, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide(rule, &yes, 1, NULL, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide(rule, &yes, 1, sums, 1, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_members(rule, NULL, 0, sums, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_members(rule, list, 1, NULL, 1, &out), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_decide_members(rule, list, 1, sums, 1, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_critical(NULL, &yes, 1, crit, 6, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_critical(rule, NULL, 1, crit, 6, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_critical(rule, &yes, 1, NULL, 6, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_critical(rule, &yes, 1, crit, 6, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_power(NULL, swings, b, s, 6), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_power(rule, NULL, b, s, 6), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_power(rule, swings, NULL, s, 6), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_power(rule, swings, b, NULL, 6), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_result_message(0, NULL, 0, &n), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_result_message(0, text, sizeof text, NULL), CLOUT_RESULT_NULL_ARGUMENT);
    CHECK_CODE(clout_rule_free(NULL), CLOUT_RESULT_OK);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

static int test_short_buffers(void) {
    static const unsigned pass[4] = {0, 1, 3, 4};
    uint64_t yes = bits(pass, 4), sums[1] = {42}, swings[6];
    uint32_t crit[3];
    double b[6], s[6];
    size_t n = 42;
    char text[4];
    clout_outcome out = {false, 42, 42};
    clout_rule *rule = load("eec.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_decide(rule, &yes, 1, sums, 0, &out), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK(out.conditions == 42 && out.met == 42 && sums[0] == 42);
    CHECK_CODE(clout_decide(rule, &yes, 0, sums, 1, &out), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK_CODE(clout_critical(rule, &yes, 1, crit, 3, &n), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK(n == 42);
    CHECK_CODE(clout_power(rule, swings, b, s, 5), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK_CODE(clout_result_message(CLOUT_RESULT_OK, text, sizeof text, &n), CLOUT_RESULT_BUFFER_TOO_SMALL);
    CHECK(n == 42);
    CHECK_CODE(clout_image_check(image, SIZE_MAX), CLOUT_RESULT_LENGTH_TOO_LARGE);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

static int test_bad_ballots(void) {
    static const uint32_t outside[2] = {0, 6}, twice[3] = {1, 2, 1};
    uint64_t words[2] = {(uint64_t)1 << 6, 0}, sums[1];
    uint32_t crit[6];
    size_t n;
    clout_outcome out;
    clout_rule *rule = load("eec.img");
    CHECK(rule != NULL);
    CHECK_CODE(clout_decide(rule, words, 1, sums, 1, &out), CLOUT_RESULT_BALLOT_MEMBER);
    CHECK_CODE(clout_critical(rule, words, 1, crit, 6, &n), CLOUT_RESULT_BALLOT_MEMBER);
    words[0] = 1;
    words[1] = 1; /* an extra word must be zero */
    CHECK_CODE(clout_decide(rule, words, 2, sums, 1, &out), CLOUT_RESULT_BALLOT_MEMBER);
    CHECK_CODE(clout_decide_members(rule, outside, 2, sums, 1, &out), CLOUT_RESULT_BALLOT_MEMBER);
    CHECK_CODE(clout_decide_members(rule, twice, 3, sums, 1, &out), CLOUT_RESULT_BALLOT_DUPLICATE);
    CHECK_CODE(clout_rule_free(rule), CLOUT_RESULT_OK);
    return 1;
}

static int test_not_a_rule(void) {
    static uint64_t zeros[CLOUT_RULE_HEADER_WORDS];
    uint64_t yes = 0, sums[1];
    clout_outcome out;
    clout_rule_sizes info;
    const clout_rule *fake = (const clout_rule *)zeros;
    CHECK_CODE(clout_decide(fake, &yes, 1, sums, 1, &out), CLOUT_RESULT_NOT_A_RULE);
    CHECK_CODE(clout_rule_info(fake, &info), CLOUT_RESULT_NOT_A_RULE);
    CHECK_CODE(clout_rule_free((clout_rule *)zeros), CLOUT_RESULT_NOT_A_RULE);
    return 1;
}

/* Every code has a message that fits CLOUT_MESSAGE_MAX. Codes no input can
 * produce: PANIC (a library bug; Rust unit test ffi::panics_become_a_code),
 * MISALIGNED (a misaligned pointer is undefined behaviour in C itself; Rust
 * unit test ffi::pointers_are_checked), OUT_OF_MEMORY (the system refusing
 * memory), INTERNAL, NOT_IN_BUILD (this suite runs on a build with the
 * heap; tests/firmware.rs covers it), COUNT_OVERFLOW (counts of at most 64 members fit the
 * 128-bit counter) and NO_ENGINE (some engine always estimates a cost). */
static int test_messages(void) {
    static const clout_result all[] = {
        CLOUT_RESULT_OK, CLOUT_RESULT_NULL_ARGUMENT, CLOUT_RESULT_BUFFER_TOO_SMALL, CLOUT_RESULT_PANIC,
        CLOUT_RESULT_OUT_OF_MEMORY, CLOUT_RESULT_MISALIGNED, CLOUT_RESULT_NOT_A_RULE,
        CLOUT_RESULT_NOT_HEAP_RULE, CLOUT_RESULT_LENGTH_TOO_LARGE, CLOUT_RESULT_INTERNAL,
        CLOUT_RESULT_NOT_IN_BUILD,
        CLOUT_RESULT_IMAGE_MAGIC, CLOUT_RESULT_IMAGE_TRUNCATED, CLOUT_RESULT_IMAGE_VERSION,
        CLOUT_RESULT_IMAGE_TRAILING_BYTES, CLOUT_RESULT_IMAGE_CHECKSUM, CLOUT_RESULT_IMAGE_WIDTH,
        CLOUT_RESULT_IMAGE_LAYOUT, CLOUT_RESULT_IMAGE_NODE_KIND, CLOUT_RESULT_IMAGE_CONDITION_KIND,
        CLOUT_RESULT_IMAGE_NAMES, CLOUT_RESULT_IMAGE_ROSTER, CLOUT_RESULT_IMAGE_NO_ROSTER,
        CLOUT_RESULT_NO_MEMBERS,
        CLOUT_RESULT_TOO_MANY_MEMBERS, CLOUT_RESULT_TOO_MANY_ATTRIBUTES, CLOUT_RESULT_TOO_MANY_CONDITIONS,
        CLOUT_RESULT_TOO_MANY_NODES, CLOUT_RESULT_TOO_DEEP, CLOUT_RESULT_WEIGHT_SUM_OVERFLOW,
        CLOUT_RESULT_UNKNOWN_ATTRIBUTE, CLOUT_RESULT_UNKNOWN_CONDITION, CLOUT_RESULT_MALFORMED_FORMULA,
        CLOUT_RESULT_EMPTY_OPERATOR, CLOUT_RESULT_NON_MONOTONE, CLOUT_RESULT_BALLOT_MEMBER,
        CLOUT_RESULT_BALLOT_DUPLICATE, CLOUT_RESULT_BALLOT_VOTE, CLOUT_RESULT_POWER_CAPACITY,
        CLOUT_RESULT_TOO_COSTLY, CLOUT_RESULT_COUNT_OVERFLOW,
        CLOUT_RESULT_NO_ENGINE,
    };
    size_t n = sizeof all / sizeof all[0], i, j, written;
    char text[CLOUT_MESSAGE_MAX], unknown[CLOUT_MESSAGE_MAX];
    CHECK(n == 42);
    for (i = 0; i < n; i++) {
        for (j = 0; j < i; j++) CHECK(all[i] != all[j]);
        CHECK_CODE(clout_result_message(all[i], text, sizeof text, &written), CLOUT_RESULT_OK);
        CHECK(written > 0 && written == strlen(text) && written < CLOUT_MESSAGE_MAX);
    }
    CHECK_CODE(clout_result_message(CLOUT_RESULT_IMAGE_CHECKSUM, text, sizeof text, &written), CLOUT_RESULT_OK);
    CHECK(strcmp(text, "image damaged: checksum mismatch") == 0);
    CHECK_CODE(clout_result_message(12345, unknown, sizeof unknown, &written), CLOUT_RESULT_OK);
    CHECK(strcmp(unknown, "unknown result code") == 0);
    return 1;
}

/* Stack use of clout_decide, measured: run it on a stack of our own that is
 * painted with a pattern, then find the deepest byte it changed. */
#define PAINTED_STACK (256 * 1024)
static _Alignas(16) unsigned char painted[PAINTED_STACK];
static ucontext_t caller_context, decide_context;
static const clout_rule *stack_rule;
static const uint64_t *stack_ballot;
static size_t stack_words;
static clout_result stack_result;
static uint64_t stack_sums[64]; /* static, so the measured frame is the library's */
static clout_outcome stack_outcome;

static void decide_on_painted_stack(void) {
    stack_result = clout_decide(stack_rule, stack_ballot, stack_words, stack_sums, 64, &stack_outcome);
}

static size_t stack_used_by_decide(const clout_rule *rule, const uint64_t *yes, size_t words) {
    size_t untouched = 0;
    memset(painted, 0xA5, sizeof painted);
    stack_rule = rule;
    stack_ballot = yes;
    stack_words = words;
    getcontext(&decide_context);
    decide_context.uc_stack.ss_sp = painted;
    decide_context.uc_stack.ss_size = sizeof painted;
    decide_context.uc_link = &caller_context;
    makecontext(&decide_context, decide_on_painted_stack, 0);
    swapcontext(&caller_context, &decide_context);
    while (untouched < sizeof painted && painted[untouched] == 0xA5) untouched++;
    return sizeof painted - untouched;
}

static int test_decide_stack_bounded(void) {
    uint64_t yes[2] = {0x2Bu, 0};
    size_t narrow, wide;
    clout_rule *eec, *assembly;
    if (under_valgrind) {
        /* valgrind takes the switch to the painted stack for an overflow */
        printf("  skipped under valgrind\n");
        return 1;
    }
    eec = load("eec.img");
    assembly = load("assembly.img");
    CHECK(eec != NULL && assembly != NULL);
    narrow = stack_used_by_decide(eec, yes, 1);
    CHECK(stack_result == CLOUT_RESULT_OK);
    wide = stack_used_by_decide(assembly, yes, 2);
    CHECK(stack_result == CLOUT_RESULT_OK);
    printf("  stack used by clout_decide: %zu bytes (<= 64 members), %zu bytes (100 members)\n", narrow,
           wide);
    /* The bounds DEVELOPERS.md states for any build; an optimised build
     * measures about 0.9 KiB and 9 KiB, an unoptimised one 3.5 and 28 KiB. */
    CHECK(narrow <= 8 * 1024);
    CHECK(wide <= 40 * 1024);
    CHECK_CODE(clout_rule_free(eec), CLOUT_RESULT_OK);
    CHECK_CODE(clout_rule_free(assembly), CLOUT_RESULT_OK);
    return 1;
}

int main(int argc, char **argv) {
    static const struct {
        const char *name;
        int (*run)(void);
    } tests[] = {
        {"test_eec_power", test_eec_power},
        {"test_committee_power", test_committee_power},
        {"test_eec_decide", test_eec_decide},
        {"test_eec_critical", test_eec_critical},
        {"test_compound_rule_sums", test_compound_rule_sums},
        {"test_four_state_votes", test_four_state_votes},
        {"test_caller_memory", test_caller_memory},
        {"test_wide_rule", test_wide_rule},
        {"test_too_costly", test_too_costly},
        {"test_damaged_images", test_damaged_images},
        {"test_describe", test_describe},
        {"test_roster_digest", test_roster_digest},
        {"test_null_arguments", test_null_arguments},
        {"test_short_buffers", test_short_buffers},
        {"test_bad_ballots", test_bad_ballots},
        {"test_not_a_rule", test_not_a_rule},
        {"test_messages", test_messages},
        {"test_decide_stack_bounded", test_decide_stack_bounded},
    };
    size_t i, passed = 0, failed = 0;
    if (argc < 2 || argc > 3) {
        fprintf(stderr, "usage: %s IMAGE_FOLDER [valgrind]\n", argv[0]);
        return 2;
    }
    image_dir = argv[1];
    under_valgrind = argc == 3 && strcmp(argv[2], "valgrind") == 0;
    for (i = 0; i < sizeof tests / sizeof tests[0]; i++) {
        int ok = tests[i].run();
        printf("%s %s\n", ok ? "ok  " : "FAIL", tests[i].name);
        if (ok)
            passed++;
        else
            failed++;
    }
    printf("c: %zu passed, %zu failed\n", passed, failed);
    return failed == 0 ? 0 : 1;
}

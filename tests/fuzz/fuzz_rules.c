/* fuzz_rules: the rule-file parser (rule_load_text) on top of the compiled-in defaults, then the
 * queries join and check make of the result for a few devices.
 * Promises checked: located errors (fuzz.h); a file with an error leaves the set as it was (the
 * settings of every check and the bands of every device compare equal before and after); a
 * successful load still gives bands and checks for every device and check. */
#include "fuzz.h"

#include "design.h"
#include "rules.h"

static Model models[] = {
    {.name = "nch", .type = MOS_NMOS, .level = 54, .cgso = NAN, .cgdo = NAN, .cgbo = NAN},
    {.name = "pch_lvt", .type = MOS_PMOS, .level = 54, .cgso = NAN, .cgdo = NAN, .cgbo = NAN},
    {.name = "nch.3", .type = MOS_NMOS, .level = 14, .cgso = NAN, .cgdo = NAN, .cgbo = NAN},
};

static Device devices[] = {
    {.name = "m1", .model = "nch", .mdl = &models[0], .type = MOS_NMOS, .w = 1e-6, .l = 1e-7, .m = 1, .nf = 1},
    {.name = "x1.xamp.m3", .model = "pch_lvt", .mdl = &models[1], .type = MOS_PMOS, .w = 2e-6, .l = 1e-7, .m = 2,
     .nf = 2, .cell = "amp"},
    {.name = "x2.mtail", .model = "nch", .mdl = &models[2], .type = MOS_NMOS, .w = 4e-6, .l = 5e-7, .m = 1, .nf = 1,
     .cell = "ota"},
    {.name = "m.odd", .model = "nomodel", .type = MOS_UNKNOWN, .w = 1e-6, .l = 1e-6, .m = 1, .nf = 1},
};

#define NDEV (sizeof devices / sizeof devices[0])

typedef struct {
    CheckRule checks[CHECK_COUNT];
    Bands bands[NDEV];
} Snapshot;

static int same_num(double a, double b)
{
    return (isnan(a) && isnan(b)) || a == b;
}

static void snapshot(const RuleSet *rs, Snapshot *s)
{
    for (int c = 0; c < CHECK_COUNT; c++) {
        const CheckRule *r = rule_check(rs, (CheckId)c);
        if (!r)
            fuzz_fail("no setting for check %d", c);
        s->checks[c] = *r;
        if (r->sev < SEV_INFO || r->sev >= SEV_COUNT)
            fuzz_fail("check %d has severity %d", c, (int)r->sev);
    }
    for (size_t i = 0; i < NDEV; i++) {
        RuleOrigin from;
        const Bands *b = rule_bands(rs, &devices[i], &from);
        if (!b)
            fuzz_fail("no bands for device %s", devices[i].name);
        s->bands[i] = *b;
        if (!rule_band_rule(rs, &devices[i]))
            fuzz_fail("no band rule for device %s", devices[i].name);
    }
}

static void compare(const Snapshot *a, const Snapshot *b)
{
    for (int c = 0; c < CHECK_COUNT; c++)
        if (!same_num(a->checks[c].limit, b->checks[c].limit) || a->checks[c].sev != b->checks[c].sev ||
            a->checks[c].enabled != b->checks[c].enabled)
            fuzz_fail("a rejected file changed check %d", c);
    for (size_t i = 0; i < NDEV; i++)
        if (!same_num(a->bands[i].strong_below, b->bands[i].strong_below) ||
            !same_num(a->bands[i].weak_above, b->bands[i].weak_above) ||
            !same_num(a->bands[i].off_below, b->bands[i].off_below))
            fuzz_fail("a rejected file changed the bands of %s", devices[i].name);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    DiagList d;
    diag_init(&d);
    RuleSet *rs = rule_new_defaults(&d);
    if (!rs)
        fuzz_fail("the defaults do not load");
    diag_free(&d);
    Snapshot before, after;
    snapshot(rs, &before);
    char *text = malloc(n + 1);
    if (!text)
        abort();
    memcpy(text, data, n);
    text[n] = '\0';
    diag_init(&d);
    int rc = rule_load_text(rs, "fuzz.rules", text, n, &d);
    fuzz_check_diags(&d, rc);
    diag_free(&d);
    snapshot(rs, &after);
    if (rc != ERR_OK)
        compare(&before, &after);
    rule_free(rs);
    free(text);
    return 0;
}

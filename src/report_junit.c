/* report_junit: the JUnit XML report CI dashboards read. One test suite per corner; in it one test
 * case per device and check: classname is the device's hierarchical name, name the check. A finding
 * that fails the run (the same rule as the exit status: at or above the fail level, or new against
 * the baseline with --fail-on new) is a <failure> carrying the message; a finding that does not fail
 * it is a passed case with the message in <system-out>; a check the rules switched off, or whose
 * findings are all waived, is <skipped> (with the waiver's reason). The five default checks get a case for every device; any other check only where it
 * reported something. Two passes per corner: counts for the suite's attributes, then the cases. */
#include "report.h"

#include <stdlib.h>
#include <string.h>

#include "buf.h"

/* The checks every device is tested for (the others appear where they have findings). */
static const int every_device[] = {CHECK_MARGIN, CHECK_TRIODE, CHECK_OFF, CHECK_GAIN, CHECK_NODATA};
#define NEVERY (sizeof every_device / sizeof every_device[0])

typedef struct {
    size_t tests, failures, skipped;
} Counts;

enum { CASE_PASS, CASE_FAIL, CASE_SKIP };

static int is_every(int check)
{
    for (size_t i = 0; i < NEVERY; i++)
        if (every_device[i] == check)
            return 1;
    return 0;
}

static int enabled(const ReportCtx *c, int check)
{
    return !c->rules || rule_check(c->rules, (CheckId)check)->enabled;
}

/* A case fails when one of its findings fails the run; it is skipped when the check is switched off
 * and found nothing, or when every finding it has is waived. */
static int case_state(const ReportCtx *c, size_t k, int check, const RepRef *refs, size_t n)
{
    size_t waived = 0;
    for (size_t q = 0; q < n; q++) {
        if (rep_fails(c, k, refs[q].index))
            return CASE_FAIL;
        waived += rep_finding(c, refs[q])->waived != 0;
    }
    if (n == 0)
        return enabled(c, check) ? CASE_PASS : CASE_SKIP;
    return waived == n ? CASE_SKIP : CASE_PASS;
}

/* The cases of row i in corner k, in order: the default checks, then any other check with findings.
 * Calls fn for each with the case's findings (ordered by check in rep_prepare's refs). */
typedef void (*CaseFn)(const ReportCtx *c, FILE *fp, size_t k, const Row *row, int check, const RepRef *refs,
                       size_t n, Counts *cnt);

static int each_case(const ReportCtx *c, FILE *fp, size_t k, size_t i, RepRef **scratch, size_t *cap, CaseFn fn,
                     Counts *cnt)
{
    const RepPrep *p = c->prep;
    const Row *row = &c->corners[k].joined->rows[i];
    size_t n = 0;
    for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++)
        if (p->refs[q].corner == k && BUF_PUSH(*scratch, n, *cap, p->refs[q]) != ERR_OK)
            return ERR_NOMEM;
    const RepRef *mine = *scratch;
    for (size_t e = 0; e < NEVERY; e++) {
        size_t a = 0;
        while (a < n && (int)rep_finding(c, mine[a])->check != every_device[e])
            a++;
        size_t b = a;
        while (b < n && (int)rep_finding(c, mine[b])->check == every_device[e])
            b++;
        fn(c, fp, k, row, every_device[e], mine + a, b - a, cnt);
    }
    for (size_t a = 0; a < n;) {
        int check = (int)rep_finding(c, mine[a])->check;
        size_t b = a;
        while (b < n && (int)rep_finding(c, mine[b])->check == check)
            b++;
        if (!is_every(check))
            fn(c, fp, k, row, check, mine + a, b - a, cnt);
        a = b;
    }
    return ERR_OK;
}

static void count_case(const ReportCtx *c, FILE *fp, size_t k, const Row *row, int check, const RepRef *refs,
                       size_t n, Counts *cnt)
{
    (void)fp;
    (void)row;
    int st = case_state(c, k, check, refs, n);
    cnt->tests++;
    cnt->failures += st == CASE_FAIL;
    cnt->skipped += st == CASE_SKIP;
}

static int count_corner(const ReportCtx *c, size_t k, Counts *n, RepRef **scratch, size_t *cap)
{
    memset(n, 0, sizeof *n);
    for (size_t i = 0; i < c->corners[k].joined->n; i++)
        if (each_case(c, NULL, k, i, scratch, cap, count_case, n) != ERR_OK)
            return ERR_NOMEM;
    return ERR_OK;
}

static void attr(FILE *fp, const char *name, const char *value)
{
    fprintf(fp, " %s=\"", name);
    rep_xml_text(fp, value ? value : "");
    fputc('"', fp);
}

/* The text of one finding inside <failure> or <system-out>. */
static void finding_text(const ReportCtx *c, FILE *fp, RepRef r)
{
    const Finding *f = rep_finding(c, r);
    char v[32], l[32];
    fprintf(fp, "%s: ", rule_severity_name[f->sev]);
    rep_xml_text(fp, f->message);
    fputc('\n', fp);
    if (f->loc.file) {
        fputs("at ", fp);
        rep_xml_text(fp, f->loc.file);
        fprintf(fp, ":%u\n", f->loc.line);
    }
    fprintf(fp, "measured %s, limit %s\n", rep_eng(f->value, "", v, sizeof v), rep_eng(f->limit, "", l, sizeof l));
    if (f->rule.file) {
        fputs("rule ", fp);
        rep_xml_text(fp, f->rule.file);
        if (f->rule.line)
            fprintf(fp, ":%u", f->rule.line);
        fputc('\n', fp);
    }
    const Joined *j = c->corners[r.corner].joined;
    const Row *row = f->row < j->n ? &j->rows[f->row] : NULL;
    if (row && row_lut(row)) {
        fputs(row->op ? "figures from the lookup table " : "no figures: the bias or L lies outside the grid of ", fp);
        rep_xml_text(fp, rep_table_path(row));
        fputs(row->op ? " at the bias of the node voltages\n" : "\n", fp);
    }
    BlStatus st = rep_status(c, r.corner, r.index);
    if (st != BL_NONE)
        fputs(st == BL_NEW ? "new since the baseline\n" : "also in the baseline\n", fp);
    if (c->ncorners > 1) {
        const RepGroup *g = &c->prep->groups[c->prep->group_of[c->prep->base[r.corner] + r.index]];
        fputs("worst corner for this device and check: ", fp);
        rep_xml_text(fp, c->corners[g->worst.corner].label);
        fputc('\n', fp);
    }
}

static void case_open(const ReportCtx *c, FILE *fp, const Row *row, int check)
{
    const char *file;
    uint32_t line;
    rep_card_place(c->design, row->dev, &file, &line);
    fputs("    <testcase", fp);
    attr(fp, "classname", row->dev->name);
    attr(fp, "name", rep_check_name(check));
    if (file) {
        attr(fp, "file", file);
        fprintf(fp, " line=\"%u\"", line);
    }
    fputs(" time=\"0\"", fp);
}

/* One test case: the findings refs[0..n) of one check, all in corner k; n may be 0. */
static void test_case(const ReportCtx *c, FILE *fp, size_t k, const Row *row, int check, const RepRef *refs,
                      size_t n, Counts *cnt)
{
    (void)cnt;
    int st = case_state(c, k, check, refs, n);
    case_open(c, fp, row, check);
    if (n == 0 && st == CASE_PASS) {
        fputs("/>\n", fp);
        return;
    }
    fputs(">\n", fp);
    if (st == CASE_SKIP && n == 0) {
        const CheckRule *cr = rule_check(c->rules, (CheckId)check);
        fputs("      <skipped", fp);
        attr(fp, "message", "switched off by the rules");
        fputs(">", fp);
        if (cr->from.file) {
            fputs("ignored by ", fp);
            rep_xml_text(fp, cr->from.file);
            if (cr->from.line)
                fprintf(fp, ":%u", cr->from.line);
        }
        fputs("</skipped>\n", fp);
    } else if (st == CASE_SKIP) {
        const Finding *f = rep_finding(c, refs[0]);
        fputs("      <skipped", fp);
        attr(fp, "message", "waived");
        fputs(">waived: ", fp);
        rep_xml_text(fp, f->waiver_reason ? f->waiver_reason : "no reason given");
        if (f->waiver.file) {
            fputs(" (", fp);
            rep_xml_text(fp, f->waiver.file);
            fprintf(fp, ":%u)", f->waiver.line);
        }
        fputc('\n', fp);
        for (size_t q = 0; q < n; q++)
            finding_text(c, fp, refs[q]);
        fputs("</skipped>\n", fp);
    } else if (st == CASE_FAIL) {
        /* one <failure> per case: the first failing finding's message, the text of all failing ones */
        size_t first = 0;
        while (!rep_fails(c, k, refs[first].index))
            first++;
        const Finding *f = rep_finding(c, refs[first]);
        fputs("      <failure", fp);
        attr(fp, "type", rule_severity_name[f->sev]);
        attr(fp, "message", f->message);
        fputs(">", fp);
        for (size_t q = 0; q < n; q++)
            if (rep_fails(c, k, refs[q].index))
                finding_text(c, fp, refs[q]);
        fputs("</failure>\n", fp);
    }
    size_t quiet = 0;
    for (size_t q = 0; q < n; q++)
        quiet += !rep_fails(c, k, refs[q].index) && (st != CASE_SKIP);
    if (quiet) {
        fputs("      <system-out>", fp);
        for (size_t q = 0; q < n; q++)
            if (!rep_fails(c, k, refs[q].index)) {
                const Finding *f = rep_finding(c, refs[q]);
                fputs(f->waived ? "(waived) "
                                : c->fail_new ? "(not failing: not new, or below warning) "
                                              : "(not failing: below the fail level) ",
                      fp);
                finding_text(c, fp, refs[q]);
            }
        fputs("</system-out>\n", fp);
    }
    fputs("    </testcase>\n", fp);
}

static int suite(const ReportCtx *c, FILE *fp, size_t k, const Counts *cnt, RepRef **scratch, size_t *cap)
{
    const RepCorner *rc = &c->corners[k];
    fputs("  <testsuite", fp);
    if (rc->label[0]) {
        fputs(" name=\"biaslint corner ", fp);
        rep_xml_text(fp, rc->label);
        fputc('"', fp);
    } else {
        attr(fp, "name", "biaslint");
    }
    fprintf(fp, " tests=\"%zu\" failures=\"%zu\" errors=\"0\" skipped=\"%zu\" time=\"0\">\n", cnt->tests,
            cnt->failures, cnt->skipped);
    fputs("    <properties>\n      <property", fp);
    attr(fp, "name", "netlist");
    attr(fp, "value", c->netlist_path);
    fputs("/>\n      <property", fp);
    attr(fp, "name", "op");
    attr(fp, "value", rc->op_path);
    fputs("/>\n      <property", fp);
    attr(fp, "name", "corner");
    attr(fp, "value", rc->label);
    if (c->prep->tables) {
        fputs("/>\n      <property", fp);
        attr(fp, "name", "devices_from_tables");
        fprintf(fp, " value=\"%zu\"", rc->joined->ntable);
    }
    fputs("/>\n    </properties>\n", fp);
    for (size_t i = 0; i < rc->joined->n; i++)
        if (each_case(c, fp, k, i, scratch, cap, test_case, NULL) != ERR_OK)
            return ERR_NOMEM;
    fputs("  </testsuite>\n", fp);
    return ERR_OK;
}

static int write_junit(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    RepRef *scratch = NULL;
    size_t cap = 0;
    Counts total = {0, 0, 0};
    Counts *per = calloc(c->ncorners, sizeof *per);
    if (!per)
        return ERR_NOMEM;
    for (size_t k = 0; k < c->ncorners; k++) {
        if (count_corner(c, k, &per[k], &scratch, &cap) != ERR_OK)
            goto nomem;
        total.tests += per[k].tests;
        total.failures += per[k].failures;
        total.skipped += per[k].skipped;
    }
    fputs("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n", fp);
    fprintf(fp, "<testsuites name=\"biaslint\" tests=\"%zu\" failures=\"%zu\" errors=\"0\" skipped=\"%zu\" time=\"0\">\n",
            total.tests, total.failures, total.skipped);
    for (size_t k = 0; k < c->ncorners; k++)
        if (suite(c, fp, k, &per[k], &scratch, &cap) != ERR_OK)
            goto nomem;
    free(scratch);
    free(per);
    fputs("</testsuites>\n", fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
nomem:
    free(scratch);
    free(per);
    return ERR_NOMEM;
}

const ReportWriter rep_junit_writer = {"junit", "xml", write_junit};

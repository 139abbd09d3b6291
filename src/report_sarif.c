/* report_sarif: SARIF 2.1.0 (the OASIS Static Analysis Results Interchange Format), so code-review
 * systems annotate the netlist. One run; the driver lists every check as a rule with its help text;
 * one result per device and check (a finding in several corners is one result naming the worst
 * corner and the others, so a review shows one note per card, not one per corner), located at the
 * device card's file and line. Against a baseline each result carries baselineState (new, updated
 * for a severity that rose, unchanged) and the baseline's findings this run has not are listed as
 * results in state "absent". */
#include "report.h"

#include <string.h>

static void key(FILE *fp, const char *k)
{
    rep_json_str(fp, k);
    fputs(": ", fp);
}

/* A path as a URI reference: relative paths stay relative (resolved against the folder the check
 * ran in); absolute ones become file:// URIs. Bytes outside the unreserved set and '/' are
 * percent-encoded (RFC 3986, section 2). */
static void uri(FILE *fp, const char *path)
{
    fputc('"', fp);
    if (path[0] == '/')
        fputs("file://", fp);
    for (const unsigned char *p = (const unsigned char *)path; *p; p++) {
        unsigned char c = *p;
        if ((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' || c == '.' ||
            c == '_' || c == '~' || c == '/')
            fputc(c, fp);
        else
            fprintf(fp, "%%%02X", c);
    }
    fputc('"', fp);
}

static const char *level(Severity s)
{
    return s == SEV_ERROR ? "error" : s == SEV_WARNING ? "warning" : "note";
}

/* "SatMargin" from "sat-margin": SARIF's rule name is meant to read as an identifier. */
static void rule_name(FILE *fp, const char *id)
{
    fputc('"', fp);
    int up = 1;
    for (const char *p = id; *p; p++) {
        if (*p == '-' || *p == '_' || *p == ' ') {
            up = 1;
            continue;
        }
        char ch = *p;
        if (up && ch >= 'a' && ch <= 'z')
            ch = (char)(ch - 'a' + 'A');
        up = 0;
        char s[2] = {ch, '\0'};
        rep_json_raw(fp, s);
    }
    fputc('"', fp);
}

/* One-line descriptions of the default checks. ORDER CHECK */
static const char *const short_text[CHECK_COUNT] = {
    [CHECK_MARGIN] = "VDS-VDSAT below the minimum headroom",
    [CHECK_TRIODE] = "device in triode (VDS below VDSAT)",
    [CHECK_OFF] = "device off (current per square below the off limit)",
    [CHECK_GAIN] = "intrinsic gain gm/gds below the minimum",
    [CHECK_NODATA] = "no operating-point data for the device",
    [CHECK_GMID] = "gm/ID off its intended target or range",
    [CHECK_REGION] = "device outside its intended region",
    [CHECK_FT] = "fT outside its intended range",
    [CHECK_IC] = "inversion coefficient outside its intended range",
    [CHECK_ID] = "drain current outside its intended range",
    [CHECK_VOV] = "overdrive outside its intended range",
    [CHECK_MATCH_VGS] = "matched group: VGS spread too large",
    [CHECK_MATCH_GMID] = "matched group: gm/ID spread too large",
    [CHECK_MATCH_RATIO] = "matched group: current ratio off the expected one",
    [CHECK_MATCH_VDS] = "matched group: VDS spread too large",
    [CHECK_WAIVER] = "waiver expired or matching nothing",
};

static void rules(const ReportCtx *c, FILE *fp)
{
    fputs("\"rules\": [", fp);
    for (int k = 0; k < CHECK_COUNT; k++) {
        const CheckRule *cr = c->rules ? rule_check(c->rules, (CheckId)k) : NULL;
        fputs(k ? ",\n            {" : "\n            {", fp);
        key(fp, "id");
        rep_json_str(fp, rep_check_name(k));
        fputs(", ", fp);
        key(fp, "name");
        rule_name(fp, rep_check_name(k));
        fputs(", ", fp);
        key(fp, "shortDescription");
        fputs("{\"text\": ", fp);
        rep_json_str(fp, short_text[k] ? short_text[k] : rep_check_name(k));
        fputs("}, ", fp);
        key(fp, "fullDescription");
        fputs("{\"text\": ", fp);
        rep_json_str(fp, rep_check_help(k));
        fputs("}, ", fp);
        key(fp, "help");
        fputs("{\"text\": ", fp);
        rep_json_str(fp, rep_check_help(k));
        fputs("}, ", fp);
        key(fp, "defaultConfiguration");
        fprintf(fp, "{\"enabled\": %s, \"level\": \"%s\"}", !cr || cr->enabled ? "true" : "false",
                cr ? level(cr->sev) : "warning");
        if (cr && cr->from.file) {
            fputs(", \"properties\": {\"setBy\": \"", fp);
            rep_json_raw(fp, cr->from.file);
            if (cr->from.line)
                fprintf(fp, ":%u", cr->from.line);
            fputs("\"}", fp);
        }
        fputc('}', fp);
    }
    fputs("\n          ]", fp);
}

static void location(FILE *fp, const char *file, uint32_t line, const char *device)
{
    if (!file && !device) {
        fputs("\"locations\": []", fp);
        return;
    }
    fputs("\"locations\": [{", fp);
    if (file) {
        fputs("\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", fp);
        uri(fp, file);
        fputs("}", fp);
        if (line)
            fprintf(fp, ", \"region\": {\"startLine\": %u}", line);
        fputs("}", fp);
        if (device)
            fputs(", ", fp);
    }
    if (device) {
        const char *leaf = strrchr(device, '.');
        fputs("\"logicalLocations\": [{\"name\": ", fp);
        rep_json_str(fp, leaf ? leaf + 1 : device);
        fputs(", \"fullyQualifiedName\": ", fp);
        rep_json_str(fp, device);
        fputs("}]", fp);
    }
    fputs("}]", fp);
}

static void fingerprint(FILE *fp, const char *device, const char *check, const char *corner)
{
    fputs("\"partialFingerprints\": {\"biaslintDeviceCheck/v1\": \"", fp);
    rep_json_raw(fp, device ? device : "?");
    fputc('/', fp);
    rep_json_raw(fp, check);
    if (corner && corner[0]) {
        fputc('/', fp);
        rep_json_raw(fp, corner);
    }
    fputs("\"}", fp);
}

static void result(const ReportCtx *c, FILE *fp, const RepGroup *g, int first)
{
    const RepPrep *p = c->prep;
    const Finding *f = rep_finding(c, g->worst);
    const Joined *j = c->corners[0].joined;
    const char *device = g->row < j->n ? j->rows[g->row].dev->name : NULL;
    int check = (int)f->check;
    fputs(first ? "\n        {" : ",\n        {", fp);
    key(fp, "ruleId");
    rep_json_str(fp, rep_check_name(check));
    fprintf(fp, ", \"ruleIndex\": %d, \"level\": \"%s\", \"kind\": \"fail\", ", check, level(g->sev));
    key(fp, "message");
    fputs("{\"text\": \"", fp);
    rep_json_raw(fp, device ? device : "?");
    fputs(": ", fp);
    rep_json_raw(fp, f->message);
    if (c->ncorners > 1) {
        fputs(" (", fp);
        if (g->n == 1) {
            fputs("only in corner ", fp);
            rep_json_raw(fp, c->corners[g->worst.corner].label);
        } else {
            fputs("worst in corner ", fp);
            rep_json_raw(fp, c->corners[g->worst.corner].label);
            fputs("; also in", fp);
            const char *sep = " ";
            for (size_t q = g->first; q < g->first + g->n; q++)
                if (p->refs[q].corner != g->worst.corner) {
                    fputs(sep, fp);
                    rep_json_raw(fp, c->corners[p->refs[q].corner].label);
                    sep = ", ";
                }
        }
        fputc(')', fp);
    }
    fputs("\"}, ", fp);
    location(fp, f->loc.file, f->loc.line, device);
    fputs(", ", fp);
    fingerprint(fp, device, rep_check_name(check), NULL);
    if (c->baseline) {
        const char *state = "unchanged";
        for (size_t q = g->first; q < g->first + g->n; q++) {
            RepRef r = p->refs[q];
            if (rep_status(c, r.corner, r.index) == BL_NEW) {
                int8_t was = c->baseline->was_sev ? c->baseline->was_sev[p->base[r.corner] + r.index] : -1;
                if (was < 0) {
                    state = "new";
                    break;
                }
                state = "updated";
            }
        }
        fprintf(fp, ", \"baselineState\": \"%s\"", state);
    }
    if (g->waived) {
        /* a waiver written in the netlist itself is in the source; one in a rules file is external */
        int in_source = f->waiver.file && f->loc.file && strcmp(f->waiver.file, f->loc.file) == 0;
        fprintf(fp, ", \"suppressions\": [{\"kind\": \"%s\", \"status\": \"accepted\", \"justification\": ",
                in_source ? "inSource" : "external");
        rep_json_str(fp, f->waiver_reason ? f->waiver_reason : "waived");
        if (f->waiver.file) {
            fputs(", \"location\": {\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", fp);
            uri(fp, f->waiver.file);
            fputs("}", fp);
            if (f->waiver.line)
                fprintf(fp, ", \"region\": {\"startLine\": %u}", f->waiver.line);
            fputs("}}", fp);
        }
        fputs("}]", fp);
    }
    fputs(", \"properties\": {", fp);
    key(fp, "device");
    rep_json_str(fp, device);
    fputs(", ", fp);
    key(fp, "worstCorner");
    rep_json_str(fp, c->corners[g->worst.corner].label);
    fputs(", \"corners\": [", fp);
    for (size_t q = g->first; q < g->first + g->n; q++) {
        if (q > g->first)
            fputs(", ", fp);
        rep_json_str(fp, c->corners[p->refs[q].corner].label);
    }
    fputs("], \"value\": ", fp);
    rep_json_num(fp, f->value);
    fputs(", \"limit\": ", fp);
    rep_json_num(fp, f->limit);
    if (f->rule.file) {
        fputs(", \"rule\": \"", fp);
        rep_json_raw(fp, f->rule.file);
        if (f->rule.line)
            fprintf(fp, ":%u", f->rule.line);
        fputc('"', fp);
    }
    if (f->intended) {
        fputs(", \"intended\": ", fp);
        rep_json_str(fp, f->intended);
    }
    if (f->group) {
        fputs(", \"group\": ", fp);
        rep_json_str(fp, f->group);
    }
    const Joined *wj = c->corners[g->worst.corner].joined;
    const Row *row = g->row < wj->n ? &wj->rows[g->row] : NULL;
    if (row && row_lut(row)) { /* the worst corner's figures came from a lookup table, not the simulator */
        fputs(", \"figureSource\": ", fp);
        rep_json_str(fp, rep_source(row) ? rep_source(row) : "none");
        fputs(", \"lookupTable\": ", fp);
        rep_json_str(fp, rep_table_path(row));
    }
    double w, gm_id;
    if (row && rep_suggestion(row, &w, &gm_id)) {
        fputs(", \"suggestW\": ", fp);
        rep_json_num(fp, w);
        fputs(", \"suggestGmId\": ", fp);
        rep_json_num(fp, gm_id);
    }
    fputs("}}", fp);
}

/* A finding of no device (a statement that selects none), located at the statement. */
static void loose(FILE *fp, const Finding *f, int first)
{
    int check = (int)f->check;
    fputs(first ? "\n        {" : ",\n        {", fp);
    key(fp, "ruleId");
    rep_json_str(fp, rep_check_name(check));
    fprintf(fp, ", \"ruleIndex\": %d, \"level\": \"%s\", \"kind\": \"fail\", ", check, level(f->sev));
    key(fp, "message");
    fputs("{\"text\": ", fp);
    rep_json_str(fp, f->message);
    fputs("}, ", fp);
    location(fp, f->loc.file, f->loc.line, NULL);
    fputc('}', fp);
}

/* A baseline finding this run no longer has. */
static void absent(FILE *fp, const BlOldFinding *o, int first)
{
    int check = -1;
    for (int k = 0; k < CHECK_COUNT; k++)
        if (o->check && strcmp(o->check, rep_check_name(k)) == 0)
            check = k;
    fputs(first ? "\n        {" : ",\n        {", fp);
    key(fp, "ruleId");
    rep_json_str(fp, o->check ? o->check : "?");
    if (check >= 0)
        fprintf(fp, ", \"ruleIndex\": %d", check);
    fprintf(fp, ", \"level\": \"%s\", \"kind\": \"fail\", \"baselineState\": \"absent\", ", level(o->sev));
    key(fp, "message");
    fputs("{\"text\": \"", fp);
    rep_json_raw(fp, o->device ? o->device : "?");
    fputs(": resolved since the baseline: ", fp);
    rep_json_raw(fp, o->message);
    if (o->corner && o->corner[0]) {
        fputs(" (corner ", fp);
        rep_json_raw(fp, o->corner);
        fputc(')', fp);
    }
    fputs("\"}, ", fp);
    location(fp, o->file, o->line, o->device);
    fputs(", ", fp);
    fingerprint(fp, o->device, o->check ? o->check : "?", NULL);
    fputc('}', fp);
}

static int write_sarif(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    const RepPrep *p = c->prep;
    fputs("{\n  \"$schema\": \"https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json\",\n"
          "  \"version\": \"2.1.0\",\n  \"runs\": [\n    {\n      \"tool\": {\n        \"driver\": {\n          ",
          fp);
    fputs("\"name\": \"biaslint\", \"version\": ", fp);
    rep_json_str(fp, BIASLINT_VERSION);
    fputs(", \"semanticVersion\": ", fp);
    rep_json_str(fp, BIASLINT_VERSION);
    fputs(",\n          ", fp);
    rules(c, fp);
    fputs("\n        }\n      },\n      \"invocations\": [{\"executionSuccessful\": true}],\n", fp);
    fputs("      \"columnKind\": \"unicodeCodePoints\",\n      \"results\": [", fp);
    size_t n = 0;
    for (size_t i = 0; i < p->ngroups; i++)
        result(c, fp, &p->groups[i], n++ == 0);
    size_t nl;
    const Finding *l = rep_loose(c, &nl);
    for (size_t i = 0; i < nl; i++)
        loose(fp, &l[i], n++ == 0);
    if (c->baseline)
        for (size_t i = 0; i < c->baseline->nresolved; i++)
            absent(fp, &c->baseline->resolved[i], n++ == 0);
    fputs(n ? "\n      ],\n" : "],\n", fp);
    fputs("      \"properties\": {", fp);
    key(fp, "netlist");
    rep_json_str(fp, c->netlist_path);
    fputs(", \"corners\": [", fp);
    for (size_t k = 0; k < c->ncorners; k++) {
        if (k)
            fputs(", ", fp);
        fputs("{\"label\": ", fp);
        rep_json_str(fp, c->corners[k].label);
        fputs(", \"op\": ", fp);
        rep_json_str(fp, c->corners[k].op_path);
        fputc('}', fp);
    }
    fprintf(fp, "], \"failing\": %zu}\n    }\n  ]\n}\n", rep_failing(c));
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

const ReportWriter rep_sarif_writer = {"sarif", "sarif", write_sarif};

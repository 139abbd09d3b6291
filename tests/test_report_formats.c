/* test_report_formats: the CSV, JUnit, SARIF and HTML writers on the hand-built scene
 * (reportscene.h), each against a golden file (version masked) and each read back by a consumer
 * that does not share their code: the CSV through libcsv's parser, the JUnit XML through a small
 * well-formedness checker written here and, when xmllint is installed, against the schema in
 * fixtures/report/junit.xsd, the SARIF through the strict JSON reader of jsoncheck.h and structural
 * assertions from the SARIF 2.1.0 standard (OASIS, sections 3.13 sarifLog to 3.30 region: required
 * properties and enumerations, from memory of the published text), the HTML through the same XML
 * checker on its SVG plots and through the rule that it loads nothing from elsewhere. */
#include "testutil.h"

#include <csv.h>

#include "jsoncheck.h"
#include "report.h"
#include "reportscene.h"

/* ---- a small XML well-formedness checker (XML 1.0: elements, attributes, references, text) ---- */

typedef struct {
    const char *p, *end;
    const char *err;       /* what is wrong, NULL while fine */
    const char *names[64]; /* open elements */
    size_t lens[64];
    int depth, roots;
    size_t count_testcase, count_failure, count_skipped, count_suite;
} Xml;

static int xml_namech(char c, int first)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_' || c == ':' ||
           (!first && ((c >= '0' && c <= '9') || c == '-' || c == '.'));
}

/* A reference after '&': a named entity of XML 1.0 or a character reference. */
static int xml_ref(Xml *x)
{
    static const char *const named[] = {"amp;", "lt;", "gt;", "quot;", "apos;"};
    for (size_t i = 0; i < 5; i++) {
        size_t n = strlen(named[i]);
        if ((size_t)(x->end - x->p) >= n && strncmp(x->p, named[i], n) == 0) {
            x->p += n;
            return 1;
        }
    }
    if (x->p < x->end && *x->p == '#') {
        x->p++;
        int hex = x->p < x->end && *x->p == 'x', digits = 0;
        x->p += hex;
        while (x->p < x->end && ((*x->p >= '0' && *x->p <= '9') ||
                                 (hex && ((*x->p >= 'a' && *x->p <= 'f') || (*x->p >= 'A' && *x->p <= 'F'))))) {
            x->p++;
            digits++;
        }
        if (digits && x->p < x->end && *x->p == ';') {
            x->p++;
            return 1;
        }
    }
    return 0;
}

/* Character data up to '<' (or the closing quote q of an attribute). */
static void xml_text(Xml *x, char q)
{
    while (x->p < x->end && *x->p != '<' && (!q || *x->p != q)) {
        unsigned char c = (unsigned char)*x->p;
        if (c == '&') {
            x->p++;
            if (!xml_ref(x)) {
                x->err = "a bare '&' (not a reference)";
                return;
            }
            continue;
        }
        if (c < 0x20 && c != '\t' && c != '\n' && c != '\r') {
            x->err = "a control character XML does not allow";
            return;
        }
        if (c >= 0x80) {
            size_t n = jc_utf8_len((const unsigned char *)x->p, (const unsigned char *)x->end);
            if (!n) {
                x->err = "invalid UTF-8";
                return;
            }
            x->p += n;
            continue;
        }
        x->p++;
    }
}

static void xml_check(Xml *x, const char *text, size_t len)
{
    memset(x, 0, sizeof *x);
    x->p = text;
    x->end = text + len;
    if (strncmp(x->p, "<?xml ", 6) == 0) {
        const char *e = strstr(x->p, "?>");
        if (!e) {
            x->err = "an unterminated XML declaration";
            return;
        }
        x->p = e + 2;
    }
    while (x->p < x->end && !x->err) {
        if (*x->p != '<') {
            const char *s = x->p;
            xml_text(x, 0);
            if (x->depth == 0)
                for (; s < x->p; s++)
                    if (*s != ' ' && *s != '\n' && *s != '\t' && *s != '\r')
                        x->err = "text outside the root element";
            continue;
        }
        x->p++;
        if (x->p < x->end && *x->p == '/') { /* end tag */
            x->p++;
            const char *n = x->p;
            while (x->p < x->end && xml_namech(*x->p, x->p == n))
                x->p++;
            size_t nl = (size_t)(x->p - n);
            if (x->depth == 0 || nl != x->lens[x->depth - 1] || strncmp(n, x->names[x->depth - 1], nl) != 0) {
                x->err = "an end tag that does not match the open element";
                return;
            }
            x->depth--;
            if (x->p >= x->end || *x->p != '>') {
                x->err = "an end tag without '>'";
                return;
            }
            x->p++;
            continue;
        }
        if (x->end - x->p >= 3 && strncmp(x->p, "!--", 3) == 0) {
            const char *e = strstr(x->p, "-->");
            if (!e) {
                x->err = "an unterminated comment";
                return;
            }
            x->p = e + 3;
            continue;
        }
        const char *n = x->p;
        if (x->p >= x->end || !xml_namech(*x->p, 1)) {
            x->err = "'<' not followed by a name";
            return;
        }
        while (x->p < x->end && xml_namech(*x->p, x->p == n))
            x->p++;
        size_t nl = (size_t)(x->p - n);
        if (x->depth == 0 && x->roots++)
            x->err = "a second root element";
        if (nl == 8 && !strncmp(n, "testcase", 8))
            x->count_testcase++;
        else if (nl == 7 && !strncmp(n, "failure", 7))
            x->count_failure++;
        else if (nl == 7 && !strncmp(n, "skipped", 7))
            x->count_skipped++;
        else if (nl == 9 && !strncmp(n, "testsuite", 9))
            x->count_suite++;
        /* attributes: name="value", each name once */
        const char *seen[32];
        size_t seenl[32], ns = 0;
        for (;;) {
            int blank = 0;
            while (x->p < x->end && (*x->p == ' ' || *x->p == '\n' || *x->p == '\t')) {
                x->p++;
                blank = 1;
            }
            if (x->p < x->end && (*x->p == '>' || *x->p == '/'))
                break;
            const char *a = x->p;
            if (!blank || x->p >= x->end || !xml_namech(*x->p, 1)) {
                x->err = "a malformed attribute";
                return;
            }
            while (x->p < x->end && xml_namech(*x->p, x->p == a))
                x->p++;
            size_t al = (size_t)(x->p - a);
            for (size_t k = 0; k < ns; k++)
                if (seenl[k] == al && !strncmp(seen[k], a, al))
                    x->err = "an attribute given twice";
            if (ns < 32) {
                seen[ns] = a;
                seenl[ns++] = al;
            }
            if (x->p + 1 >= x->end || *x->p != '=' || (x->p[1] != '"' && x->p[1] != '\'')) {
                x->err = "an attribute without a quoted value";
                return;
            }
            char q = x->p[1];
            x->p += 2;
            xml_text(x, q);
            if (x->err)
                return;
            if (x->p >= x->end || *x->p != q) {
                x->err = "'<' inside an attribute value";
                return;
            }
            x->p++;
        }
        if (*x->p == '/') {
            if (x->p + 1 >= x->end || x->p[1] != '>') {
                x->err = "'/' not followed by '>'";
                return;
            }
            x->p += 2;
            continue;
        }
        x->p++;
        if (x->depth == 64) {
            x->err = "nested too deep for this checker";
            return;
        }
        x->names[x->depth] = n;
        x->lens[x->depth++] = nl;
    }
    if (!x->err && x->depth)
        x->err = "elements left open at the end";
    if (!x->err && !x->roots)
        x->err = "no root element";
}

static void assert_well_formed(const char *what, const char *text, size_t len, Xml *x)
{
    xml_check(x, text, len);
    if (x->err) {
        print_error("%s is not well-formed XML: %s at byte %zu\n", what, x->err, (size_t)(x->p - text));
        fail();
    }
}

/* The checker itself must refuse what is not XML. */
static void test_xml_checker(void **state)
{
    (void)state;
    static const char *const bad[] = {
        "", "<a>", "<a></b>", "<a><b></a></b>", "<a x=1/>", "<a x=\"1\" x=\"2\"/>", "<a>&</a>", "<a>&foo;</a>",
        "<a x=\"<\"/>", "<a/><b/>", "text<a/>", "<a>\x01</a>", "<a>\xff</a>", "<1a/>", "<a x=\"1\"y=\"2\"/>",
    };
    static const char *const good[] = {
        "<a/>", "<?xml version=\"1.0\"?>\n<a x='1' y=\"&amp;&#65;&#x42;\">t<b/>\xc2\xb5</a>\n", "<a><!-- c --></a>",
    };
    Xml x;
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        xml_check(&x, bad[i], strlen(bad[i]));
        if (!x.err) {
            print_error("accepted: %s\n", bad[i]);
            fail();
        }
    }
    for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
        xml_check(&x, good[i], strlen(good[i]));
        if (x.err) {
            print_error("refused (%s): %s\n", x.err, good[i]);
            fail();
        }
    }
}

/* ---- CSV ---- */

typedef struct {
    size_t rows, fields, width;  /* width: fields of the first row */
    int ragged;
    char cell[8][40][128];       /* the first rows' fields */
} CsvRead;

static void csv_field(void *s, size_t len, void *data)
{
    CsvRead *r = data;
    if (r->rows < 8 && r->fields < 40) {
        size_t n = len < 127 ? len : 127;
        memcpy(r->cell[r->rows][r->fields], s, n);
        r->cell[r->rows][r->fields][n] = '\0';
    }
    r->fields++;
}

static void csv_row(int c, void *data)
{
    (void)c;
    CsvRead *r = data;
    if (r->rows == 0)
        r->width = r->fields;
    else if (r->fields != r->width)
        r->ragged = 1;
    r->rows++;
    r->fields = 0;
}

static CsvRead *csv_read(const char *text, size_t len)
{
    CsvRead *r = calloc(1, sizeof *r);
    assert_non_null(r);
    struct csv_parser p;
    assert_int_equal(csv_init(&p, CSV_STRICT | CSV_STRICT_FINI), 0);
    assert_int_equal(csv_parse(&p, text, len, csv_field, csv_row, r), len);
    assert_int_equal(csv_fini(&p, csv_field, csv_row, r), 0);
    csv_free(&p);
    return r;
}

static int col(const CsvRead *r, const char *name)
{
    for (size_t i = 0; i < r->width && i < 40; i++)
        if (!strcmp(r->cell[0][i], name))
            return (int)i;
    print_error("no column %s\n", name);
    fail();
    return -1;
}

static void test_csv(void **state)
{
    (void)state;
    for (size_t nc = 1; nc <= 3; nc += 2) {
        Sc s;
        scene(&s, nc);
        int rc;
        size_t n;
        char *text = render(&rep_csv_writer, &s.ctx, &rc, &n);
        assert_int_equal(rc, ERR_OK);
        golden(nc == 1 ? "fixtures/report/amp.csv" : "fixtures/report/amp3.csv", text);
        CsvRead *r = csv_read(text, n);
        assert_false(r->ragged);
        assert_int_equal(r->rows, 1 + NDEV * nc); /* a header, then a row per device per corner */
        assert_int_equal(r->width, 38);
        /* device-major, corners in order */
        assert_string_equal(r->cell[1][col(r, "device")], "x1.m1");
        assert_string_equal(r->cell[1][col(r, "corner")], nc == 1 ? "" : "typ");
        if (nc == 3) {
            assert_string_equal(r->cell[2][col(r, "corner")], "cold");
            assert_string_equal(r->cell[3][col(r, "device")], "x1.m1");
            assert_string_equal(r->cell[3][col(r, "findings")], "sat-margin:error"); /* hot only */
            assert_string_equal(r->cell[1][col(r, "findings")], "");
            assert_string_equal(r->cell[4][col(r, "device")], "x1.m2");
        }
        /* numbers read back to the same double; absent values are empty fields */
        assert_true(strtod(r->cell[1][col(r, "gm_id")], NULL) == s.rows[0][0].fig.gm_id);
        assert_true(strtod(r->cell[1][col(r, "w")], NULL) == 2e-6);
        assert_string_equal(r->cell[1][col(r, "region")], "moderate");
        assert_string_equal(r->cell[1][col(r, "has_data")], "true");
        free(r);
        free(text);
        scene_free(&s);
    }
    /* a name with a quote and a comma is quoted by libcsv and reads back whole */
    Sc s;
    scene(&s, 1);
    s.devs[0].name = "x1.\"odd\",name";
    int rc;
    size_t n;
    char *text = render(&rep_csv_writer, &s.ctx, &rc, &n);
    CsvRead *r = csv_read(text, n);
    assert_false(r->ragged);
    assert_string_equal(r->cell[1][col(r, "device")], "x1.\"odd\",name");
    free(r);
    free(text);
    scene_free(&s);
}

/* ---- JUnit ---- */

static int have_xmllint(void)
{
    return system("command -v xmllint >/dev/null 2>&1") == 0;
}

/* The JUnit text against fixtures/report/junit.xsd with xmllint, when it is installed. */
static void xmllint_schema(const char *text, size_t n)
{
    if (!have_xmllint())
        return;
    char *path = tu_tmpfile("junit.xml", text, n);
    assert_non_null(path);
    char cmd[512];
    snprintf(cmd, sizeof cmd, "xmllint --noout --schema fixtures/report/junit.xsd '%s' 2>/dev/null", path);
    if (system(cmd) != 0) {
        print_error("xmllint: %s does not validate against fixtures/report/junit.xsd\n", path);
        fail();
    }
    free(path);
}

static void test_junit(void **state)
{
    (void)state;
    for (size_t nc = 1; nc <= 3; nc += 2) {
        Sc s;
        scene(&s, nc);
        int rc;
        size_t n;
        char *text = render(&rep_junit_writer, &s.ctx, &rc, &n);
        assert_int_equal(rc, ERR_OK);
        golden(nc == 1 ? "fixtures/report/amp.junit.xml" : "fixtures/report/amp3.junit.xml", text);
        Xml x;
        assert_well_formed("the JUnit report", text, n, &x);
        xmllint_schema(text, n);
        /* one suite per corner; five default checks per device in each */
        assert_int_equal(x.count_suite, nc);
        assert_int_equal(x.count_testcase, NDEV * 5 * nc);
        /* failures: the findings at or above the fail level (warning), one per case */
        size_t want = 0;
        for (size_t k = 0; k < nc; k++)
            want += s.f[k].count[SEV_ERROR] + s.f[k].count[SEV_WARNING];
        assert_int_equal(x.count_failure, want);
        assert_non_null(strstr(text, "classname=\"x1.m3\" name=\"sat-margin\" file=\"lib/stage.inc\" line=\"6\""));
        char attr[64];
        snprintf(attr, sizeof attr, "failures=\"%zu\"", want);
        assert_non_null(strstr(text, attr));
        free(text);
        /* at fail level error, the warnings pass with their message in system-out */
        s.ctx.fail_level = SEV_ERROR;
        text = render(&rep_junit_writer, &s.ctx, &rc, &n);
        assert_well_formed("the JUnit report", text, n, &x);
        want = 0;
        for (size_t k = 0; k < nc; k++)
            want += s.f[k].count[SEV_ERROR];
        assert_int_equal(x.count_failure, want);
        assert_non_null(strstr(text, "<system-out>(not failing: below the fail level) warning: gm/gds is"));
        free(text);
        scene_free(&s);
    }
    /* a switched-off check is skipped; markup in a message is escaped */
    Sc s;
    scene(&s, 1);
    assert_int_equal(rule_load_text(s.rs, "t.rules", "check off ignore\n", 17, &s.d), ERR_OK);
    chk_free(&s.f[0]);
    assert_int_equal(chk_run(s.rs, &s.ds, &s.j[0], &s.f[0]), ERR_OK);
    s.f[0].items[0].message = "VDS <b> & \"x\" 'y' \x01 \xff";
    rep_prep_free(&s.prep);
    assert_int_equal(rep_prepare(&s.ctx, &s.prep), ERR_OK);
    int rc;
    size_t n;
    char *text = render(&rep_junit_writer, &s.ctx, &rc, &n);
    Xml x;
    assert_well_formed("the JUnit report with markup in a message", text, n, &x);
    xmllint_schema(text, n);
    assert_int_equal(x.count_skipped, NDEV);
    assert_non_null(strstr(text, "VDS &lt;b&gt; &amp; &quot;x&quot; &#39;y&#39; \xef\xbf\xbd \xef\xbf\xbd"));
    assert_non_null(strstr(text, "skipped message=\"switched off by the rules\">ignored by t.rules:1"));
    free(text);
    scene_free(&s);
}

/* ---- SARIF 2.1.0 ---- */

static int one_of(const char *s, const char *const *set)
{
    for (; *set; set++)
        if (!strcmp(s, *set))
            return 1;
    return 0;
}

/* The structure the standard requires of what we write: sarifLog (version "2.1.0", runs), run
 * (tool), tool (driver), toolComponent (name), reportingDescriptor (id), result (message; ruleId
 * and ruleIndex consistent with the driver's rules; level and kind from their enumerations;
 * baselineState from its enumeration), location/physicalLocation/artifactLocation (uri),
 * region (startLine >= 1), message (text). */
static void sarif_structure(const JVal *root, size_t *nresults)
{
    static const char *const levels[] = {"none", "note", "warning", "error", NULL};
    static const char *const kinds[] = {"notApplicable", "pass", "fail", "review", "open", "informational", NULL};
    static const char *const states[] = {"new", "unchanged", "updated", "absent", NULL};
    static const char *const suppr[] = {"inSource", "external", NULL};
    assert_int_equal(root->t, J_OBJ);
    assert_string_equal(jget(root, "version")->str, "2.1.0");
    const JVal *runs = jget(root, "runs");
    assert_int_equal(runs->t, J_ARR);
    assert_int_equal(runs->n, 1);
    const JVal *run = runs->items[0];
    const JVal *driver = jget(jget(run, "tool"), "driver");
    assert_non_null(driver);
    assert_string_equal(jget(driver, "name")->str, "biaslint");
    assert_string_equal(jget(driver, "version")->str, BIASLINT_VERSION);
    const JVal *rules = jget(driver, "rules");
    assert_int_equal(rules->n, CHECK_COUNT);
    for (size_t i = 0; i < rules->n; i++) {
        const JVal *r = rules->items[i];
        assert_string_equal(jget(r, "id")->str, rep_check_name((int)i));
        for (size_t k = 0; k < i; k++) /* ids are unique */
            assert_true(strcmp(jget(rules->items[k], "id")->str, jget(r, "id")->str) != 0);
        assert_true(strlen(jget(jget(r, "help"), "text")->str) > 20);
        assert_true(strlen(jget(jget(r, "shortDescription"), "text")->str) > 5);
        assert_true(one_of(jget(jget(r, "defaultConfiguration"), "level")->str, levels));
    }
    const JVal *res = jget(run, "results");
    assert_int_equal(res->t, J_ARR);
    for (size_t i = 0; i < res->n; i++) {
        const JVal *r = res->items[i];
        const char *id = jget(r, "ruleId")->str;
        const JVal *idx = jget(r, "ruleIndex");
        assert_non_null(idx);
        assert_true(idx->num >= 0 && idx->num < rules->n);
        assert_string_equal(jget(rules->items[(size_t)idx->num], "id")->str, id);
        assert_true(one_of(jget(r, "level")->str, levels));
        assert_true(one_of(jget(r, "kind")->str, kinds));
        assert_true(strlen(jget(jget(r, "message"), "text")->str) > 0);
        const JVal *bs = jget(r, "baselineState");
        if (bs)
            assert_true(one_of(bs->str, states));
        const JVal *locs = jget(r, "locations");
        assert_int_equal(locs->t, J_ARR);
        for (size_t k = 0; k < locs->n; k++) {
            const JVal *pl = jget(locs->items[k], "physicalLocation");
            if (!pl)
                continue;
            const char *uri = jget(jget(pl, "artifactLocation"), "uri")->str;
            assert_true(strlen(uri) > 0);
            assert_null(strchr(uri, ' ')); /* a URI reference: no raw blanks */
            const JVal *reg = jget(pl, "region");
            if (reg)
                assert_true(jget(reg, "startLine")->num >= 1);
        }
        const JVal *sp = jget(r, "suppressions");
        for (size_t k = 0; sp && k < sp->n; k++)
            assert_true(one_of(jget(sp->items[k], "kind")->str, suppr));
    }
    *nresults = res->n;
}

static void test_sarif(void **state)
{
    (void)state;
    for (size_t nc = 1; nc <= 3; nc += 2) {
        Sc s;
        scene(&s, nc);
        int rc;
        size_t n;
        char *text = render(&rep_sarif_writer, &s.ctx, &rc, &n);
        assert_int_equal(rc, ERR_OK);
        golden(nc == 1 ? "fixtures/report/amp.sarif" : "fixtures/report/amp3.sarif", text);
        JVal *root = jparse(text, n);
        if (!root) {
            print_error("the SARIF report is not valid JSON\n");
            fail();
        }
        size_t nres;
        sarif_structure(root, &nres);
        assert_int_equal(nres, s.prep.ngroups); /* one result per device and check */
        /* located at the card: x1.m3 in lib/stage.inc line 6 */
        const JVal *r0 = jget(jget(root, "runs")->items[0], "results")->items[0];
        const JVal *pl = jget(jget(r0, "locations")->items[0], "physicalLocation");
        assert_string_equal(jget(jget(pl, "artifactLocation"), "uri")->str, "lib/stage.inc");
        assert_int_equal(jget(jget(pl, "region"), "startLine")->num, nc == 1 ? 6 : 4);
        if (nc == 3)
            assert_non_null(strstr(jget(jget(r0, "message"), "text")->str, "(only in corner hot)"));
        jfree(root);
        free(text);
        scene_free(&s);
    }
    /* paths that need percent-encoding, and an absolute one */
    Sc s;
    scene(&s, 1);
    s.f[0].items[0].loc.file = "/abs/my lib/st#ge.inc";
    int rc;
    size_t n;
    char *text = render(&rep_sarif_writer, &s.ctx, &rc, &n);
    JVal *root = jparse(text, n);
    assert_non_null(root);
    size_t nres;
    sarif_structure(root, &nres);
    assert_non_null(strstr(text, "\"uri\": \"file:///abs/my%20lib/st%23ge.inc\""));
    jfree(root);
    free(text);
    scene_free(&s);
}

/* ---- HTML ---- */

static size_t count(const char *text, const char *what)
{
    size_t n = 0;
    for (const char *p = text; (p = strstr(p, what)) != NULL; p += strlen(what))
        n++;
    return n;
}

/* Self-contained: nothing fetched from elsewhere, no external script, style or font. */
static void self_contained(const char *text)
{
    static const char *const refs[] = {"http:", "https:", "//cdn", "src=", "<link", "@import", "url(", "@font-face",
                                       NULL};
    for (size_t i = 0; refs[i]; i++)
        if (strstr(text, refs[i])) {
            print_error("the HTML report refers to something outside it: '%s'\n", refs[i]);
            fail();
        }
}

/* Every <svg>...</svg> of the page is well-formed XML. */
static size_t svgs_well_formed(const char *text)
{
    size_t n = 0;
    for (const char *p = text; (p = strstr(p, "<svg")) != NULL; n++) {
        const char *e = strstr(p, "</svg>");
        assert_non_null(e);
        Xml x;
        assert_well_formed("an SVG plot", p, (size_t)(e + 6 - p), &x);
        p = e + 6;
    }
    return n;
}

static void test_html(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    int rc;
    size_t n;
    char *text = render(&rep_html_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    golden("fixtures/report/amp3.html", text);
    self_contained(text);
    assert_true(svgs_well_formed(text) >= 2);
    assert_int_equal(strncmp(text, "<!DOCTYPE html>", 15), 0);
    /* the summary, the plots, the findings and the sortable table are all there */
    assert_non_null(strstr(text, "Efficiency against intrinsic gain"));
    assert_non_null(strstr(text, "Headroom VDS&#8722;VDSAT"));
    assert_non_null(strstr(text, "<table class=\"sortable\" id=\"devices\">"));
    assert_non_null(strstr(text, "<b>Fail</b>"));
    /* the plot: every device-corner with a gm/ID and a gain (5 devices with data, but mtail has
       gm/ID 33 and gain 10, so all 5 per corner), flagged ones ringed */
    assert_int_equal(count(text, "<circle class=\"pt "), 15);
    assert_true(count(text, "pt c") >= 15);
    assert_non_null(strstr(text, "class=\"band strong\""));
    /* headroom bars: every device-corner with a margin (x1.m1, x1.m2, x1.m3, mb5 in 3 corners) */
    assert_int_equal(count(text, "<rect class=\"bar "), 12);
    /* one table row per device per corner */
    assert_int_equal(count(text, "</code></td><td>typ</td>"), NDEV);
    free(text);
    scene_free(&s);
}

/* Many devices: the page stays small and says what it leaves out. */
static void test_html_caps(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    size_t N = 100000;
    Row *rows = malloc(N * sizeof *rows);
    assert_non_null(rows);
    for (size_t i = 0; i < N; i++)
        rows[i] = s.rows[0][i % NDEV];
    Joined j = s.j[0];
    j.rows = rows;
    j.n = N;
    Findings f;
    assert_int_equal(chk_run(s.rs, &s.ds, &j, &f), ERR_OK);
    ReportCtx c = s.ctx;
    c.joined = &j;
    c.findings = &f;
    RepPrep p;
    assert_int_equal(rep_prepare(&c, &p), ERR_OK);
    int rc;
    size_t n;
    char *text = render(&rep_html_writer, &c, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    self_contained(text);
    assert_true(count(text, "<circle class=\"pt ") <= 2500);
    assert_true(count(text, "<rect class=\"bar ") <= 40);
    if (!strstr(text, "Showing 2500 of")) { const char *q = strstr(text, "One point per"); print_error("%.400s\n", q ? q : "?"); }
    assert_non_null(strstr(text, "Showing 2500 of"));
    assert_non_null(strstr(text, "the CSV and JSON reports have them all"));
    assert_true(n < 12u * 1024u * 1024u);
    free(text);
    rep_prep_free(&p);
    chk_free(&f);
    free(rows);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_xml_checker), cmocka_unit_test(test_csv),  cmocka_unit_test(test_junit),
        cmocka_unit_test(test_sarif),       cmocka_unit_test(test_html), cmocka_unit_test(test_html_caps),
    };
    return cmocka_run_group_tests_name("report_formats", tests, NULL, NULL);
}

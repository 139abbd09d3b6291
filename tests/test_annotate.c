/* test_annotate: annotation lines land after the right card, and stripping them gives back the
 * original bytes in every line-ending case. The designs are built by hand here; the end-to-end
 * round trip through the netlist reader and ngspice is in test_pipeline.c. */
#include "testutil.h"

#include "annotate.h"

typedef struct {
    Design ds;
    SrcFile file;
    SrcFile *files[1];
    Card cards[8];
    Device devs[8];
    Row rows[8];
    Joined j;
    Findings f;
    Finding items[8];
} Fixture;

/* A design over text whose MOSFET cards are the lines that start with 'm' or 'M'; device k sits on
 * card card_of[k]. */
static void setup(Fixture *x, const char *text, const size_t *card_of, size_t ndevs)
{
    memset(x, 0, sizeof *x);
    x->file.text = (char *)text;
    x->file.len = strlen(text);
    x->file.path = (char *)"t.cir";
    x->files[0] = &x->file;
    x->ds.files.files = x->files;
    x->ds.files.n = 1;
    size_t nc = 0;
    for (size_t off = 0, line = 1; off < x->file.len; line++) {
        const char *nl = strchr(text + off, '\n');
        size_t end = nl ? (size_t)(nl - text) + 1 : x->file.len;
        if ((text[off] == 'm' || text[off] == 'M') && nc < 8)
            x->cards[nc++] = (Card){0, (uint32_t)line, 1, off, end, end};
        off = end;
    }
    x->ds.cards = x->cards;
    x->ds.ncards = nc;
    static const char *names[] = {"m1", "m2", "x1.m3", "x2.m3", "x3.m3", "x4.m3", "x5.m3", "x6.m3"};
    for (size_t k = 0; k < ndevs; k++) {
        x->devs[k] = (Device){.name = names[k], .model = "nch", .type = MOS_NMOS, .w = 1e-6, .l = 1e-6,
                              .m = 1, .nf = 1, .card = (uint32_t)card_of[k]};
        Figures *g = &x->rows[k].fig;
        *g = (Figures){.id = 1e-5, .gm = 1.5e-4, .gds = 3e-6, .gm_id = 15, .gain = 50, .ft = 1.2e9,
                       .margin = 0.2 - 0.05 * (double)k, .region = REGION_MODERATE};
        x->rows[k].dev = &x->devs[k];
        x->rows[k].op = (const OpRecord *)&x->devs[k]; /* any non-NULL: the row has data */
    }
    x->ds.devs = x->devs;
    x->ds.ndevs = ndevs;
    x->j.rows = x->rows;
    x->j.n = ndevs;
    x->f.items = x->items;
}

static void add_finding(Fixture *x, size_t row, Severity sev, const char *msg)
{
    x->items[x->f.n++] = (Finding){.row = row, .check = CHECK_MARGIN, .sev = sev, .message = msg};
}

static char *render(Fixture *x)
{
    Buf b = BUF_INIT;
    assert_int_equal(ann_render(&x->ds, &x->j, &x->f, &b), ERR_OK);
    return b.data ? b.data : calloc(1, 1);
}

static void assert_strips_to(const char *annotated, const char *original)
{
    Buf b = BUF_INIT;
    assert_int_equal(ann_strip(annotated, strlen(annotated), &b), ERR_OK);
    assert_string_equal(b.data ? b.data : "", original);
    buf_free(&b);
}

static void test_lines_follow_cards(void **state)
{
    (void)state;
    static const char text[] = "title\nm1 d g 0 0 nch w=1u l=1u\n+ m=1\nr1 a b 1k\nm2 d g 0 0 nch\n.end\n";
    Fixture x;
    /* card 0 spans the continuation line too, as the reader gives it */
    setup(&x, text, (size_t[]){0, 1}, 2);
    x.cards[0].end = x.cards[0].anchor_end = strstr(text, "r1") - text;
    x.ds.ncards = 2;
    x.cards[1] = (Card){0, 5, 1, strstr(text, "m2") - text, strstr(text, ".end") - text, strstr(text, ".end") - text};
    add_finding(&x, 1, SEV_ERROR, "too close");
    char *out = render(&x);
    const char *a = strstr(out, "+ m=1\n*~ [m1] moderate");
    assert_non_null(a);
    assert_non_null(strstr(out, "m2 d g 0 0 nch\n*~ [m2] moderate"));
    assert_non_null(strstr(out, "*~ [m2] error sat-margin: too close\n.end\n"));
    assert_strips_to(out, text);
    free(out);
}

static void test_crlf_kept(void **state)
{
    (void)state;
    static const char text[] = "title\r\nm1 d g 0 0 nch\r\n.end\r\n";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    char *out = render(&x);
    assert_non_null(strstr(out, "m1 d g 0 0 nch\r\n*~ [m1] moderate"));
    assert_null(strstr(out, "fT 1.2GHz\n")); /* no bare LF line ending */
    assert_strips_to(out, text);
    free(out);
}

static void test_no_final_newline(void **state)
{
    (void)state;
    static const char text[] = "title\nm1 d g 0 0 nch";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    add_finding(&x, 0, SEV_WARNING, "low");
    char *out = render(&x);
    size_t n = strlen(out);
    assert_true(n > 0 && out[n - 1] != '\n');
    assert_non_null(strstr(out, "nch\n*~ [m1]"));
    assert_strips_to(out, text);
    free(out);
}

/* The last line ends in a bare CR and no LF: the line ending put before the block is CRLF, since
 * strip takes a CR before that LF for part of it; the file's own CR stays (found by fuzz_netlist). */
static void test_final_bare_cr(void **state)
{
    (void)state;
    static const char text[] = "title\nm1 d g 0 0 nch\r\r";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    char *out = render(&x);
    assert_non_null(strstr(out, "nch\r\r\r\n*~ [m1] moderate"));
    assert_strips_to(out, text);
    Fixture y; /* annotating the annotated text gives the same */
    setup(&y, out, (size_t[]){0}, 1);
    char *again = render(&y);
    assert_string_equal(again, out);
    free(again);
    free(out);
}

static void test_old_lines_replaced(void **state)
{
    (void)state;
    static const char text[] = "title\nm1 d g 0 0 nch\n*~ [m1] stale line\n*~ [m1] another\n.end\n";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    char *out = render(&x);
    assert_null(strstr(out, "stale"));
    assert_non_null(strstr(out, "nch\n*~ [m1] moderate"));
    assert_strips_to(out, "title\nm1 d g 0 0 nch\n.end\n");
    free(out);
}

/* The first line is the title whatever it holds, even the mark (found by fuzz_netlist: strip and
 * annotate dropped it, and the annotated file then read its first card as the title). */
static void test_title_with_the_mark_kept(void **state)
{
    (void)state;
    static const char text[] = "*~ title that looks like an annotation\nm1 d g 0 0 nch\n*~ [m1] old\n.end\n";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    char *out = render(&x);
    static const char want[] = "*~ title that looks like an annotation\nm1 d g 0 0 nch\n*~ [m1] moderate";
    assert_true(strncmp(out, want, sizeof want - 1) == 0);
    assert_null(strstr(out, "old"));
    assert_strips_to(out, "*~ title that looks like an annotation\nm1 d g 0 0 nch\n.end\n");
    assert_strips_to("*~ only a title", "*~ only a title"); /* no line ending: still the title */
    free(out);
}

static void test_many_instances_summarised(void **state)
{
    (void)state;
    static const char text[] = "title\n.subckt c a\nm3 a a 0 0 nch\n.ends\n.end\n";
    Fixture x;
    setup(&x, text, (size_t[]){0, 0, 0, 0, 0, 0}, 6);
    static const char *inst[] = {"x1.m3", "x2.m3", "x3.m3", "x4.m3", "x5.m3", "x6.m3"};
    for (size_t k = 0; k < 6; k++)
        x.devs[k].name = inst[k];
    x.rows[2].fig.gm_id = 17.5;
    x.rows[5].fig.region = REGION_TRIODE;
    add_finding(&x, 5, SEV_ERROR, "in triode");
    char *out = render(&x);
    assert_non_null(strstr(out, "*~ [6 instances of m3] 5 moderate, 1 triode"));
    assert_non_null(strstr(out, "| gm/ID 15..17.5/V | worst margin -50mV (x6.m3)"));
    assert_non_null(strstr(out, "*~ [x6.m3] error sat-margin: in triode"));
    assert_null(strstr(out, "*~ [x1.m3] moderate")); /* no per-instance lines past the limit */
    assert_strips_to(out, text);
    free(out);
}

static void test_included_card_anchored_at_include(void **state)
{
    (void)state;
    static const char text[] = "title\n.include amp.inc\nv1 a 0 1\n.end\n";
    Fixture x;
    setup(&x, text, (size_t[]){0}, 1);
    size_t after = strstr(text, "v1") - text;
    x.cards[0] = (Card){1, 3, 1, 10, 30, after};
    x.ds.ncards = 1;
    char *out = render(&x);
    assert_non_null(strstr(out, ".include amp.inc\n*~ [m1] moderate"));
    assert_strips_to(out, text);
    free(out);
}

/* A .lib section of the top file called near its top is read first, so its card comes first in
 * reading order while its annotation belongs further down: the lines still follow their cards. */
static void test_cards_out_of_anchor_order(void **state)
{
    (void)state;
    static const char text[] = "title\n.lib 't.cir' fast\nm1 d g 0 0 nch\n.lib fast\nm2 d g 0 0 nch\n.endl\n.end\n";
    Fixture x;
    setup(&x, text, (size_t[]){0, 1}, 2);
    /* card 0 is the section's m2 (read at the .lib call), card 1 the top level's m1 */
    size_t m1 = strstr(text, "m1") - text, m2 = strstr(text, "m2") - text, e1 = strstr(text, ".lib fast") - text,
           e2 = strstr(text, ".endl") - text;
    x.cards[0] = (Card){0, 5, 1, m2, e2, e2};
    x.cards[1] = (Card){0, 3, 1, m1, e1, e1};
    x.devs[0].name = "m2";
    x.devs[1].name = "m1";
    char *out = render(&x);
    assert_non_null(strstr(out, "m1 d g 0 0 nch\n*~ [m1] moderate"));
    assert_non_null(strstr(out, "m2 d g 0 0 nch\n*~ [m2] moderate"));
    assert_true(strstr(out, "[m1]") < strstr(out, "[m2]"));
    assert_strips_to(out, text);
    free(out);
}

static void test_strip_leaves_other_comments(void **state)
{
    (void)state;
    assert_strips_to("t\n* ~ not ours\nm1 a b c d n $ *~ inline\n *~ indented\n",
                     "t\n* ~ not ours\nm1 a b c d n $ *~ inline\n *~ indented\n");
    assert_strips_to("", "");
    assert_strips_to("*~ only\n", "*~ only\n"); /* the title, not an annotation line */
    assert_strips_to("t\n*~ ours\n", "t\n");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_lines_follow_cards),
        cmocka_unit_test(test_crlf_kept),
        cmocka_unit_test(test_no_final_newline),
        cmocka_unit_test(test_final_bare_cr),
        cmocka_unit_test(test_old_lines_replaced),
        cmocka_unit_test(test_title_with_the_mark_kept),
        cmocka_unit_test(test_many_instances_summarised),
        cmocka_unit_test(test_included_card_anchored_at_include),
        cmocka_unit_test(test_cards_out_of_anchor_order),
        cmocka_unit_test(test_strip_leaves_other_comments),
    };
    return cmocka_run_group_tests_name("annotate", tests, NULL, NULL);
}

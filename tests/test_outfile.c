/* test_outfile: outputs appear whole or not at all, and never over an input. */
#include "testutil.h"

#include <sys/stat.h>

#include "outfile.h"

static int exists(const char *p)
{
    struct stat st;
    return stat(p, &st) == 0;
}

static int tmp_left(const char *dir)
{
    char cmd[640];
    snprintf(cmd, sizeof cmd, "ls '%s' | grep -q '\\.tmp'", dir);
    return system(cmd) == 0;
}

static void test_commit_renames(void **state)
{
    (void)state;
    char *in = TU_TMPFILE("in.cir", "title\n");
    char out[512];
    snprintf(out, sizeof out, "%s.out", in);
    DiagList d;
    diag_init(&d);
    OutFile o;
    assert_int_equal(out_open(&o, out, (const char *const[]){in}, 1, &d), ERR_OK);
    fputs("hello\n", o.fp);
    assert_false(exists(out)); /* nothing at the target until commit */
    assert_int_equal(out_commit(&o, &d), ERR_OK);
    assert_true(exists(out));
    char dir[512];
    snprintf(dir, sizeof dir, "%s", in);
    *strrchr(dir, '/') = '\0';
    assert_false(tmp_left(dir));
    diag_free(&d);
    free(in);
}

static void test_abort_leaves_nothing(void **state)
{
    (void)state;
    char *in = TU_TMPFILE("in2.cir", "title\n");
    char out[512];
    snprintf(out, sizeof out, "%s.never", in);
    DiagList d;
    diag_init(&d);
    OutFile o;
    assert_int_equal(out_open(&o, out, NULL, 0, &d), ERR_OK);
    fputs("partial", o.fp);
    out_abort(&o);
    assert_false(exists(out));
    char dir[512];
    snprintf(dir, sizeof dir, "%s", in);
    *strrchr(dir, '/') = '\0';
    assert_false(tmp_left(dir));
    out_abort(&o); /* twice is harmless */
    diag_free(&d);
    free(in);
}

static void test_refuses_input(void **state)
{
    (void)state;
    char *in = TU_TMPFILE("in3.cir", "title\n");
    DiagList d;
    diag_init(&d);
    OutFile o;
    assert_int_equal(out_open(&o, in, (const char *const[]){in}, 1, &d), ERR_INPUT);
    assert_int_equal(d.nerrors, 1);
    assert_non_null(strstr(d.items[0].msg, "over the input"));
    /* the same file through another spelling of its path */
    char other[600];
    const char *slash = strrchr(in, '/');
    snprintf(other, sizeof other, "%.*s/./%s", (int)(slash - in), in, slash + 1);
    assert_int_equal(out_open(&o, other, (const char *const[]){in}, 1, &d), ERR_INPUT);
    diag_free(&d);
    free(in);
}

static void test_unwritable_folder(void **state)
{
    (void)state;
    DiagList d;
    diag_init(&d);
    OutFile o;
    assert_int_equal(out_open(&o, "/nonexistent-folder/x.json", NULL, 0, &d), ERR_IO);
    assert_non_null(strstr(d.items[0].msg, "cannot write '/nonexistent-folder/x.json'"));
    diag_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_commit_renames),
        cmocka_unit_test(test_abort_leaves_nothing),
        cmocka_unit_test(test_refuses_input),
        cmocka_unit_test(test_unwritable_folder),
    };
    return cmocka_run_group_tests_name("outfile", tests, NULL, NULL);
}

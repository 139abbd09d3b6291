/* test_source: whole-file loads. A regular file is mapped, a pipe read; either way the text ends in a
 * NUL (also when the file fills its last page exactly), reads back byte for byte, and stays readable
 * after src_drop has handed its pages back. */
#include "testutil.h"

#include <sys/stat.h>

#include "source.h"

static void check_load(const char *path, const char *want, size_t n, int mapped)
{
    DiagList d;
    diag_init(&d);
    SrcFile f;
    assert_int_equal(src_load(&f, path, (SrcLoc){0}, &d), ERR_OK);
    assert_int_equal(f.len, n);
    assert_int_equal(f.span != 0, mapped);
    assert_memory_equal(f.text, want, n);
    assert_int_equal(f.text[n], '\0');
    /* dropped whole, in pieces and past the end: the text reads the same afterwards */
    src_drop(&f, 0, f.len);
    assert_memory_equal(f.text, want, n);
    size_t mark = 0;
    for (size_t pos = 0; pos <= n; pos += 4093)
        src_drop_behind(&f, &mark, pos);
    src_drop(&f, n / 2, n + 100);
    assert_memory_equal(f.text, want, n);
    assert_int_equal(f.text[n], '\0');
    src_free(&f);
    diag_free(&d);
}

static char *pattern(size_t n)
{
    char *s = malloc(n + 1);
    assert_non_null(s);
    for (size_t i = 0; i < n; i++)
        s[i] = i % 61 == 60 ? '\n' : (char)('a' + i % 26);
    s[n] = '\0';
    return s;
}

static void test_sizes(void **state)
{
    (void)state;
    size_t pg = (size_t)sysconf(_SC_PAGESIZE);
    /* one byte, a part page, exactly one and three pages (the NUL then needs a page of its own), and a
       large file of many drop steps */
    const size_t sizes[] = {1, 1000, pg, 3 * pg, 3 * pg + 1, SRC_DROP_STEP * 2 + 12345};
    for (size_t k = 0; k < sizeof sizes / sizeof *sizes; k++) {
        char *s = pattern(sizes[k]);
        char *path = tu_tmpfile("sized.txt", s, sizes[k]);
        assert_non_null(path);
        check_load(path, s, sizes[k], 1);
        free(path);
        free(s);
    }
}

static void test_empty_file(void **state)
{
    (void)state;
    char *path = tu_tmpfile("empty.txt", "", 0);
    assert_non_null(path);
    check_load(path, "", 0, 0);
    free(path);
}

static void test_pipe_is_read(void **state)
{
    (void)state;
    char *path = tu_tmpfile("fifo-base", "", 0);
    assert_non_null(path);
    char fifo[600];
    snprintf(fifo, sizeof fifo, "%s.fifo", path);
    assert_int_equal(mkfifo(fifo, 0600), 0);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        FILE *fp = fopen(fifo, "w");
        if (fp) {
            fputs("* through a pipe\nm1 d g s b nch w=1u l=1u\n", fp);
            fclose(fp);
        }
        _exit(0);
    }
    static const char want[] = "* through a pipe\nm1 d g s b nch w=1u l=1u\n";
    check_load(fifo, want, sizeof want - 1, 0);
    unlink(fifo);
    free(path);
}

static void test_missing_file(void **state)
{
    (void)state;
    DiagList d;
    diag_init(&d);
    SrcFile f;
    assert_int_equal(src_load(&f, "/nonexistent-folder/x.sp", (SrcLoc){0}, &d), ERR_IO);
    assert_null(f.text);
    assert_non_null(strstr(d.items[0].msg, "cannot open '/nonexistent-folder/x.sp'"));
    diag_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_sizes),
        cmocka_unit_test(test_empty_file),
        cmocka_unit_test(test_pipe_is_read),
        cmocka_unit_test(test_missing_file),
    };
    return cmocka_run_group_tests_name("source", tests, NULL, NULL);
}

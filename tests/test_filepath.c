/* test_filepath.c — "~" expansion and Tab completion of the explorer's
 * path prompts (ui/filepath.c, pure C, compiled into this test directly).
 * The expected values follow the rules of ui/filepath.h on a directory
 * tree made here (names chosen by hand). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../ui/filepath.c"

static char root[256];

static void touch(const char *rel)
{
    char p[512];
    snprintf(p, sizeof p, "%s/%s", root, rel);
    FILE *f = fopen(p, "w");
    assert_non_null(f);
    fclose(f);
}

static void mkdir_rel(const char *rel)
{
    char p[512];
    snprintf(p, sizeof p, "%s/%s", root, rel);
    assert_int_equal(mkdir(p, 0755), 0);
}

static int setup(void **state)
{
    (void)state;
    snprintf(root, sizeof root, "/tmp/nilstep-filepath-XXXXXX");
    assert_non_null(mkdtemp(root));
    mkdir_rel("scans");
    touch("session-one.nilstep");
    touch("session-two.nilstep");
    touch("solo.txt");
    touch(".hidden");
    touch("scans/out.jsonl");
    setenv("HOME", root, 1);
    assert_int_equal(chdir(root), 0);
    return 0;
}

static int teardown(void **state)
{
    (void)state;
    char cmd[600];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", root);
    return system(cmd) == 0 ? 0 : -1;
}

static void tilde_should_expand_to_home(void **state)
{
    (void)state;
    char want[512];
    char *e = filepath_expand("~");
    assert_string_equal(e, root);
    free(e);
    e = filepath_expand("~/a/b.nilstep");
    snprintf(want, sizeof want, "%s/a/b.nilstep", root);
    assert_string_equal(e, want);
    free(e);
    /* not at the start, or an unknown user: unchanged */
    e = filepath_expand("a/~/b");
    assert_string_equal(e, "a/~/b");
    free(e);
    e = filepath_expand("~no-such-user-nilstep/x");
    assert_string_equal(e, "~no-such-user-nilstep/x");
    free(e);
    /* ~root is the password database's home of root */
    e = filepath_expand("~root/x");
    struct passwd *pw = getpwnam("root");
    if (pw) {
        snprintf(want, sizeof want, "%s/x", pw->pw_dir);
        assert_string_equal(e, want);
    }
    free(e);
}

static void unique_name_should_complete_whole(void **state)
{
    (void)state;
    char *out, **c;
    size_t n;
    assert_int_equal(filepath_complete(&out, &c, &n, "so"), 1);
    assert_string_equal(out, "solo.txt");
    assert_null(c);
    free(out);
    /* a directory gets its slash */
    assert_int_equal(filepath_complete(&out, &c, &n, "sc"), 1);
    assert_string_equal(out, "scans/");
    free(out);
    /* inside a directory, with "~" kept as typed */
    assert_int_equal(filepath_complete(&out, &c, &n, "~/scans/o"), 1);
    assert_string_equal(out, "~/scans/out.jsonl");
    free(out);
    assert_int_equal(filepath_complete(&out, &c, &n, "~"), 1);
    assert_string_equal(out, "~/");
    free(out);
}

static void ambiguous_name_should_grow_to_common_prefix_and_list(void **state)
{
    (void)state;
    char *out, **c;
    size_t n;
    assert_int_equal(filepath_complete(&out, &c, &n, "se"), 2);
    assert_string_equal(out, "session-");
    assert_int_equal(n, 2);
    assert_string_equal(c[0], "session-one.nilstep");
    assert_string_equal(c[1], "session-two.nilstep");
    free(out);
    filepath_free_list(c, n);
    /* "s": session-..., scans/, solo.txt share only "s"; hidden names stay out */
    assert_int_equal(filepath_complete(&out, &c, &n, "s"), 2);
    assert_string_equal(out, "s");
    assert_int_equal(n, 4);
    assert_string_equal(c[0], "scans/");
    free(out);
    filepath_free_list(c, n);
    assert_int_equal(filepath_complete(&out, &c, &n, ""), 2);
    assert_int_equal(n, 4);
    free(out);
    filepath_free_list(c, n);
    assert_int_equal(filepath_complete(&out, &c, &n, ".h"), 1);
    assert_string_equal(out, ".hidden");
    free(out);
}

static void no_match_should_say_so(void **state)
{
    (void)state;
    char *out, **c;
    size_t n;
    assert_int_equal(filepath_complete(&out, &c, &n, "zzz"), 0);
    assert_null(out);
    assert_int_equal(filepath_complete(&out, &c, &n, "no-dir/x"), 0);
    assert_int_equal(filepath_complete(&out, &c, &n, "~no-such-user-nilstep"), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(tilde_should_expand_to_home),
        cmocka_unit_test(unique_name_should_complete_whole),
        cmocka_unit_test(ambiguous_name_should_grow_to_common_prefix_and_list),
        cmocka_unit_test(no_match_should_say_so),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}

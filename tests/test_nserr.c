/* test_nserr.c — located errors and the progress hook. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>
#include <cmocka.h>

#include "nserr.h"

static void format_should_give_file_line_column_and_message(void **state)
{
    nserr_t e;
    char buf[600];
    (void)state;

    nserr_init(e);
    assert_int_equal(nserr_set(e, NS_ERR_INPUT, 3, 7, "unknown generator '%s'", "d"),
                     NS_ERR_INPUT);
    assert_int_equal(e->status, NS_ERR_INPUT);
    nserr_format(buf, sizeof buf, e, "g.nilstep");
    assert_string_equal(buf, "g.nilstep:3:7: error: unknown generator 'd'");
    nserr_format(buf, sizeof buf, e, NULL);
    assert_string_equal(buf, "3:7: error: unknown generator 'd'");
}

static void format_should_leave_out_unknown_parts(void **state)
{
    nserr_t e;
    char buf[600];
    (void)state;

    nserr_init(e);
    nserr_set(e, NS_ERR_IO, 0, 0, "cannot open 'x'");
    nserr_format(buf, sizeof buf, e, "x");
    assert_string_equal(buf, "x: error: cannot open 'x'");
    nserr_format(buf, sizeof buf, e, NULL);
    assert_string_equal(buf, "error: cannot open 'x'");
    nserr_set(e, NS_ERR_INPUT, 4, 0, "line only");
    nserr_format(buf, sizeof buf, e, "f");
    assert_string_equal(buf, "f:4: error: line only");
    /* a column without a line means nothing */
    nserr_set(e, NS_ERR_INPUT, 0, 9, "no line");
    assert_int_equal(e->col, 0);
}

static void format_should_truncate_safely(void **state)
{
    nserr_t e;
    char big[2000], buf[16];
    (void)state;

    memset(big, 'm', sizeof big - 1);
    big[sizeof big - 1] = '\0';
    nserr_init(e);
    nserr_set(e, NS_ERR_SYNTAX, 1, 1, "%s", big);
    assert_int_equal(strlen(e->msg), sizeof e->msg - 1);
    nserr_format(buf, sizeof buf, e, "file");
    assert_int_equal(strlen(buf), sizeof buf - 1);
    assert_string_equal(buf, "file:1:1: error");
}

static void clear_should_reset_to_ok(void **state)
{
    nserr_t e;
    (void)state;

    nserr_init(e);
    nserr_set(e, NS_ERR_LIMIT, 2, 2, "x");
    nserr_clear(e);
    assert_int_equal(e->status, NS_OK);
    assert_int_equal(e->line, 0);
    assert_string_equal(e->msg, "");
}

static int stop_after_half(void *ctx, const char *stage, double fraction)
{
    int *calls = ctx;
    (*calls)++;
    assert_non_null(stage);
    return fraction >= 0.5 ? 7 : 0;
}

static void progress_should_pass_the_callers_answer(void **state)
{
    int calls = 0;
    ns_progress_t p = {stop_after_half, &calls};
    ns_progress_t none = {NULL, NULL};
    (void)state;

    assert_int_equal(ns_progress_report(&p, "class 2", 0.25), 0);
    assert_int_equal(ns_progress_report(&p, "class 3", 0.75), 1);
    assert_int_equal(calls, 2);
    assert_int_equal(ns_progress_report(&none, "x", 0.9), 0);
    assert_int_equal(ns_progress_report(NULL, "x", 0.9), 0);
}

/* Internal errors say that they are bugs, whatever the file. */
static void internal_errors_ask_to_be_reported(void **state)
{
    nserr_t e;
    char buf[600];
    (void)state;

    nserr_init(e);
    assert_int_equal(nserr_set(e, NS_ERR_INTERNAL, 2, 3, "relator %d is not trivial", 1),
                     NS_ERR_INTERNAL);
    nserr_format(buf, sizeof buf, e, "--group");
    assert_string_equal(buf, "--group: internal error, please report: relator 1 is not trivial");
    nserr_format(buf, sizeof buf, e, NULL);
    assert_string_equal(buf, "internal error, please report: relator 1 is not trivial");
}

/* NS_ASSERT aborts on a false invariant in debug builds (run in a child
 * process) and costs nothing in release builds. */
static int ns_assert_false(void)
{
    int evaluated = 0;
    NS_ASSERT((evaluated = 1) == 0);
    return evaluated;
}

static void ns_assert_aborts_only_in_debug_builds(void **state)
{
    (void)state;
    NS_ASSERT(1 + 1 == 2); /* a true invariant never stops */
    fflush(NULL);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        if (!freopen("/dev/null", "w", stderr))
            _exit(1);
        ns_assert_false();
        _exit(0);
    }
    int st = 0;
    assert_int_equal(waitpid(pid, &st, 0), pid);
#ifdef NDEBUG
    assert_true(WIFEXITED(st) && WEXITSTATUS(st) == 0);
    assert_int_equal(ns_assert_false(), 0); /* not even evaluated */
#else
    assert_true(WIFSIGNALED(st) && WTERMSIG(st) == SIGABRT);
#endif
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(format_should_give_file_line_column_and_message),
        cmocka_unit_test(format_should_leave_out_unknown_parts),
        cmocka_unit_test(format_should_truncate_safely),
        cmocka_unit_test(clear_should_reset_to_ok),
        cmocka_unit_test(progress_should_pass_the_callers_answer),
        cmocka_unit_test(internal_errors_ask_to_be_reported),
        cmocka_unit_test(ns_assert_aborts_only_in_debug_builds),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

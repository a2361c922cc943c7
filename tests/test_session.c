/* test_session.c — session files, format 1: reading, writing, atomic
 * saving, located errors.
 *
 * Random tests print their seed; NILSTEP_SEED replays one, NILSTEP_ITER
 * multiplies the number of cases. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <dirent.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>
#include <cmocka.h>

#include <flint/flint.h>

#include "pres.h"
#include "session.h"
#include "testutil.h"

/* ------------------------------------------------------------------------ */
/* Helpers                                                                   */

static void parse_ok(session_t s, const char *text)
{
    nserr_t err;
    nserr_init(err);
    if (session_parse(s, text, err) != NS_OK)
        fail_msg("session does not parse: %d:%d %s\n%s", err->line, err->col, err->msg, text);
}

static void expect_error(const char *text, int line, int col, ns_status status, const char *msg)
{
    session_t s;
    nserr_t err;
    ns_status st;

    session_init(s);
    nserr_init(err);
    st = session_parse(s, text, err);
    if (st != status || err->line != line || err->col != col || strcmp(err->msg, msg) != 0)
        print_error("got status %d at %d:%d '%s' for\n%s\n", st, err->line, err->col, err->msg,
                    text);
    assert_int_equal(st, status);
    assert_int_equal(err->line, line);
    assert_int_equal(err->col, col);
    assert_string_equal(err->msg, msg);
    assert_null(s->group.text);
    session_clear(s);
}

static char *make_temp_dir(void)
{
    const char *base = getenv("TMPDIR");
    char *d = malloc(4096);
    snprintf(d, 4096, "%s/nilstep-session-XXXXXX", base && *base ? base : "/tmp");
    assert_non_null(mkdtemp(d));
    return d;
}

static void remove_tree(const char *dir)
{
    DIR *d = opendir(dir);
    struct dirent *e;
    char path[4096];

    if (d == NULL)
        return;
    while ((e = readdir(d)) != NULL) {
        struct stat st;
        if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
            continue;
        snprintf(path, sizeof path, "%s/%s", dir, e->d_name);
        if (lstat(path, &st) == 0 && S_ISDIR(st.st_mode))
            remove_tree(path);
        else
            unlink(path);
    }
    closedir(d);
    rmdir(dir);
}

static int count_entries(const char *dir)
{
    DIR *d = opendir(dir);
    struct dirent *e;
    int n = 0;
    assert_non_null(d);
    while ((e = readdir(d)) != NULL)
        if (strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0)
            n++;
    closedir(d);
    return n;
}

static void write_file(const char *path, const char *data, size_t n)
{
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    assert_int_equal(fwrite(data, 1, n, f), n);
    assert_int_equal(fclose(f), 0);
}

static char *read_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    char *buf = calloc(1, 1 << 16);
    size_t n;
    assert_non_null(f);
    n = fread(buf, 1, (1 << 16) - 1, f);
    buf[n] = '\0';
    fclose(f);
    return buf;
}

static const char *example =
    "nilstep session 1\n"
    "title   Doubling on a 2-step group\n"
    "group   <a, b | [a,b,a], [a,b,b]>\n"
    "class   3\n"
    "map     a -> a^2, b -> b^2\n";

/* ------------------------------------------------------------------------ */
/* Reading                                                                   */

static void parse_should_read_the_design_example(void **state)
{
    session_t s;
    (void)state;

    session_init(s);
    parse_ok(s, example);
    assert_string_equal(s->title.text, "Doubling on a 2-step group");
    assert_string_equal(s->group.text, "<a, b | [a,b,a], [a,b,b]>");
    assert_int_equal(s->group.line, 3);
    assert_int_equal(s->group.col, 9);
    assert_int_equal(s->cls, 3);
    assert_string_equal(s->map.text, "a -> a^2, b -> b^2");
    assert_int_equal(s->map.line, 5);
    assert_int_equal(s->nnotes, 0);
    assert_int_equal(s->cursor_layer, -1);
    assert_int_equal(s->iterate_steps, -1);
    assert_null(s->iterate_word.text);
    session_clear(s);
}

static void parse_should_keep_raw_values_with_continuations(void **state)
{
    session_t s;
    (void)state;

    session_init(s);
    parse_ok(s, "nilstep session 1\n"
                "# a comment line\n"
                "\n"
                "group\t<a, b |\n"
                "# commented out: [a,b,a],\n"
                "\n"
                "      [a,b,b]>   \n"
                "class 2\n"
                "map\n"
                "   a -> b\n"
                "   b -> a\n"
                "title  A title\n"
                "   on two lines   \n"
                "note   first\n"
                "note   second\n"
                "       # not a comment: indented\n");
    /* the group value as it stands in the file, from its first character
     * to the end of its last continuation line */
    assert_string_equal(s->group.text,
                        "<a, b |\n# commented out: [a,b,a],\n\n      [a,b,b]>");
    assert_int_equal(s->group.line, 4);
    assert_int_equal(s->group.col, 7);
    /* a value may start on the line after its key */
    assert_string_equal(s->map.text, "a -> b\n   b -> a");
    assert_int_equal(s->map.line, 10);
    assert_int_equal(s->map.col, 4);
    assert_string_equal(s->title.text, "A title\non two lines");
    assert_int_equal(s->nnotes, 2);
    assert_string_equal(s->notes[0].text, "first");
    assert_string_equal(s->notes[1].text, "second\n# not a comment: indented");
    session_clear(s);
}

static void loaded_group_should_report_errors_in_file_coordinates(void **state)
{
    session_t s;
    pres_t p;
    nserr_t err;
    char msg[600];
    (void)state;

    const char *text = "nilstep session 1\n"
                       "title  x\n"
                       "group  <a, b |\n"
                       "\t  [a,b,a],\n"
                       "        [a,b,d]>\n"
                       "class  2\n";
    char *dir = make_temp_dir(), path[4200];

    session_init(s);
    pres_init(p);
    nserr_init(err);
    snprintf(path, sizeof path, "%s/g.nilstep", dir);
    write_file(path, text, strlen(text));
    assert_int_equal(session_load(s, path, err), NS_OK);
    remove_tree(dir);
    free(dir);
    assert_int_equal(pres_parse(p, s->group.text, s->group.line, s->group.col, err),
                     NS_ERR_INPUT);
    nserr_format(msg, sizeof msg, err, "g.nilstep");
    assert_string_equal(msg, "g.nilstep:5:14: error: unknown generator 'd'");
    /* a good group parses from the same value */
    parse_ok(s, "nilstep session 1\ngroup <a, b |\n  [a,b,a]>\nclass 2\n");
    assert_int_equal(pres_parse(p, s->group.text, s->group.line, s->group.col, err), NS_OK);
    assert_int_equal(p->nrels, 1);
    pres_clear(p);
    session_clear(s);
}

static void parse_should_read_cursor_and_iterate(void **state)
{
    session_t s;
    const char *head = "nilstep session 1\ngroup <a,b>\nclass 2\n";
    char text[512];
    (void)state;

    session_init(s);
    snprintf(text, sizeof text, "%scursor layer 2 image 1\niterate word a b^2 steps 200\n", head);
    parse_ok(s, text);
    assert_int_equal(s->cursor_layer, 2);
    assert_int_equal(s->cursor_image, 1);
    assert_string_equal(s->iterate_word.text, "a b^2");
    assert_int_equal(s->iterate_word.line, 5);
    assert_int_equal(s->iterate_word.col, 14);
    assert_int_equal(s->iterate_steps, 200);

    snprintf(text, sizeof text, "%scursor image 7\niterate steps 5 word [a,b]\n    b # tail\n",
             head);
    parse_ok(s, text);
    assert_int_equal(s->cursor_layer, -1);
    assert_int_equal(s->cursor_image, 7);
    assert_string_equal(s->iterate_word.text, "[a,b]\n    b");
    assert_int_equal(s->iterate_steps, 5);

    snprintf(text, sizeof text, "%siterate steps 0\n", head);
    parse_ok(s, text);
    assert_null(s->iterate_word.text);
    assert_int_equal(s->iterate_steps, 0);

    snprintf(text, sizeof text, "%siterate word a\n", head);
    parse_ok(s, text);
    assert_string_equal(s->iterate_word.text, "a");
    assert_int_equal(s->iterate_steps, -1);
    session_clear(s);
}

/* ------------------------------------------------------------------------ */
/* Errors                                                                    */

static void parse_should_reject_unknown_key_naming_it(void **state)
{
    (void)state;
    expect_error("nilstep session 1\ngroup <a>\ncolour blue\nclass 1\n", 3, 1, NS_ERR_INPUT,
                 "unknown key 'colour' (keys: title, group, class, map, cursor, iterate, note)");
    expect_error("nilstep session 1\nGroup <a>\n", 2, 1, NS_ERR_INPUT,
                 "unknown key 'Group' (keys: title, group, class, map, cursor, iterate, note)");
}

static void parse_should_reject_repeated_keys(void **state)
{
    (void)state;
    expect_error("nilstep session 1\ngroup <a>\nclass 1\n\nclass 2\n", 5, 1, NS_ERR_INPUT,
                 "repeated key 'class' (first on line 3)");
}

static void parse_should_require_group_and_class(void **state)
{
    (void)state;
    expect_error("nilstep session 1\nclass 1\n", 0, 0, NS_ERR_INPUT,
                 "missing key 'group' (the presentation)");
    expect_error("nilstep session 1\ngroup <a>\n", 0, 0, NS_ERR_INPUT,
                 "missing key 'class' (a number from 1 to 64)");
}

static void parse_should_check_the_class_number(void **state)
{
    const char *m = "class must be a whole number from 1 to 64";
    (void)state;
    expect_error("nilstep session 1\ngroup <a>\nclass  0\n", 3, 8, NS_ERR_INPUT, m);
    expect_error("nilstep session 1\ngroup <a>\nclass  65\n", 3, 8, NS_ERR_INPUT, m);
    expect_error("nilstep session 1\ngroup <a>\nclass  -3\n", 3, 8, NS_ERR_INPUT, m);
    expect_error("nilstep session 1\ngroup <a>\nclass  three\n", 3, 8, NS_ERR_INPUT, m);
    expect_error("nilstep session 1\ngroup <a>\nclass  99999999999999999999\n", 3, 8,
                 NS_ERR_INPUT, m);
    expect_error("nilstep session 1\ngroup <a>\nclass  3 4\n", 3, 10, NS_ERR_INPUT,
                 "unexpected '4' after the class");
    {
        session_t s;
        session_init(s);
        parse_ok(s, "nilstep session 1\ngroup <a>\nclass 64   # the most\n");
        assert_int_equal(s->cls, 64);
        session_clear(s);
    }
}

static void parse_should_check_the_first_line(void **state)
{
    (void)state;
    expect_error("", 1, 1, NS_ERR_SYNTAX,
                 "not a nilstep session file (the first line must be 'nilstep session 1')");
    expect_error("nilstep  session 1\n", 1, 1, NS_ERR_SYNTAX,
                 "not a nilstep session file (the first line must be 'nilstep session 1')");
    expect_error("nilstep session 2\ngroup <a>\nclass 1\n", 1, 17, NS_ERR_SYNTAX,
                 "session format '2' is not known to this program (it reads format 1)");
    {
        session_t s;
        session_init(s);
        parse_ok(s, "\xEF\xBB\xBFnilstep session 1\r\ngroup <a>\r\nclass 1\r\n");
        assert_int_equal(s->cls, 1);
        assert_string_equal(s->group.text, "<a>");
        session_clear(s);
    }
}

static void parse_should_reject_bad_structure_with_location(void **state)
{
    (void)state;
    expect_error("nilstep session 1\n   group <a>\n", 2, 4, NS_ERR_SYNTAX,
                 "indented line continues no key (keys start in column 1)");
    expect_error("nilstep session 1\ngroup <a>\ntitle   \nclass 1\n", 3, 6, NS_ERR_SYNTAX,
                 "key 'title' needs a value");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\ncursor layer x\n", 4, 14, NS_ERR_INPUT,
                 "expected a whole number from 0 to 1000000000 after 'layer'");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\ncursor row 2\n", 4, 8, NS_ERR_INPUT,
                 "unknown cursor field 'row' (expected 'layer' or 'image')");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\ncursor layer 1 layer 2\n", 4, 16,
                 NS_ERR_INPUT, "repeated cursor field 'layer'");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\niterate steps\n", 4, 9, NS_ERR_INPUT,
                 "expected a whole number after 'steps'");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\niterate go 3\n", 4, 9, NS_ERR_INPUT,
                 "expected 'word' or 'steps' in iterate, found 'go'");
    expect_error("nilstep session 1\ngroup <a>\nclass 1\niterate word steps 3\n", 4, 9,
                 NS_ERR_INPUT, "expected a word after 'word'");
}

static void parse_should_reject_invalid_utf8_with_location(void **state)
{
    (void)state;
    expect_error("nilstep session 1\ntitle caf\xC3\xA9 \xC3\n", 2, 12, NS_ERR_SYNTAX,
                 "invalid UTF-8 (byte 0xc3)");
    /* overlong encoding of '/' */
    expect_error("nilstep session 1\ntitle \xC0\xAF\n", 2, 7, NS_ERR_SYNTAX,
                 "invalid UTF-8 (byte 0xc0)");
    /* UTF-16 surrogate */
    expect_error("nilstep session 1\n\ntitle \xED\xA0\x80\n", 3, 7, NS_ERR_SYNTAX,
                 "invalid UTF-8 (byte 0xed)");
}

/* ------------------------------------------------------------------------ */
/* Writing                                                                   */

static void get_str_should_write_the_documented_layout(void **state)
{
    session_t s;
    nserr_t err;
    char *t;
    (void)state;

    session_init(s);
    nserr_init(err);
    session_set_title(s, "Doubling\non two lines");
    session_set_group(s, "<a, b |\n   [a,b,a],\n\n   [a,b,b]>");
    assert_int_equal(session_set_class(s, 3, err), NS_OK);
    session_set_map(s, "a -> a^2, b -> b^2");
    session_set_cursor(s, 1, -1);
    session_set_iterate(s, "a b", 100);
    session_add_note(s, "remember");
    t = session_get_str(s);
    assert_string_equal(t, "nilstep session 1\n"
                           "title   Doubling\n"
                           "    on two lines\n"
                           "group   <a, b |\n"
                           "    [a,b,a],\n"
                           "    [a,b,b]>\n"
                           "class   3\n"
                           "map     a -> a^2, b -> b^2\n"
                           "cursor  layer 1\n"
                           "iterate steps 100 word a b\n"
                           "note    remember\n");
    flint_free(t);
    session_clear(s);
}

static void setters_should_validate_and_remove(void **state)
{
    session_t s;
    nserr_t err;
    (void)state;

    session_init(s);
    nserr_init(err);
    assert_int_equal(session_set_class(s, 65, err), NS_ERR_INPUT);
    assert_int_equal(s->cls, 0);
    assert_int_equal(session_set_class(s, 64, err), NS_OK);
    session_set_map(s, "a -> a");
    assert_non_null(s->map.text);
    assert_int_equal(s->map.line, 1);
    assert_int_equal(s->map.col, 1);
    session_set_map(s, "  \n ");
    assert_null(s->map.text);
    session_add_note(s, "n1");
    session_add_note(s, "n2");
    assert_int_equal(s->nnotes, 2);
    session_clear_notes(s);
    assert_int_equal(s->nnotes, 0);
    session_set_cursor(s, -5, SESSION_MAX_INDEX + 10);
    assert_int_equal(s->cursor_layer, -1);
    assert_int_equal(s->cursor_image, SESSION_MAX_INDEX);
    session_clear(s);
}

static void equal_should_notice_every_field(void **state)
{
    session_t a, b;
    nserr_t err;
    (void)state;

    session_init(a);
    session_init(b);
    nserr_init(err);
    parse_ok(a, example);
    session_set(b, a);
    assert_true(session_equal(a, b));
    session_set_title(b, "Other");
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_set_group(b, "<a, b | [a,b,a]>");
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_set_class(b, 4, err);
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_set_map(b, NULL);
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_add_note(b, "x");
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_set_cursor(b, 0, -1);
    assert_false(session_equal(a, b));
    session_set(b, a);
    session_set_iterate(b, NULL, 3);
    assert_false(session_equal(a, b));
    session_set(b, a);
    /* indentation and blank lines are not content */
    session_set_group(b, "  <a, b | [a,b,a],\n\n        [a,b,b]>");
    session_set_group(a, "<a, b | [a,b,a],\n[a,b,b]>");
    assert_true(session_equal(a, b));
    session_clear(a);
    session_clear(b);
}

/* Random texts over an alphabet with the characters that matter to the
 * format: blanks, line breaks, '#', non-ASCII. */
static char *random_text(int allow_lines)
{
    static const char *const pieces[] = {"a", "b^2", "[a,b]", " ", "  ", "\t", "#", "x",
                                         "é", "→", "steps", "1", "word", "-", "=", "<"};
    int n = (int)rng_range(1, 12);
    char *t = calloc(1, 256);
    for (int i = 0; i < n; i++) {
        if (allow_lines && rng_range(0, 5) == 0)
            strcat(t, rng_range(0, 1) ? "\n" : "\n   ");
        else
            strcat(t, pieces[rng_range(0, sizeof pieces / sizeof pieces[0] - 1)]);
    }
    /* a letter somewhere, so that the text is not blank */
    strcat(t, "z");
    return t;
}

static void get_str_then_parse_should_give_an_equal_session(void **state)
{
    long cases = count_scaled_by("NILSTEP_ITER", 300);
    (void)state;

    rng_seed_test("session round trip", 20240602ULL, "set NILSTEP_SEED to replay");
    for (long c = 0; c < cases; c++) {
        session_t s, t;
        nserr_t err;
        char *text, *x;

        session_init(s);
        session_init(t);
        nserr_init(err);
        x = random_text(1);
        session_set_group(s, x);
        free(x);
        session_set_class(s, (int)rng_range(1, 64), err);
        if (rng_range(0, 1)) {
            x = random_text(1);
            session_set_title(s, x);
            free(x);
        }
        if (rng_range(0, 1)) {
            x = random_text(1);
            session_set_map(s, x);
            free(x);
        }
        for (long k = rng_range(0, 3); k > 0; k--) {
            x = random_text(1);
            session_add_note(s, x);
            free(x);
        }
        session_set_cursor(s, rng_range(-1, 5), rng_range(-1, 5));
        if (rng_range(0, 1)) {
            /* an iterate word is a word: keep '#' out of it, and keep it
             * from ending like a steps clause */
            char w[64];
            snprintf(w, sizeof w, "a^%ld b", rng_range(-9, 9));
            session_set_iterate(s, rng_range(0, 1) ? w : NULL, rng_range(-1, 1000));
        }
        text = session_get_str(s);
        if (session_parse(t, text, err) != NS_OK)
            fail_msg("case %ld does not parse back: %d:%d %s\n%s", c, err->line, err->col,
                     err->msg, text);
        if (!session_equal(s, t))
            fail_msg("case %ld differs after a round trip:\n%s", c, text);
        {
            char *again = session_get_str(t);
            assert_string_equal(text, again);
            flint_free(again);
        }
        flint_free(text);
        session_clear(s);
        session_clear(t);
    }
}

/* ------------------------------------------------------------------------ */
/* Files                                                                     */

static void load_should_report_missing_files_with_path_and_reason(void **state)
{
    session_t s;
    nserr_t err;
    char *dir = make_temp_dir(), path[4200], want[4400];
    (void)state;

    session_init(s);
    nserr_init(err);
    snprintf(path, sizeof path, "%s/absent.nilstep", dir);
    assert_int_equal(session_load(s, path, err), NS_ERR_IO);
    snprintf(want, sizeof want, "cannot open '%s': %s", path, strerror(ENOENT));
    assert_string_equal(err->msg, want);
    assert_int_equal(err->line, 0);
    remove_tree(dir);
    free(dir);
    session_clear(s);
}

static void load_should_reject_nul_bytes_and_huge_files(void **state)
{
    session_t s;
    nserr_t err;
    char *dir = make_temp_dir(), path[4200];
    const char data[] = "nilstep session 1\ngroup <a>\nclass 1\ntitle a\0b\n";
    (void)state;

    session_init(s);
    nserr_init(err);
    snprintf(path, sizeof path, "%s/nul.nilstep", dir);
    write_file(path, data, sizeof data - 1);
    assert_int_equal(session_load(s, path, err), NS_ERR_SYNTAX);
    assert_int_equal(err->line, 4);
    assert_int_equal(err->col, 8);
    assert_string_equal(err->msg, "NUL byte in the file (not a text file?)");

    snprintf(path, sizeof path, "%s/huge.nilstep", dir);
    {
        FILE *f = fopen(path, "wb");
        assert_non_null(f);
        fputs("nilstep session 1\n", f);
        assert_int_equal(ftruncate(fileno(f), SESSION_MAX_BYTES + 1), 0);
        fclose(f);
    }
    assert_int_equal(session_load(s, path, err), NS_ERR_LIMIT);
    assert_null(s->group.text);
    remove_tree(dir);
    free(dir);
    session_clear(s);
}

static void save_should_replace_the_file_and_leave_no_temporary(void **state)
{
    session_t s, t;
    nserr_t err;
    char *dir = make_temp_dir(), path[4200], *got;
    struct stat st;
    (void)state;

    session_init(s);
    session_init(t);
    nserr_init(err);
    snprintf(path, sizeof path, "%s/work.nilstep", dir);
    write_file(path, "old content\n", 12);
    assert_int_equal(chmod(path, 0600), 0);
    parse_ok(s, example);
    session_add_note(s, "saved by the test");
    assert_int_equal(session_save(s, path, err), NS_OK);
    assert_int_equal(count_entries(dir), 1);
    got = read_file(path);
    {
        char *want = session_get_str(s);
        assert_string_equal(got, want);
        flint_free(want);
    }
    free(got);
    /* the mode of the replaced file is kept */
    assert_int_equal(stat(path, &st), 0);
    assert_int_equal(st.st_mode & 0777, 0600);
    /* and it loads back to the same session */
    assert_int_equal(session_load(t, path, err), NS_OK);
    assert_true(session_equal(s, t));

    /* a new file */
    snprintf(path, sizeof path, "%s/new.nilstep", dir);
    assert_int_equal(session_save(s, path, err), NS_OK);
    assert_int_equal(count_entries(dir), 2);
    remove_tree(dir);
    free(dir);
    session_clear(s);
    session_clear(t);
}

/* session_save_text, the writer the explorer's exports share with
 * session_save: any text, the same atomic replace, errors naming the file. */
static void save_text_should_write_any_text_atomically(void **state)
{
    nserr_t err;
    char *dir = make_temp_dir(), path[4200], *got;
    struct stat st;
    (void)state;

    nserr_init(err);
    snprintf(path, sizeof path, "%s/report.json", dir);
    assert_int_equal(session_save_text("{\"not\": \"a session\"}\n", path, err), NS_OK);
    got = read_file(path);
    assert_string_equal(got, "{\"not\": \"a session\"}\n");
    free(got);
    assert_int_equal(stat(path, &st), 0);
    assert_int_equal(st.st_mode & 0777, 0644);
    /* replacing keeps the mode and leaves no temporary file */
    assert_int_equal(chmod(path, 0640), 0);
    assert_int_equal(session_save_text("second\n", path, err), NS_OK);
    got = read_file(path);
    assert_string_equal(got, "second\n");
    free(got);
    assert_int_equal(stat(path, &st), 0);
    assert_int_equal(st.st_mode & 0777, 0640);
    assert_int_equal(count_entries(dir), 1);
    /* a missing directory: the message names the file and the reason */
    snprintf(path, sizeof path, "%s/no/such/dir/m.txt", dir);
    assert_int_equal(session_save_text("x\n", path, err), NS_ERR_IO);
    assert_non_null(strstr(err->msg, path));
    assert_non_null(strstr(err->msg, strerror(ENOENT)));
    assert_int_equal(count_entries(dir), 1);
    remove_tree(dir);
    free(dir);
}

static void save_should_fail_cleanly_and_keep_the_old_file(void **state)
{
    session_t s;
    nserr_t err;
    char *dir = make_temp_dir(), path[4200], sub[4200], *got;
    (void)state;

    session_init(s);
    nserr_init(err);
    parse_ok(s, example);

    /* the directory does not exist: nothing is created */
    snprintf(path, sizeof path, "%s/no/such/dir/x.nilstep", dir);
    assert_int_equal(session_save(s, path, err), NS_ERR_IO);
    assert_non_null(strstr(err->msg, path));
    assert_non_null(strstr(err->msg, strerror(ENOENT)));
    assert_int_equal(count_entries(dir), 0);

    /* the rename fails (the target is a non-empty directory): the temporary
     * file, already written and synced, is removed and the target stays */
    snprintf(sub, sizeof sub, "%s/target", dir);
    assert_int_equal(mkdir(sub, 0755), 0);
    snprintf(path, sizeof path, "%s/target/keep", dir);
    write_file(path, "keep me\n", 8);
    assert_int_equal(session_save(s, sub, err), NS_ERR_IO);
    assert_int_equal(count_entries(dir), 1);
    assert_int_equal(count_entries(sub), 1);
    got = read_file(path);
    assert_string_equal(got, "keep me\n");
    free(got);

    /* a session without class is refused before anything is written */
    {
        session_t u;
        session_init(u);
        session_set_group(u, "<a>");
        snprintf(path, sizeof path, "%s/u.nilstep", dir);
        assert_int_equal(session_save(u, path, err), NS_ERR_INPUT);
        assert_int_equal(count_entries(dir), 1);
        session_clear(u);
    }
    remove_tree(dir);
    free(dir);
    session_clear(s);
}


/* Saving through a symbolic link writes the file the link points to: the
 * link stays a link, the target keeps its owner, group and mode (issue 8:
 * the link used to be replaced by a regular file and the real file left
 * unchanged). */
static void save_should_follow_links_and_keep_owner_and_mode(void **state)
{
    session_t s, t;
    nserr_t err;
    char *dir = make_temp_dir(), real[4200], sub[4200], link[4200], *got;
    struct stat st;
    int root = geteuid() == 0;
    (void)state;

    session_init(s);
    session_init(t);
    nserr_init(err);
    parse_ok(s, example);
    snprintf(sub, sizeof sub, "%s/real", dir);
    assert_int_equal(mkdir(sub, 0755), 0);
    snprintf(real, sizeof real, "%s/real/t.nilstep", dir);
    snprintf(link, sizeof link, "%s/link.nilstep", dir);
    write_file(real, "old content\n", 12);
    assert_int_equal(chmod(real, 0640), 0);
    if (root) /* another owner, as when saving someone else's shared file */
        assert_int_equal(chown(real, 65534, 65534), 0);
    assert_int_equal(symlink("real/t.nilstep", link), 0);

    session_add_note(s, "through the link");
    assert_int_equal(session_save(s, link, err), NS_OK);
    assert_int_equal(lstat(link, &st), 0);
    assert_true(S_ISLNK(st.st_mode));
    assert_int_equal(stat(real, &st), 0);
    assert_int_equal(st.st_mode & 07777, 0640);
    if (root) {
        assert_int_equal(st.st_uid, 65534);
        assert_int_equal(st.st_gid, 65534);
    }
    assert_int_equal(session_load(t, real, err), NS_OK);
    assert_true(session_equal(s, t));
    assert_int_equal(count_entries(sub), 1);
    assert_int_equal(count_entries(dir), 2);

    /* a dangling link: the file is created where the link points */
    assert_int_equal(unlink(real), 0);
    assert_int_equal(session_save(s, link, err), NS_OK);
    assert_int_equal(lstat(link, &st), 0);
    assert_true(S_ISLNK(st.st_mode));
    got = read_file(real);
    {
        char *want = session_get_str(s);
        assert_string_equal(got, want);
        flint_free(want);
    }
    free(got);
    remove_tree(dir);
    free(dir);
    session_clear(s);
    session_clear(t);
}

/* A file with two names stays one file: both names see the new content. */
static void save_should_not_split_hard_links(void **state)
{
    session_t s;
    nserr_t err;
    char *dir = make_temp_dir(), a[4200], b[4200], *got, *want;
    struct stat sa, sb;
    (void)state;

    session_init(s);
    nserr_init(err);
    parse_ok(s, example);
    snprintf(a, sizeof a, "%s/a.nilstep", dir);
    snprintf(b, sizeof b, "%s/b.nilstep", dir);
    {
        static const char old[] = "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n"
                                  "a much longer old content than the new one will be, to be cut\n";
        write_file(a, old, sizeof old - 1);
    }
    assert_int_equal(chmod(a, 0600), 0);
    assert_int_equal(link(a, b), 0);
    assert_int_equal(session_save(s, a, err), NS_OK);
    assert_int_equal(stat(a, &sa), 0);
    assert_int_equal(stat(b, &sb), 0);
    assert_true(sa.st_ino == sb.st_ino);
    assert_int_equal(sa.st_nlink, 2);
    assert_int_equal(sa.st_mode & 07777, 0600);
    want = session_get_str(s);
    got = read_file(b);
    assert_string_equal(got, want);
    free(got);
    flint_free(want);
    assert_int_equal(count_entries(dir), 2); /* the copy set aside is gone */
    remove_tree(dir);
    free(dir);
    session_clear(s);
}

/* The longest legal name (NAME_MAX = 255 bytes on Linux file systems)
 * leaves no room for a suffix: the temporary name is shortened. */
static void save_should_work_for_the_longest_names(void **state)
{
    session_t s, t;
    nserr_t err;
    char *dir = make_temp_dir(), path[4400], name[300];
    (void)state;

    session_init(s);
    session_init(t);
    nserr_init(err);
    parse_ok(s, example);
    for (int len = 248; len <= 255; len += 7) {
        memset(name, 'n', (size_t)len);
        name[len] = '\0';
        snprintf(path, sizeof path, "%s/%s", dir, name);
        if (session_save(s, path, err) != NS_OK)
            fail_msg("length %d: %s", len, err->msg);
        assert_int_equal(session_load(t, path, err), NS_OK);
        assert_true(session_equal(s, t));
    }
    assert_int_equal(count_entries(dir), 2);
    remove_tree(dir);
    free(dir);
    session_clear(s);
    session_clear(t);
}

/* A file-size limit (ulimit -f) is a write error like a full disk: the old
 * file stays and the temporary file goes.  Runs in a child because the
 * limit and the ignored SIGXFSZ must not leak into the other tests. */
static void save_should_fail_cleanly_at_the_file_size_limit(void **state)
{
    char *dir = make_temp_dir(), path[4200];
    (void)state;
    snprintf(path, sizeof path, "%s/big.nilstep", dir);
    write_file(path, "old\n", 4);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        session_t s;
        nserr_t err;
        struct rlimit rl = {64, 64};
        session_init(s);
        nserr_init(err);
        if (session_parse(s, example, err) != NS_OK)
            _exit(10);
        signal(SIGXFSZ, SIG_IGN);
        if (setrlimit(RLIMIT_FSIZE, &rl) != 0)
            _exit(11);
        if (session_save(s, path, err) != NS_ERR_IO)
            _exit(12);
        if (strstr(err->msg, strerror(EFBIG)) == NULL)
            _exit(13);
        _exit(0);
    }
    int ws;
    assert_int_equal(waitpid(pid, &ws, 0), pid);
    assert_true(WIFEXITED(ws));
    assert_int_equal(WEXITSTATUS(ws), 0);
    char *got = read_file(path);
    assert_string_equal(got, "old\n");
    free(got);
    assert_int_equal(count_entries(dir), 1);
    remove_tree(dir);
    free(dir);
}

/* Temporary files left by a killed save are recognised next to the
 * session (and only those: similar names are not taken). */
static void leftovers_should_be_recognised(void **state)
{
    char *dir = make_temp_dir(), path[4200], other[4200];
    slong n = -1;
    (void)state;
    snprintf(path, sizeof path, "%s/w.nilstep", dir);
    write_file(path, "x\n", 2);
    assert_null(session_leftovers_get_str(&n, path));
    assert_int_equal(n, 0);
    snprintf(other, sizeof other, "%s/w.nilstep.tmp-Ab12Z9", dir);
    write_file(other, "x\n", 2);
    snprintf(other, sizeof other, "%s/w.nilstep.old-q1w2e3", dir);
    write_file(other, "x\n", 2);
    snprintf(other, sizeof other, "%s/w.nilstep.tmp-toolong1", dir);
    write_file(other, "x\n", 2);
    snprintf(other, sizeof other, "%s/v.nilstep.tmp-Ab12Z9", dir);
    write_file(other, "x\n", 2);
    char *s = session_leftovers_get_str(&n, path);
    assert_non_null(s);
    assert_int_equal(n, 2);
    assert_non_null(strstr(s, "w.nilstep.tmp-Ab12Z9"));
    assert_non_null(strstr(s, "w.nilstep.old-q1w2e3"));
    assert_null(strstr(s, "toolong"));
    assert_null(strstr(s, "v.nilstep"));
    flint_free(s);
    remove_tree(dir);
    free(dir);
}

/* Kill -9 at random moments while a child saves, alternately, two
 * sessions through a symbolic link to a file of another owner with mode
 * 0640.  After every kill: the link is still a link, the target is one of
 * the two sessions whole, owner and mode are those of the original, and
 * every temporary file left in the directory is recognised as a leftover.
 * Seeded: NILSTEP_SEED repeats a run. */
static void kill_while_saving_should_leave_a_whole_file(void **state)
{
    char *dir = make_temp_dir(), real[4200], link[4200], sub[4200];
    int root = geteuid() == 0, trials = (int)count_scaled_by("NILSTEP_ITER", 40), changed = 0;
    slong leftovers = 0;
    session_t a, b, t, last;
    nserr_t err;
    (void)state;

    session_init(a);
    session_init(b);
    session_init(t);
    nserr_init(err);
    parse_ok(a, example);
    parse_ok(b, example);
    session_add_note(b, "the other version, somewhat longer than the first one");
    snprintf(sub, sizeof sub, "%s/real", dir);
    assert_int_equal(mkdir(sub, 0755), 0);
    snprintf(real, sizeof real, "%s/real/k.nilstep", dir);
    snprintf(link, sizeof link, "%s/k.nilstep", dir);
    assert_int_equal(session_save(a, real, err), NS_OK);
    assert_int_equal(chmod(real, 0640), 0);
    if (root)
        assert_int_equal(chown(real, 65534, 65534), 0);
    assert_int_equal(symlink(real, link), 0);
    session_init(last);
    session_set(last, a);
    rng_seed_test("kill_while_saving", 8, "kill times");
    for (int i = 0; i < trials; i++) {
        pid_t pid = fork();
        assert_true(pid >= 0);
        if (pid == 0) {
            nserr_t e;
            nserr_init(e);
            for (unsigned k = 0;; k++)
                if (session_save(k % 2 ? b : a, link, e) != NS_OK)
                    _exit(1);
        }
        struct timespec d = {0, rng_range(1000000, 30000000)};
        nanosleep(&d, NULL);
        kill(pid, SIGKILL);
        int ws;
        assert_int_equal(waitpid(pid, &ws, 0), pid);
        if (!WIFSIGNALED(ws))
            fail_msg("trial %d: the saving child stopped on its own", i);
        struct stat st;
        assert_int_equal(lstat(link, &st), 0);
        assert_true(S_ISLNK(st.st_mode));
        assert_int_equal(stat(real, &st), 0);
        assert_int_equal(st.st_mode & 07777, 0640);
        if (root) {
            assert_int_equal(st.st_uid, 65534);
            assert_int_equal(st.st_gid, 65534);
        }
        if (session_load(t, real, err) != NS_OK)
            fail_msg("trial %d: torn file: %s", i, err->msg);
        assert_true(session_equal(t, a) || session_equal(t, b));
        slong n;
        char *left = session_leftovers_get_str(&n, link);
        assert_int_equal(n + 1, count_entries(sub));
        flint_free(left);
        leftovers = n;
        changed += !session_equal(t, last);
        session_set(last, t);
    }
    printf("# %d kills: the file changed between %d of them, %ld temporary files left\n", trials,
           changed, (long)leftovers);
    session_clear(last);
    remove_tree(dir);
    free(dir);
    session_clear(a);
    session_clear(b);
    session_clear(t);
}

/* Saving over a scenario must not lose the comment that explains it: the
 * '#' lines before the first key come back after the first line. */
/* session_set_comments: every line reads back as a comment line. */
static void set_comments_should_read_back_the_same(void **state)
{
    (void)state;
    session_t s, t;
    nserr_t err;
    session_init(s);
    session_init(t);
    nserr_init(err);
    parse_ok(s, example);
    session_set_comments(s, "# kept as it is\nno hash yet  \n\n#");
    assert_string_equal(s->comments.text, "# kept as it is\n# no hash yet\n#\n#");
    char *out = session_get_str(s);
    assert_int_equal(session_parse(t, out, err), NS_OK);
    assert_string_equal(t->comments.text, s->comments.text);
    assert_true(session_equal(s, t));
    flint_free(out);
    session_set_comments(s, "  ");
    assert_null(s->comments.text);
    session_set_comments(s, "# x");
    session_set_comments(s, NULL);
    assert_null(s->comments.text);
    session_clear(s);
    session_clear(t);
}

static void get_str_should_keep_the_leading_comment_block(void **state)
{
    (void)state;
    const char *text = "nilstep session 1\n"
                       "# what this shows,\n"
                       "#   over two lines   \n"
                       "\n"
                       "title  T\n"
                       "# a comment between keys is not kept\n"
                       "group  <a | >\n"
                       "class  2\n";
    session_t s, t;
    nserr_t err;
    session_init(s);
    session_init(t);
    nserr_init(err);
    assert_int_equal(session_parse(s, text, err), NS_OK);
    assert_non_null(s->comments.text);
    assert_string_equal(s->comments.text, "# what this shows,\n#   over two lines");
    assert_int_equal(s->comments.line, 2);
    char *out = session_get_str(s);
    assert_string_equal(out, "nilstep session 1\n"
                             "# what this shows,\n"
                             "#   over two lines\n"
                             "title   T\n"
                             "group   <a | >\n"
                             "class   2\n");
    assert_int_equal(session_parse(t, out, err), NS_OK);
    assert_string_equal(t->comments.text, s->comments.text);
    flint_free(out);
    session_clear(s);
    session_clear(t);
    nserr_clear(err);
}

static void failed_parse_should_leave_the_session_unchanged(void **state)
{
    session_t s;
    nserr_t err;
    (void)state;

    session_init(s);
    nserr_init(err);
    parse_ok(s, example);
    assert_int_equal(session_parse(s, "nilstep session 1\nbogus 1\n", err), NS_ERR_INPUT);
    assert_string_equal(s->title.text, "Doubling on a 2-step group");
    assert_int_equal(s->cls, 3);
    session_clear(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(parse_should_read_the_design_example),
        cmocka_unit_test(parse_should_keep_raw_values_with_continuations),
        cmocka_unit_test(loaded_group_should_report_errors_in_file_coordinates),
        cmocka_unit_test(parse_should_read_cursor_and_iterate),
        cmocka_unit_test(parse_should_reject_unknown_key_naming_it),
        cmocka_unit_test(parse_should_reject_repeated_keys),
        cmocka_unit_test(parse_should_require_group_and_class),
        cmocka_unit_test(parse_should_check_the_class_number),
        cmocka_unit_test(parse_should_check_the_first_line),
        cmocka_unit_test(parse_should_reject_bad_structure_with_location),
        cmocka_unit_test(parse_should_reject_invalid_utf8_with_location),
        cmocka_unit_test(get_str_should_write_the_documented_layout),
        cmocka_unit_test(setters_should_validate_and_remove),
        cmocka_unit_test(equal_should_notice_every_field),
        cmocka_unit_test(get_str_then_parse_should_give_an_equal_session),
        cmocka_unit_test(load_should_report_missing_files_with_path_and_reason),
        cmocka_unit_test(load_should_reject_nul_bytes_and_huge_files),
        cmocka_unit_test(save_should_replace_the_file_and_leave_no_temporary),
        cmocka_unit_test(save_should_fail_cleanly_and_keep_the_old_file),
        cmocka_unit_test(save_should_follow_links_and_keep_owner_and_mode),
        cmocka_unit_test(save_should_not_split_hard_links),
        cmocka_unit_test(save_should_work_for_the_longest_names),
        cmocka_unit_test(save_should_fail_cleanly_at_the_file_size_limit),
        cmocka_unit_test(leftovers_should_be_recognised),
        cmocka_unit_test(save_text_should_write_any_text_atomically),
        cmocka_unit_test(kill_while_saving_should_leave_a_whole_file),
        cmocka_unit_test(failed_parse_should_leave_the_session_unchanged),
        cmocka_unit_test(get_str_should_keep_the_leading_comment_block),
        cmocka_unit_test(set_comments_should_read_back_the_same),
    };
    int failed = cmocka_run_group_tests(tests, NULL, NULL);
    flint_cleanup_master(); /* FLINT's cache of big integers, for valgrind */
    return failed;
}

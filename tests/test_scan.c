/* test_scan.c — src/scan.h and src/jsonl.h: ranges and templates with
 * located errors, the numbering of a box, sampling, template substitution
 * against the same map written out as text, threads against one thread,
 * and the JSON Lines reader (RFC 8259 examples of escapes). */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include "jsonl.h"
#include "scan.h"
#include "strbuf.h"
#include "testutil.h"

static void scan_with_group(scan_t S, const char *pres, slong c)
{
    pres_t G;
    nserr_t err;
    pres_init(G);
    nserr_init(err);
    assert_int_equal(pres_parse(G, pres, 1, 1, err), NS_OK);
    assert_int_equal(scan_set_group(S, G, c, NULL, err), NS_OK);
    pres_clear(G);
    nserr_clear(err);
}

static void expect_range_error(const char *spec, int col, const char *msg_part)
{
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "free(2)", 2);
    assert_int_equal(scan_add_range(S, "q=0..1", err), NS_OK);
    assert_int_not_equal(scan_add_range(S, spec, err), NS_OK);
    if (!strstr(err->msg, msg_part) || err->col != col)
        fail_msg("%s: got col %d '%s', expected col %d '%s'", spec, err->col, err->msg, col,
                 msg_part);
    nserr_clear(err);
    scan_clear(S);
}

static void test_range_errors(void **state)
{
    (void)state;
    expect_range_error("p", 2, "expected '='");
    expect_range_error("p=3..1", 3, "empty range");
    expect_range_error("p=1.5", 4, "'..'");
    expect_range_error("p=0..x", 6, "upper bound");
    expect_range_error("a=0..1", 1, "is a generator");
    expect_range_error("q=0..1", 1, "second range");
    expect_range_error("p=0..1000000000000000001", 6, "10^18");
    expect_range_error("p=0..1 ", 7, "after the range");
}

static void expect_template_error(const char *tpl, const char *range, int col,
                                  const char *msg_part)
{
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "free(2)", 2);
    assert_int_equal(scan_add_range(S, range, err), NS_OK);
    assert_int_not_equal(scan_set_template(S, tpl, err), NS_OK);
    if (!strstr(err->msg, msg_part) || err->col != col)
        fail_msg("%s: got col %d '%s', expected col %d '%s'", tpl, err->col, err->msg, col,
                 msg_part);
    nserr_clear(err);
    scan_clear(S);
}

static void test_template_errors(void **state)
{
    (void)state;
    /* columns counted by hand from the template text */
    expect_template_error("a -> a^p b^t, b -> b", "p=0..1", 12, "'t' has no range");
    expect_template_error("a -> a^(-t), b -> b", "p=0..1", 10, "'t' has no range");
    expect_template_error("a -> a, b -> b", "p=0..1", 1, "does not occur");
    expect_template_error("a -> c^p, b -> b", "p=0..1", 6, "unknown generator 'c'");
    expect_template_error("a -> a^(p, b -> b", "p=0..1", 10, "expected ')'");
}

static void test_box_order(void **state)
{
    (void)state;
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "free(2)", 2);
    assert_int_equal(scan_add_range(S, "p=-1..1", err), NS_OK);
    assert_int_equal(scan_add_range(S, "q=0..2", err), NS_OK);
    assert_int_equal(scan_set_template(S, "a -> a^p b^q, b -> b", err), NS_OK);
    ulong n;
    assert_int_equal(scan_member_count(&n, S, err), NS_OK);
    assert_int_equal(n, 9);
    /* lexicographic, the first range slowest */
    slong v[2];
    const slong want[9][2] = {{-1, 0}, {-1, 1}, {-1, 2}, {0, 0}, {0, 1},
                              {0, 2},  {1, 0},  {1, 1},  {1, 2}};
    for (ulong i = 0; i < 9; i++) {
        scan_member_params(v, S, i);
        assert_int_equal(v[0], want[i][0]);
        assert_int_equal(v[1], want[i][1]);
    }
    /* more than 10^9 points without sampling is refused; with it, fine */
    assert_int_equal(scan_add_range(S, "r=-1000000000..1000000000", err), NS_OK);
    assert_int_equal(scan_set_template(S, "a -> a^p b^q, b -> b^r", err), NS_OK);
    assert_int_equal(scan_member_count(&n, S, err), NS_ERR_LIMIT);
    assert_non_null(strstr(err->msg, "more than 10^9"));
    scan_set_sample(S, 5, 1);
    assert_int_equal(scan_member_count(&n, S, err), NS_OK);
    assert_int_equal(n, 5);
    nserr_clear(err);
    scan_clear(S);
}

static void test_sampling(void **state)
{
    (void)state;
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "free(2)", 2);
    assert_int_equal(scan_add_range(S, "p=0..3", err), NS_OK);
    assert_int_equal(scan_add_range(S, "q=-1000000000000000000..1000000000000000000", err),
                     NS_OK);
    assert_int_equal(scan_set_template(S, "a -> a^p, b -> b^q", err), NS_OK);
    rng_seed_test("sampling", 20261202, "the scan seed");
    ulong seed = rng_next();
    scan_set_sample(S, 4000, seed);
    long bucket[4] = {0, 0, 0, 0};
    int neg = 0, pos = 0;
    for (ulong i = 0; i < 4000; i++) {
        slong v[2], w[2];
        scan_member_params(v, S, i);
        scan_member_params(w, S, i); /* a function of (seed, i) */
        assert_int_equal(v[0], w[0]);
        assert_int_equal(v[1], w[1]);
        assert_in_range(v[0], 0, 3);
        bucket[v[0]]++;
        neg += v[1] < 0;
        pos += v[1] > 0;
    }
    /* uniform: each count is binomial(4000, 1/4), standard deviation 27.4;
     * 150 is more than five of them */
    for (int k = 0; k < 4; k++)
        assert_in_range(bucket[k], 1000 - 150, 1000 + 150);
    assert_in_range(neg, 2000 - 200, 2000 + 200);
    assert_in_range(pos, 2000 - 200, 2000 + 200);
    nserr_clear(err);
    scan_clear(S);
}

typedef struct {
    char **lines;
    ulong n;
    ulong *index;
} collect;

static void collect_emit(void *ctx, const scan_result *r)
{
    collect *c = ctx;
    assert_int_equal(r->status, NS_OK);
    c->lines = flint_realloc(c->lines, (c->n + 1) * sizeof(char *));
    c->index = flint_realloc(c->index, (c->n + 1) * sizeof(ulong));
    c->lines[c->n] = strbuf_dup_str(r->line ? r->line : "(not kept)");
    c->index[c->n] = r->index;
    c->n++;
}

static void collect_clear(collect *c)
{
    for (ulong k = 0; k < c->n; k++)
        flint_free(c->lines[k]);
    flint_free(c->lines);
    flint_free(c->index);
}

static void run_scan(collect *c, const scan_t S, int jobs, ulong k, ulong n)
{
    scan_run_opts o = {0};
    o.jobs = jobs;
    o.shard_k = k;
    o.shard_n = n;
    o.skip_through = -1;
    o.emit = collect_emit;
    o.emit_ctx = c;
    nserr_t err;
    nserr_init(err);
    assert_int_equal(scan_run(S, &o, err), NS_OK);
    nserr_clear(err);
}

/* Every member equals the analysis of its map written out as text by hand
 * (a route that shares no code with the substitution into the tree). */
static void test_substitution_matches_text(void **state)
{
    (void)state;
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "<a, b | [a,b,a], [a,b,b]>", 3);
    assert_int_equal(scan_add_range(S, "p=-2..2", err), NS_OK);
    assert_int_equal(scan_add_range(S, "q=-1..1", err), NS_OK);
    assert_int_equal(scan_add_range(S, "r=0..1", err), NS_OK);
    assert_int_equal(scan_set_template(S, "a -> a^p (b a)^-q, b -> [a,b]^(r) b^(-p)", err),
                     NS_OK);
    collect c = {NULL, 0, NULL};
    run_scan(&c, S, 1, 1, 1);
    assert_int_equal(c.n, 30);
    analysis_t A;
    analysis_init(A);
    pres_t G;
    pres_init(G);
    assert_int_equal(pres_parse(G, "<a, b | [a,b,a], [a,b,b]>", 1, 1, err), NS_OK);
    assert_int_equal(analysis_set_group(A, G, 3, NULL, err), NS_OK);
    jsonl_obj_t o;
    jsonl_obj_init(o);
    for (ulong i = 0; i < c.n; i++) {
        slong v[3];
        scan_member_params(v, S, i);
        char text[200];
        snprintf(text, sizeof text, "a -> a^%ld (b a)^%ld, b -> [a,b]^%ld b^%ld", (long)v[0],
                 (long)-v[1], (long)v[2], (long)-v[0]);
        assert_int_equal(analysis_set_map_text(A, text, 1, 1, NULL, err), NS_OK);
        assert_int_equal(jsonl_parse(o, c.lines[i], err), NS_OK);
        char *map = jsonl_string_value(jsonl_get(o, "map"));
        char *gr = jsonl_string_value(jsonl_get(o, "growth_rate"));
        assert_string_equal(map, A->map_str);
        assert_string_equal(jsonl_get(o, "valid"), A->valid ? "true" : "false");
        if (A->valid)
            assert_string_equal(gr, A->growth_str);
        flint_free(map);
        flint_free(gr);
    }
    jsonl_obj_clear(o);
    pres_clear(G);
    analysis_clear(A);
    collect_clear(&c);
    nserr_clear(err);
    scan_clear(S);
}

/* --jobs 3 and shards give exactly the lines of one thread. */
static void test_threads_and_shards(void **state)
{
    (void)state;
    scan_t S;
    nserr_t err;
    scan_init(S);
    nserr_init(err);
    scan_with_group(S, "free(2)", 3);
    assert_int_equal(scan_add_range(S, "p=-2..2", err), NS_OK);
    assert_int_equal(scan_add_range(S, "s=-2..2", err), NS_OK);
    assert_int_equal(scan_set_template(S, "a -> a^p b, b -> a b^s", err), NS_OK);
    assert_int_equal(scan_add_property(S, "automorphism", err), NS_OK);
    assert_int_equal(scan_add_property(S, "round", err), NS_ERR_INPUT);
    collect one = {NULL, 0, NULL}, three = {NULL, 0, NULL};
    run_scan(&one, S, 1, 1, 1);
    run_scan(&three, S, 3, 1, 1);
    assert_int_equal(one.n, 25);
    assert_int_equal(three.n, 25);
    for (ulong i = 0; i < 25; i++) {
        assert_int_equal(one.index[i], i);
        assert_string_equal(one.lines[i], three.lines[i]);
    }
    /* automorphisms: det [[p, 1], [1, s]] = ps - 1 = +-1, so ps in {0, 2} */
    ulong kept = 0;
    for (ulong i = 0; i < 25; i++) {
        slong v[2];
        scan_member_params(v, S, i);
        int is_auto = v[0] * v[1] == 0 || v[0] * v[1] == 2;
        assert_int_equal(strcmp(one.lines[i], "(not kept)") != 0, is_auto);
        kept += is_auto;
    }
    assert_int_equal(kept, 9 + 4); /* ps = 0: p or s is 0; ps = 2: (1,2), (2,1), (-1,-2), (-2,-1) */
    for (ulong k = 1; k <= 4; k++) {
        collect sh = {NULL, 0, NULL};
        run_scan(&sh, S, 2, k, 4);
        for (ulong j = 0; j < sh.n; j++) {
            assert_int_equal(sh.index[j], k - 1 + 4 * j);
            assert_string_equal(sh.lines[j], one.lines[sh.index[j]]);
        }
        assert_int_equal(sh.n, (25 - (k - 1) + 3) / 4);
        collect_clear(&sh);
    }
    collect_clear(&one);
    collect_clear(&three);
    nserr_clear(err);
    scan_clear(S);
}

static void test_jsonl(void **state)
{
    (void)state;
    jsonl_obj_t o;
    nserr_t err;
    jsonl_obj_init(o);
    nserr_init(err);
    assert_int_equal(jsonl_parse(o, " {\"id\": [1, {\"x\": null}], \"map\": \"a -> b\\u00e9\\n\","
                                    " \"n\": -1.5e3, \"t\": true, \"k\": \"\\ud834\\udd1e\"} ",
                                 err),
                     NS_OK);
    assert_int_equal(o->n, 5);
    assert_string_equal(jsonl_get(o, "id"), "[1, {\"x\": null}]");
    assert_string_equal(jsonl_get(o, "n"), "-1.5e3");
    char *m = jsonl_string_value(jsonl_get(o, "map"));
    assert_string_equal(m, "a -> b\xc3\xa9\n"); /* U+00E9 in UTF-8 */
    flint_free(m);
    m = jsonl_string_value(jsonl_get(o, "k"));
    assert_string_equal(m, "\xf0\x9d\x84\x9e"); /* U+1D11E, RFC 8259 section 7 */
    flint_free(m);
    assert_null(jsonl_get(o, "missing"));
    assert_null(jsonl_string_value("12"));
    const struct {
        const char *text;
        int col;
    } bad[] = {
        {"{\"a\": 1,}", 9},    {"{\"a\" 1}", 6},    {"[1]", 1},        {"{\"a\": 01}", 8},
        {"{\"a\": \"x}", 10}, {"{\"a\": tru}", 7}, {"{\"a\": 1} x", 10}, {"", 1},
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        assert_int_equal(jsonl_parse(o, bad[k].text, err), NS_ERR_SYNTAX);
        if (err->col != bad[k].col)
            fail_msg("'%s': column %d, expected %d (%s)", bad[k].text, err->col, bad[k].col,
                     err->msg);
        assert_int_equal(o->n, 0);
    }
    char deep[300];
    strcpy(deep, "{\"a\": ");
    for (int k = 0; k < 100; k++)
        strcat(deep, "[");
    assert_int_equal(jsonl_parse(o, deep, err), NS_ERR_SYNTAX);
    assert_non_null(strstr(err->msg, "nested too deeply"));
    jsonl_obj_clear(o);
    nserr_clear(err);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_range_errors),
        cmocka_unit_test(test_template_errors),
        cmocka_unit_test(test_box_order),
        cmocka_unit_test(test_sampling),
        cmocka_unit_test(test_substitution_matches_text),
        cmocka_unit_test(test_threads_and_shards),
        cmocka_unit_test(test_jsonl),
    };
    int r = cmocka_run_group_tests(tests, NULL, NULL);
    flint_cleanup_master();
    return r;
}

/* fuzz_parse.c — fuzz target for every text parser of the engine:
 * expr_parse, pres_parse, pres_parse_map and session_parse.
 *
 * Besides "no crash, no leak, no undefined behaviour" it checks round trips:
 * whatever parses must print to text that parses back and prints the same.
 *
 * Built with clang and libFuzzer by -DNILSTEP_FUZZ=ON (`make fuzz`, see
 * DEVELOPERS.md, "Fuzzing").  With -DFUZZ_STANDALONE_MAIN the program runs
 * the target once on each file named on its command line: every build makes
 * that driver (fuzz_parse_replay) and ctest replays tests/fuzz/corpus/parse
 * through it. */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <flint/flint.h>

#include "expr.h"
#include "nserr.h"
#include "pres.h"
#include "session.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void check(int ok, const char *what, const char *text)
{
    if (!ok) {
        fprintf(stderr, "round trip broken (%s) on:\n%s\n", what, text);
        abort();
    }
}

static void fuzz_expr(const char *text)
{
    names_t g;
    nserr_t err;
    expr_t e, f;

    names_init(g);
    names_add(g, "a");
    names_add(g, "b");
    names_add(g, "x1");
    nserr_init(err);
    expr_init(e);
    expr_init(f);
    if (expr_parse(e, text, 1, 1, g, err) == NS_OK) {
        char *s1 = expr_get_str(e, g), *s2;
        fmpz sx[3] = {0, 0, 0}, sy[3] = {0, 0, 0};
        check(expr_parse(f, s1, 1, 1, g, err) == NS_OK, "expr reparse", s1);
        s2 = expr_get_str(f, g);
        check(strcmp(s1, s2) == 0, "expr reprint", s1);
        expr_exponent_sums(sx, e, 3);
        expr_exponent_sums(sy, f, 3);
        for (int i = 0; i < 3; i++) {
            check(fmpz_equal(sx + i, sy + i), "exponent sums", s1);
            fmpz_clear(sx + i);
            fmpz_clear(sy + i);
        }
        flint_free(s1);
        flint_free(s2);
    } else {
        check(err->status != NS_OK && err->line >= 1 && err->col >= 1, "error location", text);
    }
    expr_clear(e);
    expr_clear(f);
    names_clear(g);
}

static void fuzz_pres(const char *text)
{
    pres_t p, q;
    nserr_t err;

    pres_init(p);
    pres_init(q);
    nserr_init(err);
    if (pres_parse(p, text, 1, 1, err) == NS_OK) {
        char *s1 = pres_get_str(p), *s2;
        check(pres_parse(q, s1, 1, 1, err) == NS_OK, "pres reparse", s1);
        s2 = pres_get_str(q);
        check(strcmp(s1, s2) == 0, "pres reprint", s1);
        flint_free(s1);
        flint_free(s2);
    }
    pres_clear(p);
    pres_clear(q);
}

static void fuzz_map(const char *text)
{
    pres_t p;
    nserr_t err;
    expr_struct img[3];

    pres_init(p);
    nserr_init(err);
    if (pres_parse(p, "<a, b, c | [a,b] = c>", 1, 1, err) != NS_OK)
        abort();
    for (int i = 0; i < 3; i++)
        expr_init(img + i);
    if (pres_parse_map(img, p, text, 1, 1, err) == NS_OK) {
        char *s1 = pres_get_map_str(img, p), *s2;
        check(pres_parse_map(img, p, s1, 1, 1, err) == NS_OK, "map reparse", s1);
        s2 = pres_get_map_str(img, p);
        check(strcmp(s1, s2) == 0, "map reprint", s1);
        flint_free(s1);
        flint_free(s2);
    }
    for (int i = 0; i < 3; i++)
        expr_clear(img + i);
    pres_clear(p);
}

static void fuzz_session(const char *text)
{
    session_t s, t;
    nserr_t err;

    session_init(s);
    session_init(t);
    nserr_init(err);
    if (session_parse(s, text, err) == NS_OK) {
        char *s1 = session_get_str(s);
        check(session_parse(t, s1, err) == NS_OK, "session reparse", s1);
        check(session_equal(s, t), "session equal", s1);
        flint_free(s1);
        /* the values it keeps must be safe to hand to the other parsers */
        fuzz_pres(s->group.text);
        if (s->map.text != NULL)
            fuzz_map(s->map.text);
    }
    session_clear(s);
    session_clear(t);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char *text = malloc(size + 1);
    if (text == NULL)
        return 0;
    memcpy(text, data, size);
    text[size] = '\0';
    fuzz_expr(text);
    fuzz_pres(text);
    fuzz_map(text);
    fuzz_session(text);
    free(text);
    return 0;
}

#ifdef FUZZ_STANDALONE_MAIN
int main(int argc, char **argv)
{
    for (int i = 1; i < argc; i++) {
        FILE *f = fopen(argv[i], "rb");
        char *buf;
        long n;
        if (f == NULL) {
            perror(argv[i]);
            return 1;
        }
        fseek(f, 0, SEEK_END);
        n = ftell(f);
        fseek(f, 0, SEEK_SET);
        buf = malloc(n > 0 ? (size_t)n : 1);
        if (buf == NULL || fread(buf, 1, (size_t)n, f) != (size_t)n) {
            fprintf(stderr, "%s: cannot read\n", argv[i]);
            return 1;
        }
        fclose(f);
        LLVMFuzzerTestOneInput((const uint8_t *)buf, (size_t)n);
        free(buf);
    }
    return 0;
}
#endif

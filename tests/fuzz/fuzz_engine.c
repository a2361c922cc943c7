/* fuzz_engine.c — fuzz target for the whole engine: a presentation, its
 * quotient of class 1..4, a map, its power, a composite, the inverse and the
 * three report formats, with algebraic checks that do not depend on the
 * input being meaningful:
 *   - the first power of the map, analysed as a value, is the same map
 *     (same images of the generators, same layer matrices);
 *   - composing with the identity changes nothing (same checks);
 *   - for an automorphism, the inverse followed by the map is the identity
 *     (its images are those of the identity map analysed from text).
 * Any failure aborts, so libFuzzer keeps the input.
 *
 * Input: the first byte chooses the class (1 + b % 4) and the power
 * (b / 4 % 4); the rest is up to three lines: the presentation, the map, a
 * second map for the composite.  A budget on progress calls (BUDGET) cancels
 * computations that would take long, so every input runs in a bounded time;
 * a cancelled computation is not a finding.
 *
 * Built by -DNILSTEP_FUZZ=ON with clang and libFuzzer (see DEVELOPERS.md);
 * without libFuzzer, -DFUZZ_STANDALONE_MAIN gives a driver that runs each
 * file named on its command line, which the normal test suite uses to
 * replay tests/fuzz/corpus/engine. */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <flint/flint.h>

#include "analysis.h"
#include "endo.h"
#include "nserr.h"
#include "pres.h"
#include "report.h"
#include "strbuf.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Progress calls allowed per stage before it is cancelled. */
#define BUDGET 2000

static int budget_fn(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    long *left = ctx;
    return --*left < 0;
}

static void fail(const char *what, const char *pres, const char *map)
{
    fprintf(stderr, "fuzz_engine: %s\n  group: %s\n  map: %s\n", what, pres, map);
    abort();
}

/* NILSTEP_FUZZ_TRACE=1 says which checks ran (for the corpus replay). */
static void trace(const char *what)
{
    if (getenv("NILSTEP_FUZZ_TRACE") != NULL)
        fprintf(stderr, "fuzz_engine: %s\n", what);
}

static void reports(const analysis_t A)
{
    trace("reports");
    for (int f = REPORT_TEXT; f <= REPORT_LATEX; f++) {
        char *s = report_get_str(A, (report_format)f, "fuzz");
        if (s == NULL || s[0] == '\0')
            abort();
        flint_free(s);
    }
}

/* 1 when A and B (same quotient, valid maps) agree on the images of the
 * generators and on every layer matrix. */
static int same_map(const analysis_t A, const analysis_t B)
{
    slong X = A->nq->pres->gens->n;
    if (!A->valid || !B->valid)
        return A->valid == B->valid;
    for (slong x = 0; x < X; x++)
        if (strcmp(A->gen_image_str[x], B->gen_image_str[x]) != 0)
            return 0;
    for (slong j = 0; j < A->nlayers; j++)
        if (!fmpz_mat_equal(A->layers[j].matrix, B->layers[j].matrix))
            return 0;
    return 1;
}

/* The identity map as text: "a -> a, b -> b". */
static char *identity_text(const pres_t P)
{
    strbuf_t b;
    strbuf_init(b);
    for (slong x = 0; x < P->gens->n; x++)
        strbuf_printf(b, "%s%s -> %s", x ? ", " : "", P->gens->name[x], P->gens->name[x]);
    return strbuf_take(b);
}

static void run(slong c, ulong k, const char *pres, const char *map, const char *map2)
{
    long left = BUDGET;
    ns_progress_t progress = {budget_fn, &left};
    pres_t P;
    analysis_t A, B, I;
    nserr_t err;
    endo_t E;

    pres_init(P);
    analysis_init(A);
    analysis_init(B);
    analysis_init(I);
    endo_init(E);
    nserr_init(err);
    if (pres_parse(P, pres, 1, 1, err) != NS_OK || P->gens->n > 6)
        goto done;
    if (analysis_set_group(A, P, c, &progress, err) != NS_OK)
        goto done;
    reports(A);
    left = BUDGET;
    if (analysis_set_map_text(A, map, 1, 1, &progress, err) != NS_OK)
        goto done;
    reports(A);
    if (!A->valid)
        goto done;

    analysis_share_group(B, A);
    analysis_share_group(I, A);
    char *id = identity_text(P);
    left = BUDGET;
    ns_status st = analysis_set_map_text(I, id, 1, 1, &progress, err);
    flint_free(id);
    if (st != NS_OK)
        goto done;

    /* the first power is the map itself */
    left = BUDGET;
    if (analysis_power_endo(E, A, 1, &progress, err) == NS_OK) {
        if (analysis_set_map_endo(B, E, &progress, err) == NS_OK && !same_map(A, B))
            fail("the first power differs from the map", pres, map);
        trace("first power checked");
    }

    /* composing with the identity changes nothing */
    {
        expr_struct *w = flint_malloc(sizeof(expr_struct) * P->gens->n);
        for (slong x = 0; x < P->gens->n; x++)
            expr_init(w + x);
        id = identity_text(P);
        if (pres_parse_map(w, P, id, 1, 1, err) != NS_OK)
            fail("the identity map does not parse", pres, id);
        flint_free(id);
        left = BUDGET;
        endo_clear(E);
        endo_init(E);
        if (analysis_compose_endo(E, A, w, &progress, err) == NS_OK
            && analysis_set_map_endo(B, E, &progress, err) == NS_OK && !same_map(A, B))
            fail("composing with the identity changed the map", pres, map);
        trace("identity composite checked");
        for (slong x = 0; x < P->gens->n; x++)
            expr_clear(w + x);
        flint_free(w);
    }

    /* the power asked for, and its report */
    left = BUDGET;
    endo_clear(E);
    endo_init(E);
    if (analysis_power_endo(E, A, k, &progress, err) == NS_OK
        && analysis_set_map_endo(B, E, &progress, err) == NS_OK)
        reports(B);

    /* a composite with the second map */
    if (map2 != NULL) {
        expr_struct *w = flint_malloc(sizeof(expr_struct) * P->gens->n);
        for (slong x = 0; x < P->gens->n; x++)
            expr_init(w + x);
        if (pres_parse_map(w, P, map2, 3, 1, err) == NS_OK) {
            left = BUDGET;
            endo_clear(E);
            endo_init(E);
            if (analysis_compose_endo(E, A, w, &progress, err) == NS_OK
                && analysis_set_map_endo(B, E, &progress, err) == NS_OK)
                reports(B);
        }
        for (slong x = 0; x < P->gens->n; x++)
            expr_clear(w + x);
        flint_free(w);
    }

    /* the inverse: shown in the report, and followed by the map it is the
       identity */
    left = BUDGET;
    if (analysis_set_inverse(A, &progress, err) == NS_OK)
        reports(A);
    left = BUDGET;
    endo_clear(E);
    endo_init(E);
    if (A->automorphism && analysis_inverse_endo(E, A, &progress, err) == NS_OK
        && analysis_set_map_endo(B, E, &progress, err) == NS_OK) {
        expr_struct *w = flint_malloc(sizeof(expr_struct) * P->gens->n);
        for (slong x = 0; x < P->gens->n; x++)
            expr_init(w + x);
        if (pres_parse_map(w, P, map, 1, 1, err) != NS_OK)
            fail("the map no longer parses", pres, map);
        endo_clear(E);
        endo_init(E);
        left = BUDGET;
        if (analysis_compose_endo(E, B, w, &progress, err) == NS_OK
            && analysis_set_map_endo(B, E, &progress, err) == NS_OK && !same_map(B, I))
            fail("the inverse followed by the map is not the identity", pres, map);
        trace("inverse checked");
        for (slong x = 0; x < P->gens->n; x++)
            expr_clear(w + x);
        flint_free(w);
    }

done:
    endo_clear(E);
    analysis_clear(B);
    analysis_clear(I);
    analysis_clear(A);
    pres_clear(P);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1)
        return 0;
    slong c = 1 + data[0] % 4;
    ulong k = (ulong)(data[0] / 4 % 4);
    char *text = malloc(size);
    if (text == NULL)
        return 0;
    memcpy(text, data + 1, size - 1);
    text[size - 1] = '\0';
    char *map = strchr(text, '\n'), *map2 = NULL;
    if (map == NULL) {
        free(text);
        return 0;
    }
    *map++ = '\0';
    map2 = strchr(map, '\n');
    if (map2 != NULL)
        *map2++ = '\0';
    run(c, k, text, map, map2);
    free(text);
    return 0;
}

#ifdef FUZZ_STANDALONE_MAIN
int main(int argc, char **argv)
{
    for (int i = 1; i < argc; i++) {
        FILE *f = fopen(argv[i], "rb");
        if (f == NULL) {
            perror(argv[i]);
            return 1;
        }
        fseek(f, 0, SEEK_END);
        long n = ftell(f);
        fseek(f, 0, SEEK_SET);
        char *buf = malloc(n > 0 ? (size_t)n : 1);
        if (buf == NULL || fread(buf, 1, (size_t)n, f) != (size_t)n) {
            fprintf(stderr, "%s: cannot read\n", argv[i]);
            return 1;
        }
        fclose(f);
        LLVMFuzzerTestOneInput((const uint8_t *)buf, (size_t)n);
        free(buf);
    }
    flint_cleanup_master();
    return 0;
}
#endif

/* expr.h — words of the input language as expression trees.
 *
 * A word is kept as a tree (products, powers with fmpz exponents,
 * left-normed commutators, conjugates) rather than expanded into letters,
 * so that a^(10^50) or [a,b]^1000 cost nothing until evaluated.  A stretch
 * of plain letters and small powers (a b a^-2 b ...) is one EXPR_RUN node
 * holding 8 bytes per letter, so that a relator of millions of letters costs
 * a few bytes per input byte instead of a node per letter.  Evaluation in
 * a polycyclic presentation lives in pcp.h (pcp_eval_expr). */
#ifndef NILSTEP_EXPR_H
#define NILSTEP_EXPR_H

#include <stdint.h>

#include <flint/flint.h>
#include <flint/fmpz.h>
#include "nserr.h"

typedef enum {
    EXPR_ONE,   /* the identity "1"; no kids */
    EXPR_GEN,   /* generator number gen (0-based index into the name list) */
    EXPR_MUL,   /* product kids[0] kids[1] ... kids[nkids-1], nkids >= 2 */
    EXPR_POW,   /* kids[0]^exp, exp any integer (negative = inverse) */
    EXPR_COMM,  /* left-normed [k0,k1,...,k(n-1)], nkids >= 2;
                   [x,y] = x^-1 y^-1 x y, [x,y,z] = [[x,y],z] */
    EXPR_CONJ,  /* kids[0]^kids[1] = kids[1]^-1 kids[0] kids[1] */
    EXPR_RUN    /* product of syllables syl[0] ... syl[nsyl-1], nsyl >= 2,
                   no kids: the compact form of a product of letters and
                   powers of letters with exponents that fit in 32 bits */
} expr_kind;

/* One syllable of an EXPR_RUN: generator gen to the power exp.  exp is
 * EXPR_SYL_BARE for a letter written without '^' (exponent 1; "a" and
 * "a^1" print differently), any other int32_t value is the exponent. */
typedef struct {
    int32_t gen;
    int32_t exp;
} expr_syl;
#define EXPR_SYL_BARE INT32_MIN

/* The exponent of a syllable as a number (1 for a bare letter). */
static inline int32_t expr_syl_exp(expr_syl s)
{
    return s.exp == EXPR_SYL_BARE ? 1 : s.exp;
}

typedef struct expr_node_struct {
    expr_kind kind;
    slong gen;                       /* EXPR_GEN only */
    fmpz_t exp;                      /* EXPR_POW only; 0 elsewhere */
    slong param;                     /* EXPR_POW in a template (scan.h): the
                                        exponent is exp times integer
                                        parameter number param; -1 elsewhere */
    slong nkids;
    struct expr_node_struct **kids;  /* owned */
    slong nsyl;                      /* EXPR_RUN only; 0 elsewhere */
    expr_syl *syl;                   /* EXPR_RUN only, owned (flint_malloc) */
    int line, col;                   /* where the node starts in the source
                                        (an EXPR_RUN: its first letter) */
} expr_node;

/* A whole word; owns its tree.  root == NULL never happens after a
 * successful parse (the identity is an EXPR_ONE node). */
typedef struct {
    expr_node *root;
} expr_struct;
typedef expr_struct expr_t[1];

void expr_init(expr_t e);           /* root = NULL */
void expr_clear(expr_t e);          /* frees the tree */
void expr_set(expr_t dst, const expr_t src);  /* deep copy */
void expr_swap(expr_t a, expr_t b);

/* Node constructors: the returned node is owned by the caller (or by the
 * parent it is attached to).  kids arrays passed in are taken over; they
 * must come from flint_malloc, as expr_node_add_kid reallocates them.
 * expr_node_free, expr_node_copy and the printers walk the tree without
 * recursion, so trees of any depth are safe. */
expr_node *expr_node_new(expr_kind kind, int line, int col);
/* An EXPR_RUN node that takes over syl (nsyl >= 2 entries, flint_malloc'd). */
expr_node *expr_node_new_run(expr_syl *syl, slong nsyl, int line, int col);
expr_node *expr_node_copy(const expr_node *n);
void expr_node_free(expr_node *n);
void expr_node_add_kid(expr_node *parent, expr_node *kid);
/* A copy of n with every generator g replaced by a copy of images[g].root
 * (the word n with the images substituted: alpha(n) as a word); owned by
 * the caller.  Generators without an image (g >= nimages) stay. */
expr_node *expr_node_substitute(const expr_node *n, const expr_struct *images, slong nimages);

/* A list of generator names; owns the strings. */
typedef struct {
    slong n;
    char **name;
} names_struct;
typedef names_struct names_t[1];

void names_init(names_t g);
void names_clear(names_t g);
void names_set(names_t dst, const names_t src);
/* Appends a copy of name; returns its index. */
slong names_add(names_t g, const char *name);
/* Index of name, or -1. */
slong names_find(const names_t g, const char *name, size_t len);

/* The input language of words (precedence from tightest to loosest):
 *
 *   atom      NAME | 1 | ( word ) | [ word , word , ... ]
 *   factor    atom                 an atom alone
 *             atom ^ n             power; n an integer, optionally signed,
 *                                  any size: a^-1, a^+3, a^123456789012345678901
 *             atom ^ (n)           the same, a^(-1)
 *             atom ^ atom          conjugate: x^y = y^-1 x y; a^b, a^(b c), a^[b,c]
 *   word      factor factor ...    product by juxtaposition; '*' between two
 *                                  factors is allowed and means the same
 *
 * So powers bind tighter than products: a b^2 = a (b b), and (a b)^-3,
 * [a,b]^2, [a b, c^2]^-1 mean what they say.  Commutator entries are whole
 * words; [x,y,z] = [[x,y],z].  A second '^' after an exponent (a^2^3,
 * a^b^-1) is rejected with a located error because readers disagree on how
 * it groups: write (a^2)^3, a^(b^-1) or (a^b)^c.  An exponent written with
 * '^-' must be an integer: conjugation by an inverse is a^(b^-1).  1 is the
 * identity; other bare numbers are not words.  '#' starts a comment that
 * runs to the end of the line; blanks and line breaks may stand between any
 * two tokens.  Brackets and parentheses nest at most EXPR_MAX_DEPTH deep
 * (NS_ERR_LIMIT beyond that, so parsing never recurses without bound).
 *
 * Trees: two or more neighbouring factors of a product that are letters or
 * letters to an integer power fitting in 32 bits (other than -2^31) become
 * one EXPR_RUN node, also across parentheses ("(a b) c" is one run of three);
 * a lone such factor stays EXPR_GEN or EXPR_POW of EXPR_GEN.  Other factors
 * keep their own nodes, and a product that mixes both is an EXPR_MUL whose
 * kids include the runs.
 *
 * Positions: lines and columns are 1-based; a column counts Unicode code
 * points (a tab is one column), so that messages match what editors show
 * for UTF-8 text. */
#define EXPR_MAX_DEPTH 200

/* Parses a word in generators g.  text starts at (line, col) of its source:
 * errors carry positions in that source; a newline in text moves to the next
 * line, column 1.  The whole of text must be one word (surrounding blanks and
 * '#' comments allowed).  On failure out is unchanged. */
ns_status expr_parse(expr_t out, const char *text, int line, int col,
                     const names_t g, nserr_t err);

/* The word in the input language, e.g. "a^2 [b,a] (a b)^-3".  Returns a
 * string the caller frees with flint_free.  Parentheses are the fewest that
 * make the text parse back to the same tree, except that nested products
 * print flat (a product is associative) and a conjugate by the identity
 * prints as the power ^1.  Commutators print as [a,b] and, when an entry is
 * a product, as [a b, c].  Trees of any depth print (the walk does not
 * recurse), but only trees within EXPR_MAX_DEPTH parse back. */
char *expr_get_str(const expr_t e, const names_t g);
char *expr_node_get_str(const expr_node *n, const names_t g);

/* The word as LaTeX math (without the $ signs), e.g. "a^{2} [a, b]^{-1}
 * (a b)^{-3}", for reports: powers and conjugates as superscripts,
 * left-normed commutators in brackets, the fewest parentheses that keep
 * the meaning.  Generator names are typeset as a letter (or \mathit for
 * several) with what follows the letters as a subscript: x1 -> x_{1},
 * e9_10 -> e_{9,10}.  Trees nested deeper than 1000 print \dots there.
 * Caller frees with flint_free. */
char *expr_node_get_latex(const expr_node *n, const names_t g);
/* A generator name as LaTeX math, as above; caller frees with flint_free. */
char *expr_name_get_latex(const char *name);

/* Exponent sum of generator i over the whole word (fmpz; exact for huge
 * exponents).  sums has g.n entries, zeroed by the function.  Commutators
 * contribute 0, a conjugate x^y contributes the sums of x, a power x^n n
 * times those of x.  Generator numbers >= ngens are ignored. */
void expr_exponent_sums(fmpz *sums, const expr_t e, slong ngens);

/* ---- Low level: the scanner and word parser shared with pres.c ---------
 *
 * A token stream over NUL-terminated text with source positions.  Tokens
 * point into the text, which must outlive the scanner.  The scanner is plain
 * data: copying the struct saves its state (used for lookahead). */
typedef enum {
    EXPR_TOK_END,     /* end of text */
    EXPR_TOK_NAME,    /* letter followed by letters, digits, '_' */
    EXPR_TOK_INT,     /* digits; bad_number set for "1.5" or "1/2" */
    EXPR_TOK_STAR, EXPR_TOK_CARET, EXPR_TOK_LPAREN, EXPR_TOK_RPAREN,
    EXPR_TOK_LBRACK, EXPR_TOK_RBRACK, EXPR_TOK_COMMA, EXPR_TOK_MINUS,
    EXPR_TOK_PLUS, EXPR_TOK_ARROW /* "->" */, EXPR_TOK_LANGLE,
    EXPR_TOK_RANGLE, EXPR_TOK_BAR, EXPR_TOK_EQUALS, EXPR_TOK_SEMI,
    EXPR_TOK_BAD      /* a character the language does not use */
} expr_tok_kind;

typedef struct {
    expr_tok_kind kind;
    const char *start;   /* into the scanned text */
    size_t len;
    int line, col;       /* of the first character (END: just past the text) */
    int nl_before;       /* a line break separates it from the previous token */
    int bad_number;      /* EXPR_TOK_INT that had a fraction part */
} expr_tok_struct;

typedef struct {
    const char *text;
    size_t pos;            /* next unread byte */
    int line, col;         /* position of text[pos] */
    const char *prev_end;  /* just past the last token taken by _next */
    expr_tok_struct tok;   /* the current token */
} expr_scan_struct;
typedef expr_scan_struct expr_scan_t[1];

/* Starts scanning text, which begins at (line, col), and reads the first
 * token into s->tok. */
void _expr_scan_init(expr_scan_t s, const char *text, int line, int col);
/* Moves to the next token. */
void _expr_scan_next(expr_scan_t s);
/* Kind of the token after the current one (the scanner is unchanged). */
expr_tok_kind _expr_scan_peek(const expr_scan_t s);
/* Describes a token for messages: "')'", "'abc'", "number '12'",
 * "end of text", "character '%'", "byte 0xff".  Always NUL-terminates. */
void _expr_tok_describe(char *buf, size_t n, const expr_tok_struct *t);
/* Value of an EXPR_TOK_INT token (bad_number clear). */
void _expr_tok_get_fmpz(fmpz_t out, const expr_tok_struct *t);
/* 1 if a token of this kind can begin a word. */
int _expr_tok_starts_word(expr_tok_kind k);

/* Parses a word whose exponents may also be integer parameters (names in
 * params that are not generators): a^p, a^-p, a^(p), a^(-p) give an
 * EXPR_POW node with param set and exp = +1 or -1.  Other rules as in
 * expr_parse.  params may be NULL (then exactly _expr_parse_word). */
ns_status _expr_parse_word_params(expr_node **out, expr_scan_t s, const names_t g,
                                  const names_struct *params, int flags, nserr_t err);

/* Flags for _expr_parse_word. */
#define EXPR_STOP_BEFORE_ARROW 1  /* end the word before "NAME ->" (maps) */

/* Parses one word starting at the current token and stops at the first
 * token that cannot continue it (',' ']' '>' '=' end of text ...), which is
 * left current.  On success *out is a new tree owned by the caller; on
 * failure *out is NULL and err is set.  The current token must begin a
 * word (check with _expr_tok_starts_word for a better message). */
ns_status _expr_parse_word(expr_node **out, expr_scan_t s, const names_t g,
                           int flags, nserr_t err);

#endif

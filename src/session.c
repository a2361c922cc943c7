/* session.c — reading and writing session files, format 1. */
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "session.h"
#include "strbuf.h"
#include "utf8.h"

#define SESSION_MAGIC "nilstep session 1"

/* ------------------------------------------------------------------------ */
/* Small helpers                                                             */

static int is_blank(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v';
}

static void text_clear(session_text_struct *t)
{
    flint_free(t->text);
    t->text = NULL;
    t->line = t->col = 0;
}

static void text_set(session_text_struct *t, const char *s, size_t n, int line, int col)
{
    char *d = strbuf_dup_strn(s, n);
    flint_free(t->text);
    t->text = d;
    t->line = line;
    t->col = col;
}

static void text_copy(session_text_struct *dst, const session_text_struct *src)
{
    if (src->text == NULL)
        text_clear(dst);
    else
        text_set(dst, src->text, strlen(src->text), src->line, src->col);
}

/* Appends the line [a, e) without its leading and trailing blanks, after a
 * '\n' unless b is empty; a blank line adds nothing. */
static void put_trimmed_line(strbuf_t b, const char *a, const char *e)
{
    while (a < e && is_blank(*a))
        a++;
    while (e > a && is_blank(e[-1]))
        e--;
    if (e > a) {
        if (b->len > 0)
            strbuf_puts(b, "\n");
        strbuf_putn(b, a, (size_t)(e - a));
    }
}

/* The normal form of a text: its lines without leading and trailing blanks,
 * empty lines left out, joined by '\n'.  NULL counts as empty.  This is
 * what survives a write and a read, so it is what equality compares. */
static char *norm_text(const char *t)
{
    strbuf_t b;

    strbuf_init(b);
    if (t == NULL)
        return strbuf_take(b);
    while (*t != '\0') {
        const char *e = strchr(t, '\n');
        if (e == NULL)
            e = t + strlen(t);
        put_trimmed_line(b, t, e);
        t = *e ? e + 1 : e;
    }
    return strbuf_take(b);
}

static int text_is_blank(const char *t)
{
    if (t == NULL)
        return 1;
    for (; *t; t++)
        if (!is_blank(*t) && *t != '\n')
            return 0;
    return 1;
}

/* Column (code points, 1-based) of p within the line that starts at ls. */
static int col_of(const char *ls, const char *p)
{
    int col = 1;
    for (; ls < p; ls++)
        if (((unsigned char)*ls & 0xC0) != 0x80)
            col++;
    return col;
}

/* Checks for NUL bytes and invalid UTF-8, reporting the first with its
 * position. */
static ns_status check_bytes(const char *buf, size_t len, nserr_t err)
{
    const unsigned char *u = (const unsigned char *)buf;
    int line = 1;
    const char *ls = buf;
    size_t i = 0;

    while (i < len) {
        size_t k;
        if (u[i] == '\0')
            return nserr_set(err, NS_ERR_SYNTAX, line, col_of(ls, buf + i),
                             "NUL byte in the file (not a text file?)");
        if (u[i] == '\n') {
            line++;
            ls = buf + i + 1;
            i++;
            continue;
        }
        k = utf8_char_len(u + i, len - i);
        if (k == 0)
            return nserr_set(err, NS_ERR_SYNTAX, line, col_of(ls, buf + i),
                             "invalid UTF-8 (byte 0x%02x)", u[i]);
        i += k;
    }
    return NS_OK;
}

/* For messages: at most about 40 bytes of s, not cut inside a character. */
static int short_len(const char *s, size_t n)
{
    if (n <= 40)
        return (int)n;
    n = 40;
    while (n > 0 && ((unsigned char)s[n] & 0xC0) == 0x80)
        n--;
    return (int)n;
}

/* ------------------------------------------------------------------------ */
/* Storage                                                                   */

void session_init(session_t s)
{
    s->title.text = s->group.text = s->map.text = s->iterate_word.text = NULL;
    s->title.line = s->title.col = 0;
    s->group.line = s->group.col = 0;
    s->map.line = s->map.col = 0;
    s->iterate_word.line = s->iterate_word.col = 0;
    s->comments.text = NULL;
    s->comments.line = s->comments.col = 0;
    s->cls = 0;
    s->nnotes = 0;
    s->notes = NULL;
    s->cursor_layer = -1;
    s->cursor_image = -1;
    s->iterate_steps = -1;
}

void session_clear_notes(session_t s)
{
    for (slong i = 0; i < s->nnotes; i++)
        flint_free(s->notes[i].text);
    flint_free(s->notes);
    s->notes = NULL;
    s->nnotes = 0;
}

void session_clear(session_t s)
{
    text_clear(&s->title);
    text_clear(&s->group);
    text_clear(&s->map);
    text_clear(&s->iterate_word);
    text_clear(&s->comments);
    session_clear_notes(s);
    session_init(s);
}

static void push_note(session_struct *s, const char *text, size_t n, int line, int col)
{
    /* notes has room for the next power of two of entries (see session.h) */
    if ((s->nnotes & (s->nnotes - 1)) == 0)
        s->notes = flint_realloc(s->notes,
                                 sizeof(session_text_struct) * (s->nnotes ? 2 * s->nnotes : 1));
    s->notes[s->nnotes].text = NULL;
    text_set(&s->notes[s->nnotes], text, n, line, col);
    s->nnotes++;
}

void session_set(session_t dst, const session_t src)
{
    session_t t;

    if (dst == src)
        return;
    session_init(t);
    text_copy(&t->title, &src->title);
    text_copy(&t->group, &src->group);
    text_copy(&t->map, &src->map);
    text_copy(&t->iterate_word, &src->iterate_word);
    text_copy(&t->comments, &src->comments);
    t->cls = src->cls;
    for (slong i = 0; i < src->nnotes; i++)
        push_note(t, src->notes[i].text, strlen(src->notes[i].text), src->notes[i].line,
                  src->notes[i].col);
    t->cursor_layer = src->cursor_layer;
    t->cursor_image = src->cursor_image;
    t->iterate_steps = src->iterate_steps;
    session_swap(dst, t);
    session_clear(t);
}

void session_swap(session_t a, session_t b)
{
    session_struct t = *a;
    *a = *b;
    *b = t;
}

static int texts_equal(const char *a, const char *b)
{
    char *x = norm_text(a), *y = norm_text(b);
    int eq = strcmp(x, y) == 0;
    flint_free(x);
    flint_free(y);
    return eq;
}

int session_equal(const session_t a, const session_t b)
{
    if (a->cls != b->cls || a->nnotes != b->nnotes || a->cursor_layer != b->cursor_layer ||
        a->cursor_image != b->cursor_image || a->iterate_steps != b->iterate_steps)
        return 0;
    if (!texts_equal(a->title.text, b->title.text) || !texts_equal(a->group.text, b->group.text) ||
        !texts_equal(a->map.text, b->map.text) ||
        !texts_equal(a->iterate_word.text, b->iterate_word.text))
        return 0;
    for (slong i = 0; i < a->nnotes; i++)
        if (!texts_equal(a->notes[i].text, b->notes[i].text))
            return 0;
    return 1;
}

/* ------------------------------------------------------------------------ */
/* Setters                                                                   */

static void set_or_remove(session_text_struct *t, const char *text)
{
    if (text_is_blank(text))
        text_clear(t);
    else
        text_set(t, text, strlen(text), 1, 1);
}

void session_set_title(session_t s, const char *text)
{
    set_or_remove(&s->title, text);
}

void session_set_group(session_t s, const char *text)
{
    set_or_remove(&s->group, text);
}

void session_set_map(session_t s, const char *text)
{
    set_or_remove(&s->map, text);
}

ns_status session_set_class(session_t s, int cls, nserr_t err)
{
    if (cls < 0 || cls > SESSION_MAX_CLASS)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "class must be a whole number from 1 to %d",
                         SESSION_MAX_CLASS);
    s->cls = cls;
    return NS_OK;
}

void session_set_comments(session_t s, const char *text)
{
    text_clear(&s->comments);
    if (text_is_blank(text))
        return;
    strbuf_t b;
    strbuf_init(b);
    for (const char *a = text;;) {
        const char *e = strchr(a, '\n');
        size_t n = e ? (size_t)(e - a) : strlen(a);
        while (n > 0 && is_blank(a[n - 1])) /* as parsing would trim them */
            n--;
        if (b->len)
            strbuf_puts(b, "\n");
        if (n == 0 || *a != '#')
            strbuf_puts(b, n ? "# " : "#");
        strbuf_putn(b, a, n);
        if (e == NULL)
            break;
        a = e + 1;
    }
    text_set(&s->comments, b->s, b->len, 1, 1);
    strbuf_clear(b);
}

void session_add_note(session_t s, const char *text)
{
    if (!text_is_blank(text))
        push_note(s, text, strlen(text), 1, 1);
}

static slong clamp_index(slong v)
{
    if (v < 0)
        return -1;
    return v > SESSION_MAX_INDEX ? SESSION_MAX_INDEX : v;
}

void session_set_cursor(session_t s, slong layer, slong image)
{
    s->cursor_layer = clamp_index(layer);
    s->cursor_image = clamp_index(image);
}

void session_set_iterate(session_t s, const char *word, slong steps)
{
    set_or_remove(&s->iterate_word, word);
    s->iterate_steps = clamp_index(steps);
}

/* ------------------------------------------------------------------------ */
/* Parsing                                                                   */

enum { K_TITLE, K_GROUP, K_CLASS, K_MAP, K_NOTE, K_CURSOR, K_ITERATE, NKEYS };
static const char *const key_names[NKEYS] = {"title", "group",  "class",  "map",
                                             "note",  "cursor", "iterate"};

/* The entry being read: its key and the span of its value in the file. */
typedef struct {
    int key;            /* -1: none yet */
    int key_line, key_end_col;
    const char *vstart; /* NULL until the value's first character is seen */
    const char *vend;   /* just past its last non-blank character */
    int vline, vcol;
} entry;

/* Whitespace-separated words of a value, with '#' comments (class, cursor
 * and iterate values). */
typedef struct {
    const char *p, *end;
    int line, col;
} wscan;

typedef struct {
    const char *start;
    size_t len;
    int line, col;
} word;

static int wscan_next(wscan *w, word *out)
{
    for (;;) {
        if (w->p >= w->end)
            return 0;
        if (*w->p == '#') {
            while (w->p < w->end && *w->p != '\n')
                w->p++;
        } else if (*w->p == '\n') {
            w->line++;
            w->col = 1;
            w->p++;
        } else if (is_blank(*w->p)) {
            w->col++;
            w->p++;
        } else {
            break;
        }
    }
    out->start = w->p;
    out->line = w->line;
    out->col = w->col;
    while (w->p < w->end && !is_blank(*w->p) && *w->p != '\n' && *w->p != '#') {
        if (((unsigned char)*w->p & 0xC0) != 0x80)
            w->col++;
        w->p++;
    }
    out->len = (size_t)(w->p - out->start);
    return 1;
}

static int word_is(const word *w, const char *s)
{
    return strlen(s) == w->len && memcmp(w->start, s, w->len) == 0;
}

/* Reads a whole number 0..max from w; -1 if it is not one. */
static slong word_number(const word *w, slong max)
{
    slong v = 0;
    if (w->len == 0)
        return -1;
    for (size_t i = 0; i < w->len; i++) {
        if (w->start[i] < '0' || w->start[i] > '9')
            return -1;
        v = 10 * v + (w->start[i] - '0');
        if (v > max)
            return -1;
    }
    return v;
}

static ns_status parse_class(session_struct *s, const entry *e, nserr_t err)
{
    wscan w = {e->vstart, e->vend, e->vline, e->vcol};
    word a, b;
    slong v;

    if (!wscan_next(&w, &a)) /* the value may be a lone comment */
        return nserr_set(err, NS_ERR_INPUT, e->vline, e->vcol,
                         "class must be a whole number from 1 to %d", SESSION_MAX_CLASS);
    if ((v = word_number(&a, SESSION_MAX_CLASS)) < 1)
        return nserr_set(err, NS_ERR_INPUT, a.line, a.col,
                         "class must be a whole number from 1 to %d", SESSION_MAX_CLASS);
    if (wscan_next(&w, &b))
        return nserr_set(err, NS_ERR_INPUT, b.line, b.col, "unexpected '%.*s' after the class",
                         short_len(b.start, b.len), b.start);
    s->cls = (int)v;
    return NS_OK;
}

static ns_status parse_cursor(session_struct *s, const entry *e, nserr_t err)
{
    wscan w = {e->vstart, e->vend, e->vline, e->vcol};
    word k, n;
    int seen = 0;

    while (wscan_next(&w, &k)) {
        slong *field;
        slong v;
        if (word_is(&k, "layer"))
            field = &s->cursor_layer;
        else if (word_is(&k, "image"))
            field = &s->cursor_image;
        else
            return nserr_set(err, NS_ERR_INPUT, k.line, k.col,
                             "unknown cursor field '%.*s' (expected 'layer' or 'image')",
                             short_len(k.start, k.len), k.start);
        if (*field >= 0)
            return nserr_set(err, NS_ERR_INPUT, k.line, k.col, "repeated cursor field '%.*s'",
                             (int)k.len, k.start);
        if (!wscan_next(&w, &n))
            return nserr_set(err, NS_ERR_INPUT, k.line, k.col,
                             "expected a whole number after '%.*s'", (int)k.len, k.start);
        if ((v = word_number(&n, SESSION_MAX_INDEX)) < 0)
            return nserr_set(err, NS_ERR_INPUT, n.line, n.col,
                             "expected a whole number from 0 to %ld after '%.*s'",
                             (long)SESSION_MAX_INDEX, (int)k.len, k.start);
        *field = v;
        seen = 1;
    }
    if (!seen)
        return nserr_set(err, NS_ERR_INPUT, e->vline, e->vcol,
                         "expected 'layer N' or 'image N' in cursor");
    return NS_OK;
}

static ns_status parse_steps(session_struct *s, const word *k, const word *n, nserr_t err)
{
    slong v = word_number(n, SESSION_MAX_INDEX);
    if (v < 0)
        return nserr_set(err, NS_ERR_INPUT, n->line, n->col,
                         "steps must be a whole number from 0 to %ld", (long)SESSION_MAX_INDEX);
    (void)k;
    s->iterate_steps = v;
    return NS_OK;
}

static ns_status parse_iterate(session_struct *s, const entry *e, nserr_t err)
{
    wscan w = {e->vstart, e->vend, e->vline, e->vcol};
    word *ws = NULL;
    slong n = 0, cap = 0, first_word = -1, last_word = -1;
    ns_status st = NS_OK;
    word t;

    while (wscan_next(&w, &t)) {
        if (n == cap) {
            cap = cap ? 2 * cap : 8;
            ws = flint_realloc(ws, sizeof(word) * cap);
        }
        ws[n++] = t;
    }
    if (n == 0) {
        st = nserr_set(err, NS_ERR_INPUT, e->vline, e->vcol,
                       "expected 'word W' or 'steps N' in iterate");
        goto done;
    }
    if (word_is(&ws[0], "steps")) {
        if (n < 2) {
            st = nserr_set(err, NS_ERR_INPUT, ws[0].line, ws[0].col,
                           "expected a whole number after 'steps'");
            goto done;
        }
        if ((st = parse_steps(s, &ws[0], &ws[1], err)) != NS_OK)
            goto done;
        if (n > 2) {
            if (!word_is(&ws[2], "word")) {
                st = nserr_set(err, NS_ERR_INPUT, ws[2].line, ws[2].col,
                               "expected 'word' after the steps, found '%.*s'",
                               short_len(ws[2].start, ws[2].len), ws[2].start);
                goto done;
            }
            if (n == 3) {
                st = nserr_set(err, NS_ERR_INPUT, ws[2].line, ws[2].col,
                               "expected a word after 'word'");
                goto done;
            }
            first_word = 3;
            last_word = n - 1;
        }
    } else if (word_is(&ws[0], "word")) {
        slong end = n;
        if (n >= 3 && word_is(&ws[n - 2], "steps") &&
            word_number(&ws[n - 1], SESSION_MAX_INDEX) >= 0) {
            if ((st = parse_steps(s, &ws[n - 2], &ws[n - 1], err)) != NS_OK)
                goto done;
            end = n - 2;
        }
        if (end < 2) {
            st = nserr_set(err, NS_ERR_INPUT, ws[0].line, ws[0].col,
                           "expected a word after 'word'");
            goto done;
        }
        first_word = 1;
        last_word = end - 1;
    } else {
        st = nserr_set(err, NS_ERR_INPUT, ws[0].line, ws[0].col,
                       "expected 'word' or 'steps' in iterate, found '%.*s'",
                       short_len(ws[0].start, ws[0].len), ws[0].start);
        goto done;
    }
    if (first_word >= 0) {
        const char *a = ws[first_word].start;
        const char *z = ws[last_word].start + ws[last_word].len;
        text_set(&s->iterate_word, a, (size_t)(z - a), ws[first_word].line, ws[first_word].col);
    }

done:
    flint_free(ws);
    return st;
}

/* Free text: the first line of the value, then each continuation line
 * without its indentation; comment and blank lines left out. */
static void free_text(strbuf_t b, const entry *e)
{
    const char *p = e->vstart;
    int first = 1;

    while (p < e->vend) {
        const char *le = memchr(p, '\n', (size_t)(e->vend - p));
        if (le == NULL)
            le = e->vend;
        if (!first && *p == '#') {
            p = le + 1;
            continue;
        }
        put_trimmed_line(b, p, le);
        first = 0;
        p = le + 1;
    }
}

static ns_status finish_entry(session_struct *s, const entry *e, nserr_t err)
{
    if (e->key < 0)
        return NS_OK;
    if (e->vstart == NULL)
        return nserr_set(err, NS_ERR_SYNTAX, e->key_line, e->key_end_col,
                         "key '%s' needs a value", key_names[e->key]);
    switch (e->key) {
    case K_TITLE:
    case K_NOTE: {
        strbuf_t b;
        strbuf_init(b);
        free_text(b, e);
        if (e->key == K_TITLE)
            text_set(&s->title, b->s, b->len, e->vline, e->vcol);
        else
            push_note(s, b->s, b->len, e->vline, e->vcol);
        strbuf_clear(b);
        return NS_OK;
    }
    case K_GROUP:
        text_set(&s->group, e->vstart, (size_t)(e->vend - e->vstart), e->vline, e->vcol);
        return NS_OK;
    case K_MAP:
        text_set(&s->map, e->vstart, (size_t)(e->vend - e->vstart), e->vline, e->vcol);
        return NS_OK;
    case K_CLASS:
        return parse_class(s, e, err);
    case K_CURSOR:
        return parse_cursor(s, e, err);
    default:
        return parse_iterate(s, e, err);
    }
}

static ns_status parse_buf(session_struct *s, const char *buf, size_t len, nserr_t err)
{
    const char *p = buf, *end = buf + len, *le;
    int line = 1, seen_line[NKEYS];
    entry cur;
    ns_status st;

    if ((st = check_bytes(buf, len, err)) != NS_OK)
        return st;
    for (int k = 0; k < NKEYS; k++)
        seen_line[k] = 0;

    /* The first line. */
    if (len >= 3 && memcmp(p, "\xEF\xBB\xBF", 3) == 0)
        p += 3;
    le = memchr(p, '\n', (size_t)(end - p));
    if (le == NULL)
        le = end;
    {
        size_t n = (size_t)(le - p), m = strlen(SESSION_MAGIC);
        if (n > 0 && p[n - 1] == '\r')
            n--;
        if (n != m || memcmp(p, SESSION_MAGIC, m) != 0) {
            size_t pre = strlen("nilstep session ");
            if (n > pre && memcmp(p, "nilstep session ", pre) == 0)
                return nserr_set(err, NS_ERR_SYNTAX, 1, (int)pre + 1,
                                 "session format '%.*s' is not known to this program "
                                 "(it reads format 1)",
                                 short_len(p + pre, n - pre), p + pre);
            return nserr_set(err, NS_ERR_SYNTAX, 1, 1,
                             "not a nilstep session file (the first line must be '%s')",
                             SESSION_MAGIC);
        }
    }
    p = le < end ? le + 1 : end;
    line = 2;

    memset(&cur, 0, sizeof cur);
    cur.key = -1;
    cur.vstart = NULL;
    const char *cstart = NULL, *cend = NULL; /* the comment block before the first key */
    int cline = 0;
    while (p < end) {
        const char *q, *z;
        le = memchr(p, '\n', (size_t)(end - p));
        if (le == NULL)
            le = end;
        q = p;
        while (q < le && is_blank(*q))
            q++;
        z = le;
        while (z > q && is_blank(z[-1]))
            z--;

        if (q == le || *p == '#') {
            /* blank or comment line; the comments before the first key are kept */
            if (*p == '#' && cur.key < 0) {
                if (cstart == NULL) {
                    cstart = p;
                    cline = line;
                }
                cend = z;
            }
        } else if (is_blank(*p)) {
            if (cur.key < 0)
                return nserr_set(err, NS_ERR_SYNTAX, line, col_of(p, q),
                                 "indented line continues no key (keys start in column 1)");
            if (cur.vstart == NULL) {
                cur.vstart = q;
                cur.vline = line;
                cur.vcol = col_of(p, q);
            }
            cur.vend = z;
        } else {
            const char *k = p;
            int key = -1;
            if ((st = finish_entry(s, &cur, err)) != NS_OK)
                return st;
            while (k < le && !is_blank(*k))
                k++;
            for (int i = 0; i < NKEYS; i++)
                if (strlen(key_names[i]) == (size_t)(k - p) &&
                    memcmp(key_names[i], p, (size_t)(k - p)) == 0)
                    key = i;
            if (key < 0)
                return nserr_set(err, NS_ERR_INPUT, line, 1,
                                 "unknown key '%.*s' (keys: title, group, class, map, cursor, "
                                 "iterate, note)",
                                 short_len(p, (size_t)(k - p)), p);
            if (key != K_NOTE && seen_line[key] > 0)
                return nserr_set(err, NS_ERR_INPUT, line, 1,
                                 "repeated key '%s' (first on line %d)", key_names[key],
                                 seen_line[key]);
            seen_line[key] = line;
            cur.key = key;
            cur.key_line = line;
            cur.key_end_col = col_of(p, k);
            cur.vstart = NULL;
            while (k < le && is_blank(*k))
                k++;
            if (k < z) {
                cur.vstart = k;
                cur.vline = line;
                cur.vcol = col_of(p, k);
                cur.vend = z;
            }
        }
        p = le < end ? le + 1 : end;
        line++;
    }
    if ((st = finish_entry(s, &cur, err)) != NS_OK)
        return st;
    if (cstart != NULL) {
        /* verbatim, but without blank lines or a CR before a line break */
        strbuf_t c;
        strbuf_init(c);
        for (const char *a = cstart; a < cend;) {
            const char *e = memchr(a, '\n', (size_t)(cend - a));
            const char *f = e ? e : cend;
            const char *g = f;
            while (g > a && (g[-1] == '\r' || is_blank(g[-1])))
                g--;
            if (g > a && *a == '#') {
                if (c->len)
                    strbuf_puts(c, "\n");
                strbuf_putn(c, a, (size_t)(g - a));
            }
            a = e ? e + 1 : cend;
        }
        text_set(&s->comments, c->s, c->len, cline, 1);
        strbuf_clear(c);
    }
    if (s->group.text == NULL)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "missing key 'group' (the presentation)");
    if (s->cls == 0)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "missing key 'class' (a number from 1 to %d)",
                         SESSION_MAX_CLASS);
    return NS_OK;
}

ns_status session_parse(session_t s, const char *text, nserr_t err)
{
    session_t t;
    ns_status st;

    session_init(t);
    st = parse_buf(t, text, strlen(text), err);
    if (st == NS_OK)
        session_swap(s, t);
    session_clear(t);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Files                                                                     */

static ns_status io_error(nserr_t err, const char *what, const char *path, int errnum)
{
    char reason[256];
    if (strerror_r(errnum, reason, sizeof reason) != 0)
        snprintf(reason, sizeof reason, "error %d", errnum);
    return nserr_set(err, NS_ERR_IO, 0, 0, "%s '%s': %s", what, path, reason);
}

ns_status session_load(session_t s, const char *path, nserr_t err)
{
    char *buf = NULL;
    size_t len = 0, cap = 0;
    session_t t;
    ns_status st;
    struct stat info;
    FILE *f;
    /* O_NONBLOCK: opening a FIFO must not wait for a writer; anything but
     * a regular file is refused before a byte is read. */
    int fd = open(path, O_RDONLY | O_NONBLOCK);

    if (fd < 0)
        return io_error(err, "cannot open", path, errno);
    if (fstat(fd, &info) != 0) {
        int e = errno;
        close(fd);
        return io_error(err, "cannot open", path, e);
    }
    if (!S_ISREG(info.st_mode)) {
        close(fd);
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "'%s' is not a regular file", path);
    }
    fcntl(fd, F_SETFL, fcntl(fd, F_GETFL) & ~O_NONBLOCK);
    f = fdopen(fd, "rb");
    if (f == NULL) {
        int e = errno;
        close(fd);
        return io_error(err, "cannot open", path, e);
    }
    for (;;) {
        size_t got;
        if (cap - len < 65536) {
            cap = cap ? 2 * cap : 65536;
            buf = flint_realloc(buf, cap + 1);
        }
        got = fread(buf + len, 1, cap - len, f);
        len += got;
        if (len > (size_t)SESSION_MAX_BYTES) {
            fclose(f);
            flint_free(buf);
            return nserr_set(err, NS_ERR_LIMIT, 0, 0,
                             "'%s' is larger than %ld MiB: not a session file", path,
                             SESSION_MAX_BYTES / (1024 * 1024));
        }
        if (got == 0) {
            if (ferror(f)) {
                int e = errno;
                fclose(f);
                flint_free(buf);
                return io_error(err, "cannot read", path, e);
            }
            break;
        }
    }
    fclose(f);
    buf[len] = '\0';

    session_init(t);
    st = parse_buf(t, buf, len, err);
    if (st == NS_OK)
        session_swap(s, t);
    session_clear(t);
    flint_free(buf);
    return st;
}

/* "key" padded to column 9, then the normal form of the text with
 * continuation lines indented by 4 spaces. */
static void put_entry(strbuf_t b, const char *key, const char *prefix, const char *text)
{
    char *n = norm_text(text);
    char pad[16];
    const char *p = n;

    snprintf(pad, sizeof pad, "%-8s", key);
    strbuf_puts(b, pad);
    if (prefix != NULL)
        strbuf_puts(b, prefix);
    while (*p != '\0') {
        const char *e = strchr(p, '\n');
        if (e == NULL) {
            strbuf_puts(b, p);
            break;
        }
        strbuf_putn(b, p, (size_t)(e - p));
        strbuf_puts(b, "\n    ");
        p = e + 1;
    }
    strbuf_puts(b, "\n");
    flint_free(n);
}

static int has_text(const char *t)
{
    return !text_is_blank(t);
}

char *session_get_str(const session_t s)
{
    strbuf_t b;
    char num[64];

    strbuf_init(b);
    strbuf_puts(b, SESSION_MAGIC "\n");
    if (has_text(s->comments.text)) {
        strbuf_puts(b, s->comments.text);
        strbuf_puts(b, "\n");
    }
    if (has_text(s->title.text))
        put_entry(b, "title", NULL, s->title.text);
    if (has_text(s->group.text))
        put_entry(b, "group", NULL, s->group.text);
    if (s->cls > 0) {
        snprintf(num, sizeof num, "%d", s->cls);
        put_entry(b, "class", NULL, num);
    }
    if (has_text(s->map.text))
        put_entry(b, "map", NULL, s->map.text);
    if (s->cursor_layer >= 0 || s->cursor_image >= 0) {
        char v[96] = "";
        if (s->cursor_layer >= 0)
            snprintf(v, sizeof v, "layer %ld", (long)s->cursor_layer);
        if (s->cursor_image >= 0)
            snprintf(v + strlen(v), sizeof v - strlen(v), "%simage %ld", v[0] ? " " : "",
                     (long)s->cursor_image);
        put_entry(b, "cursor", NULL, v);
    }
    /* steps first: the word runs to the end of the value and may end in a
     * comment. */
    if (s->iterate_steps >= 0 || has_text(s->iterate_word.text)) {
        char v[64] = "";
        if (s->iterate_steps >= 0)
            snprintf(v, sizeof v, "steps %ld%s", (long)s->iterate_steps,
                     has_text(s->iterate_word.text) ? " " : "");
        if (has_text(s->iterate_word.text)) {
            strcat(v, "word ");
            put_entry(b, "iterate", v, s->iterate_word.text);
        } else {
            put_entry(b, "iterate", NULL, v);
        }
    }
    for (slong i = 0; i < s->nnotes; i++)
        if (has_text(s->notes[i].text))
            put_entry(b, "note", NULL, s->notes[i].text);
    return strbuf_take(b);
}

/* The longest file name (one path component) the file systems we write
 * take; Linux's NAME_MAX. */
#define SESSION_NAME_MAX 255

/* Follows symbolic links at path (at most 40, as the kernel does) and
 * returns the path of the file they end at, which need not exist.
 * Caller frees with flint_free. */
static char *resolve_links(const char *path, int *errnum)
{
    char *p = strbuf_dup_strn(path, strlen(path));
    for (int hops = 0;; hops++) {
        struct stat st;
        if (lstat(p, &st) != 0 || !S_ISLNK(st.st_mode))
            return p;
        if (hops == 40) {
            *errnum = ELOOP;
            flint_free(p);
            return NULL;
        }
        size_t cap = (size_t)st.st_size + 2;
        if (cap < 256)
            cap = 256;
        char *target = flint_malloc(cap);
        ssize_t n = readlink(p, target, cap - 1);
        if (n < 0 || (size_t)n >= cap - 1) {
            *errnum = n < 0 ? errno : ENAMETOOLONG;
            flint_free(target);
            flint_free(p);
            return NULL;
        }
        target[n] = '\0';
        const char *slash = strrchr(p, '/');
        if (target[0] == '/' || slash == NULL) {
            flint_free(p);
            p = target;
        } else {
            size_t dl = (size_t)(slash - p) + 1, tl = (size_t)n;
            char *q = flint_malloc(dl + tl + 1);
            memcpy(q, p, dl);
            memcpy(q + dl, target, tl + 1);
            flint_free(target);
            flint_free(p);
            p = q;
        }
    }
}

/* The directory part of path ("." when there is none). */
static char *dir_of(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash == NULL ? strbuf_dup_strn(".", 1) : strbuf_dup_strn(path, slash == path ? 1 : (size_t)(slash - path));
}

/* How many bytes of the file name `base` a sibling name base[..k] + suffix
 * (suffix_len bytes) may keep so that it fits SESSION_NAME_MAX, cut at a
 * UTF-8 character boundary. */
static size_t sibling_prefix_len(const char *base, size_t suffix_len)
{
    size_t k = strlen(base);
    if (k + suffix_len > SESSION_NAME_MAX) {
        k = SESSION_NAME_MAX - suffix_len;
        while (k > 0 && ((unsigned char)base[k] & 0xC0) == 0x80)
            k--;
    }
    return k;
}

/* "DIR/NAME" + suffix ("tmp" or "old") + "-XXXXXX", NAME shortened to fit;
 * ready for mkstemp. */
static char *sibling_template(const char *target, const char *kind)
{
    const char *slash = strrchr(target, '/');
    const char *base = slash ? slash + 1 : target;
    size_t dl = (size_t)(base - target);
    size_t k = sibling_prefix_len(base, 11);
    char *t = flint_malloc(dl + k + 12);
    memcpy(t, target, dl + k);
    snprintf(t + dl + k, 12, ".%s-XXXXXX", kind);
    return t;
}

static int write_all(int fd, const char *p, size_t n)
{
    while (n > 0) {
        ssize_t w = write(fd, p, n);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return errno;
        }
        p += w;
        n -= (size_t)w;
    }
    return 0;
}

static void sync_dir_of(const char *path)
{
    char *dir = dir_of(path);
    int fd = open(dir, O_RDONLY);
    if (fd >= 0) {
        (void)fsync(fd);
        close(fd);
    }
    flint_free(dir);
}

/* Rewrites the existing file `target` in place with text: a copy of its
 * old content is set aside and synced first, removed after. */
static ns_status save_in_place(const char *target, const char *text, nserr_t err)
{
    char *aside = sibling_template(target, "old");
    char *old = NULL;
    size_t oldlen = 0, cap = 0;
    int e = 0;
    int in = open(target, O_RDWR);
    if (in < 0) {
        e = errno;
        flint_free(aside);
        return io_error(err, "cannot open", target, e);
    }
    for (;;) {
        if (cap - oldlen < 65536) {
            cap = cap ? 2 * cap : 65536;
            old = flint_realloc(old, cap);
        }
        ssize_t got = read(in, old + oldlen, cap - oldlen);
        if (got < 0 && errno == EINTR)
            continue;
        if (got < 0) {
            e = errno;
            close(in);
            flint_free(old);
            flint_free(aside);
            return io_error(err, "cannot read", target, e);
        }
        if (got == 0)
            break;
        oldlen += (size_t)got;
    }
    int fd = mkstemp(aside);
    if (fd < 0) {
        e = errno;
        close(in);
        flint_free(old);
        flint_free(aside);
        return io_error(err, "cannot create a copy aside of", target, e);
    }
    e = write_all(fd, old, oldlen);
    if (e == 0 && fsync(fd) != 0)
        e = errno;
    if (close(fd) != 0 && e == 0)
        e = errno;
    flint_free(old);
    if (e != 0) {
        unlink(aside);
        close(in);
        flint_free(aside);
        return io_error(err, "cannot write", target, e);
    }
    sync_dir_of(aside);
    /* From here on a failure may leave target half-written: the copy
     * aside stays and the message says where. */
    size_t n = strlen(text);
    if (lseek(in, 0, SEEK_SET) != 0)
        e = errno;
    if (e == 0)
        e = write_all(in, text, n);
    if (e == 0 && ftruncate(in, (off_t)n) != 0)
        e = errno;
    if (e == 0 && fsync(in) != 0)
        e = errno;
    if (close(in) != 0 && e == 0)
        e = errno;
    if (e != 0) {
        char reason[256];
        if (strerror_r(e, reason, sizeof reason) != 0)
            snprintf(reason, sizeof reason, "error %d", e);
        nserr_set(err, NS_ERR_IO, 0, 0,
                  "cannot write '%s': %s; its previous content is kept in '%s'", target, reason,
                  aside);
        flint_free(aside);
        return NS_ERR_IO;
    }
    unlink(aside);
    flint_free(aside);
    return NS_OK;
}

ns_status session_save(const session_t s, const char *path, nserr_t err)
{
    if (!has_text(s->group.text))
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the session has no group to save");
    if (s->cls < 1)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the session has no class to save");
    char *text = session_get_str(s);
    ns_status st = session_save_text(text, path, err);
    flint_free(text);
    return st;
}

ns_status session_save_text(const char *text, const char *path, nserr_t err)
{
    char *tmp, *target;
    struct stat old;
    int fd, e = 0, exists;
    size_t n;

    target = resolve_links(path, &e);
    if (target == NULL)
        return io_error(err, "cannot follow the link", path, e);
    exists = stat(target, &old) == 0;
    if (exists && !S_ISREG(old.st_mode)) {
        ns_status st = nserr_set(err, NS_ERR_IO, 0, 0, "cannot write '%s': not a regular file",
                                 target);
        flint_free(target);
        return st;
    }
    if (exists && old.st_nlink > 1) {
        ns_status st = save_in_place(target, text, err);
        flint_free(target);
        return st;
    }

    tmp = sibling_template(target, "tmp");
    fd = mkstemp(tmp);
    if (fd < 0) {
        e = errno;
        flint_free(tmp);
        ns_status st = io_error(err, "cannot create a temporary file for", target, e);
        flint_free(target);
        return st;
    }
    if (exists && (old.st_uid != geteuid() || old.st_gid != getegid()) &&
        fchown(fd, old.st_uid, old.st_gid) != 0) {
        /* We may not give the file away: keep it (and its owner) by
         * rewriting it in place instead. */
        close(fd);
        unlink(tmp);
        flint_free(tmp);
        ns_status st = save_in_place(target, text, err);
        flint_free(target);
        return st;
    }
    /* mkstemp makes the file private; keep the mode of the file it will
     * replace, else the usual mode of a document.  After fchown, which
     * may clear set-id bits. */
    if (fchmod(fd, exists ? (old.st_mode & 07777) : 0644) != 0)
        e = errno;
    n = strlen(text);
    if (e == 0)
        e = write_all(fd, text, n);
    if (e == 0 && fsync(fd) != 0)
        e = errno;
    if (close(fd) != 0 && e == 0)
        e = errno;
    if (e == 0 && rename(tmp, target) != 0)
        e = errno;
    if (e != 0) {
        unlink(tmp);
        flint_free(tmp);
        ns_status st = io_error(err, "cannot write", target, e);
        flint_free(target);
        return st;
    }
    /* Make the rename itself durable; failing here loses nothing. */
    sync_dir_of(target);
    flint_free(tmp);
    flint_free(target);
    return NS_OK;
}

static int is_leftover_name(const char *name, const char *base, size_t k)
{
    if (strncmp(name, base, k) != 0)
        return 0;
    name += k;
    if (strncmp(name, ".tmp-", 5) != 0 && strncmp(name, ".old-", 5) != 0)
        return 0;
    name += 5;
    for (int i = 0; i < 6; i++)
        if (!((name[i] >= 'a' && name[i] <= 'z') || (name[i] >= 'A' && name[i] <= 'Z') ||
              (name[i] >= '0' && name[i] <= '9')))
            return 0;
    return name[6] == '\0';
}

char *session_leftovers_get_str(slong *count, const char *path)
{
    int e = 0;
    char *target = resolve_links(path, &e);
    *count = 0;
    if (target == NULL)
        return NULL;
    char *dir = dir_of(target);
    const char *slash = strrchr(target, '/');
    const char *base = slash ? slash + 1 : target;
    size_t k = sibling_prefix_len(base, 11);
    DIR *d = opendir(dir);
    strbuf_t b;
    strbuf_init(b);
    if (d != NULL) {
        struct dirent *ent;
        while ((ent = readdir(d)) != NULL) {
            if (!is_leftover_name(ent->d_name, base, k))
                continue;
            if (*count > 0)
                strbuf_puts(b, "\n");
            if (slash != NULL) {
                strbuf_puts(b, dir);
                if (strcmp(dir, "/") != 0)
                    strbuf_puts(b, "/");
            }
            strbuf_puts(b, ent->d_name);
            (*count)++;
        }
        closedir(d);
    }
    flint_free(dir);
    flint_free(target);
    char *out = strbuf_take(b);
    if (*count == 0) {
        flint_free(out);
        out = NULL;
    }
    return out;
}

/* jsonl.c — see jsonl.h.  A recursive-descent checker of RFC 8259 values
 * with a depth limit. */
#include <string.h>
#include "jsonl.h"
#include "strbuf.h"

void jsonl_obj_init(jsonl_obj_t o)
{
    o->n = 0;
    o->key = o->raw = NULL;
}

void jsonl_obj_clear(jsonl_obj_t o)
{
    for (slong k = 0; k < o->n; k++) {
        flint_free(o->key[k]);
        flint_free(o->raw[k]);
    }
    flint_free(o->key);
    flint_free(o->raw);
    jsonl_obj_init(o);
}

typedef struct {
    const char *s;
    size_t pos;
    nserr_struct *err;
} reader;

static ns_status fail(reader *r, const char *what)
{
    return nserr_set(r->err, NS_ERR_SYNTAX, 1, (int)r->pos + 1, "%s", what);
}

static void skip_ws(reader *r)
{
    while (r->s[r->pos] == ' ' || r->s[r->pos] == '\t' || r->s[r->pos] == '\r' ||
           r->s[r->pos] == '\n')
        r->pos++;
}

static int hexval(char c)
{
    if (c >= '0' && c <= '9')
        return c - '0';
    if (c >= 'a' && c <= 'f')
        return c - 'a' + 10;
    if (c >= 'A' && c <= 'F')
        return c - 'A' + 10;
    return -1;
}

/* A string at pos ('"'); decoded into b when b is not NULL. */
static ns_status read_string(reader *r, strbuf_t b)
{
    r->pos++;
    for (;;) {
        unsigned char c = (unsigned char)r->s[r->pos];
        if (c == '\0')
            return fail(r, "unterminated string");
        if (c < 0x20)
            return fail(r, "control character in a string");
        if (c == '"') {
            r->pos++;
            return NS_OK;
        }
        if (c != '\\') {
            if (b)
                strbuf_putn(b, (const char *)&c, 1);
            r->pos++;
            continue;
        }
        char e = r->s[r->pos + 1];
        const char *simple = "\"\\/bfnrt", *meaning = "\"\\/\b\f\n\r\t";
        const char *at = e ? strchr(simple, e) : NULL;
        if (at) {
            if (b)
                strbuf_putn(b, meaning + (at - simple), 1);
            r->pos += 2;
            continue;
        }
        if (e != 'u')
            return fail(r, "bad escape in a string");
        unsigned cp = 0;
        for (int k = 0; k < 4; k++) {
            int h = hexval(r->s[r->pos + 2 + k]);
            if (h < 0)
                return fail(r, "bad \\u escape in a string");
            cp = 16 * cp + (unsigned)h;
        }
        r->pos += 6;
        if (cp >= 0xD800 && cp < 0xDC00 && r->s[r->pos] == '\\' && r->s[r->pos + 1] == 'u') {
            unsigned lo = 0;
            int ok = 1;
            for (int k = 0; k < 4 && ok; k++) {
                int h = hexval(r->s[r->pos + 2 + k]);
                ok = h >= 0;
                lo = 16 * lo + (unsigned)(h < 0 ? 0 : h);
            }
            if (ok && lo >= 0xDC00 && lo < 0xE000) {
                cp = 0x10000 + ((cp - 0xD800) << 10) + (lo - 0xDC00);
                r->pos += 6;
            }
        }
        if (b) {
            char u[4];
            int n;
            if (cp == 0)
                return fail(r, "\\u0000 in a string");
            if (cp < 0x80) {
                u[0] = (char)cp;
                n = 1;
            } else if (cp < 0x800) {
                u[0] = (char)(0xC0 | (cp >> 6));
                u[1] = (char)(0x80 | (cp & 0x3F));
                n = 2;
            } else if (cp < 0x10000) {
                u[0] = (char)(0xE0 | (cp >> 12));
                u[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
                u[2] = (char)(0x80 | (cp & 0x3F));
                n = 3;
            } else {
                u[0] = (char)(0xF0 | (cp >> 18));
                u[1] = (char)(0x80 | ((cp >> 12) & 0x3F));
                u[2] = (char)(0x80 | ((cp >> 6) & 0x3F));
                u[3] = (char)(0x80 | (cp & 0x3F));
                n = 4;
            }
            strbuf_putn(b, u, (size_t)n);
        }
    }
}

static int is_digit(char c) { return c >= '0' && c <= '9'; }

static ns_status read_value(reader *r, int depth);

static ns_status read_number(reader *r)
{
    const char *s = r->s;
    if (s[r->pos] == '-')
        r->pos++;
    if (s[r->pos] == '0')
        r->pos++;
    else if (is_digit(s[r->pos]))
        while (is_digit(s[r->pos]))
            r->pos++;
    else
        return fail(r, "malformed number");
    if (s[r->pos] == '.') {
        r->pos++;
        if (!is_digit(s[r->pos]))
            return fail(r, "malformed number");
        while (is_digit(s[r->pos]))
            r->pos++;
    }
    if (s[r->pos] == 'e' || s[r->pos] == 'E') {
        r->pos++;
        if (s[r->pos] == '+' || s[r->pos] == '-')
            r->pos++;
        if (!is_digit(s[r->pos]))
            return fail(r, "malformed number");
        while (is_digit(s[r->pos]))
            r->pos++;
    }
    return NS_OK;
}

static ns_status read_container(reader *r, int depth, char close)
{
    ns_status st;
    r->pos++;
    skip_ws(r);
    if (r->s[r->pos] == close) {
        r->pos++;
        return NS_OK;
    }
    for (;;) {
        if (close == '}') {
            if (r->s[r->pos] != '"')
                return fail(r, "expected a key (a string)");
            if ((st = read_string(r, NULL)) != NS_OK)
                return st;
            skip_ws(r);
            if (r->s[r->pos] != ':')
                return fail(r, "expected ':' after the key");
            r->pos++;
            skip_ws(r);
        }
        if ((st = read_value(r, depth + 1)) != NS_OK)
            return st;
        skip_ws(r);
        if (r->s[r->pos] == close) {
            r->pos++;
            return NS_OK;
        }
        if (r->s[r->pos] != ',')
            return fail(r, close == '}' ? "expected ',' or '}'" : "expected ',' or ']'");
        r->pos++;
        skip_ws(r);
    }
}

static ns_status read_value(reader *r, int depth)
{
    if (depth > JSONL_MAX_DEPTH)
        return fail(r, "nested too deeply");
    const char *s = r->s + r->pos;
    switch (*s) {
    case '"':
        return read_string(r, NULL);
    case '{':
        return read_container(r, depth, '}');
    case '[':
        return read_container(r, depth, ']');
    case 't':
        if (!strncmp(s, "true", 4)) {
            r->pos += 4;
            return NS_OK;
        }
        break;
    case 'f':
        if (!strncmp(s, "false", 5)) {
            r->pos += 5;
            return NS_OK;
        }
        break;
    case 'n':
        if (!strncmp(s, "null", 4)) {
            r->pos += 4;
            return NS_OK;
        }
        break;
    default:
        if (*s == '-' || is_digit(*s))
            return read_number(r);
    }
    return fail(r, *s ? "expected a JSON value" : "unexpected end of line");
}

ns_status jsonl_parse(jsonl_obj_t o, const char *line, nserr_t err)
{
    reader r = {line, 0, err};
    ns_status st = NS_OK;
    jsonl_obj_clear(o);
    skip_ws(&r);
    if (line[r.pos] != '{')
        return fail(&r, "expected a JSON object '{'");
    r.pos++;
    skip_ws(&r);
    if (line[r.pos] == '}') {
        r.pos++;
    } else {
        for (;;) {
            if (line[r.pos] != '"') {
                st = fail(&r, "expected a key (a string)");
                break;
            }
            strbuf_t k;
            strbuf_init(k);
            size_t kstart = r.pos;
            (void)kstart;
            if ((st = read_string(&r, k)) != NS_OK) {
                strbuf_clear(k);
                break;
            }
            skip_ws(&r);
            if (line[r.pos] != ':') {
                strbuf_clear(k);
                st = fail(&r, "expected ':' after the key");
                break;
            }
            r.pos++;
            skip_ws(&r);
            size_t vstart = r.pos;
            if ((st = read_value(&r, 1)) != NS_OK) {
                strbuf_clear(k);
                break;
            }
            o->key = flint_realloc(o->key, (o->n + 1) * sizeof(char *));
            o->raw = flint_realloc(o->raw, (o->n + 1) * sizeof(char *));
            o->key[o->n] = strbuf_take(k);
            o->raw[o->n] = strbuf_dup_strn(line + vstart, r.pos - vstart);
            o->n++;
            skip_ws(&r);
            if (line[r.pos] == '}') {
                r.pos++;
                break;
            }
            if (line[r.pos] != ',') {
                st = fail(&r, "expected ',' or '}'");
                break;
            }
            r.pos++;
            skip_ws(&r);
        }
    }
    if (st == NS_OK) {
        skip_ws(&r);
        if (line[r.pos] != '\0')
            st = fail(&r, "text after the object");
    }
    if (st != NS_OK)
        jsonl_obj_clear(o);
    return st;
}

const char *jsonl_get(const jsonl_obj_t o, const char *key)
{
    for (slong k = o->n - 1; k >= 0; k--)
        if (!strcmp(o->key[k], key))
            return o->raw[k];
    return NULL;
}

char *jsonl_string_value(const char *raw)
{
    if (raw == NULL || raw[0] != '"')
        return NULL;
    nserr_t e;
    nserr_init(e);
    reader r = {raw, 0, e};
    strbuf_t b;
    strbuf_init(b);
    ns_status st = read_string(&r, b);
    nserr_clear(e);
    if (st != NS_OK || raw[r.pos] != '\0') {
        strbuf_clear(b);
        return NULL;
    }
    return strbuf_take(b);
}

/* screen_members.c — the members of a scan result file (JSON Lines written
 * by `nilstep scan`) as a list that can be sorted and filtered; Enter makes
 * the selected member the current map (a new, unsaved session with the
 * member's group, class and map), after which every other screen works as
 * usual.  The list stays loaded: L on the main screen comes back to it. */
#include <curses.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "jsonl.h"
#include "paint.h"
#include "strbuf.h"

#define MEMBERS_MAX 2000000    /* lines read from one file */
#define MEMBERS_LINE (1 << 20) /* longest line read */

typedef struct {
    char *label; /* the parameters ("p=1 q=-2") or the id */
    char *group;
    long cls;
    char *map;
    int valid, automorphism, injective, hyperbolic, expanding;
    char *growth; /* NULL for a map that is not well defined */
    double growth_v;
    long line; /* in the file */
} member_row;

enum { SORT_FILE, SORT_GROWTH, SORT_MAP, SORT_COUNT };
enum { FILTER_ALL, FILTER_VALID, FILTER_AUTO, FILTER_HYP, FILTER_HYP_AUTO, FILTER_EXP,
       FILTER_COUNT };
static const char *const sort_names[SORT_COUNT] = {"file order", "growth rate", "map"};
static const char *const filter_names[FILTER_COUNT] = {
    "all", "well defined", "automorphisms", "hyperbolic", "hyperbolic automorphisms",
    "expanding"};

struct members_struct {
    char *path;
    member_row *rows;
    size_t n, cap;
    size_t *view; /* rows shown, in order */
    size_t nview;
    int sort, reverse, filter;
    size_t sel, top;
    int confirm; /* Enter once more discards unsaved changes */
    long skipped; /* lines that are not scan results */
};

static char *dup_or_empty(const char *s) { return strbuf_dup_str(s ? s : ""); }

static void row_clear(member_row *r)
{
    flint_free(r->label);
    flint_free(r->group);
    flint_free(r->map);
    flint_free(r->growth);
}

void members_free(members_t *m)
{
    if (!m)
        return;
    for (size_t k = 0; k < m->n; k++)
        row_clear(m->rows + k);
    free(m->rows);
    free(m->view);
    free(m->path);
    free(m);
}

static int is_true(const jsonl_obj_t o, const char *key)
{
    const char *v = jsonl_get(o, key);
    return v && !strcmp(v, "true");
}

/* The parameters {"p": 1, "q": -2} as "p=1 q=-2". */
static char *params_label(const char *raw)
{
    strbuf_t b;
    strbuf_init(b);
    for (const char *p = raw; *p; p++) {
        if (*p == '{' || *p == '}' || *p == '"')
            continue;
        if (*p == ':') {
            strbuf_puts(b, "=");
            while (p[1] == ' ')
                p++;
        } else if (*p == ',') {
            strbuf_puts(b, " ");
            while (p[1] == ' ')
                p++;
        } else {
            strbuf_putn(b, p, 1);
        }
    }
    return strbuf_take(b);
}

static int row_from_line(member_row *r, const char *line, long lineno)
{
    jsonl_obj_t o;
    nserr_t err;
    jsonl_obj_init(o);
    nserr_init(err);
    int ok = jsonl_parse(o, line, err) == NS_OK;
    char *map = ok ? jsonl_string_value(jsonl_get(o, "map")) : NULL;
    char *group = ok ? jsonl_string_value(jsonl_get(o, "group")) : NULL;
    const char *cls = ok ? jsonl_get(o, "class") : NULL;
    ok = map && group && cls && atol(cls) >= 1;
    if (ok) {
        memset(r, 0, sizeof *r);
        r->map = map;
        r->group = group;
        map = group = NULL;
        r->cls = atol(cls);
        r->line = lineno;
        const char *params = jsonl_get(o, "params"), *id = jsonl_get(o, "id");
        if (params) {
            r->label = params_label(params);
        } else {
            char *s = jsonl_string_value(id);
            r->label = s ? s : dup_or_empty(id);
        }
        r->valid = is_true(o, "valid");
        r->automorphism = is_true(o, "automorphism");
        r->injective = is_true(o, "injective");
        r->hyperbolic = is_true(o, "hyperbolic");
        r->expanding = is_true(o, "expanding");
        r->growth = jsonl_string_value(jsonl_get(o, "growth_rate"));
        r->growth_v = r->growth ? strtod(r->growth, NULL) : -1;
    }
    flint_free(map);
    flint_free(group);
    jsonl_obj_clear(o);
    nserr_clear(err);
    return ok;
}

static int row_shown(const members_t *m, const member_row *r)
{
    switch (m->filter) {
    case FILTER_VALID:
        return r->valid;
    case FILTER_AUTO:
        return r->valid && r->automorphism;
    case FILTER_HYP:
        return r->valid && r->hyperbolic;
    case FILTER_HYP_AUTO:
        return r->valid && r->hyperbolic && r->automorphism;
    case FILTER_EXP:
        return r->valid && r->expanding;
    default:
        return 1;
    }
}

/* One entry to sort: the row and the order asked for (qsort has no
 * context argument, and the UI keeps no globals for it). */
typedef struct {
    const member_row *r;
    size_t idx;
    int sort, reverse;
} sort_item;

static int cmp_rows(const void *pa, const void *pb)
{
    const sort_item *x = pa, *y = pb;
    const member_row *a = x->r, *b = y->r;
    int c = 0;
    if (x->sort == SORT_GROWTH) {
        /* maps that are not well defined have no growth rate: last */
        if (!a->growth != !b->growth)
            return a->growth ? -1 : 1;
        c = a->growth_v < b->growth_v ? -1 : a->growth_v > b->growth_v;
    } else if (x->sort == SORT_MAP) {
        c = strcmp(a->map, b->map);
    }
    if (x->reverse)
        c = -c;
    if (c == 0) /* stable: file order breaks ties */
        c = a->line < b->line ? -1 : a->line > b->line;
    return c;
}

/* Rebuilds the view after the sort or the filter changed, keeping the
 * selected member selected when it is still shown. */
static void rebuild_view(members_t *m)
{
    size_t keep = m->nview ? m->view[m->sel] : (size_t)-1;
    sort_item *it = malloc((m->n ? m->n : 1) * sizeof(sort_item));
    if (!it)
        abort();
    m->nview = 0;
    for (size_t k = 0; k < m->n; k++)
        if (row_shown(m, m->rows + k)) {
            sort_item t = {m->rows + k, k, m->sort, m->reverse};
            it[m->nview++] = t;
        }
    qsort(it, m->nview, sizeof(sort_item), cmp_rows);
    for (size_t k = 0; k < m->nview; k++)
        m->view[k] = it[k].idx;
    free(it);
    m->sel = 0;
    for (size_t k = 0; k < m->nview; k++)
        if (m->view[k] == keep)
            m->sel = k;
    m->top = 0;
}

int members_load(members_t **out, const char *path, char *msg, size_t msgsize)
{
    FILE *f = fopen(path, "r");
    if (!f) {
        snprintf(msg, msgsize, "%s: %s", path, strerror(errno));
        return -1;
    }
    members_t *m = calloc(1, sizeof *m);
    if (!m)
        abort();
    m->path = strdup(path);
    if (!m->path)
        abort();
    long lineno = 0;
    strbuf_t b;
    strbuf_init(b);
    int c = 0;
    while (c != EOF && m->n < MEMBERS_MAX) {
        b->len = 0;
        b->s[0] = '\0';
        while ((c = getc(f)) != EOF && c != '\n')
            if (b->len < MEMBERS_LINE) {
                char ch = (char)c;
                strbuf_putn(b, &ch, 1);
            }
        if (c == EOF && b->len == 0)
            break;
        lineno++;
        if (m->n == m->cap) {
            m->cap = m->cap ? 2 * m->cap : 64;
            m->rows = realloc(m->rows, m->cap * sizeof(member_row));
            if (!m->rows)
                abort();
        }
        if (row_from_line(m->rows + m->n, b->s, lineno))
            m->n++;
        else
            m->skipped++;
    }
    strbuf_clear(b);
    fclose(f);
    if (m->n == 0) {
        snprintf(msg, msgsize, "%s: no scan results in it (%ld lines read)", path, lineno);
        members_free(m);
        return -1;
    }
    m->view = malloc(m->n * sizeof(size_t));
    if (!m->view)
        abort();
    rebuild_view(m);
    *out = m;
    return 0;
}

int members_show(explorer_app *app, const char *path)
{
    char msg[600];
    members_t *m;
    if (members_load(&m, path, msg, sizeof msg) != 0) {
        app_status(app, 1, "%s", msg);
        return ACT_REDRAW;
    }
    members_free(app->members);
    app->members = m;
    app->screen = SCREEN_MEMBERS;
    if (m->skipped)
        app_status(app, 1, "%ld lines of %s are not scan results and were left out", m->skipped,
                   path);
    else
        app_status(app, 0, "%zu members: Enter opens one", m->n);
    return ACT_REDRAW;
}

/* ---- drawing -------------------------------------------------------------- */

void screen_members_draw(explorer_app *app)
{
    members_t *m = app->members;
    app_draw_header(app, "scan members");
    if (!m)
        return;
    paint_textf(1, 1, COLS - 2, ROLE_NORMAL, "%s: %zu members, %zu shown (%s), sorted by %s%s",
                m->path, m->n, m->nview, filter_names[m->filter], sort_names[m->sort],
                m->reverse ? ", reversed" : "");
    if (m->nview) {
        const member_row *r0 = m->rows + m->view[m->sel];
        paint_textf(2, 1, COLS - 2, ROLE_DIM, "group %s, class %ld", r0->group, r0->cls);
    }
    int y0 = 4, rows = LINES - 3 - y0;
    paint_textf(3, 1, COLS - 2, ROLE_HEADING, "%-6s %-22s %-5s %-4s %-4s %-4s %-20s %s", "line",
                "parameters / id", "valid", "aut", "hyp", "exp", "growth rate", "map");
    if (rows < 1)
        rows = 1;
    if (m->sel < m->top)
        m->top = m->sel;
    if (m->sel >= m->top + (size_t)rows)
        m->top = m->sel - (size_t)rows + 1;
    for (int i = 0; i < rows && m->top + (size_t)i < m->nview; i++) {
        size_t k = m->top + (size_t)i;
        const member_row *r = m->rows + m->view[k];
        paint_role role = k == m->sel ? ROLE_SELECTED : ROLE_NORMAL;
        char gr[21];
        snprintf(gr, sizeof gr, "%.20s", r->growth ? r->growth : "-");
        paint_fill(y0 + i, 0, COLS, role);
        paint_textf(y0 + i, 1, COLS - 2, role, "%-6ld %-22.22s %-5s %-4s %-4s %-4s %-20s %s",
                    r->line, r->label, r->valid ? "yes" : "no",
                    !r->valid ? "-" : r->automorphism ? "yes" : "no",
                    !r->valid ? "-" : r->hyperbolic ? "yes" : "no",
                    !r->valid ? "-" : r->expanding ? "yes" : "no", gr, r->map);
    }
    if (m->nview == 0)
        paint_text(y0, 1, COLS - 2, ROLE_DIM, "no member passes the filter (f changes it)");
    app_draw_status(app);
    app_draw_hints(app, screen_members_keys());
}

/* ---- actions --------------------------------------------------------------- */

static int move_sel(explorer_app *app, long d)
{
    members_t *m = app->members;
    if (!m || m->nview == 0)
        return ACT_NONE;
    long s = (long)m->sel + d;
    if (s < 0)
        s = 0;
    if (s >= (long)m->nview)
        s = (long)m->nview - 1;
    m->sel = (size_t)s;
    m->confirm = 0;
    return ACT_REDRAW;
}

static int page(void) { return LINES - 7 > 1 ? LINES - 7 : 1; }
static int act_up(explorer_app *app) { return move_sel(app, -1); }
static int act_down(explorer_app *app) { return move_sel(app, 1); }
static int act_page_up(explorer_app *app) { return move_sel(app, -page()); }
static int act_page_down(explorer_app *app) { return move_sel(app, page()); }
static int act_home(explorer_app *app) { return move_sel(app, -(long)MEMBERS_MAX); }
static int act_end(explorer_app *app) { return move_sel(app, MEMBERS_MAX); }

static int act_sort(explorer_app *app)
{
    members_t *m = app->members;
    m->sort = (m->sort + 1) % SORT_COUNT;
    m->reverse = m->sort == SORT_GROWTH; /* largest growth rate first */
    rebuild_view(m);
    return ACT_REDRAW;
}

static int act_reverse(explorer_app *app)
{
    app->members->reverse = !app->members->reverse;
    rebuild_view(app->members);
    return ACT_REDRAW;
}

static int act_filter(explorer_app *app)
{
    members_t *m = app->members;
    m->filter = (m->filter + 1) % FILTER_COUNT;
    rebuild_view(m);
    return ACT_REDRAW;
}

static int act_open(explorer_app *app)
{
    members_t *m = app->members;
    if (!m || m->nview == 0)
        return ACT_NONE;
    if (app->vm->dirty && !m->confirm) {
        m->confirm = 1;
        app_status(app, 1, "unsaved changes: Enter again opens the member and drops them");
        return ACT_REDRAW;
    }
    m->confirm = 0;
    const member_row *r = m->rows + m->view[m->sel];
    nserr_t err;
    nserr_init(err);
    session_clear(app->pending_doc);
    session_init(app->pending_doc);
    session_set_group(app->pending_doc, r->group);
    session_set_map(app->pending_doc, r->map);
    char title[300];
    snprintf(title, sizeof title, "%.200s, line %ld (%.60s)", m->path, r->line, r->label);
    session_set_title(app->pending_doc, title);
    int flags = ACT_REDRAW;
    if (session_set_class(app->pending_doc, (int)(r->cls > 64 ? 0 : r->cls), err) != NS_OK ||
        r->cls > 64) {
        app_status(app, 1, "line %ld: class %ld is out of range", r->line, r->cls);
    } else {
        app->has_pending_doc = 1;
        free(app->pending_path);
        app->pending_path = NULL; /* a new session: s asks where to save it */
        flags |= ACT_OPEN;
    }
    nserr_clear(err);
    return flags;
}

static int act_back(explorer_app *app)
{
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

int members_act_return(explorer_app *app)
{
    if (!app->members) {
        app_status(app, 1, "no scan result is open (o opens a .jsonl file)");
        return ACT_REDRAW;
    }
    app->screen = SCREEN_MEMBERS;
    return ACT_REDRAW;
}

static const ui_binding members_bindings[] = {
    {'\n', act_open, "Enter", "make the selected member the current map", "Enter open"},
    {'\r', act_open, NULL, NULL, NULL},
    {UIKEY_FN(KEY_ENTER), act_open, NULL, NULL, NULL},
    {'s', act_sort, "s", "sort by: file order, growth rate, map", "s sort"},
    {'r', act_reverse, "r", "reverse the order", "r reverse"},
    {'f', act_filter, "f",
     "show: all, well defined, automorphisms, hyperbolic, hyperbolic automorphisms, expanding",
     "f filter"},
    {UIKEY_FN(KEY_UP), act_up, "Up / k", "the previous member", NULL},
    {'k', act_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_down, "Down / j", "the next member", NULL},
    {'j', act_down, NULL, NULL, NULL},
    {UIKEY_FN(KEY_PPAGE), act_page_up, "PgUp", "one page up", NULL},
    {UIKEY_FN(KEY_NPAGE), act_page_down, "PgDn", "one page down", NULL},
    {UIKEY_FN(KEY_HOME), act_home, "Home / g", "the first member", NULL},
    {'g', act_home, NULL, NULL, NULL},
    {UIKEY_FN(KEY_END), act_end, "End / G", "the last member", NULL},
    {'G', act_end, NULL, NULL, NULL},
    {UIKEY_ESC, act_back, "Esc / q", "back to the main screen (L returns here)", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "help", "? help"},
};

const ui_keymap *screen_members_keys(void)
{
    static const ui_keymap km = {"Scan members (a .jsonl result file)", members_bindings,
                                 sizeof members_bindings / sizeof members_bindings[0]};
    return &km;
}

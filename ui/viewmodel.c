/* viewmodel.c — the explorer's state as pure data; see viewmodel.h. */
#include "viewmodel.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "lineedit.h"

static char *viewmodel_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort(); /* the UI cannot go on without memory */
    memcpy(d, s, n);
    return d;
}

static void *viewmodel_xcalloc(size_t n, size_t size)
{
    void *p = calloc(n ? n : 1, size);
    if (p == NULL)
        abort();
    return p;
}

void viewmodel_init(viewmodel_t vm)
{
    memset(vm, 0, sizeof *vm);
    vm->undo = viewmodel_xcalloc(VIEWMODEL_MAX_UNDO, sizeof *vm->undo);
    vm->redo = viewmodel_xcalloc(VIEWMODEL_MAX_UNDO, sizeof *vm->redo);
}

void viewmodel_doc_clear(viewmodel_doc *d)
{
    for (size_t i = 0; i < d->ngens; i++) {
        free(d->names[i]);
        free(d->images[i]);
    }
    free(d->names);
    free(d->images);
    free(d->title);
    free(d->group);
    memset(d, 0, sizeof *d);
}

static void viewmodel_edit_clear(viewmodel_edit *e)
{
    free(e->before);
    free(e->after);
    e->before = e->after = NULL;
    if (e->doc) {
        viewmodel_doc_clear(&e->dbefore);
        viewmodel_doc_clear(&e->dafter);
        e->doc = 0;
    }
}

static void viewmodel_drop_history(viewmodel_t vm)
{
    for (size_t k = 0; k < vm->nundo; k++)
        viewmodel_edit_clear(&vm->undo[k]);
    for (size_t k = 0; k < vm->nredo; k++)
        viewmodel_edit_clear(&vm->redo[k]);
    vm->nundo = vm->nredo = 0;
}

static void viewmodel_drop_generators(viewmodel_t vm)
{
    for (size_t i = 0; i < vm->ngens; i++) {
        free(vm->names[i]);
        free(vm->images[i]);
    }
    free(vm->names);
    free(vm->images);
    vm->names = vm->images = NULL;
    vm->ngens = 0;
}

void viewmodel_clear(viewmodel_t vm)
{
    viewmodel_drop_history(vm);
    viewmodel_drop_generators(vm);
    free(vm->undo);
    free(vm->redo);
    vm->undo = vm->redo = NULL;
}

void viewmodel_set_generators(viewmodel_t vm, size_t ngens, const char *const *names,
                              const char *const *images)
{
    /* Copy first: names or images may point into the old lists. */
    char **nn = viewmodel_xcalloc(ngens, sizeof *nn);
    char **ii = viewmodel_xcalloc(ngens, sizeof *ii);
    for (size_t i = 0; i < ngens; i++) {
        nn[i] = viewmodel_strdup(names[i]);
        ii[i] = viewmodel_strdup(images && images[i] ? images[i] : names[i]);
    }
    viewmodel_drop_history(vm);
    viewmodel_drop_generators(vm);
    vm->names = nn;
    vm->images = ii;
    vm->ngens = ngens;
    if (vm->sel_image >= ngens)
        vm->sel_image = ngens ? ngens - 1 : 0;
}

int viewmodel_same_generators(const viewmodel_t vm, size_t ngens, const char *const *names)
{
    if (ngens != vm->ngens)
        return 0;
    for (size_t i = 0; i < ngens; i++)
        if (strcmp(names[i], vm->names[i]) != 0)
            return 0;
    return 1;
}

void viewmodel_set_nlayers(viewmodel_t vm, size_t nlayers)
{
    vm->nlayers = nlayers;
    if (vm->sel_layer >= nlayers)
        vm->sel_layer = nlayers ? nlayers - 1 : 0;
}

static int viewmodel_move(size_t *sel, size_t n, long delta)
{
    if (n == 0)
        return 0;
    long to = (long)*sel + delta;
    if (to < 0)
        to = 0;
    if ((size_t)to >= n)
        to = (long)n - 1;
    if ((size_t)to == *sel)
        return 0;
    *sel = (size_t)to;
    return 1;
}

int viewmodel_move_layer(viewmodel_t vm, long delta)
{
    return viewmodel_move(&vm->sel_layer, vm->nlayers, delta);
}

int viewmodel_move_image(viewmodel_t vm, long delta)
{
    return viewmodel_move(&vm->sel_image, vm->ngens, delta);
}

int viewmodel_select_layer(viewmodel_t vm, size_t j)
{
    if (vm->nlayers == 0)
        return 0;
    return viewmodel_move(&vm->sel_layer, vm->nlayers, (long)j - (long)vm->sel_layer);
}

int viewmodel_select_image(viewmodel_t vm, size_t i)
{
    if (vm->ngens == 0)
        return 0;
    return viewmodel_move(&vm->sel_image, vm->ngens, (long)i - (long)vm->sel_image);
}

const char *viewmodel_get_image(const viewmodel_t vm, size_t i)
{
    return i < vm->ngens ? vm->images[i] : NULL;
}

/* Pushes onto a bounded stack, forgetting the oldest entry when full. */
static void viewmodel_push(viewmodel_edit *stack, size_t *n, viewmodel_edit e)
{
    if (*n == VIEWMODEL_MAX_UNDO) {
        viewmodel_edit_clear(&stack[0]);
        memmove(stack, stack + 1, (VIEWMODEL_MAX_UNDO - 1) * sizeof *stack);
        (*n)--;
    }
    stack[(*n)++] = e;
}

/* Pushes e as the newest edit, into a new state; clears the redo list. */
static void viewmodel_record(viewmodel_t vm, viewmodel_edit *e)
{
    e->state_before = vm->state;
    e->state_after = ++vm->next_state;
    vm->state = e->state_after;
    viewmodel_push(vm->undo, &vm->nundo, *e);
    for (size_t k = 0; k < vm->nredo; k++)
        viewmodel_edit_clear(&vm->redo[k]);
    vm->nredo = 0;
    vm->dirty = vm->state != vm->saved_state;
}

/* The generators and images of d become current (copies; history kept). */
static void viewmodel_take_doc(viewmodel_t vm, const viewmodel_doc *d)
{
    char **nn = viewmodel_xcalloc(d->ngens, sizeof *nn);
    char **ii = viewmodel_xcalloc(d->ngens, sizeof *ii);
    for (size_t i = 0; i < d->ngens; i++) {
        nn[i] = viewmodel_strdup(d->names[i]);
        ii[i] = viewmodel_strdup(d->images[i]);
    }
    viewmodel_drop_generators(vm);
    vm->names = nn;
    vm->images = ii;
    vm->ngens = d->ngens;
    if (vm->sel_image >= vm->ngens)
        vm->sel_image = vm->ngens ? vm->ngens - 1 : 0;
}

void viewmodel_doc_get(viewmodel_doc *d, const viewmodel_t vm, const char *title,
                       const char *group, long cls)
{
    memset(d, 0, sizeof *d);
    d->title = viewmodel_strdup(title);
    d->group = viewmodel_strdup(group);
    d->cls = cls;
    d->ngens = vm->ngens;
    d->names = viewmodel_xcalloc(vm->ngens, sizeof *d->names);
    d->images = viewmodel_xcalloc(vm->ngens, sizeof *d->images);
    for (size_t i = 0; i < vm->ngens; i++) {
        d->names[i] = viewmodel_strdup(vm->names[i]);
        d->images[i] = viewmodel_strdup(vm->images[i]);
    }
}

void viewmodel_push_doc(viewmodel_t vm, viewmodel_doc *before, viewmodel_doc *after)
{
    viewmodel_edit e;
    memset(&e, 0, sizeof e);
    e.doc = 1;
    e.dbefore = *before;
    e.dafter = *after;
    memset(before, 0, sizeof *before);
    memset(after, 0, sizeof *after);
    viewmodel_take_doc(vm, &e.dafter);
    viewmodel_record(vm, &e);
}

int viewmodel_set_image(viewmodel_t vm, size_t i, const char *text)
{
    if (i >= vm->ngens || strcmp(vm->images[i], text) == 0)
        return 0;
    viewmodel_edit e;
    memset(&e, 0, sizeof e);
    e.index = i;
    e.before = vm->images[i];
    e.after = viewmodel_strdup(text);
    vm->images[i] = viewmodel_strdup(text);
    viewmodel_record(vm, &e);
    vm->sel_image = i;
    return 1;
}

/* Makes the state on one side of e current: the before side when undoing. */
static int viewmodel_apply(viewmodel_t vm, const viewmodel_edit *e, int undoing)
{
    vm->current_doc = NULL;
    if (e->doc) {
        const viewmodel_doc *d = undoing ? &e->dbefore : &e->dafter;
        viewmodel_take_doc(vm, d);
        vm->current_doc = d;
    } else {
        free(vm->images[e->index]);
        vm->images[e->index] = viewmodel_strdup(undoing ? e->before : e->after);
        vm->sel_image = e->index;
    }
    vm->state = undoing ? e->state_before : e->state_after;
    vm->dirty = vm->state != vm->saved_state;
    return e->doc ? 2 : 1;
}

int viewmodel_undo(viewmodel_t vm)
{
    if (vm->nundo == 0)
        return 0;
    viewmodel_edit e = vm->undo[--vm->nundo];
    viewmodel_push(vm->redo, &vm->nredo, e);
    return viewmodel_apply(vm, &vm->redo[vm->nredo - 1], 1);
}

int viewmodel_redo(viewmodel_t vm)
{
    if (vm->nredo == 0)
        return 0;
    viewmodel_edit e = vm->redo[--vm->nredo];
    viewmodel_push(vm->undo, &vm->nundo, e);
    return viewmodel_apply(vm, &vm->undo[vm->nundo - 1], 0);
}

int viewmodel_drop_last(viewmodel_t vm)
{
    if (vm->nundo == 0)
        return 0;
    viewmodel_edit e = vm->undo[--vm->nundo];
    viewmodel_apply(vm, &e, 1);
    vm->current_doc = NULL;
    viewmodel_edit_clear(&e);
    return 1;
}

void viewmodel_mark_dirty(viewmodel_t vm)
{
    /* a change outside the history: a state no undo comes back to, and
     * no undo can take it back, so no state in the history is the saved
     * one any more (until the next save) */
    vm->state = ++vm->next_state;
    vm->saved_state = (unsigned long)-1;
    vm->dirty = 1;
}

void viewmodel_mark_saved(viewmodel_t vm)
{
    vm->saved_state = vm->state;
    vm->dirty = 0;
}

static const char *viewmodel_image_or_draft(const viewmodel_t vm, size_t i, size_t draft_index,
                                            const char *draft)
{
    return draft != NULL && i == draft_index ? draft : vm->images[i];
}

#define VIEWMODEL_ARROW " -> "
#define VIEWMODEL_SEP   ", "

char *viewmodel_map_text(const viewmodel_t vm, size_t draft_index, const char *draft)
{
    size_t n = 1;
    for (size_t i = 0; i < vm->ngens; i++)
        n += strlen(vm->names[i]) + strlen(viewmodel_image_or_draft(vm, i, draft_index, draft)) +
             sizeof VIEWMODEL_ARROW + sizeof VIEWMODEL_SEP;
    char *out = malloc(n);
    if (out == NULL)
        abort();
    size_t k = 0;
    for (size_t i = 0; i < vm->ngens; i++) {
        k += (size_t)snprintf(out + k, n - k, "%s%s%s%s", i ? VIEWMODEL_SEP : "", vm->names[i],
                              VIEWMODEL_ARROW, viewmodel_image_or_draft(vm, i, draft_index, draft));
    }
    out[k] = '\0';
    return out;
}

int viewmodel_locate_column(const viewmodel_t vm, size_t draft_index, const char *draft, int col,
                            size_t *image, int *image_col)
{
    if (vm->ngens == 0)
        return 0;
    /* Walk the same layout viewmodel_map_text writes, in code points. */
    long pos = 1;
    for (size_t i = 0; i < vm->ngens; i++) {
        long prefix = (long)lineedit_utf8_ncols(vm->names[i]) + (long)strlen(VIEWMODEL_ARROW);
        long len = (long)lineedit_utf8_ncols(viewmodel_image_or_draft(vm, i, draft_index, draft));
        long start = pos + prefix; /* first column of the image */
        long next = start + len + (long)strlen(VIEWMODEL_SEP);
        *image = i;
        if (col < start) {
            *image_col = 1;
            return 1;
        }
        if (col <= start + len || i + 1 == vm->ngens || col < next) {
            long c = col - start + 1;
            *image_col = (int)(c > len + 1 ? len + 1 : c);
            return 1;
        }
        pos = next;
    }
    return 0; /* not reached: the last image takes every later column */
}

void viewmodel_get_cursor(const viewmodel_t vm, long *layer, long *image)
{
    *layer = (long)vm->sel_layer + 1;
    *image = (long)vm->sel_image + 1;
}

void viewmodel_set_cursor(viewmodel_t vm, long layer, long image)
{
    if (layer >= 0)
        viewmodel_select_layer(vm, layer > 0 ? (size_t)(layer - 1) : 0);
    if (image >= 0)
        viewmodel_select_image(vm, image > 0 ? (size_t)(image - 1) : 0);
}

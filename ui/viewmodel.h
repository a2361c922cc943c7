/* viewmodel.h — what the explorer is looking at and what the user changed,
 * as pure data (no curses, no engine calls), so that it can be tested alone.
 *
 * It holds the generator names and one image text per generator (the map is
 * edited one image at a time), the selected image and layer, the undo/redo
 * history of image edits and the unsaved-changes flag.  It builds the whole
 * map text "a -> ..., b -> ..." that the engine parses, and maps a column
 * of that text back to the image it falls in, so that an error found in the
 * whole map can be pointed at in the one image being edited.
 *
 * Strings passed in are copied; strings returned by *_get_* stay valid
 * until the next call that changes the view model; strings returned by
 * viewmodel_map_text are the caller's to free(). */
#ifndef NILSTEP_UI_VIEWMODEL_H
#define NILSTEP_UI_VIEWMODEL_H

#include <stddef.h>

/* The whole document as an undo step sees it: the title, the presentation
 * and class, the generators and their images.  Owned strings. */
typedef struct {
    char *title;
    char *group;
    long cls;
    size_t ngens;
    char **names;
    char **images;
} viewmodel_doc;

/* One undoable edit: image `index` went from `before` to `after`, or (doc
 * set) the whole document went from dbefore to dafter.  state_before /
 * state_after identify the states, so that undoing back to the saved
 * state clears the dirty flag. */
typedef struct {
    size_t index;
    char *before, *after; /* owned; NULL for a document edit */
    int doc;
    viewmodel_doc dbefore, dafter;
    unsigned long state_before, state_after;
} viewmodel_edit;

#define VIEWMODEL_MAX_UNDO 256

typedef struct {
    size_t ngens;
    char **names;  /* ngens generator names, owned */
    char **images; /* ngens image texts, owned, never NULL */
    size_t sel_image;
    size_t nlayers;
    size_t sel_layer; /* 0-based; meaningless when nlayers == 0 */
    int dirty;        /* there are changes not saved (state != saved_state) */
    unsigned long state, saved_state, next_state;
    const viewmodel_doc *current_doc; /* after an undo / redo of a document
                                         edit: the document now current */
    viewmodel_edit *undo;
    size_t nundo;
    viewmodel_edit *redo;
    size_t nredo;
} viewmodel_struct;
typedef viewmodel_struct viewmodel_t[1];

void viewmodel_init(viewmodel_t vm);
void viewmodel_clear(viewmodel_t vm);

/* Sets the generators and their images (images NULL, or an entry NULL:
 * the identity, i.e. the generator itself).  The history is emptied and the
 * image selection clamped; the dirty flag is left alone. */
void viewmodel_set_generators(viewmodel_t vm, size_t ngens, const char *const *names,
                              const char *const *images);

/* 1 if names equals the current generator list. */
int viewmodel_same_generators(const viewmodel_t vm, size_t ngens, const char *const *names);

/* Sets the number of layers; the layer selection is clamped. */
void viewmodel_set_nlayers(viewmodel_t vm, size_t nlayers);

/* Moves a selection by delta, clamped at the ends; returns 1 if it moved. */
int viewmodel_move_layer(viewmodel_t vm, long delta);
int viewmodel_move_image(viewmodel_t vm, long delta);
/* Selects layer j (0-based) / image i, clamped; returns 1 if it changed. */
int viewmodel_select_layer(viewmodel_t vm, size_t j);
int viewmodel_select_image(viewmodel_t vm, size_t i);

const char *viewmodel_get_image(const viewmodel_t vm, size_t i);

/* Replaces image i as one undoable edit, selects it, clears the redo list
 * and marks the model dirty.  Returns 0 (and does nothing) when the text
 * is unchanged or i is out of range. */
int viewmodel_set_image(viewmodel_t vm, size_t i, const char *text);

/* Undoes / redoes the last edit and selects the image it touched; returns
 * 0 if there was none, 1 for an image edit, 2 for a document edit (then
 * vm->current_doc is the document now current: the caller applies its
 * title, presentation and class).  The model is dirty unless this comes
 * back to the saved state. */
int viewmodel_undo(viewmodel_t vm);
int viewmodel_redo(viewmodel_t vm);

/* Takes back the last edit (after its computation was cancelled) as if it
 * had not happened: no redo entry is left.  Returns 1 if there was one. */
int viewmodel_drop_last(viewmodel_t vm);

/* The current document with this title, presentation and class (copied
 * into d; free with viewmodel_doc_clear). */
void viewmodel_doc_get(viewmodel_doc *d, const viewmodel_t vm, const char *title,
                       const char *group, long cls);
void viewmodel_doc_clear(viewmodel_doc *d);

/* Records a document edit from before to after (both taken over) as one
 * undoable step, and makes after's generators and images current; the
 * redo list is cleared and the model dirty. */
void viewmodel_push_doc(viewmodel_t vm, viewmodel_doc *before, viewmodel_doc *after);

void viewmodel_mark_dirty(viewmodel_t vm);
void viewmodel_mark_saved(viewmodel_t vm);

/* The map text "a -> img_a, b -> img_b" from the current images, with the
 * image of generator `draft_index` replaced by `draft` when draft is not
 * NULL (the text being typed).  Caller frees with free(). */
char *viewmodel_map_text(const viewmodel_t vm, size_t draft_index, const char *draft);

/* For a 1-based column col (code points) of that same text on its one line,
 * the image it falls in and the 1-based column inside that image; a column
 * on a separator belongs to the image before it (it is where that image's
 * text ended too early), one in "x -> " to the image after it.  Returns 0
 * when there are no generators. */
int viewmodel_locate_column(const viewmodel_t vm, size_t draft_index, const char *draft, int col,
                            size_t *image, int *image_col);

/* The view as the session file's cursor key stores it: the selected layer
 * and image, both 1-based (layer j is the table's j, image i the i-th
 * generator's). */
void viewmodel_get_cursor(const viewmodel_t vm, long *layer, long *image);
/* Selects them back, clamped to what exists; a negative value (absent in
 * the file) leaves that selection alone, 0 means the first.  Call after
 * viewmodel_set_generators and viewmodel_set_nlayers. */
void viewmodel_set_cursor(viewmodel_t vm, long layer, long image);

#endif

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

/* One undoable edit: image `index` went from `before` to `after`. */
typedef struct {
    size_t index;
    char *before, *after; /* owned */
} viewmodel_edit;

#define VIEWMODEL_MAX_UNDO 256

typedef struct {
    size_t ngens;
    char **names;  /* ngens generator names, owned */
    char **images; /* ngens image texts, owned, never NULL */
    size_t sel_image;
    size_t nlayers;
    size_t sel_layer; /* 0-based; meaningless when nlayers == 0 */
    int dirty;        /* there are changes not saved */
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
 * 1 if there was one.  Either marks the model dirty. */
int viewmodel_undo(viewmodel_t vm);
int viewmodel_redo(viewmodel_t vm);

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

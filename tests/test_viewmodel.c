/* test_viewmodel.c — the explorer's state machine without a terminal
 * (ui/viewmodel.c, compiled into this test directly). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <stdlib.h>
#include <string.h>

#include "../ui/lineedit.c"
#include "../ui/viewmodel.c"

static const char *const abc[] = {"a", "b", "c"};

static void setup3(viewmodel_t vm)
{
    viewmodel_init(vm);
    const char *images[] = {"a^2", NULL, "[a,b]"};
    viewmodel_set_generators(vm, 3, abc, images);
    viewmodel_set_nlayers(vm, 4);
}

static void a_fresh_model_should_select_the_first_image_and_layer(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    assert_int_equal(vm->sel_image, 0);
    assert_int_equal(vm->sel_layer, 0);
    assert_int_equal(vm->dirty, 0);
    assert_string_equal(viewmodel_get_image(vm, 1), "b"); /* NULL = identity */
    assert_null(viewmodel_get_image(vm, 3));
    viewmodel_clear(vm);
}

static void selection_moves_should_clamp_at_the_ends(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    assert_int_equal(viewmodel_move_layer(vm, -1), 0);
    assert_int_equal(viewmodel_move_layer(vm, 1), 1);
    assert_int_equal(vm->sel_layer, 1);
    assert_int_equal(viewmodel_move_layer(vm, 100), 1);
    assert_int_equal(vm->sel_layer, 3);
    assert_int_equal(viewmodel_move_layer(vm, 1), 0);
    assert_int_equal(viewmodel_move_image(vm, 2), 1);
    assert_int_equal(vm->sel_image, 2);
    assert_int_equal(viewmodel_move_image(vm, 1), 0);
    assert_int_equal(viewmodel_select_image(vm, 0), 1);
    assert_int_equal(viewmodel_select_layer(vm, 0), 1);
    assert_int_equal(viewmodel_select_layer(vm, 99), 1);
    assert_int_equal(vm->sel_layer, 3);
    /* fewer layers (a lower class) pull the selection in */
    viewmodel_set_nlayers(vm, 2);
    assert_int_equal(vm->sel_layer, 1);
    viewmodel_set_nlayers(vm, 0);
    assert_int_equal(viewmodel_move_layer(vm, 1), 0);
    viewmodel_clear(vm);
}

static void editing_should_record_undo_and_mark_dirty(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    assert_int_equal(viewmodel_set_image(vm, 1, "b"), 0); /* unchanged: no edit */
    assert_int_equal(vm->nundo, 0);
    assert_int_equal(vm->dirty, 0);
    assert_int_equal(viewmodel_set_image(vm, 1, "b a"), 1);
    assert_int_equal(vm->sel_image, 1);
    assert_int_equal(vm->dirty, 1);
    assert_int_equal(viewmodel_set_image(vm, 2, "c^3"), 1);
    assert_int_equal(viewmodel_set_image(vm, 7, "x"), 0);

    viewmodel_mark_saved(vm);
    assert_int_equal(vm->dirty, 0);
    assert_int_equal(viewmodel_undo(vm), 1);
    assert_string_equal(viewmodel_get_image(vm, 2), "[a,b]");
    assert_int_equal(vm->sel_image, 2);
    assert_int_equal(vm->dirty, 1);
    assert_int_equal(viewmodel_undo(vm), 1);
    assert_string_equal(viewmodel_get_image(vm, 1), "b");
    assert_int_equal(vm->sel_image, 1);
    assert_int_equal(viewmodel_undo(vm), 0);

    assert_int_equal(viewmodel_redo(vm), 1);
    assert_string_equal(viewmodel_get_image(vm, 1), "b a");
    assert_int_equal(viewmodel_redo(vm), 1);
    assert_string_equal(viewmodel_get_image(vm, 2), "c^3");
    assert_int_equal(viewmodel_redo(vm), 0);

    /* a new edit after an undo forgets what could be redone */
    viewmodel_undo(vm);
    viewmodel_set_image(vm, 0, "a");
    assert_int_equal(viewmodel_redo(vm), 0);
    assert_string_equal(viewmodel_get_image(vm, 2), "[a,b]");
    viewmodel_clear(vm);
}

static void the_undo_history_should_be_bounded(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    char text[32];
    for (int k = 0; k < VIEWMODEL_MAX_UNDO + 10; k++) {
        snprintf(text, sizeof text, "a^%d", k + 3);
        viewmodel_set_image(vm, 0, text);
    }
    assert_int_equal(vm->nundo, VIEWMODEL_MAX_UNDO);
    int n = 0;
    while (viewmodel_undo(vm))
        n++;
    assert_int_equal(n, VIEWMODEL_MAX_UNDO);
    /* the oldest edits were forgotten, so this is not the original a^2 */
    snprintf(text, sizeof text, "a^%d", 10 + 2);
    assert_string_equal(viewmodel_get_image(vm, 0), text);
    viewmodel_clear(vm);
}

static void new_generators_should_drop_the_history(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    viewmodel_select_image(vm, 2);
    viewmodel_set_image(vm, 2, "c b");
    assert_int_equal(viewmodel_same_generators(vm, 3, abc), 1);
    const char *const xy[] = {"x", "y"};
    assert_int_equal(viewmodel_same_generators(vm, 2, xy), 0);
    viewmodel_set_generators(vm, 2, xy, NULL);
    assert_int_equal(vm->sel_image, 1);
    assert_int_equal(viewmodel_undo(vm), 0);
    assert_string_equal(viewmodel_get_image(vm, 0), "x");
    /* the dirty flag is the caller's business here */
    assert_int_equal(vm->dirty, 1);
    viewmodel_clear(vm);
}

static void the_map_text_should_list_every_image(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    char *t = viewmodel_map_text(vm, 0, NULL);
    assert_string_equal(t, "a -> a^2, b -> b, c -> [a,b]");
    free(t);
    t = viewmodel_map_text(vm, 1, "b^-1 (a");
    assert_string_equal(t, "a -> a^2, b -> b^-1 (a, c -> [a,b]");
    free(t);
    viewmodel_clear(vm);
}

/* Column of the first occurrence of needle in the map text, 1-based. */
static int col_of(const char *text, const char *needle)
{
    return (int)(strstr(text, needle) - text) + 1;
}

static void error_columns_should_map_back_to_the_image(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    const char *draft = "b^-1 (a";
    char *t = viewmodel_map_text(vm, 1, draft);
    size_t img;
    int c;
    /* the '(' of the draft: column 6 of the image */
    assert_true(viewmodel_locate_column(vm, 1, draft, col_of(t, "(a"), &img, &c));
    assert_int_equal(img, 1);
    assert_int_equal(c, 6);
    /* the ',' after it (where ')' was expected): just past the image */
    assert_true(viewmodel_locate_column(vm, 1, draft, col_of(t, ", c"), &img, &c));
    assert_int_equal(img, 1);
    assert_int_equal(c, (int)strlen(draft) + 1);
    /* first character of the first image and of the last */
    assert_true(viewmodel_locate_column(vm, 1, draft, 6, &img, &c));
    assert_int_equal(img, 0);
    assert_int_equal(c, 1);
    assert_true(viewmodel_locate_column(vm, 1, draft, col_of(t, "[a,b]") + 1, &img, &c));
    assert_int_equal(img, 2);
    assert_int_equal(c, 2);
    /* the end of the text belongs to the last image */
    assert_true(viewmodel_locate_column(vm, 1, draft, (int)strlen(t) + 1, &img, &c));
    assert_int_equal(img, 2);
    assert_int_equal(c, 6);
    /* inside "c -> ": the image after it, column 1 */
    assert_true(viewmodel_locate_column(vm, 1, draft, col_of(t, "c ->"), &img, &c));
    assert_int_equal(img, 2);
    assert_int_equal(c, 1);
    free(t);
    viewmodel_clear(vm);
}

static void error_columns_should_count_code_points(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    /* "α" is two bytes but one column, as in the engine's positions */
    const char *draft = "\xCE\xB1 b";
    size_t img;
    int c;
    /* "a -> a^2, b -> " is 15 columns; 'b' after "α " is image column 3 */
    assert_true(viewmodel_locate_column(vm, 1, draft, 15 + 3, &img, &c));
    assert_int_equal(img, 1);
    assert_int_equal(c, 3);
    viewmodel_clear(vm);
}

static void the_cursor_should_round_trip_through_numbers(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    viewmodel_select_layer(vm, 2);
    viewmodel_select_image(vm, 1);
    long layer, image;
    viewmodel_get_cursor(vm, &layer, &image);
    assert_int_equal(layer, 3);
    assert_int_equal(image, 2);
    viewmodel_select_layer(vm, 0);
    viewmodel_select_image(vm, 0);
    viewmodel_set_cursor(vm, layer, image);
    assert_int_equal(vm->sel_layer, 2);
    assert_int_equal(vm->sel_image, 1);
    /* absent parts leave the selection alone, out of range is clamped */
    viewmodel_set_cursor(vm, -1, -1);
    assert_int_equal(vm->sel_layer, 2);
    assert_int_equal(vm->sel_image, 1);
    viewmodel_set_cursor(vm, 40, 1000000000L);
    assert_int_equal(vm->sel_layer, 3);
    assert_int_equal(vm->sel_image, 2);
    viewmodel_set_cursor(vm, 0, 0);
    assert_int_equal(vm->sel_layer, 0);
    assert_int_equal(vm->sel_image, 0);
    viewmodel_clear(vm);
}

/* Document edits (presentation, class, title) share the history with
 * image edits; undoing back to the saved state clears the dirty flag, and
 * a cancelled edit is dropped without leaving a redo. */
static void document_edits_should_undo_and_track_the_saved_state(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    viewmodel_mark_saved(vm);
    viewmodel_doc before, after;
    viewmodel_doc_get(&before, vm, "old", "<a, b, c>", 2);
    viewmodel_doc_get(&after, vm, "new", "<a, b>", 3);
    /* the new document drops c */
    free(after.names[2]);
    free(after.images[2]);
    after.ngens = 2;
    viewmodel_push_doc(vm, &before, &after);
    assert_int_equal(vm->ngens, 2);
    assert_int_equal(vm->dirty, 1);
    assert_int_equal(viewmodel_set_image(vm, 1, "b^2"), 1);
    assert_int_equal(viewmodel_undo(vm), 1);
    assert_int_equal(viewmodel_undo(vm), 2);
    assert_string_equal(vm->current_doc->title, "old");
    assert_string_equal(vm->current_doc->group, "<a, b, c>");
    assert_int_equal(vm->current_doc->cls, 2);
    assert_int_equal(vm->ngens, 3);
    assert_string_equal(viewmodel_get_image(vm, 2), "[a,b]");
    assert_int_equal(vm->dirty, 0); /* back where it was saved */
    assert_int_equal(viewmodel_redo(vm), 2);
    assert_string_equal(vm->current_doc->title, "new");
    assert_int_equal(vm->dirty, 1);
    /* a cancelled image edit leaves nothing behind */
    assert_int_equal(viewmodel_set_image(vm, 0, "a^5"), 1);
    assert_int_equal(viewmodel_drop_last(vm), 1);
    assert_string_equal(viewmodel_get_image(vm, 0), "a^2");
    assert_int_equal(viewmodel_redo(vm), 0); /* the new edit had cleared it */
    assert_int_equal(viewmodel_undo(vm), 2); /* the document edit is next */
    viewmodel_clear(vm);
}

/* A change outside the history (a note edited, recovered work) can never
 * be undone: undoing an older edit back to the state that was saved must
 * not clear the dirty flag, for that change is still unsaved. */
static void a_change_outside_the_history_should_stay_dirty(void **state)
{
    (void)state;
    viewmodel_t vm;
    setup3(vm);
    viewmodel_mark_saved(vm);
    assert_int_equal(viewmodel_set_image(vm, 0, "a^3"), 1);
    viewmodel_mark_dirty(vm);
    assert_int_equal(viewmodel_undo(vm), 1);
    assert_int_equal(vm->dirty, 1);
    assert_int_equal(viewmodel_redo(vm), 1);
    assert_int_equal(vm->dirty, 1);
    viewmodel_mark_saved(vm); /* until it is saved */
    assert_int_equal(vm->dirty, 0);
    assert_int_equal(viewmodel_undo(vm), 1);
    assert_int_equal(vm->dirty, 1);
    assert_int_equal(viewmodel_redo(vm), 1);
    assert_int_equal(vm->dirty, 0);
    viewmodel_clear(vm);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(a_fresh_model_should_select_the_first_image_and_layer),
        cmocka_unit_test(selection_moves_should_clamp_at_the_ends),
        cmocka_unit_test(editing_should_record_undo_and_mark_dirty),
        cmocka_unit_test(the_undo_history_should_be_bounded),
        cmocka_unit_test(document_edits_should_undo_and_track_the_saved_state),
        cmocka_unit_test(a_change_outside_the_history_should_stay_dirty),
        cmocka_unit_test(new_generators_should_drop_the_history),
        cmocka_unit_test(the_map_text_should_list_every_image),
        cmocka_unit_test(error_columns_should_map_back_to_the_image),
        cmocka_unit_test(error_columns_should_count_code_points),
        cmocka_unit_test(the_cursor_should_round_trip_through_numbers),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

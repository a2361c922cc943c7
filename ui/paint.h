/* paint.h — colours by role and clipped text output for the screens.
 *
 * Screens never name a colour: they name what a piece of text is (a
 * heading, a number, an error ...) and this table says how it looks.
 * There are two themes: colour, and monochrome (attributes only), which is
 * used when NO_COLOR is set to a non-empty value or the terminal has no
 * colours.  Meaning never rests on colour alone: errors also say "error",
 * selections also carry a '>' marker, bounds a letter. */
#ifndef NILSTEP_UI_PAINT_H
#define NILSTEP_UI_PAINT_H

typedef enum {
    ROLE_NORMAL,
    ROLE_BAR,      /* header bar */
    ROLE_HEADING,  /* section titles */
    ROLE_SELECTED, /* the selected row */
    ROLE_NUMBER,   /* computed values */
    ROLE_MARKER,   /* bound markers and carets */
    ROLE_ERROR,
    ROLE_GOOD, /* "parses", "saved" */
    ROLE_DIM,  /* explanations, units */
    ROLE_KEY,  /* key names in the bottom line */
    ROLE_COUNT
} paint_role;

/* Chooses the theme; call after initscr().  colour = 0 forces monochrome. */
void paint_init(int colour);

/* 1 if NO_COLOR asks for no colours (set and not empty). */
int paint_no_color_requested(void);

/* The curses attributes of a role. */
int paint_attr(paint_role role);

/* Writes the UTF-8 text s at row y, column x, in at most w cells (one per
 * code point), cut with an ellipsis when longer (ascii selects "~").
 * Nothing is drawn for w <= 0 or a row off the screen.  Returns the cells
 * written. */
int paint_text(int y, int x, int w, paint_role role, const char *s);
int paint_textf(int y, int x, int w, paint_role role, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));

/* Fills w cells at (y, x) with blanks in the role's attributes. */
void paint_fill(int y, int x, int w, paint_role role);

/* A growing list of role-tagged lines that a screen builds before it
 * draws a scrolled window of them (layer detail, full values).  Zero
 * initialise; the texts are malloc'd; out of memory aborts. */
typedef struct {
    paint_role role;
    char *text;
} paint_line;

typedef struct {
    paint_line *v;
    int n, cap;
} paint_lines;

/* Appends one printf-formatted line. */
void paint_lines_add(paint_lines *t, paint_role role, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
/* Frees every line and the list (t may be reused after zeroing). */
void paint_lines_free(paint_lines *t);

/* Whether paint_text cuts with "~" instead of "…". */
void paint_set_ascii(int ascii);

#endif

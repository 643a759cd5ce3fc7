/* draw.h — the audit picture of a page layout (src/draw.c), drawn with cairo and lettered with
 * a FreeType font: the page with its layout over it and, right of the page, a legend panel.
 * Nothing here prints or exits. */
#ifndef LINEATE_DRAW_H
#define LINEATE_DRAW_H

#include "lineate.h"

#include <stdint.h>

/* ---- the page layout as drawn ----------------------------------------------------------- */
enum { LT_DRAW_TEXT = 0, LT_DRAW_RULE, LT_DRAW_PICTURE, LT_DRAW_TABLE, LT_DRAW_OTHER };
/* Role (LT_ROLE_* of lineate.h) of a name as lt_role_name writes it; LT_ROLE_BODY for NULL
 * or a name that is none of the roles of text blocks. */
int lt_role_from_name(const char *name);
/* Kind of a block kind name: "text", "rule", "picture", "table"; LT_DRAW_OTHER otherwise. */
int lt_draw_kind_from_name(const char *name);

typedef struct lt_draw_line {
    lt_point quad[4]; /* top-left, top-right, bottom-right, bottom-left, page pixels */
    int block;        /* index into blocks, -1 when not given */
} lt_draw_line;

typedef struct lt_draw_block {
    int kind;         /* LT_DRAW_* */
    int role;         /* LT_ROLE_*, for text blocks */
    lt_point quad[4]; /* as for lines */
} lt_draw_block;

typedef struct lt_draw_layout {
    int width, height;   /* page size in pixels */
    lt_draw_line *lines; /* in reading order */
    int nlines;
    lt_draw_block *blocks;
    int nblocks;
    int review_needed; /* the layout asks for its reading order to be reviewed */
    char **reasons;    /* why, nreasons strings (may be 0 even when review_needed) */
    int nreasons;
} lt_draw_layout;

/* Frees the layout and everything it holds (NULL-safe). */
void lt_draw_layout_free(lt_draw_layout *layout);

/* 1 when the step of the reading order from line `a` to line `b` is one an auditor should
 * look at (a "jump"), judged in a's own frame (along and across its quad, so skew does not
 * matter) from the centre of a's end to the centre of b's start, h being a's height:
 * upwards by more than h / 2; backwards along the same row (within h / 2) by more than h / 2;
 * downwards by more than a quarter of the page height; or downwards and to the right of a's
 * end by more than 2 h (into another column). 0 for the ordinary step to the next line below
 * or further along the same row. */
int lt_draw_step_is_jump(const lt_draw_line *a, const lt_draw_line *b, int page_height_px);

/* ---- the font --------------------------------------------------------------------------- */
/* The face the picture is lettered with, loaded from one font file (FreeType). */
typedef struct lt_draw_font lt_draw_font;

/* Loads the font file at `path` (LT_FONT_FILE, set by configure, when NULL). Fails with
 * LT_EIO (a file FreeType cannot read, with its path in the message) or LT_ENOMEM. */
int lt_draw_font_open(const char *path, lt_draw_font **out, lt_error *err);
/* Releases the caller's hold on the font (NULL-safe); cairo may keep the face in its font
 * caches until cairo_debug_reset_static_data. */
void lt_draw_font_close(lt_draw_font *font);

/* Empties cairo's font and pattern caches (cairo_debug_reset_static_data), releasing the
 * faces of closed fonts. For a program about to exit, once nothing drawn with cairo is left. */
void lt_draw_release_caches(void);

/* ---- the picture ------------------------------------------------------------------------ */
/* An RGB picture, 3 bytes a pixel, row-major, no padding. The page occupies the top-left
 * page_width x page_height pixels; the legend panel lies right of it, from x = page_width
 * to the right edge, and never over the page. */
typedef struct lt_picture {
    int width, height;
    int page_width, page_height;
    uint8_t *rgb; /* width * height * 3 bytes, owned by the picture */
} lt_picture;

void lt_picture_free(lt_picture *p);

typedef struct lt_draw_options {
    double scale;   /* page area size / page size, in (0, 1] */
    int show_order; /* draw the reading order: arrows and line numbers */
} lt_draw_options;

/* Draws the picture of `page` (gray or ink) with `layout` over it: the page lightened to a
 * light gray, text blocks tinted by role (the page multiplied by the role's tint, so the ink
 * keeps its contrast), rules, pictures and tables in their own patterns, line outlines, the
 * reading order (when opt->show_order: arrows on a white casing and line numbers) and, in a
 * panel right of the page, the legend and the order review note. The page area is
 * round(scale x page size), at least 1 x 1; the picture is as tall as the page area or the
 * legend, whichever is taller. Fails with LT_EINVAL (sizes of page and layout differ, scale out
 * of range), LT_ELIMIT (a picture wider or taller than cairo's 32767 pixels) or LT_ENOMEM. */
int lt_draw_page(const lt_image *page, const lt_draw_layout *layout, const lt_draw_options *opt,
                 const lt_draw_font *font, lt_picture **out, lt_error *err);

#endif

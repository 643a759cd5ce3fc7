/* draw.h — the audit picture of a page layout: an RGB canvas with clipped drawing primitives
 * (thick lines, polygons filled solid, translucent or hatched, arrows, a 5x7 bitmap font) and
 * the picture of one page drawn from a parsed layout. Nothing here prints or exits. */
#ifndef LINEATE_DRAW_H
#define LINEATE_DRAW_H

#include "lineate.h"

#include <stdint.h>

/* ---- canvas and primitives ------------------------------------------------------------ */
typedef struct lt_rgb {
    uint8_t r, g, b;
} lt_rgb;

/* An RGB picture, 3 bytes a pixel, row-major, no padding. Coordinates of the primitives are
 * continuous: pixel (x, y) covers [x, x+1) x [y, y+1) and is painted when its centre lies
 * inside the shape. Everything is clipped to the canvas. */
typedef struct lt_canvas {
    int width, height;
    uint8_t *rgb; /* width * height * 3 bytes, owned by the canvas */
} lt_canvas;

/* A canvas filled with `fill`; NULL when out of memory or the size is not positive. */
lt_canvas *lt_canvas_new(int width, int height, lt_rgb fill);
void lt_canvas_free(lt_canvas *c);

/* Fill patterns of lt_canvas_fill_polygon: hatches paint only the pixels on their strokes. */
enum {
    LT_FILL_SOLID = 0,
    LT_FILL_HATCH_DIAGONAL, /* strokes rising to the right, every period_px along x */
    LT_FILL_HATCH_GRID      /* horizontal and vertical strokes, every period_px */
};

/* Fills the polygon pts[0..n) (even-odd rule, any winding, 3 <= n <= 64) blending `color`
 * over the canvas with opacity alpha (0 transparent .. 255 opaque). For the hatches,
 * period_px is the stroke spacing and stroke_px the stroke width (both >= 1). */
void lt_canvas_fill_polygon(lt_canvas *c, const lt_point *pts, int n, lt_rgb color, int alpha,
                            int pattern, int period_px, int stroke_px);
/* Axis-aligned box [x0, x1) x [y0, y1) blended with opacity alpha. */
void lt_canvas_fill_rect(lt_canvas *c, double x0, double y0, double x1, double y1, lt_rgb color,
                         int alpha);
/* A straight stroke from a to b, width_px wide, with square caps reaching width_px / 2 past
 * both ends (so the strokes of a closed outline cover its corners). Opaque. */
void lt_canvas_line(lt_canvas *c, lt_point a, lt_point b, double width_px, lt_rgb color);
/* The closed outline of pts[0..n), each side a stroke as lt_canvas_line. */
void lt_canvas_outline(lt_canvas *c, const lt_point *pts, int n, double width_px, lt_rgb color);
/* A stroke from `from` to `to` ending in a filled triangular head whose tip is `to`,
 * head_px long and 0.8 head_px wide (shortened to half the length of a short arrow). */
void lt_canvas_arrow(lt_canvas *c, lt_point from, lt_point to, double width_px, double head_px,
                     lt_rgb color);

/* ---- text ------------------------------------------------------------------------------ */
/* The font: 5 x 9 cells (a 5 x 7 body for digits and letters with ascenders, two rows below
 * the baseline for descenders), advance 6 cells, drawn with each cell a scale x scale square.
 * It has a-z (upper case is drawn as lower case), 0-9, space and - . , : ; ( ) / ' _ + = # %;
 * any other byte is drawn as '?'. */
#define LT_FONT_ADVANCE 6 /* cells from one character to the next */
#define LT_FONT_HEIGHT 9  /* cells from the top of an ascender to the bottom of a descender */
#define LT_FONT_BODY 7    /* cells from the top of an ascender to the baseline */

/* Width in pixels of `text` drawn at `scale` (no spacing after the last character). */
int lt_text_width_px(const char *text, int scale);
/* Draws `text` with its cell grid's top-left corner at (x, y). */
void lt_canvas_text(lt_canvas *c, int x, int y, const char *text, int scale, lt_rgb color);

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

/* ---- the picture ------------------------------------------------------------------------ */
typedef struct lt_draw_options {
    double scale;   /* output size / page size, in (0, 1] */
    int show_order; /* draw the reading order: arrows and line numbers */
} lt_draw_options;

/* 1 when the step of the reading order from line `a` to line `b` is one an auditor should
 * look at (a "jump"), judged in a's own frame (along and across its quad, so skew does not
 * matter) from the centre of a's end to the centre of b's start, h being a's height:
 * upwards by more than h / 2; backwards along the same row (within h / 2) by more than h / 2;
 * downwards by more than a quarter of the page height; or downwards and to the right of a's
 * end by more than 2 h (into another column). 0 for the ordinary step to the next line below
 * or further along the same row. */
int lt_draw_step_is_jump(const lt_draw_line *a, const lt_draw_line *b, int page_height_px);

/* Draws the picture of `page` (gray or ink) with `layout` over it: the page lightened to a
 * light gray, text blocks tinted by role, rules, pictures and tables in their own styles,
 * line outlines, the reading order (when opt->show_order) and a legend in the corner that
 * covers least of the layout. The canvas is round(scale x page size), at least 1 x 1.
 * Fails with LT_EINVAL (sizes of page and layout differ, scale out of range) or LT_ENOMEM. */
int lt_draw_page(const lt_image *page, const lt_draw_layout *layout, const lt_draw_options *opt,
                 lt_canvas **out, lt_error *err);

#endif

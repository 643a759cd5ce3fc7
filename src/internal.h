/* internal.h — declarations shared by the library's own files (not installed). */
#ifndef LINEATE_INTERNAL_H
#define LINEATE_INTERNAL_H

#include "lineate.h"

#include <stddef.h>

#define LT_PI 3.14159265358979323846

/* Size arithmetic: 1 (and *out untouched) when a*b overflows size_t. */
int lt_mul_overflows(size_t a, size_t b, size_t *out);
/* malloc of count*size bytes with overflow check; NULL on failure. */
void *lt_alloc_array(size_t count, size_t size);
int lt_cmp_double(const void *a, const void *b);
int lt_cmp_int(const void *a, const void *b);
/* An index with a sort key (a component by its left edge or its top); lt_cmp_keyed orders by
 * key, then by index, so that sorting does not depend on the order given. */
typedef struct lt_keyed {
    int key, index;
} lt_keyed;
int lt_cmp_keyed(const void *a, const void *b);
/* The first of the n entries of v (sorted by key) whose key is at least `key`; n when none is. */
int lt_keyed_first_from(const lt_keyed *v, int n, int key);
/* lt_image_new, with the pixels left unset unless `zeroed`: for producers that write every
 * pixel (a page's worth of zeros is a pass over its memory). */
lt_image *lt_image_alloc(int width, int height, int kind, int zeroed);
/* Union-find over 0..n-1 in parent[] (parent[i] == i for a root). The root of a set is its
 * smallest member, so results do not depend on the order of unions. */
static inline int lt_uf_find(int *parent, int i)
{
    while (parent[i] != i) {
        parent[i] = parent[parent[i]]; /* path halving */
        i = parent[i];
    }
    return i;
}

static inline void lt_uf_unite(int *parent, int a, int b)
{
    a = lt_uf_find(parent, a);
    b = lt_uf_find(parent, b);
    if (a < b)
        parent[b] = a;
    else if (b < a)
        parent[a] = b;
}

static inline int lt_box_width(const lt_box *b)
{
    return b->right - b->left;
}

static inline int lt_box_height(const lt_box *b)
{
    return b->bottom - b->top;
}

/* Grows b to hold k as well. */
static inline void lt_box_grow(lt_box *b, const lt_box *k)
{
    if (k->left < b->left) b->left = k->left;
    if (k->top < b->top) b->top = k->top;
    if (k->right > b->right) b->right = k->right;
    if (k->bottom > b->bottom) b->bottom = k->bottom;
}

/* Median of v[0..n) (sorts v in place); 0 for n <= 0. */
double lt_median(double *v, int n);
/* The most of the n values v[] (sorted in place) that lie within `width` of each other; 0 for
 * n <= 0. */
int lt_largest_cluster(int *v, int n, double width);
/* Copies text into dst (size bytes with the NUL); text that does not fit loses a part of
 * its first fifth, marked "...", so that its end (in a message: the end of a file name and
 * the reason) is kept whole. UTF-8 characters are not cut. */
void lt_shorten_middle(char *dst, size_t size, const char *text);
/* 1 when dpi lies in LT_MIN_DPI..LT_MAX_DPI (0 for NaN and infinities). */
int lt_dpi_plausible(double dpi);
/* The gray points lt_binarize_normalized takes for LT_GRAY_POINT_AUTO (see lineate.h): from
 * the level of the ink (the darkest solid 3 x 3 tile, or the ink's darkest quarter) and the tile
 * mean that nine tenths of the tiles are at most (whole tiles at multiples of 3 px); 0 and 255
 * for a page of print on paper or without a whole tile. Returns 0 or LT_ENOMEM. */
int lt_gray_points(const lt_image *gray, double *black, double *white);
/* Where the analysis's binarization read light marks on a dark ground as the ink: one flag
 * per tile of tile_px x tile_px pixels of the page (tiles_x x tiles_y, row-major), 1 where it
 * did; `dark` NULL when it did nowhere. */
typedef struct lt_dark_map {
    int tile_px, tiles_x, tiles_y;
    uint8_t *dark;
} lt_dark_map;
/* The binarization of lt_analyze: lt_binarize_normalized with the page's gray points, sampled,
 * and in dark regions that look like print (window means under 100, at least three windows
 * wide and half a window tall, marks that stand out, clear of the page's edge unless they cover
 * half the page; see binarize.c) Sauvola's threshold on the negative instead, so that light
 * marks there are the ink; those tiles go into *dark, which the caller clears with
 * lt_dark_map_clear (also on failure). Windows that lt_binarize_sampled does not sample get no
 * inversion. */
int lt_binarize_page(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                     lt_dark_map *dark, lt_error *err);
void lt_dark_map_clear(lt_dark_map *map);
/* 1 when the point (x, y) of the page lies in a tile of `map` read as light on dark. */
int lt_dark_at(const lt_dark_map *map, double x, double y);
/* Records the resolution a file gave for img (0: none): kept when plausible, else ignored
 * and flagged in img->dpi_rejected. */
void lt_image_set_file_dpi(lt_image *img, double dpi);

/* ---- JSON text (json.c) ----------------------------------------------------------------- */
struct cJSON;
/* A copy of text (new string) with each byte that is not part of a valid UTF-8 sequence
 * replaced by U+FFFD, so that it can go into JSON; NULL when out of memory. */
char *lt_utf8_clean(const char *text);
/* Adds "source" to the object o: the name when it is valid UTF-8, else the name cleaned as
 * by lt_utf8_clean, with "source_bytes", the exact bytes percent-encoded (RFC 3986: every
 * byte below 0x20, 0x7F and above, and '%' as %XX, upper-case hex). 0, or -1 when out of
 * memory. */
int lt_json_add_source(struct cJSON *o, const char *source);
/* The name that a "source_bytes" value encodes (new string; %00 and malformed escapes are
 * kept as they stand); NULL when out of memory. */
char *lt_source_bytes_decode(const char *text);

/* ---- TIFF (load_tiff.c) --------------------------------------------------------------- */
/* Number of pages (directories) of a TIFF in memory. */
int lt_tiff_count_pages(const uint8_t *data, size_t size, const char *name, int *pages,
                        lt_error *err);
/* Decodes page `index` (0-based): 1-bit pages to ink, others to 8-bit gray; the size is
 * checked against max_pixels before any pixel is decoded. */
int lt_tiff_read_page(const uint8_t *data, size_t size, const char *name, int index,
                      long max_pixels, lt_image **out, lt_error *err);

/* ---- geometry (geom.c) ---------------------------------------------------------------- */
/* Maps between the deskewed frame (the canvas lt_rotate_ink produces) and the original
 * image. Built once per page; all output coordinates pass through it. */
typedef struct lt_frame {
    double cos_a, sin_a;         /* of the skew angle */
    double orig_cx, orig_cy;     /* centre of the (upright) image that was deskewed */
    double desk_cx, desk_cy;     /* centre of the deskewed canvas */
    int desk_width, desk_height; /* deskewed canvas size */
    int turn_deg;                /* quarter turn clockwise from the image as given to the
                                    upright image (lt_frame_set_turn), 0 by default */
    int given_width, given_height; /* size of the image as given */
} lt_frame;

/* Frame for an image of width x height deskewed by angle_deg (0 gives the identity). */
void lt_frame_init(lt_frame *f, int width, int height, double angle_deg);
/* Records that the image lt_frame_init was given is the image as given (given_width x
 * given_height) turned clockwise by turn_deg (0, 90, 180 or 270, as lt_turn_ink turns it):
 * the mappings below then lead to and from the image as given. */
void lt_frame_set_turn(lt_frame *f, int turn_deg, int given_width, int given_height);
/* Turns an ink image clockwise by turn_deg (0, 90, 180 or 270) without loss: a new image,
 * width and height swapped for 90 and 270. */
int lt_turn_ink(const lt_image *ink, int turn_deg, lt_image **out, lt_error *err);
/* Point of the deskewed canvas -> point of the original image. */
lt_point lt_frame_to_original(const lt_frame *f, double x, double y);
/* Point of the original image -> point of the deskewed canvas. */
lt_point lt_frame_to_deskewed(const lt_frame *f, double x, double y);
/* Quad (TL, TR, BR, BL) and its integer hull of an axis-aligned deskewed box, in original
 * coordinates, the hull clipped to the image. */
void lt_frame_map_box(const lt_frame *f, lt_box deskewed, int width, int height, lt_point quad[4],
                      lt_box *hull);

/* ---- text height (classify.c) -------------------------------------------------------- */
/* The text height of a page that was deskewed (turned level by lt_rotate_ink), in the units of
 * lt_text_height: from the characters' core heights rather than their boxes (see
 * CORE_TO_BOX in classify.c). 0 when there are no characters, -1 when out of memory. */
double lt_text_height_deskewed(const lt_components *c, double dpi);

/* ---- separators (separators.c) ------------------------------------------------------- */
/* The obstacles of a page (deskewed frame): rules and column gutters. Lines are not linked
 * across them, blocks are cut along them, columns are read from them. */
typedef struct lt_separators {
    lt_box *rules; /* rule components, vertical and horizontal */
    int nrules;
    lt_box *gutters; /* column gutters: bounding boxes of the connected white regions
                        between columns (a line printed across a gutter cuts it in two) */
    int ngutters;
    uint8_t *items_side; /* by gutter region that separates no lines, what stands beside it
                            (separators.c: short items before their rows, or page numbers
                            after their entries) */
    uint8_t *river;      /* by gutter region: 1 for a river of white, word spaces lined up inside a
                            paragraph (separators.c: no column gutter for gaps of a word space) */
    /* the gutter cells, for constant-time queries: a summed-area table of the cell grid */
    int cols, rows;
    double cell_px;
    int32_t *sum;
    int32_t *text_sum;  /* the same for the cells holding text, bodies and marks */
    uint8_t *occupancy; /* the cell grid: 3 a body (letters, words), 2 a mark, 1 a speck of a
                           dot's size, 0 white */
    double th;         /* the text height the stage was given */
} lt_separators;

/* Finds the rules (components classified LT_COMP_RULE) and the column gutters of a page. */
int lt_find_separators(const lt_components *c, double text_height_px, lt_separators **out,
                       lt_error *err);
/* 1 when gutter white lies in the rectangle [x0, x1) x [y0, y1) (in the cells wholly inside
 * it), or a vertical rule stands in it; s may be NULL. */
int lt_separator_between(const lt_separators *s, double x0, double x1, double y0, double y1);
/* Whether a link between two pieces of text on one row, with the gap [x0, x1) between them
 * and their rows [top, bottom), is refused: a separator lies in the gap (gutter white that is
 * a river, word spaces lined up inside a paragraph, only where the gap is wider than a
 * stretched word space); or the gap is wider than a label's space and runs, white, between
 * words through the white right of a column of short items (a listing's line numbers); or the
 * gap is wider than a stretched word space and a white strip through it has text on both sides
 * in the line above or below, or it follows a leader and precedes a page number set flush
 * with the lines above or below. Gap widths are judged against `height`, the smaller of the
 * two pieces' heights (px): the word spaces of large type are wide, while a piece that spans
 * two touching lines is no larger type. */
int lt_link_blocked(const lt_separators *s, double x0, double x1, double top, double bottom,
                    double height);
/* The same for gutter white alone. */
int lt_gutter_between(const lt_separators *s, double x0, double x1, double y0, double y1);
/* Whether a line printed across gutter region k (of s->gutters) is cut at it: not where the
 * region is the white right of a column of labels or line numbers before their rows (a line
 * of prose between two numbered listings runs on across it). */
int lt_gutter_cuts_lines(const lt_separators *s, int k);
/* Whether a vertical rule stands in [x0, x1) (a pixel of slack) over some of the rows
 * [y0, y1); s may be NULL. */
int lt_rule_between(const lt_separators *s, double x0, double x1, double y0, double y1);
void lt_separators_free(lt_separators *s);

/* ---- lines (lines.c) ------------------------------------------------------------------ */
/* A text line in the deskewed frame, before mapping. */
typedef struct lt_raw_line {
    lt_box box;        /* deskewed frame */
    double baseline_y; /* deskewed frame */
    double xheight_px;
    int ncomponents;
    lt_box lead;      /* leftmost component of the line (a bullet, a label, a first letter) */
    int lead_gap_px;  /* white between `lead` and the rest of the line (0 when alone) */
    lt_box trail;     /* rightmost component (the first of a right-to-left line) */
    int trail_gap_px; /* white between the rest of the line and `trail` */
    int bridged;      /* cut from a line whose ink ran across a column gutter */
} lt_raw_line;

typedef struct lt_raw_lines {
    lt_raw_line *items;
    int count;
} lt_raw_lines;

/* Groups the text components into lines (docstrum-style neighbour links, transitive
 * closure), then attaches speckle-sized marks (dots, accents, punctuation) that lie inside a
 * line's band. */
int lt_build_lines(const lt_components *c, double text_height_px, const lt_separators *seps,
                   const lt_params *p, lt_raw_lines **out, lt_error *err);
void lt_raw_lines_free(lt_raw_lines *l);
/* Drops the lines narrower than a letter that lie within a few text heights of the edge of
 * the image as given (frame f maps them there): pieces of a scan's dark border or of a page
 * edge, no text. */
void lt_drop_edge_slivers(lt_raw_lines *lines, const lt_frame *f, double text_height_px);
/* Reclassifies as speckle the picture components that reach from one edge of the image as
 * given to the opposite one and hold text lines: a scan's dark border round the page, which
 * frames the text but is neither a figure nor a table. */
void lt_drop_scan_borders(lt_components *c, const lt_raw_lines *lines, const lt_frame *f,
                          double text_height_px);

/* ---- orientation (orient.c) --------------------------------------------------------- */
/* A quarter turn, clockwise as displayed, that the evidence asks for. */
typedef struct lt_orientation {
    int turn_deg;      /* 0, 90 or 180 (below) */
    double confidence; /* 0 (the page does not say: turn_deg 0) .. 1 */
} lt_orientation;

/* Whether the text lines of a page run across it (turn_deg 0) or down it (90: the page
 * needs a quarter turn, and a second look at which side is then up), from the directions to
 * each text component's nearest text neighbours. `th` is the text height in pixels; fewer
 * than a few dozen text components give no estimate. */
int lt_estimate_line_axis(const lt_components *c, lt_orientation *out, lt_error *err);
/* Whether a page whose lines run across it stands upright (0) or upside down (180), from
 * its components beyond each line's x-height band (above it: ascenders, capitals; below it:
 * descenders) and from the ends of its lines (left ends lined up, right ends ragged), each
 * counted as a z score and added. Weak or disagreeing evidence gives no estimate. */
int lt_estimate_upright(const lt_components *c, const lt_raw_lines *lines, lt_orientation *out,
                        lt_error *err);

/* ---- line polygons (polygon.c) ----------------------------------------------------------- */
/* Sets lines[i].polygon / npolygon of `out` (its lines[0..nlines) are raw lines order[i]) to
 * an outline of each line's ink: the envelope of its components' boxes (a component belongs
 * to the line whose box holds its centre) over strips about a text height wide, merged where
 * they differ by less than half a text height, each strip holding at least the x-height
 * band; the outline lies within the line's quad. The points live in out->polygon_points.
 * `th` is the text height in pixels; a page without text gets no polygons. */
int lt_line_polygons(const lt_raw_lines *raw, const int *order, int nlines,
                     const lt_components *c, double th, const lt_frame *frame, lt_layout *out,
                     lt_error *err);

/* ---- blocks and order (blocks.c, order.c) --------------------------------------------- */
/* Node of the XY-cut tree. Leaves holding lines are blocks (pictures take part in the cuts
 * as obstacles, so a leaf may hold none); children are in reading order (top to bottom for a
 * horizontal cut, left to right for a vertical one, right to left with right_to_left). */
typedef struct lt_cut_node {
    lt_box box;
    int *lines; /* leaf: indices into the raw lines, top to bottom */
    int nlines;
    struct lt_cut_node **children;
    int nchildren;
} lt_cut_node;

/* `c` (may be NULL) supplies the pictures, `seps` (may be NULL) the rules and gutters that
 * separate columns and blocks. */
int lt_xy_cut(const lt_raw_lines *lines, const lt_components *c, const lt_separators *seps,
              double text_height_px, const lt_params *p, lt_cut_node **root, lt_error *err);
void lt_cut_node_free(lt_cut_node *n);

/* ---- regions, roles and reading order (regions.c, roles.c, order.c) -------------------- */
/* A text block in the deskewed frame: a leaf of the cut tree. */
typedef struct lt_raw_block {
    lt_box box;
    int *lines; /* raw line indices in reading order (owned) */
    int nlines;
    int role;          /* LT_ROLE_* */
    int table;         /* index into lt_arrangement.tables, or -1 */
    double xheight_px; /* median x-height of its lines */
} lt_raw_block;

/* Table regions of a page (deskewed frame): frames holding a grid of text, or horizontal
 * rules that enclose rows of cells. `from_component[k]` is the picture or rule component a
 * framed table was found from (it is then reported as the table, not as a picture), or -1. */
typedef struct lt_tables {
    lt_box *boxes;
    int *from_component;
    int count;
} lt_tables;

int lt_find_tables(const lt_components *c, const lt_raw_lines *lines, double th, lt_tables *out);
void lt_tables_free(lt_tables *t);

/* Page heads and feet: running heads, running feet and page numbers. */
static inline int lt_role_is_head_or_foot(int role)
{
    return role == LT_ROLE_PAGE_HEADER || role == LT_ROLE_PAGE_FOOTER ||
           role == LT_ROLE_PAGE_NUMBER;
}

/* Sets the role of every block (see LT_ROLE_*) from its place on the page, its size and
 * type size, and the pictures, tables and rules around it (`c` and `tables` may be NULL). */
void lt_assign_roles(lt_raw_block *blocks, int nblocks, const lt_raw_lines *lines,
                     const lt_components *c, const lt_tables *tables, double th, int page_h,
                     int rtl);

/* The text of a page arranged: blocks in reading order and the lines in reading order. */
typedef struct lt_arrangement {
    lt_raw_block *blocks; /* in reading order */
    int nblocks;
    int *order;    /* raw line indices in reading order */
    int *block_of; /* block of each reading position */
    int nlines;
    lt_tables tables;
    int order_doubts; /* LT_DOUBT_* bits */
} lt_arrangement;

/* Blocks from the leaves of the cut tree, tables, roles, and the reading order: page heads
 * first and page feet last; the other blocks by a partial order (Breuel 2003: a block
 * precedes another it overlaps horizontally and stands above; it precedes a block to its
 * right unless a block between them vertically overlaps both) and a topological sort, ties
 * going to the block the cut tree reads first. Cells of a table are read row by row, as one
 * unit. `c` may be NULL (no tables, no pictures, no rules). */
int lt_arrange(const lt_cut_node *root, const lt_raw_lines *lines, const lt_components *c,
               double th, const lt_params *p, int page_h, lt_arrangement **out, lt_error *err);
void lt_arrangement_free(lt_arrangement *a);

#endif

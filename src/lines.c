/* lines.c — text lines by docstrum-style neighbour links (O'Gorman 1993): every text
 * component is linked to its nearest neighbour on each side whose direction lies near the
 * (removed) page skew, i.e. that overlaps it vertically, within a gap taken from the page's
 * text height; lines are the transitive closure of the links. Links that cross a column
 * gutter — a white vertical strip shared by the wide gaps of several rows — are dropped.
 * Small marks (dots, commas, hyphens, accents) join the line whose band holds them. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct link {
    int a, b;        /* components, a left of b */
    int x0, x1;      /* the white gap between them, [x0, x1) */
    int top, bottom; /* vertical extent of the pair */
} link;

typedef struct index_grid {
    int cols, rows;
    double cell_px;
    int *start; /* cols*rows+1 offsets into items */
    int *items; /* component indices, by cell */
} index_grid;

static int box_w(const lt_box *b)
{
    return b->right - b->left;
}

static int box_h(const lt_box *b)
{
    return b->bottom - b->top;
}

/* Grid of the components in `use` (by centroid) for neighbour queries. */
static int grid_build(const lt_components *c, const uint8_t *use, double cell_px, index_grid *g)
{
    int maxx = 1, maxy = 1;
    for (int i = 0; i < c->count; i++) {
        if (c->items[i].box.right > maxx) maxx = c->items[i].box.right;
        if (c->items[i].box.bottom > maxy) maxy = c->items[i].box.bottom;
    }
    g->cell_px = cell_px;
    g->cols = (int)(maxx / cell_px) + 1;
    g->rows = (int)(maxy / cell_px) + 1;
    size_t ncell = (size_t)g->cols * g->rows;
    g->start = calloc(ncell + 1, sizeof *g->start);
    g->items = malloc(((size_t)c->count + 1) * sizeof *g->items);
    if (!g->start || !g->items) return LT_ENOMEM;
    for (int i = 0; i < c->count; i++) {
        if (!use[i]) continue;
        int cx = (int)(c->items[i].cx / cell_px), cy = (int)(c->items[i].cy / cell_px);
        g->start[(size_t)cy * g->cols + cx + 1]++;
    }
    for (size_t k = 0; k < ncell; k++)
        g->start[k + 1] += g->start[k];
    int *fill = malloc((ncell + 1) * sizeof *fill);
    if (!fill) return LT_ENOMEM;
    memcpy(fill, g->start, (ncell + 1) * sizeof *fill);
    for (int i = 0; i < c->count; i++) {
        if (!use[i]) continue;
        int cx = (int)(c->items[i].cx / cell_px), cy = (int)(c->items[i].cy / cell_px);
        g->items[fill[(size_t)cy * g->cols + cx]++] = i;
    }
    free(fill);
    return 0;
}

static void grid_free(index_grid *g)
{
    free(g->start);
    free(g->items);
}

/* Whether b may sit beside a in one line. Of two similar heights, the vertical extents
 * overlap by at least half the smaller height and the centres are at most 0.7 smaller
 * heights apart (so a tall bracket joins only the line it is centred on). A clearly smaller
 * one (comma, superscript, small capital) has its centre within the larger's extent or just
 * below it. Heights differ at most fourfold. */
static int same_row(const lt_component *a, const lt_component *b)
{
    const lt_box *small = &a->box, *large = &b->box;
    if (box_h(small) > box_h(large)) {
        small = &b->box;
        large = &a->box;
    }
    const int hmin = box_h(small), hmax = box_h(large);
    if (hmax > 4 * hmin) return 0;
    if (10 * hmin <= 7 * hmax) {
        double cy = 0.5 * (small->top + small->bottom);
        return cy >= large->top && cy <= large->bottom + 0.25 * hmax;
    }
    int top = small->top > large->top ? small->top : large->top;
    int bottom = small->bottom < large->bottom ? small->bottom : large->bottom;
    if (2 * (bottom - top) < hmin) return 0;
    double dcy = 0.5 * (small->top + small->bottom - large->top - large->bottom);
    return fabs(dcy) <= 0.7 * hmin;
}

/* Nearest neighbour of component i on one side (dir = +1 right, -1 left) within max_gap,
 * or -1. The gap is measured between the boxes. */
static int nearest_beside(const lt_components *c, const index_grid *g, int i, int dir,
                          double max_gap)
{
    const lt_component *a = &c->items[i];
    const int reach = (int)(max_gap + 3 * g->cell_px);
    int x_lo = dir > 0 ? (int)a->cx : a->box.left - reach;
    int x_hi = dir > 0 ? a->box.right + reach : (int)a->cx;
    int cx0 = x_lo / g->cell_px < 0 ? 0 : (int)(x_lo / g->cell_px);
    int cx1 = (int)(x_hi / g->cell_px);
    int cy0 = (int)((a->box.top - g->cell_px) / g->cell_px),
        cy1 = (int)(a->box.bottom / g->cell_px) + 1;
    if (cx1 >= g->cols) cx1 = g->cols - 1;
    if (cy0 < 0) cy0 = 0;
    if (cy1 >= g->rows) cy1 = g->rows - 1;
    int best = -1;
    double best_gap = max_gap + 1;
    for (int cy = cy0; cy <= cy1; cy++)
        for (int cx = cx0; cx <= cx1; cx++) {
            size_t cell = (size_t)cy * g->cols + cx;
            for (int k = g->start[cell]; k < g->start[cell + 1]; k++) {
                int j = g->items[k];
                if (j == i) continue;
                const lt_component *b = &c->items[j];
                if (dir > 0 ? b->cx <= a->cx : b->cx >= a->cx) continue;
                double gap = dir > 0 ? b->box.left - a->box.right : a->box.left - b->box.right;
                if (gap > max_gap || gap >= best_gap) continue;
                if (!same_row(a, b)) continue;
                best = j;
                best_gap = gap;
            }
        }
    return best;
}

/* Coarse occupancy of the page by line bodies, with a summed-area table for counting the
 * occupied cells of any rectangle in constant time. */
typedef struct occupancy {
    int cols, rows;
    double cell_px;
    int32_t *sum;         /* (cols+1) x (rows+1) summed-area table */
    const lt_box *vrules; /* vertical rules: hard boundaries no line crosses */
    int nvrules;
    const struct occupancy *white_of; /* if set: the grid a gutter's strip must be white in */
} occupancy;

static int occupancy_build(const lt_components *c, const uint8_t *body, double cell_px,
                           occupancy *o)
{
    int maxx = 1, maxy = 1;
    for (int i = 0; i < c->count; i++) {
        if (c->items[i].box.right > maxx) maxx = c->items[i].box.right;
        if (c->items[i].box.bottom > maxy) maxy = c->items[i].box.bottom;
    }
    o->cell_px = cell_px;
    o->cols = (int)(maxx / cell_px) + 1;
    o->rows = (int)(maxy / cell_px) + 1;
    const size_t stride = (size_t)o->cols + 1;
    o->sum = calloc(stride * ((size_t)o->rows + 1), sizeof *o->sum);
    if (!o->sum) return LT_ENOMEM;
    for (int i = 0; i < c->count; i++) {
        if (!body[i]) continue;
        const lt_box *b = &c->items[i].box;
        int x0 = (int)(b->left / cell_px), x1 = (int)((b->right - 1) / cell_px);
        int y0 = (int)(b->top / cell_px), y1 = (int)((b->bottom - 1) / cell_px);
        for (int y = y0; y <= y1; y++)
            for (int x = x0; x <= x1; x++)
                o->sum[(size_t)(y + 1) * stride + x + 1] = 1;
    }
    for (int y = 1; y <= o->rows; y++)
        for (int x = 1; x <= o->cols; x++)
            o->sum[(size_t)y * stride + x] += o->sum[(size_t)(y - 1) * stride + x] +
                                              o->sum[(size_t)y * stride + x - 1] -
                                              o->sum[(size_t)(y - 1) * stride + x - 1];
    return 0;
}

/* Occupied cells of the cell rectangle [cx0, cx1) x [cy0, cy1), clipped to the grid. */
static int occupancy_cells(const occupancy *o, int cx0, int cy0, int cx1, int cy1)
{
    if (cx0 < 0) cx0 = 0;
    if (cy0 < 0) cy0 = 0;
    if (cx1 > o->cols) cx1 = o->cols;
    if (cy1 > o->rows) cy1 = o->rows;
    if (cx1 <= cx0 || cy1 <= cy0) return 0;
    const size_t stride = (size_t)o->cols + 1;
    return o->sum[(size_t)cy1 * stride + cx1] - o->sum[(size_t)cy0 * stride + cx1] -
           o->sum[(size_t)cy1 * stride + cx0] + o->sum[(size_t)cy0 * stride + cx0];
}

/* Occupied cells of the pixel rectangle [x0, x1) x [y0, y1): the cells wholly inside it
 * across, all cells it touches down. */
static int occupancy_count(const occupancy *o, double x0, double y0, double x1, double y1)
{
    return occupancy_cells(o, (int)ceil(x0 / o->cell_px), (int)floor(y0 / o->cell_px),
                           (int)floor(x1 / o->cell_px), (int)ceil(y1 / o->cell_px));
}

/* Occupied cells of cell column cx over the pixel rows [y0, y1). */
static int column_count(const occupancy *o, int cx, double y0, double y1)
{
    return occupancy_cells(o, cx, (int)floor(y0 / o->cell_px), cx + 1, (int)ceil(y1 / o->cell_px));
}

/* Whether a vertical rule stands in the gap of link l (between x0 and x1, overlapping the
 * pair's vertical extent). */
static int rule_between(const occupancy *o, const link *l)
{
    for (int r = 0; r < o->nvrules; r++) {
        const lt_box *b = &o->vrules[r];
        if (b->left >= l->x0 - 1 && b->right <= l->x1 + 1 && b->top < l->bottom &&
            b->bottom > l->top)
            return 1;
    }
    return 0;
}

/* The widest run of whole cell columns inside the gap of link l whose occupied cells over the
 * rows [ya0, ya1) and [yb0, yb1) (the second range may be empty) number at most `limit`: its
 * length in cells, its first column in *lo. */
static int widest_strip(const occupancy *o, const link *l, double ya0, double ya1, double yb0,
                        double yb1, int limit, int *lo)
{
    const double cell = o->cell_px;
    int best = 0, run = 0;
    *lo = 0;
    for (int cx = (int)ceil(l->x0 / cell); (cx + 1) * cell <= l->x1; cx++) {
        const int full =
            column_count(o, cx, ya0, ya1) + (yb1 > yb0 ? column_count(o, cx, yb0, yb1) : 0);
        run = full <= limit ? run + 1 : 0;
        if (run > best) {
            best = run;
            *lo = cx - run + 1;
        }
    }
    return best;
}

/* The far edge of the window beside a strip edge at x, going `dir` (-1 left, +1 right) at
 * most `side` px over the rows [y0, y1) other than the pair's own: it stops at the next white
 * strip a text height wide met after some text (another gutter), so that the window stays in
 * one column. */
static double side_edge(const occupancy *o, const link *l, double x, int dir, double side,
                        double y0, double y1, double th)
{
    const double cell = o->cell_px;
    const double top = l->top - cell, bottom = l->bottom + cell; /* the pair's own rows out */
    const int min_cells = (int)ceil(1.0 * th / cell);
    /* the cell columns wholly beyond x, nearest first */
    const int first = dir < 0 ? (int)floor(x / cell) - 1 : (int)ceil(x / cell);
    double edge = x;
    for (int k = 0, white = 0; k * cell < side; k++) {
        const int cx = first + dir * k;
        const int empty = column_count(o, cx, y0, top) == 0 && column_count(o, cx, bottom, y1) == 0;
        white = empty ? white + 1 : 0;
        if (white >= min_cells && k + 1 > white) break;
        edge = (dir < 0 ? cx : cx + 1) * cell;
    }
    return edge;
}

/* Whether the pair of link l sits in a gutter seen through `reach` px above and below it: a
 * white strip at least a text height wide runs through the gap and those rows, and the rows
 * (not the pair's own, one occupancy cell clear of it) have text on both sides of the strip
 * within `side` px (and within the column beside it). */
static int gutter_within(const occupancy *o, const link *l, double th, double reach, double side)
{
    const double cell = o->cell_px;
    const double y0 = l->top - reach, y1 = l->bottom + reach;
    const double top = l->top - cell, bottom = l->bottom + cell;
    const int min_cells = (int)ceil(1.0 * th / cell);
    int best_lo;
    const int best_len =
        widest_strip(o->white_of ? o->white_of : o, l, y0, y1, y1, y1, 0, &best_lo);
    if (best_len < min_cells) return 0;
    const double x0 = best_lo * cell, x1 = (best_lo + best_len) * cell;
    const double left = side_edge(o, l, x0, -1, side, y0, y1, th);
    const double right = side_edge(o, l, x1, +1, side, y0, y1, th);
    int both_above =
        occupancy_count(o, left, y0, x0, top) > 0 && occupancy_count(o, x1, y0, right, top) > 0;
    int both_below = occupancy_count(o, left, bottom, x0, y1) > 0 &&
                     occupancy_count(o, x1, bottom, right, y1) > 0;
    return both_above || both_below;
}

/* Share of the occupancy cell rows of [y0, y1) that hold text in [x0, x1). */
static double rows_with_text(const occupancy *o, double x0, double x1, double y0, double y1)
{
    const int cx0 = (int)ceil(x0 / o->cell_px), cx1 = (int)floor(x1 / o->cell_px);
    const int cy0 = (int)floor(y0 / o->cell_px), cy1 = (int)ceil(y1 / o->cell_px);
    int full = 0;
    for (int cy = cy0; cy < cy1; cy++)
        full += occupancy_cells(o, cx0, cy, cx1, cy + 1) > 0;
    return cy1 > cy0 ? (double)full / (cy1 - cy0) : 0;
}

/* A long gutter that a few lines cross: in an index set in narrow columns some entries run on
 * into the strip between the columns, so that no strip is white through all the rows near a
 * pair. Here a strip at least a text height wide in the gap is white in all but an eighth of
 * the rows 20 text heights up and down (not the pair's own), and text fills at least 25 % of
 * the rows beside it on each side (within 8 text heights, in the column beside), as in two
 * columns of text. Only for pairs of body-size text (at most 2.2 text heights tall, where
 * ascenders and descenders make about 1.9): the wide word gaps of a title, with white margins
 * above and below, are no gutter. Returns 1 with the strip in [*x0, *x1). */
static int long_gutter_strip(const occupancy *o, const link *l, double th, double *x0, double *x1)
{
    if (l->bottom - l->top > 2.2 * th) return 0;
    const double cell = o->cell_px;
    const double y0 = fmax(0.0, l->top - 20 * th), y1 = fmin(o->rows * cell, l->bottom + 20 * th);
    const double top = l->top - cell, bottom = l->bottom + cell; /* the pair's own rows out */
    const int cy0 = (int)floor(y0 / cell), cy_top = (int)ceil(top / cell);
    const int cy_bottom = (int)floor(bottom / cell), cy1 = (int)ceil(y1 / cell);
    const int rows = (cy_top > cy0 ? cy_top - cy0 : 0) + (cy1 > cy_bottom ? cy1 - cy_bottom : 0);
    if (rows == 0) return 0;
    const int min_cells = (int)ceil(1.0 * th / cell);
    /* a strip one cell wide: its occupied cells are its rows with text */
    int best_lo;
    const int best_len = widest_strip(o, l, y0, top, bottom, y1, rows / 8, &best_lo);
    if (best_len < min_cells) return 0;
    *x0 = best_lo * cell;
    *x1 = (best_lo + best_len) * cell;
    const double left = side_edge(o, l, *x0, -1, 8 * th, y0, y1, th);
    const double right = side_edge(o, l, *x1, +1, 8 * th, y0, y1, th);
    return rows_with_text(o, left, *x0, y0, y1) >= 0.25 &&
           rows_with_text(o, *x1, right, y0, y1) >= 0.25;
}

/* A wide gap lies in a gutter when a white strip runs through it and up and down through the
 * neighbouring rows, while those rows have text on both sides of the strip: word gaps of a
 * paragraph do not line up, and a hanging list label has no text under it, but a column
 * gutter or a table column has both. Seen close (2.5 text heights up and down, text within 4
 * on each side), or, for the ragged columns of an index, farther (5 up and down, 8 aside)
 * where both sides are columns of text: text fills at least 20 % of the rows beside the strip
 * (lines take about 60 % of them; a column of list labels far fewer). The strip may be
 * narrower than the gap, as the ragged edges of the columns leave it. */
static int in_near_gutter(const occupancy *o, const link *l, double th)
{
    if (gutter_within(o, l, th, 2.5 * th, 4 * th)) return 1;
    if (!gutter_within(o, l, th, 5 * th, 8 * th)) return 0;
    const double y0 = l->top - 5 * th, y1 = l->bottom + 5 * th;
    const double left = side_edge(o, l, l->x0, -1, 8 * th, y0, y1, th);
    const double right = side_edge(o, l, l->x1, +1, 8 * th, y0, y1, th);
    return rows_with_text(o, left, l->x0, y0, y1) >= 0.2 &&
           rows_with_text(o, l->x1, right, y0, y1) >= 0.2;
}

/* A gutter seen near (in_near_gutter) or a long gutter that a few lines cross. */
static int in_gutter(const occupancy *o, const link *l, double th)
{
    double x0, x1;
    return in_near_gutter(o, l, th) || long_gutter_strip(o, l, th, &x0, &x1);
}

/* How well mark k fits line box b: a distance (smaller is better), or -1. Marks sit above
 * (accents, dots) or on the band of the line, horizontally within it or beyond its ends by
 * at most `reach_px` (final punctuation, leaders), not across a gutter seen near (a long
 * gutter is not asked for: the dots of a leader stand where the bodies leave a strip white
 * down an index). The distance is the vertical one between their middles plus how far the
 * mark lies beyond the box: an i's dot goes with the line of its stem, not with the end of
 * the line before it. */
static double mark_fit(const lt_component *k, const lt_box *b, double th, int speckle,
                       double reach_px, const occupancy *occ)
{
    double cy = 0.5 * (k->box.top + k->box.bottom), cx = k->cx;
    if (cx < b->left - reach_px || cx > b->right + reach_px) return -1;
    if (cy < b->top - 0.6 * th || cy > b->bottom + (speckle ? 0.0 : 0.3 * th)) return -1;
    if (k->box.left > b->right + th || k->box.right < b->left - th) {
        int right = k->box.left > b->right;
        link l = {0,
                  0,
                  right ? b->right : k->box.right,
                  right ? k->box.left : b->left,
                  b->top < k->box.top ? b->top : k->box.top,
                  b->bottom > k->box.bottom ? b->bottom : k->box.bottom};
        if (in_near_gutter(occ, &l, th)) return -1;
    }
    return fabs(cy - 0.5 * (b->top + b->bottom)) + fmax(0.0, fmax(b->left - cx, cx - b->right));
}

static int cmp_line_pos(const void *pa, const void *pb)
{
    const lt_raw_line *a = pa, *b = pb;
    if (a->box.top != b->box.top) return (a->box.top > b->box.top) - (a->box.top < b->box.top);
    return (a->box.left > b->box.left) - (a->box.left < b->box.left);
}

static void grow(lt_box *b, const lt_box *k)
{
    if (k->left < b->left) b->left = k->left;
    if (k->top < b->top) b->top = k->top;
    if (k->right > b->right) b->right = k->right;
    if (k->bottom > b->bottom) b->bottom = k->bottom;
}

typedef struct keyed {
    int key, index;
} keyed;

static int cmp_keyed(const void *pa, const void *pb)
{
    const keyed *a = pa, *b = pb;
    if (a->key != b->key) return (a->key > b->key) - (a->key < b->key);
    return (a->index > b->index) - (a->index < b->index);
}

/* Box of every group (by root component) in boxes[root]: its bodies and the marks attached
 * to it (a mark is attached when it is not its own root). */
static void group_boxes(const lt_components *c, const uint8_t *body, int *parent, lt_box *boxes)
{
    for (int i = 0; i < c->count; i++)
        if (body[i] && lt_uf_find(parent, i) == i) boxes[i] = c->items[i].box;
    for (int i = 0; i < c->count; i++)
        if (body[i] || lt_uf_find(parent, i) != i)
            grow(&boxes[lt_uf_find(parent, i)], &c->items[i].box);
}

/* The groups as they stand: *boxes (by root, see group_boxes) and their roots sorted by the
 * left edge of their boxes (*roots, *nr). The caller frees both. */
static int list_groups(const lt_components *c, const uint8_t *body, int *parent, lt_box **boxes,
                       keyed **roots, int *nr)
{
    *boxes = malloc(((size_t)c->count + 1) * sizeof **boxes);
    *roots = malloc(((size_t)c->count + 1) * sizeof **roots);
    if (!*boxes || !*roots) {
        free(*boxes);
        free(*roots);
        return LT_ENOMEM;
    }
    group_boxes(c, body, parent, *boxes);
    *nr = 0;
    for (int i = 0; i < c->count; i++)
        if (body[i] && lt_uf_find(parent, i) == i) (*roots)[(*nr)++] = (keyed){(*boxes)[i].left, i};
    qsort(*roots, (size_t)*nr, sizeof **roots, cmp_keyed);
    return 0;
}

/* Attaches each mark, left to right, to the group whose band holds it best (parent[mark] is
 * set to the group's root). Groups grow as marks join, so that a chain of dots (a leader)
 * follows from the line it starts at. Groups are found through horizontal bands one text
 * height tall; each group is listed in the bands from one text height above its box to one
 * below. */
static int attach_marks(const lt_components *c, const uint8_t *body, const uint8_t *mark,
                        int *parent, double th, double reach_px, const occupancy *occ)
{
    const int n = c->count;
    int maxy = 1, nmarks = 0;
    for (int i = 0; i < n; i++) {
        if (c->items[i].box.bottom > maxy) maxy = c->items[i].box.bottom;
        nmarks += mark[i] != 0;
    }
    const int nbands = (int)(maxy / th) + 3;
    lt_box *boxes = malloc(((size_t)n + 1) * sizeof *boxes);
    keyed *marks = malloc(((size_t)nmarks + 1) * sizeof *marks);
    int *start = calloc((size_t)nbands + 1, sizeof *start);
    int *fill = malloc(((size_t)nbands + 1) * sizeof *fill);
    int *members = NULL;
    int rc = LT_ENOMEM;
    /* For marks a gutter's strip must be white of marks too: the dots of a leader running
     * through the rows beside show that the white before a page number is no gutter. */
    occupancy with_marks = {0}, gutters = *occ;
    uint8_t *inked = malloc((size_t)n + 1);
    if (!boxes || !marks || !start || !fill || !inked) goto done;
    for (int i = 0; i < n; i++)
        inked[i] = body[i] || mark[i];
    if (occupancy_build(c, inked, occ->cell_px, &with_marks)) goto done;
    gutters.white_of = &with_marks;
    group_boxes(c, body, parent, boxes);
    for (int pass = 0; pass < 2; pass++) {
        for (int i = 0; i < n; i++) {
            if (!body[i] || lt_uf_find(parent, i) != i) continue;
            int b0 = (int)((boxes[i].top - th) / th), b1 = (int)((boxes[i].bottom + th) / th);
            if (b0 < 0) b0 = 0;
            if (b1 > nbands - 1) b1 = nbands - 1;
            for (int b = b0; b <= b1; b++) {
                if (pass)
                    members[fill[b]++] = i;
                else
                    start[b + 1]++;
            }
        }
        if (pass) break;
        for (int b = 0; b < nbands; b++)
            start[b + 1] += start[b];
        memcpy(fill, start, (size_t)nbands * sizeof *fill);
        members = malloc(((size_t)start[nbands] + 1) * sizeof *members);
        if (!members) goto done;
    }
    int m = 0;
    for (int i = 0; i < n; i++)
        if (mark[i]) marks[m++] = (keyed){c->items[i].box.left, i};
    qsort(marks, (size_t)nmarks, sizeof *marks, cmp_keyed);
    /* Left to right, then the marks left over right to left: a leader that opens a line
     * (the dots before the page numbers of an entry run on to a new row) grows from the
     * line's start. */
    for (int step = 0; step < 2 * nmarks; step++) {
        const int back = step >= nmarks, i = marks[back ? 2 * nmarks - 1 - step : step].index;
        if (back && parent[i] != i) continue;
        const lt_component *mk = &c->items[i];
        int band = (int)(0.5 * (mk->box.top + mk->box.bottom) / th);
        if (band < 0 || band >= nbands) continue;
        int best = -1;
        double best_d = 1e300;
        for (int j = start[band]; j < start[band + 1]; j++) {
            const lt_box *b = &boxes[members[j]];
            double d = mark_fit(mk, b, th, mark[i] == 2, reach_px, &gutters);
            /* going back, only dots on the lower half of a line (a leader's) */
            if (back && mk->box.top + mk->box.bottom < b->top + b->bottom) d = -1;
            if (d >= 0 && d < best_d) {
                best_d = d;
                best = members[j];
            }
        }
        if (best < 0) continue;
        parent[i] = best;
        grow(&boxes[best], &mk->box);
    }
    rc = 0;
done:
    free(boxes);
    free(marks);
    free(start);
    free(fill);
    free(members);
    free(inked);
    free(with_marks.sum);
    return rc;
}

/* How many groups have an edge in [x0, x1) and their middle in [y0, y1): `sorted` lists them
 * (nr, by root) sorted by the key of that edge (the left edge for starts, as list_groups
 * gives, or the right edge for ends). */
static int edges_between(const keyed *sorted, int nr, const lt_box *boxes, double x0, double x1,
                         double y0, double y1)
{
    int lo = 0, hi = nr;
    while (lo < hi) {
        const int mid = (lo + hi) / 2;
        if (sorted[mid].key < x0)
            lo = mid + 1;
        else
            hi = mid;
    }
    int count = 0;
    for (int k = lo; k < nr && sorted[k].key < x1; k++) {
        const lt_box *b = &boxes[sorted[k].index];
        const double cy = 0.5 * (b->top + b->bottom);
        count += cy >= y0 && cy < y1;
    }
    return count;
}

/* Lines that bridge a column gutter: where a line of one column runs on until its ink
 * touches the first word of the line beside it (an overfull line), the two are one group
 * whatever the gap tests say. A group at least 8 text heights long is cut at a long gutter
 * (see long_gutter_strip) at least 1.5 text heights wide that runs through it at least 4 text
 * heights from either end, when
 *  - its own ink fills the strip, leaving no white in it wider than 0.4 text heights
 *    (narrower than a word space: a line with a gap there, as between an entry and the
 *    leader to its page number, is left to the gap tests), and
 *  - close above the group and close below it (within 2.5 text heights) the strip is white,
 *    and text comes within 4 text heights of it on both sides, above and below: the edges
 *    of two columns, not a paragraph beside a table or a title over columns. On one of the
 *    two (above or below) is enough where the strip's right edge is a column's left edge,
 *    at least 8 lines starting there (in 20 text heights up and down): the lines of an
 *    index that run on to a leader start well inside their column.
 * Each member goes to the side of the strip's middle its centre lies on, and is marked in
 * `piece`. */
static int cut_bridges(const lt_components *c, const uint8_t *body, int *parent, double th,
                       const occupancy *occ, uint8_t *piece)
{
    const int n = c->count;
    lt_box *boxes;
    keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    int *cand_of = malloc(((size_t)n + 1) * sizeof *cand_of);
    double *strip = malloc(2 * ((size_t)nr + 1) * sizeof *strip);
    uint8_t *cut = calloc((size_t)nr + 1, 1);
    int *root_of = malloc(((size_t)n + 1) * sizeof *root_of);
    int *side_root = malloc(2 * ((size_t)nr + 1) * sizeof *side_root);
    int ncand = 0, rc = LT_ENOMEM;
    if (!cand_of || !strip || !cut || !root_of || !side_root) goto done;
    for (int i = 0; i < n; i++)
        cand_of[i] = -1;
    for (int k = 0; k < nr; k++) {
        const int r = roots[k].index;
        const lt_box *b = &boxes[r];
        if (box_w(b) < 8 * th) continue;
        const link l = {r, r, b->left + 4 * th, b->right - 4 * th, b->top, b->bottom};
        double x0, x1;
        if (!long_gutter_strip(occ, &l, th, &x0, &x1)) continue;
        const double reach = 2.5 * th, cell = occ->cell_px;
        const double above = b->top - cell, below = b->bottom + cell;
        if (x1 - x0 < 1.5 * th - 1e-6 * cell) continue; /* allowing for rounding */
        const int text_above = occupancy_count(occ, x0 - 4 * th, above - reach, x0, above) > 0 &&
                               occupancy_count(occ, x1, above - reach, x1 + 4 * th, above) > 0;
        const int text_below = occupancy_count(occ, x0 - 4 * th, below, x0, below + reach) > 0 &&
                               occupancy_count(occ, x1, below, x1 + 4 * th, below + reach) > 0;
        const int column_edge = edges_between(roots, nr, boxes, x1 - cell, x1 + 0.5 * th,
                                              b->top - 20 * th, b->bottom + 20 * th) >= 8;
        if (occupancy_count(occ, x0, above - reach, x1, above) == 0 &&
            occupancy_count(occ, x0, below, x1, below + reach) == 0 &&
            ((text_above && text_below) || ((text_above || text_below) && column_edge))) {
            cand_of[r] = ncand;
            strip[2 * ncand] = x0;
            strip[2 * ncand + 1] = x1;
            ncand++;
        }
    }
    if (ncand > 0) {
        /* The columns of each candidate's strip that its bodies cover (the strips laid end
         * to end in `inked`), then the widest run left white. */
        int *at = malloc(((size_t)ncand + 1) * sizeof *at);
        if (!at) goto done;
        at[0] = 0;
        for (int k = 0; k < ncand; k++)
            at[k + 1] = at[k] + (int)(strip[2 * k + 1] - strip[2 * k]) + 1;
        uint8_t *inked = calloc((size_t)at[ncand] + 1, 1);
        if (!inked) {
            free(at);
            goto done;
        }
        for (int i = 0; i < n; i++) {
            const int r = root_of[i] = lt_uf_find(parent, i), k = cand_of[r];
            if (!body[i] || k < 0) continue;
            const int x0 = (int)strip[2 * k], w = at[k + 1] - at[k];
            const int from = c->items[i].box.left - x0, to = c->items[i].box.right - x0;
            for (int x = from < 0 ? 0 : from; x < to && x < w; x++)
                inked[at[k] + x] = 1;
        }
        for (int k = 0; k < ncand; k++) {
            int widest = 0, run = 0;
            for (int x = at[k]; x < at[k + 1]; x++) {
                run = inked[x] ? 0 : run + 1;
                if (run > widest) widest = run;
            }
            cut[k] = widest < 0.4 * th;
        }
        free(inked);
        free(at);
        for (int k = 0; k < ncand; k++)
            side_root[2 * k] = side_root[2 * k + 1] = -1;
        /* Bodies first, so that each side's new root is a body; then the marks (to the
         * other side's root if theirs has no body). */
        for (int pass = 0; pass < 2; pass++)
            for (int i = 0; i < n; i++) {
                const int r = root_of[i], k = cand_of[r];
                if (k < 0 || !cut[k] || (pass == 0) != (body[i] != 0) || (!body[i] && r == i))
                    continue;
                const int right = c->items[i].cx >= 0.5 * (strip[2 * k] + strip[2 * k + 1]);
                int *rep = &side_root[2 * k + right];
                if (body[i] && *rep < 0) *rep = i;
                parent[i] = *rep >= 0 ? *rep : side_root[2 * k + !right];
                piece[i] = 1;
            }
    }
    rc = 0;
done:
    free(boxes);
    free(roots);
    free(cand_of);
    free(strip);
    free(cut);
    free(root_of);
    free(side_root);
    return rc;
}

/* Groups lying inside a much taller group (the dots and accents of large type) are part of
 * it: a group joins the first group at least twice its height whose box holds its centre,
 * allowing half its own height above. */
static int absorb_nested(const lt_components *c, const uint8_t *body, int *parent)
{
    lt_box *boxes;
    keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    for (int a = 0; a < nr && nr <= 5000; a++) {
        const lt_box *g = &boxes[roots[a].index];
        const double cx = 0.5 * (g->left + g->right), cy = 0.5 * (g->top + g->bottom);
        const int h = box_h(g);
        for (int b = 0; b < nr; b++) {
            const lt_box *host = &boxes[roots[b].index];
            if (b == a || box_h(host) < 2 * h) continue;
            if (cx >= host->left && cx < host->right && cy >= host->top - 0.5 * h &&
                cy < host->bottom) {
                lt_uf_unite(parent, roots[a].index, roots[b].index);
                break;
            }
        }
    }
    free(boxes);
    free(roots);
    return 0;
}

/* Joins groups that stand side by side on one row, once their marks are counted (leaders,
 * punctuation between words), with a gap of at most max_gap that is not in a gutter, or that
 * lies along a leader to page numbers: the left group ends in at least 2 text heights of
 * marks or the right one starts so (the dots), and the right one, at most 10 text heights
 * long, ends where at least 4 other lines end (numbers set flush right), not starting where
 * 8 lines start (the next column). */
static int join_rows(const lt_components *c, const uint8_t *body, int *parent, double th,
                     double max_gap, const occupancy *occ)
{
    lt_box *boxes;
    keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    /* the extent of each group's bodies (by root), so that marks beyond it show; the groups
     * by their right edge; whether a group opens its row (none ends just before it) */
    const size_t slots = (size_t)c->count + 1;
    int *body_left = malloc(2 * slots * sizeof *body_left);
    keyed *by_right = malloc(((size_t)nr + 1) * sizeof *by_right);
    uint8_t *opens_row = malloc(slots);
    if (!body_left || !by_right || !opens_row) {
        free(body_left);
        free(by_right);
        free(opens_row);
        free(boxes);
        free(roots);
        return LT_ENOMEM;
    }
    memset(opens_row, 1, slots);
    for (int k = 0; k < nr; k++)
        by_right[k] = (keyed){boxes[roots[k].index].right, roots[k].index};
    qsort(by_right, (size_t)nr, sizeof *by_right, cmp_keyed);
    int *body_right = body_left + slots;
    for (int i = 0; i < c->count; i++)
        if (body[i] && lt_uf_find(parent, i) == i) {
            body_left[i] = c->items[i].box.left;
            body_right[i] = c->items[i].box.right;
        }
    for (int i = 0; i < c->count; i++)
        if (body[i]) {
            const int r = lt_uf_find(parent, i);
            if (c->items[i].box.left < body_left[r]) body_left[r] = c->items[i].box.left;
            if (c->items[i].box.right > body_right[r]) body_right[r] = c->items[i].box.right;
        }
    for (int a = 0; a < nr; a++) {
        const lt_box *ba = &boxes[roots[a].index];
        for (int b = a + 1; b < nr && roots[b].key <= ba->right + max_gap; b++) {
            const lt_box *bb = &boxes[roots[b].index];
            int top = ba->top > bb->top ? ba->top : bb->top;
            int bottom = ba->bottom < bb->bottom ? ba->bottom : bb->bottom;
            int hmin = box_h(ba) < box_h(bb) ? box_h(ba) : box_h(bb);
            if (2 * (bottom - top) < hmin) continue;
            link l = {roots[a].index,
                      roots[b].index,
                      ba->right,
                      bb->left,
                      ba->top < bb->top ? ba->top : bb->top,
                      ba->bottom > bb->bottom ? ba->bottom : bb->bottom};
            if (rule_between(occ, &l)) continue;
            const int gap = bb->left - ba->right;
            if (gap >= 0) opens_row[roots[b].index] = 0; /* every group left of b came first */
            /* A lone mark-sized group (a bullet, a dash) close by belongs to the line; on the
             * left only where it opens its row (not a page number ending a line, with the
             * next column beyond it). */
            const int lone =
                (box_w(ba) <= 1.2 * th && box_h(ba) <= 1.2 * th && opens_row[roots[a].index]) ||
                (box_w(bb) <= 1.2 * th && box_h(bb) <= 1.2 * th);
            int join = gap < 1.5 * th || (lone && gap <= 2.5 * th) || !in_gutter(occ, &l, th);
            const int leader = ba->right - body_right[roots[a].index] >= 2 * th ||
                               body_left[roots[b].index] - bb->left >= 2 * th;
            if (!join && leader && box_w(bb) <= 10 * th) {
                const double y0 = bb->top - 20 * th, y1 = bb->bottom + 20 * th;
                join = edges_between(by_right, nr, boxes, bb->right - 0.5 * th,
                                     bb->right + 0.5 * th, y0, y1) > 4 &&
                       edges_between(roots, nr, boxes, bb->left - 0.5 * th, bb->left + 0.5 * th, y0,
                                     y1) < 8;
            }
            if (join) lt_uf_unite(parent, roots[a].index, roots[b].index);
        }
    }
    free(body_left);
    free(by_right);
    free(opens_row);
    free(boxes);
    free(roots);
    return 0;
}

int lt_build_lines(const lt_components *c, double text_height_px, const lt_params *p,
                   lt_raw_lines **out, lt_error *err)
{
    *out = NULL;
    const double th = text_height_px > 0 ? text_height_px : 20;
    const int n = c->count;
    uint8_t *body = calloc((size_t)n + 1, 1), *mark = calloc((size_t)n + 1, 1);
    uint8_t *piece = calloc((size_t)n + 1, 1);
    int *parent = malloc(((size_t)n + 1) * sizeof *parent);
    int *line_of = malloc(((size_t)n + 1) * sizeof *line_of);
    link *links = malloc(((size_t)2 * n + 1) * sizeof *links);
    index_grid g = {0};
    occupancy occ = {0};
    lt_box *vrules = NULL;
    lt_raw_lines *res = calloc(1, sizeof *res);
    int rc = 0;
    if (!body || !mark || !piece || !parent || !line_of || !links || !res) goto nomem;

    /* Bodies carry lines; marks (small text components, tiny speckle excluded) join later. */
    const double mark_h = 0.5 * th; /* punctuation, dots, accents, dashes */
    const long min_speckle_px = (long)fmax(3, 0.02 * th * th);
    for (int i = 0; i < n; i++) {
        const lt_component *k = &c->items[i];
        if (k->kind == LT_COMP_TEXT) {
            const int kh = box_h(&k->box), kw = box_w(&k->box);
            if ((kh < mark_h && kw < th) || (kh < 0.3 * th && kw < 3 * th))
                mark[i] = 1;
            else
                body[i] = 1;
        } else if (k->kind == LT_COMP_SPECKLE && k->pixels >= min_speckle_px) {
            mark[i] = 2;
        }
        parent[i] = i;
    }
    if (grid_build(c, body, 2 * th, &g)) goto nomem;

    /* Links to the nearest neighbour on each side. */
    const double max_gap = p->link_max_gap * th, wide_gap = 1.5 * th;
    int nlinks = 0;
    for (int i = 0; i < n; i++) {
        if (!body[i]) continue;
        for (int dir = -1; dir <= 1; dir += 2) {
            int j = nearest_beside(c, &g, i, dir, max_gap);
            if (j < 0) continue;
            int a = dir > 0 ? i : j, b = dir > 0 ? j : i;
            link *l = &links[nlinks++];
            l->a = a;
            l->b = b;
            l->x0 = c->items[a].box.right;
            l->x1 = c->items[b].box.left;
            l->top = c->items[a].box.top < c->items[b].box.top ? c->items[a].box.top
                                                               : c->items[b].box.top;
            l->bottom = c->items[a].box.bottom > c->items[b].box.bottom ? c->items[a].box.bottom
                                                                        : c->items[b].box.bottom;
        }
    }
    /* Links across a gutter or a vertical rule are not joined. */
    if (occupancy_build(c, body, fmax(1.0, 0.25 * th), &occ)) goto nomem;
    int nvrules = 0;
    for (int i = 0; i < n; i++) {
        const lt_box *b = &c->items[i].box;
        if (c->items[i].kind == LT_COMP_RULE && box_h(b) > box_w(b)) nvrules++;
    }
    vrules = malloc(((size_t)nvrules + 1) * sizeof *vrules);
    if (!vrules) goto nomem;
    for (int i = 0; i < n; i++) {
        const lt_box *b = &c->items[i].box;
        if (c->items[i].kind == LT_COMP_RULE && box_h(b) > box_w(b)) vrules[occ.nvrules++] = *b;
    }
    occ.vrules = vrules;
    for (int i = 0; i < nlinks; i++)
        if (!rule_between(&occ, &links[i]) &&
            (links[i].x1 - links[i].x0 < wide_gap || !in_gutter(&occ, &links[i], th)))
            lt_uf_unite(parent, links[i].a, links[i].b);

    /* Marks join groups; groups that marks bring within reach of each other join. */
    if (attach_marks(c, body, mark, parent, th, max_gap, &occ) ||
        join_rows(c, body, parent, th, max_gap, &occ) ||
        cut_bridges(c, body, parent, th, &occ, piece) || absorb_nested(c, body, parent))
        goto nomem;

    /* One raw line per group. */
    int nl = 0;
    for (int i = 0; i < n; i++)
        line_of[i] = -1;
    for (int i = 0; i < n; i++)
        if (body[i] && lt_uf_find(parent, i) == i) line_of[i] = nl++;
    res->items = calloc((size_t)nl + 1, sizeof *res->items);
    if (!res->items) goto nomem;
    res->count = nl;
    for (int i = 0; i < nl; i++) {
        lt_box *b = &res->items[i].box;
        b->left = b->top = 1 << 30;
        b->right = b->bottom = -1;
    }
    int *lead = malloc(((size_t)nl + 1) * sizeof *lead);
    int *trail = malloc(((size_t)nl + 1) * sizeof *trail);
    if (!lead || !trail) {
        free(lead);
        free(trail);
        goto nomem;
    }
    for (int l = 0; l < nl; l++)
        lead[l] = trail[l] = -1;
    for (int i = 0; i < n; i++) {
        if (!body[i] && !(mark[i] && lt_uf_find(parent, i) != i)) continue;
        int l = line_of[i] = line_of[lt_uf_find(parent, i)];
        lt_raw_line *r = &res->items[l];
        grow(&r->box, &c->items[i].box);
        r->ncomponents++;
        r->bridged |= piece[i];
        if (lead[l] < 0 || c->items[i].box.left < c->items[lead[l]].box.left) lead[l] = i;
        if (trail[l] < 0 || c->items[i].box.right > c->items[trail[l]].box.right) trail[l] = i;
    }
    /* The outermost components, and the white between each and the rest of the line. */
    for (int l = 0; l < nl; l++) {
        res->items[l].lead = c->items[lead[l]].box;
        res->items[l].trail = c->items[trail[l]].box;
        res->items[l].lead_gap_px = res->items[l].trail_gap_px = 1 << 30;
    }
    for (int i = 0; i < n; i++) {
        if (line_of[i] < 0 || (!body[i] && !mark[i])) continue;
        lt_raw_line *r = &res->items[line_of[i]];
        if (i != lead[line_of[i]]) {
            int gap = c->items[i].box.left - r->lead.right;
            if (gap < r->lead_gap_px) r->lead_gap_px = gap < 0 ? 0 : gap;
        }
        if (i != trail[line_of[i]]) {
            int gap = r->trail.left - c->items[i].box.right;
            if (gap < r->trail_gap_px) r->trail_gap_px = gap < 0 ? 0 : gap;
        }
    }
    for (int l = 0; l < nl; l++) {
        if (res->items[l].lead_gap_px == 1 << 30) res->items[l].lead_gap_px = 0;
        if (res->items[l].trail_gap_px == 1 << 30) res->items[l].trail_gap_px = 0;
    }
    free(lead);
    free(trail);
    /* Baseline: median bottom of the line's bodies (descenders are the minority); x-height:
     * median height above it of the bodies that stand on it and are not tall. */
    double *vals = malloc(((size_t)n + 1) * sizeof *vals);
    int *order = malloc(((size_t)n + 1) * sizeof *order);
    int *first = calloc((size_t)nl + 2, sizeof *first);
    if (!vals || !order || !first) {
        free(vals);
        free(order);
        free(first);
        goto nomem;
    }
    for (int i = 0; i < n; i++)
        if (body[i]) first[line_of[i] + 2]++;
    for (int l = 0; l < nl; l++)
        first[l + 2] += first[l + 1];
    for (int i = 0; i < n; i++) /* counting sort: first[l+1] is the fill position of l */
        if (body[i]) order[first[line_of[i] + 1]++] = i;
    for (int l = 0; l < nl; l++) {
        lt_raw_line *r = &res->items[l];
        int m = 0;
        for (int k = first[l]; k < first[l + 1]; k++)
            vals[m++] = c->items[order[k]].box.bottom;
        double base = lt_median(vals, m);
        /* Letters standing on the baseline; of those not taller than 1.25 text heights, the
         * median, unless they are under a third of them (type larger than the page's text):
         * then the 30th percentile of all, the ascenders and capitals being the minority. */
        int standing = 0, low = 0;
        for (int k = first[l]; k < first[l + 1]; k++) {
            const lt_box *b = &c->items[order[k]].box;
            if (fabs(b->bottom - base) > 0.15 * th + 1) continue;
            vals[standing++] = base - b->top;
        }
        for (int k = 0; k < standing; k++)
            if (vals[k] <= 1.25 * th) low++;
        r->baseline_y = base;
        if (standing == 0) {
            r->xheight_px = th;
        } else if (3 * low >= standing) {
            m = 0;
            for (int k = 0; k < standing; k++)
                if (vals[k] <= 1.25 * th) vals[m++] = vals[k];
            r->xheight_px = lt_median(vals, m);
        } else {
            qsort(vals, (size_t)standing, sizeof *vals, lt_cmp_double);
            r->xheight_px = vals[(int)(0.3 * (standing - 1))];
        }
    }
    free(vals);
    free(order);
    free(first);
    qsort(res->items, (size_t)res->count, sizeof *res->items, cmp_line_pos);
    goto done;
nomem:
    rc = lt_error_set(err, LT_ENOMEM, "lines: out of memory");
    lt_raw_lines_free(res);
    res = NULL;
done:
    grid_free(&g);
    free(body);
    free(mark);
    free(piece);
    free(parent);
    free(line_of);
    free(links);
    free(occ.sum);
    free(vrules);
    *out = res;
    return rc;
}

void lt_raw_lines_free(lt_raw_lines *l)
{
    if (!l) return;
    free(l->items);
    free(l);
}

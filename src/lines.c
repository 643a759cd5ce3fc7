/* lines.c — text lines by docstrum-style neighbour links (O'Gorman 1993): every text
 * component is linked to its nearest neighbour on each side whose direction lies near the
 * (removed) page skew, i.e. that overlaps it vertically, within a gap taken from the page's
 * text height; lines are the transitive closure of the links. Links that cross a separator
 * (a column gutter or a vertical rule, found by separators.c) are dropped. Small marks (dots,
 * commas, hyphens, accents) join the line whose band holds them. */
#include "internal.h"

#include <assert.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Constants of the stage, in text heights (th) unless said otherwise. */
static const double MARK_HEIGHT = 0.5; /* shorter (and narrower than 1 th): a mark, not a body */
static const double DASH_HEIGHT = 0.3; /* shorter (and narrower than 3 th): a dash, a mark */
static const double DOT_AREA = 0.02;   /* th squared: smaller specks are noise, not dots */
static const double MARK_ABOVE = 0.6;  /* a mark's middle at most this far above a line (accents) */
static const double MARK_BELOW = 0.3;  /* ... and below its box (commas; specks: none) */
static const double CUT_REACH = 1.5;   /* a gutter interrupted this close above and below a line */
static const double BASELINE_SLACK =
    0.15;                               /* letters standing on the baseline: bottoms this close */
static const double TALL_LETTER = 1.25; /* taller letters standing on it are not x-height ones */
static const double LARGE_TYPE_RANK = 0.3; /* x-height of large type: this rank of the letters */
/* A line narrower than a letter (EDGE_SLIVER_WIDTH) within EDGE_BAND of the image's edge is a
 * piece of a scan's dark border or of a page edge: a page keeps margins of several text
 * heights (half an inch is about eight of 10 pt type) and a line is wider than a letter,
 * while the border and the edges of the leaves break into thin strokes. */
static const double EDGE_SLIVER_WIDTH = 1.0;
static const double EDGE_BAND = 4.0;
/* Within EDGE_STROKE_BAND of the edge (twice as far: the edge of a leaf, or its shadow, often
 * lies well inside a scan) a line narrower than EDGE_STROKE_WIDTH is such a stroke: the
 * narrowest digit that stands alone as a line, a page number one, is about 0.45 wide. */
static const double EDGE_STROKE_WIDTH = 0.4;
static const double EDGE_STROKE_BAND = 8.0;
/* A line whose ink reaches the image's border (within EDGE_TOUCH text heights: a crop leaves a
 * few pixels of paper beside the letters it cuts) and that is narrower than EDGE_CUT_WIDTH is
 * the cut end of a line of the facing page or a piece of the scanner's border: a line of the
 * page itself keeps a margin of several text heights, and one that a tight crop cuts is longer
 * than a word or two. */
static const double EDGE_TOUCH = 0.5;
static const double EDGE_CUT_WIDTH = 6.0;
/* A line holds a letter: a group whose one body (marks aside) is shorter than
 * LONE_BODY_MIN_HEIGHT is no line. The text height is that of the page's commonest letters,
 * so a letter of the text alone is taller; what stands alone so small is a speck of a leaf's
 * edge, of a woodcut or of a stamp, or a piece of a broken letter or dash (real scans: 58 such
 * lines, one of them text; rendered pages: 34, two of them a lone small letter). */
static const double LONE_BODY_MIN_HEIGHT = 0.8;
/* A line's bodies stand side by side: a group of two or more at least COLUMN_MIN_HEIGHT tall
 * and COLUMN_ASPECT times as tall as wide holds them one over another, a column of strokes (a
 * book's fore-edge, a border's ornament, a punched hole's rim), no line. A row run into the
 * next stays wide; a lone tall letter (a digit one, an initial) is one body. */
static const double COLUMN_MIN_HEIGHT = 3.0;
static const double COLUMN_ASPECT = 2.0;
/* A justified line stretched to its column's width spreads its few words evenly: a gap wider
 * than the widest bridged one (lt_params.link_max_gap) that crosses no separator joins its row
 * when the next wide gap along the row, on either side, is as wide to within
 * STRETCH_TOLERANCE of the wider one: the line's own spacing. Cells of a table, a label and
 * its item, or a number beside a listing stand apart by one wide gap among narrow ones.
 * STRETCH_MAX_GAP (text heights) bounds the search: wider white parts columns or a margin
 * note from the text, it is no word space. */
static const double STRETCH_TOLERANCE = 0.2;
static const double STRETCH_MAX_GAP = 10.0;
/* Two rows run together into one group (a subscript touching the superscript of the row
 * below, a paragraph mark or a small initial reaching into the next row) stand one over the
 * other: a group at least STACK_MIN_HEIGHT tall is parted at a height where at least
 * STACK_MIN_BODIES letters (bodies no taller than STACK_LETTER) lie wholly above and as many
 * wholly below, at most STACK_CROSSING of the fewer cross it (the pieces that ran the rows
 * together go with the row their middle lies in), and a row's letters stand on one baseline
 * on each side (STACK_BASELINE_SHARE of them within BASELINE_SLACK: the strokes of a picture
 * end anywhere). A thin stroke (under STACK_BAR_HEIGHT, a text height wide or more) within
 * STACK_BAR_REACH of the white between the two, a fraction's bar or an underline, keeps
 * them one line. */
static const double STACK_MIN_HEIGHT = 3.0;
static const int STACK_MIN_BODIES = 3;
static const double STACK_LETTER = 1.75;
static const double STACK_CROSSING = 0.25;
static const double STACK_BASELINE_SHARE = 1.0 / 3;
static const double STACK_BAR_HEIGHT = 0.3;
static const double STACK_BAR_REACH = 0.25;
/* A deskewed row may still lean (the skew of a real scan is estimated to within about a degree,
 * and a curled leaf bends its rows as much): its letters stand on one baseline when their
 * bottoms, less a lean of up to STACK_MAX_LEAN_DEG, cluster so; leans are tried in steps that
 * move the row's far end by BASELINE_SLACK, at most STACK_LEAN_STEPS on each side of level. */
static const double STACK_MAX_LEAN_DEG = 2.0;
enum { STACK_LEAN_STEPS = 8 };
/* Parting a group tries each distinct top of its letters against all its members: groups of
 * more members than this (rows of a halftone read as specks of text) are left whole, and so
 * are the groups past STACK_MAX_TESTS such tests on one page, as many as one group of
 * STACK_MAX_MEMBERS with every top its own takes (a page of the development sets takes
 * 120,000 at most): the work stays linear on a page of a million specks in tall groups. */
enum { STACK_MAX_MEMBERS = 4000 };
static const long STACK_MAX_TESTS = (long)STACK_MAX_MEMBERS * STACK_MAX_MEMBERS;
/* A gutter no wider than the word spaces of the line it crosses is spaces lined up from row
 * to row (typewritten and monospaced text, where every space is a character wide): a link a
 * gutter refuses joins all the same when its gap is at most WORD_SPACE_TOLERANCE times the
 * word space of the two groups (the smaller of their lower medians), at least
 * WORD_SPACE_MIN_COUNT spaces measured in them. A gap between letters is a word space when
 * wider than WORD_SPACE_MIN_RATIO times the group's median gap (the docstrum's within-line
 * spacing: letter gaps are the majority, word spaces the wider mode). Where those wide gaps
 * themselves fall into two modes, the wider WORD_SPACE_MIN_RATIO times the narrower and
 * holding at least WORD_SPACE_MODE_MIN of them, the wider are the word spaces: monospaced
 * type leaves gaps half a space wide beside its narrow letters (a colon, an i, a brace),
 * while a single wider gap in a group is no mode (a tab, white before a number). */
static const double WORD_SPACE_TOLERANCE = 1.2;
static const int WORD_SPACE_MIN_COUNT = 3;
static const double WORD_SPACE_MIN_RATIO = 2.0;
static const int WORD_SPACE_MODE_MIN = 2;

typedef struct link {
    int a, b;        /* components, a left of b */
    int x0, x1;      /* the white gap between them, [x0, x1) */
    int top, bottom; /* vertical extent of the pair */
    double height;   /* the smaller of the two heights, px */
} link;

typedef struct index_grid {
    int cols, rows;
    double cell_px;
    int *start; /* cols*rows+1 offsets into items */
    int *items; /* component indices, by cell */
} index_grid;

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
    if (lt_box_height(small) > lt_box_height(large)) {
        small = &b->box;
        large = &a->box;
    }
    const int hmin = lt_box_height(small), hmax = lt_box_height(large);
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

/* How well mark k fits line box b: a distance (smaller is better), or -1. Marks sit above
 * (accents, dots) or on the band of the line, horizontally within it or beyond its ends by
 * at most `reach_px` (final punctuation, leaders), not across a separator. The distance is
 * the vertical one between their middles plus how far the mark lies beyond the box: an i's
 * dot goes with the line of its stem, not with the end of the line before it. */
static double mark_fit(const lt_component *k, const lt_box *b, double th, int speckle,
                       double reach_px, const lt_separators *seps)
{
    double cy = 0.5 * (k->box.top + k->box.bottom), cx = k->cx;
    if (cx < b->left - reach_px || cx > b->right + reach_px) return -1;
    if (cy < b->top - MARK_ABOVE * th || cy > b->bottom + (speckle ? 0.0 : MARK_BELOW * th))
        return -1;
    const int right = k->box.left > b->right;
    if ((right || k->box.right < b->left) &&
        lt_link_blocked(seps, right ? b->right : k->box.right, right ? k->box.left : b->left,
                        fmin(b->top, k->box.top), fmax(b->bottom, k->box.bottom),
                        fmin(lt_box_height(b), lt_box_height(&k->box))))
        return -1;
    return fabs(cy - 0.5 * (b->top + b->bottom)) + fmax(0.0, fmax(b->left - cx, cx - b->right));
}

static int cmp_line_pos(const void *pa, const void *pb)
{
    const lt_raw_line *a = pa, *b = pb;
    if (a->box.top != b->box.top) return (a->box.top > b->box.top) - (a->box.top < b->box.top);
    return (a->box.left > b->box.left) - (a->box.left < b->box.left);
}

/* Box of every group (by root component) in boxes[root]: its bodies and the marks attached
 * to it (a mark is attached when it is not its own root). */
static void group_boxes(const lt_components *c, const uint8_t *body, int *parent, lt_box *boxes)
{
    for (int i = 0; i < c->count; i++)
        if (body[i] && lt_uf_find(parent, i) == i) boxes[i] = c->items[i].box;
    for (int i = 0; i < c->count; i++)
        if (body[i] || lt_uf_find(parent, i) != i)
            lt_box_grow(&boxes[lt_uf_find(parent, i)], &c->items[i].box);
}

/* The groups as they stand: *boxes (by root, see group_boxes) and their roots sorted by the
 * left edge of their boxes (*roots, *nr). The caller frees both. */
static int list_groups(const lt_components *c, const uint8_t *body, int *parent, lt_box **boxes,
                       lt_keyed **roots, int *nr)
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
        if (body[i] && lt_uf_find(parent, i) == i)
            (*roots)[(*nr)++] = (lt_keyed){(*boxes)[i].left, i};
    qsort(*roots, (size_t)*nr, sizeof **roots, lt_cmp_keyed);
    return 0;
}

/* Attaches each mark, left to right, to the group whose band holds it best (parent[mark] is
 * set to the group's root). Groups grow as marks join, so that a chain of dots (a leader)
 * follows from the line it starts at. Groups are found through horizontal bands one text
 * height tall; each group is listed in the bands from one text height above its box to one
 * below. */
static int attach_marks(const lt_components *c, const uint8_t *body, const uint8_t *mark,
                        int *parent, double th, double reach_px, const lt_separators *seps)
{
    const int n = c->count;
    int maxy = 1, nmarks = 0;
    for (int i = 0; i < n; i++) {
        if (c->items[i].box.bottom > maxy) maxy = c->items[i].box.bottom;
        nmarks += mark[i] != 0;
    }
    const int nbands = (int)(maxy / th) + 3;
    lt_box *boxes = malloc(((size_t)n + 1) * sizeof *boxes);
    lt_keyed *marks = malloc(((size_t)nmarks + 1) * sizeof *marks);
    int *start = calloc((size_t)nbands + 1, sizeof *start);
    int *fill = malloc(((size_t)nbands + 1) * sizeof *fill);
    int *members = NULL;
    int rc = LT_ENOMEM;
    if (!boxes || !marks || !start || !fill) goto done;
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
        if (mark[i]) marks[m++] = (lt_keyed){c->items[i].box.left, i};
    qsort(marks, (size_t)nmarks, sizeof *marks, lt_cmp_keyed);
    /* Left to right, then the marks left over right to left: a chain of dots grows from the
     * line it touches in either direction (a leader that opens a row grows from its end). */
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
            const double d = mark_fit(mk, b, th, mark[i] == 2, reach_px, seps);
            if (d >= 0 && d < best_d) {
                best_d = d;
                best = members[j];
            }
        }
        if (best < 0) continue;
        parent[i] = best;
        lt_box_grow(&boxes[best], &mk->box);
    }
    rc = 0;
done:
    free(boxes);
    free(marks);
    free(start);
    free(fill);
    free(members);
    return rc;
}

/* Where a gutter is interrupted by group b: one gutter region ends and another starts
 * within the group's rows (or `reach` px around them), one over the other, overlapping
 * across by at least a text height, inside the group's ends by a text height, with no
 * gutter white between them there. Returns the middle of the overlap, or 0. */
static double interrupted_gutter(const lt_separators *seps, const lt_box *b, double th,
                                 double reach)
{
    for (int i = 0; i < seps->ngutters; i++) {
        const lt_box *above = &seps->gutters[i];
        if (above->bottom > b->bottom || above->bottom < b->top - reach ||
            !lt_gutter_cuts_lines(seps, i))
            continue;
        for (int j = 0; j < seps->ngutters; j++) {
            const lt_box *below = &seps->gutters[j];
            if (below->top < above->bottom || below->top < b->top ||
                below->top > b->bottom + reach || !lt_gutter_cuts_lines(seps, j))
                continue;
            const int lo = above->left > below->left ? above->left : below->left;
            const int hi = above->right < below->right ? above->right : below->right;
            if (hi - lo >= th && lo >= b->left + th && hi <= b->right - th &&
                !lt_gutter_between(seps, lo, hi, above->bottom, below->top))
                return 0.5 * (lo + hi);
        }
    }
    return 0;
}

/* A group printed across a gutter (a line of one column run on until its ink touches the
 * first word of the line beside it) left no gap for the links to refuse, so it is cut where
 * it interrupts a gutter (within a text height and a half above and below it). Each member
 * goes to the side of the cut its centre lies on (bodies first, so that each side's new root
 * is a body) and is marked in `piece`. */
static int cut_across_gutters(const lt_components *c, const uint8_t *body, int *parent, double th,
                              const lt_separators *seps, uint8_t *piece)
{
    if (!seps || seps->ngutters == 0) return 0;
    const int n = c->count;
    lt_box *boxes = malloc(((size_t)n + 1) * sizeof *boxes);
    double *cut_x = malloc(((size_t)n + 1) * sizeof *cut_x); /* by root; 0: not cut */
    int *root_of = malloc(((size_t)n + 1) * sizeof *root_of);
    int *side_root = malloc(2 * ((size_t)n + 1) * sizeof *side_root);
    if (!boxes || !cut_x || !root_of || !side_root) {
        free(boxes);
        free(cut_x);
        free(root_of);
        free(side_root);
        return LT_ENOMEM;
    }
    group_boxes(c, body, parent, boxes);
    int ncut = 0;
    for (int i = 0; i < n; i++) {
        root_of[i] = lt_uf_find(parent, i);
        side_root[2 * i] = side_root[2 * i + 1] = -1;
        cut_x[i] = 0;
        if (body[i] && root_of[i] == i && lt_box_width(&boxes[i]) > 2 * th) {
            cut_x[i] = interrupted_gutter(seps, &boxes[i], th, CUT_REACH * th);
            ncut += cut_x[i] > 0;
        }
    }
    for (int pass = 0; pass < 2 && ncut > 0; pass++)
        for (int i = 0; i < n; i++) {
            const int r = root_of[i];
            if (cut_x[r] == 0 || (pass == 0) != (body[i] != 0) || (!body[i] && r == i)) continue;
            const int right = c->items[i].cx >= cut_x[r];
            int *rep = &side_root[2 * r + right];
            if (body[i] && *rep < 0) *rep = i;
            parent[i] = *rep >= 0 ? *rep : side_root[2 * r + !right];
            piece[i] = 1;
        }
    free(boxes);
    free(cut_x);
    free(root_of);
    free(side_root);
    return 0;
}

/* Groups lying inside a much taller group (the dots and accents of large type) are part of
 * it: a group joins the first group at least twice its height whose box holds its centre,
 * allowing half its own height above. */
static int absorb_nested(const lt_components *c, const uint8_t *body, int *parent)
{
    lt_box *boxes;
    lt_keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    for (int a = 0; a < nr && nr <= 5000; a++) {
        const lt_box *g = &boxes[roots[a].index];
        const double cx = 0.5 * (g->left + g->right), cy = 0.5 * (g->top + g->bottom);
        const int h = lt_box_height(g);
        for (int b = 0; b < nr; b++) {
            const lt_box *host = &boxes[roots[b].index];
            if (b == a || lt_box_height(host) < 2 * h) continue;
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

typedef struct placed {
    int root, left, index;
} placed;

static int cmp_placed(const void *pa, const void *pb)
{
    const placed *a = pa, *b = pb;
    if (a->root != b->root) return (a->root > b->root) - (a->root < b->root);
    if (a->left != b->left) return (a->left > b->left) - (a->left < b->left);
    return (a->index > b->index) - (a->index < b->index);
}

/* The first of the n gaps of `sorted` (ascending) in the wider of two modes (see
 * WORD_SPACE_MODE_MIN): the gap after the largest step between neighbours that is at least
 * WORD_SPACE_MIN_RATIO and leaves WORD_SPACE_MODE_MIN gaps above it; 0 when there is none. */
static int wider_mode(const double *sorted, int n)
{
    int first = 0;
    double step = WORD_SPACE_MIN_RATIO;
    for (int k = 1; k <= n - WORD_SPACE_MODE_MIN; k++)
        if (sorted[k] >= step * sorted[k - 1]) {
            step = sorted[k] / sorted[k - 1];
            first = k;
        }
    return first;
}

/* The pieces of a stacked-rows search (part_stacked): the page's thin strokes at least a text
 * height wide (STACK_BAR_HEIGHT), by twice their middle row, for bar_between; the row tops a
 * search has tried (tried[y] == stamp); what is left of the page's STACK_MAX_TESTS; room for
 * 2 n bottoms of a group of n members. */
typedef struct stack_search {
    const lt_components *c;
    const uint8_t *body;
    int *parent;
    double th;
    const lt_keyed *bars;
    int nbars;
    int *tried, stamp;
    long tests_left;
    int *bottoms, *middles; /* a letter's bottom and the middle of its columns, px */
    int *leveled;           /* room for n bottoms less a lean, in quarter pixels */
} stack_search;

/* Whether a thin horizontal stroke of x->bars (a fraction's bar, an underline, a rule) lies in
 * the columns [left, right) with its middle in the rows [y0, y1]. */
static int bar_between(const stack_search *x, int left, int right, double y0, double y1)
{
    /* from the first bar whose middle is at y0 or below (keys are twice the middles) */
    for (int k = lt_keyed_first_from(x->bars, x->nbars, (int)ceil(2 * y0));
         k < x->nbars && x->bars[k].key <= 2 * y1; k++) {
        const lt_box *b = &x->c->items[x->bars[k].index].box;
        if (b->left < right && b->right > left) return 1;
    }
    return 0;
}

/* Whether letters of a row stand on one baseline: of the n letters (bottoms[k] under
 * middles[k], px) at least STACK_BASELINE_SHARE of them, and STACK_MIN_BODIES, lie within
 * BASELINE_SLACK of each other (and a pixel, for the rounding of the bottoms to whole rows),
 * level or leaning (see STACK_MAX_LEAN_DEG) across the `width_px` of their group. */
static int on_a_baseline(const stack_search *x, const int *bottoms, const int *middles, int n,
                         int width_px)
{
    const double slack = BASELINE_SLACK * x->th + 1,
                 max_lean = tan(STACK_MAX_LEAN_DEG * LT_PI / 180);
    const double step = fmax(slack / (width_px > 1 ? width_px : 1), max_lean / STACK_LEAN_STEPS);
    const int steps = (int)floor(max_lean / step);
    for (int k = 0; k <= 2 * steps; k++) {
        const double lean = (k % 2 ? 1 : -1) * ((k + 1) / 2) * step; /* level first */
        for (int i = 0; i < n; i++)
            x->leveled[i] = (int)lround(4 * (bottoms[i] - lean * middles[i]));
        const int most = lt_largest_cluster(x->leveled, n, 4 * slack);
        if (most >= STACK_MIN_BODIES && most >= STACK_BASELINE_SHARE * n) return 1;
    }
    return 0;
}

/* The members m[0..n) of one group, sorted by their middles (key: twice the middle), parted
 * into rows one over the other (see STACK_MIN_HEIGHT): each row's members get the row's
 * first body as their root. Rows are parted again while a part holds two. A top is tried
 * once per search, against every member (n tests of the page's STACK_MAX_TESTS). */
static void part_stacked(stack_search *x, lt_keyed *m, int n)
{
    const lt_components *c = x->c;
    const uint8_t *body = x->body;
    const double th = x->th;
    lt_box group = c->items[m[0].index].box;
    for (int k = 1; k < n; k++)
        lt_box_grow(&group, &c->items[m[k].index].box);
    int best_y = -1, best_fewer = STACK_MIN_BODIES - 1;
    const int stamp = ++x->stamp;
    if (lt_box_height(&group) >= STACK_MIN_HEIGHT * th && n <= STACK_MAX_MEMBERS)
        for (int s = 0; s < n && x->tests_left >= n; s++) { /* a row may start at any letter's top */
            const lt_box *row = &c->items[m[s].index].box;
            if (!body[m[s].index] || lt_box_height(row) > STACK_LETTER * th) continue;
            const int y = row->top;
            if (x->tried[y] == stamp) continue; /* a later try of a top never does better */
            x->tried[y] = stamp;
            x->tests_left -= n;
            int above = 0, below = 0, crossing = 0, above_bottom = -1, below_top = 1 << 30;
            for (int k = 0; k < n; k++) {
                const lt_box *b = &c->items[m[k].index].box;
                if (!body[m[k].index] || lt_box_height(b) > STACK_LETTER * th) continue;
                if (b->bottom <= y) {
                    x->middles[above] = (b->left + b->right) / 2;
                    x->bottoms[above++] = b->bottom;
                    if (b->bottom > above_bottom) above_bottom = b->bottom;
                } else if (b->top >= y) {
                    x->middles[n + below] = (b->left + b->right) / 2;
                    x->bottoms[n + below++] = b->bottom;
                    if (b->top < below_top) below_top = b->top;
                } else
                    crossing++;
            }
            const int fewer = above < below ? above : below;
            if (fewer > best_fewer && crossing <= STACK_CROSSING * fewer &&
                on_a_baseline(x, x->bottoms, x->middles, above, lt_box_width(&group)) &&
                on_a_baseline(x, x->bottoms + n, x->middles + n, below, lt_box_width(&group)) &&
                !bar_between(x, group.left, group.right,
                             fmin(above_bottom, below_top) - STACK_BAR_REACH * th,
                             fmax(above_bottom, below_top) + STACK_BAR_REACH * th)) {
                best_fewer = fewer;
                best_y = y;
            }
        }
    int best_at = 0; /* the members above best_y: their middles lie above it */
    while (best_y >= 0 && best_at < n && m[best_at].key < 2 * best_y)
        best_at++;
    if (best_at == 0 || best_at == n) {
        int root = -1;
        for (int k = 0; k < n && root < 0; k++)
            if (body[m[k].index]) root = m[k].index;
        assert(root >= 0); /* a group, and each row parted from one, holds letters */
        for (int k = 0; k < n; k++)
            x->parent[m[k].index] = root;
        return;
    }
    part_stacked(x, m, best_at);
    part_stacked(x, m + best_at, n - best_at);
}

/* Groups of two or more rows one over the other are parted into their rows (see
 * STACK_MIN_HEIGHT). Returns 0 or LT_ENOMEM. */
static int part_stacked_rows(const lt_components *c, const uint8_t *body, int *parent, double th)
{
    lt_box *boxes;
    lt_keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    const int n = c->count;
    int page_bottom = 0;
    for (int i = 0; i < n; i++)
        if (c->items[i].box.bottom > page_bottom) page_bottom = c->items[i].box.bottom;
    placed *order = malloc(((size_t)n + 1) * sizeof *order);
    lt_keyed *members = malloc(((size_t)n + 1) * sizeof *members);
    lt_keyed *bars = malloc(((size_t)n + 1) * sizeof *bars);
    int *bottoms = malloc(2 * ((size_t)n + 1) * sizeof *bottoms);
    int *middles = malloc(2 * ((size_t)n + 1) * sizeof *middles);
    int *leveled = malloc(((size_t)n + 1) * sizeof *leveled);
    int *tried = calloc((size_t)page_bottom + 1, sizeof *tried);
    int rc = 0;
    if (!order || !members || !bars || !bottoms || !middles || !leveled || !tried) {
        rc = LT_ENOMEM;
        goto done;
    }
    stack_search x = {c,     body, parent,          th,      bars,    0,
                      tried, 0,    STACK_MAX_TESTS, bottoms, middles, leveled};
    for (int i = 0; i < n; i++) {
        const lt_box *b = &c->items[i].box;
        if (lt_box_height(b) < STACK_BAR_HEIGHT * th && lt_box_width(b) >= th)
            bars[x.nbars++] = (lt_keyed){b->top + b->bottom, i};
    }
    qsort(bars, (size_t)x.nbars, sizeof *bars, lt_cmp_keyed);
    int m = 0;
    for (int i = 0; i < n; i++) {
        const int r = lt_uf_find(parent, i);
        if (body[r] && lt_box_height(&boxes[r]) >= STACK_MIN_HEIGHT * th)
            order[m++] = (placed){r, 0, i};
    }
    qsort(order, (size_t)m, sizeof *order, cmp_placed);
    for (int k0 = 0, k1; k0 < m; k0 = k1) {
        for (k1 = k0; k1 < m && order[k1].root == order[k0].root; k1++) {
            const lt_box *b = &c->items[order[k1].index].box;
            members[k1 - k0] = (lt_keyed){b->top + b->bottom, order[k1].index};
        }
        qsort(members, (size_t)(k1 - k0), sizeof *members, lt_cmp_keyed);
        part_stacked(&x, members, k1 - k0);
    }
done:
    free(boxes);
    free(roots);
    free(order);
    free(members);
    free(bars);
    free(bottoms);
    free(middles);
    free(leveled);
    free(tried);
    return rc;
}

/* The word space of every group (by root): the lower median of its word spaces (see
 * WORD_SPACE_MIN_RATIO; of their wider mode where they have two) in space[root], their number
 * in space_count[root]; both zero for groups without. Attached marks count as letters (a leader's
 * dots are no spaces). */
static int word_spaces(const lt_components *c, const uint8_t *body, const uint8_t *mark,
                       int *parent, double *space, int *space_count)
{
    const int n = c->count;
    placed *order = malloc(((size_t)n + 1) * sizeof *order);
    double *gaps = malloc(((size_t)n + 1) * sizeof *gaps);
    double *sorted = malloc(((size_t)n + 1) * sizeof *sorted);
    if (!order || !gaps || !sorted) {
        free(order);
        free(gaps);
        free(sorted);
        return LT_ENOMEM;
    }
    int m = 0;
    for (int i = 0; i < n; i++) {
        space[i] = 0;
        space_count[i] = 0;
        if (body[i] || (mark[i] && lt_uf_find(parent, i) != i))
            order[m++] = (placed){lt_uf_find(parent, i), c->items[i].box.left, i};
    }
    qsort(order, (size_t)m, sizeof *order, cmp_placed);
    for (int k0 = 0, k1; k0 < m; k0 = k1) {
        int right = c->items[order[k0].index].box.right, ngaps = 0;
        for (k1 = k0 + 1; k1 < m && order[k1].root == order[k0].root; k1++) {
            const lt_box *b = &c->items[order[k1].index].box;
            if (b->left > right) gaps[ngaps++] = b->left - right;
            if (b->right > right) right = b->right;
        }
        if (ngaps == 0) continue;
        memcpy(sorted, gaps, (size_t)ngaps * sizeof *gaps);
        const double median = lt_median(sorted, ngaps);
        const int root = order[k0].root;
        int nwords = 0;
        for (int k = 0; k < ngaps; k++)
            if (gaps[k] > WORD_SPACE_MIN_RATIO * median) sorted[nwords++] = gaps[k];
        if (nwords == 0) continue;
        qsort(sorted, (size_t)nwords, sizeof *sorted, lt_cmp_double);
        const int first = wider_mode(sorted, nwords);
        space_count[root] = nwords - first;
        space[root] = sorted[first + (nwords - first - 1) / 2];
    }
    free(order);
    free(gaps);
    free(sorted);
    return 0;
}

/* Joins groups that stand side by side on one row, once their marks are counted (leaders,
 * punctuation between words), with a gap of at most max_gap that crosses no separator. The
 * gap is judged by the pair's type size: the smaller of the two groups' mean letter heights
 * against the page's, times the height of the page's typical line (a group's box holds its
 * large initials and any drift of its baseline, and two rows run together look large). A gap
 * a gutter refuses joins where it is no wider than the groups' word space (WORD_SPACE_*);
 * wider gaps join where the row's next wide gap is as wide (STRETCH_TOLERANCE). */
static int join_rows(const lt_components *c, const uint8_t *body, const uint8_t *mark, int *parent,
                     double max_gap, double th, const lt_separators *seps)
{
    lt_box *boxes;
    lt_keyed *roots;
    int nr;
    if (list_groups(c, body, parent, &boxes, &roots, &nr)) return LT_ENOMEM;
    double *letters = calloc((size_t)c->count + 1, sizeof *letters); /* by root: height sum */
    int *count = calloc((size_t)c->count + 1, sizeof *count);        /* ... and letters */
    double *heights = malloc(((size_t)nr + 1) * sizeof *heights);
    double *next_gap = malloc(((size_t)nr + 1) * sizeof *next_gap);
    int *next = malloc(((size_t)nr + 1) * sizeof *next),
        *prev = malloc(((size_t)nr + 1) * sizeof *prev);
    double *space = malloc(((size_t)c->count + 1) * sizeof *space);
    int *space_count = malloc(((size_t)c->count + 1) * sizeof *space_count);
    const double stretch_max = STRETCH_MAX_GAP * th;
    int rc = LT_ENOMEM;
    if (!letters || !count || !heights || !next_gap || !next || !prev || !space || !space_count ||
        word_spaces(c, body, mark, parent, space, space_count))
        goto done;
    double page_sum = 0;
    int page_count = 0;
    for (int i = 0; i < c->count; i++) {
        if (!body[i]) continue;
        const int r = lt_uf_find(parent, i), h = lt_box_height(&c->items[i].box);
        letters[r] += h;
        count[r]++;
        page_sum += h;
        page_count++;
    }
    for (int a = 0; a < nr; a++)
        heights[a] = lt_box_height(&boxes[roots[a].index]);
    const double line_height = lt_median(heights, nr), page_letter = page_sum / page_count;
    /* next[a]: the nearest group right of a on its row within reach (-1: none, or the link to
     * it blocked), its gap in next_gap[a]; prev[b]: a group whose next is b */
    for (int a = 0; a < nr; a++)
        next[a] = prev[a] = -1;
    for (int a = 0; a < nr; a++) {
        const int ra = roots[a].index;
        const lt_box *ba = &boxes[ra];
        int nearest = -1;
        double nearest_gap = stretch_max + 1;
        for (int b = a + 1; b < nr && roots[b].key <= ba->right + stretch_max; b++) {
            const int rb = roots[b].index;
            const lt_box *bb = &boxes[rb];
            const int top = ba->top > bb->top ? ba->top : bb->top;
            const int bottom = ba->bottom < bb->bottom ? ba->bottom : bb->bottom;
            const int hmin =
                lt_box_height(ba) < lt_box_height(bb) ? lt_box_height(ba) : lt_box_height(bb);
            if (2 * (bottom - top) < hmin) continue;
            const double size = fmin(letters[ra] / count[ra], letters[rb] / count[rb]);
            const int blocked =
                lt_link_blocked(seps, ba->right, bb->left, ba->top < bb->top ? ba->top : bb->top,
                                ba->bottom > bb->bottom ? ba->bottom : bb->bottom,
                                line_height * size / page_letter);
            const double gap = bb->left - ba->right;
            const double own_space = !space_count[ra]   ? space[rb]
                                     : !space_count[rb] ? space[ra]
                                                        : fmin(space[ra], space[rb]);
            const int lined_up_space = blocked && gap > 0 && gap <= max_gap &&
                                       space_count[ra] + space_count[rb] >= WORD_SPACE_MIN_COUNT &&
                                       gap <= WORD_SPACE_TOLERANCE * own_space &&
                                       !lt_rule_between(seps, ba->right, bb->left, top, bottom);
            if (gap <= max_gap && (!blocked || lined_up_space)) lt_uf_unite(parent, ra, rb);
            if (bb->left >= ba->right && gap < nearest_gap) {
                nearest_gap = gap;
                nearest = blocked ? -1 : b;
            }
        }
        if (nearest >= 0) {
            next[a] = nearest;
            next_gap[a] = nearest_gap;
            prev[nearest] = a;
        }
    }
    /* Wide gaps of a stretched line: the next wide gap along the row after the pair, or the
     * one before it, past the groups joined by narrow gaps, is as wide. */
    for (int a = 0; a < nr; a++) {
        if (next[a] < 0 || next_gap[a] <= max_gap) continue;
        const double g = next_gap[a];
        int after = next[a], before = prev[a];
        while (after >= 0 && next[after] >= 0 && next_gap[after] <= max_gap)
            after = next[after];
        while (before >= 0 && next_gap[before] <= max_gap)
            before = prev[before];
        const double ga = after >= 0 && next[after] >= 0 ? next_gap[after] : -1;
        const double gb = before >= 0 ? next_gap[before] : -1;
        if (fabs(ga - g) <= STRETCH_TOLERANCE * fmax(g, ga) ||
            fabs(gb - g) <= STRETCH_TOLERANCE * fmax(g, gb))
            lt_uf_unite(parent, roots[a].index, roots[next[a]].index);
    }
    rc = 0;
done:
    free(boxes);
    free(roots);
    free(letters);
    free(count);
    free(heights);
    free(next_gap);
    free(next);
    free(prev);
    free(space);
    free(space_count);
    return rc;
}

int lt_build_lines(const lt_components *c, double text_height_px, const lt_separators *seps,
                   const lt_params *p, lt_raw_lines **out, lt_error *err)
{
    *out = NULL;
    const double th = text_height_px > 0 ? text_height_px : 20;
    const int n = c->count;
    uint8_t *body = calloc((size_t)n + 1, 1), *mark = calloc((size_t)n + 1, 1);
    uint8_t *piece = calloc((size_t)n + 1, 1), *lettered = calloc((size_t)n + 1, 1);
    int *parent = malloc(((size_t)n + 1) * sizeof *parent);
    int *line_of = malloc(((size_t)n + 1) * sizeof *line_of);
    link *links = malloc(((size_t)2 * n + 1) * sizeof *links);
    index_grid g = {0};
    lt_raw_lines *res = calloc(1, sizeof *res);
    int rc = 0;
    if (!body || !mark || !piece || !lettered || !parent || !line_of || !links || !res) goto nomem;

    /* Bodies carry lines; marks (small text components, and speckle the size of a dot, not
     * the tiniest nor the long hairlines) join later. */
    const long min_speckle_px = (long)fmax(3, DOT_AREA * th * th);
    for (int i = 0; i < n; i++) {
        const lt_component *k = &c->items[i];
        if (k->kind == LT_COMP_TEXT) {
            const int kh = lt_box_height(&k->box), kw = lt_box_width(&k->box);
            if ((kh < MARK_HEIGHT * th && kw < th) || (kh < DASH_HEIGHT * th && kw < 3 * th))
                mark[i] = 1;
            else
                body[i] = 1;
        } else if (k->kind == LT_COMP_SPECKLE && k->pixels >= min_speckle_px &&
                   lt_box_height(&k->box) < MARK_HEIGHT * th && lt_box_width(&k->box) < th) {
            mark[i] = 2;
        }
        parent[i] = i;
    }
    if (grid_build(c, body, 2 * th, &g)) goto nomem;

    /* Links to the nearest neighbour on each side. */
    const double max_gap = p->link_max_gap * th;
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
            l->height = fmin(lt_box_height(&c->items[a].box), lt_box_height(&c->items[b].box));
        }
    }
    /* A link is refused only where it crosses a separator (a gutter or a vertical rule). */
    for (int i = 0; i < nlinks; i++)
        if (!lt_link_blocked(seps, links[i].x0, links[i].x1, links[i].top, links[i].bottom,
                             links[i].height))
            lt_uf_unite(parent, links[i].a, links[i].b);

    /* Marks join groups; groups that marks bring within reach of each other join. */
    if (attach_marks(c, body, mark, parent, th, max_gap, seps) ||
        join_rows(c, body, mark, parent, max_gap, th, seps) ||
        cut_across_gutters(c, body, parent, th, seps, piece) ||
        part_stacked_rows(c, body, parent, th) || absorb_nested(c, body, parent))
        goto nomem;

    /* One raw line per group that holds a letter (see LONE_BODY_MIN_HEIGHT): line_of[] first
     * counts the bodies of each group at its root, `lettered` marks the roots of groups with a
     * body of a letter's height. */
    for (int i = 0; i < n; i++)
        line_of[i] = 0;
    for (int i = 0; i < n; i++) {
        if (!body[i]) continue;
        const int root = lt_uf_find(parent, i);
        line_of[root]++;
        if (lt_box_height(&c->items[i].box) >= LONE_BODY_MIN_HEIGHT * th) lettered[root] = 1;
    }
    int nl = 0;
    for (int i = 0; i < n; i++) {
        const int holds_letter = line_of[i] > 1 || lettered[i];
        line_of[i] = body[i] && lt_uf_find(parent, i) == i && holds_letter ? nl++ : -1;
    }
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
        if (l < 0) continue; /* a group without a letter */
        lt_raw_line *r = &res->items[l];
        lt_box_grow(&r->box, &c->items[i].box);
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
        if (body[i] && line_of[i] >= 0) first[line_of[i] + 2]++;
    for (int l = 0; l < nl; l++)
        first[l + 2] += first[l + 1];
    for (int i = 0; i < n; i++) /* counting sort: first[l+1] is the fill position of l */
        if (body[i] && line_of[i] >= 0) order[first[line_of[i] + 1]++] = i;
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
            if (fabs(b->bottom - base) > BASELINE_SLACK * th + 1) continue;
            vals[standing++] = base - b->top;
        }
        for (int k = 0; k < standing; k++)
            if (vals[k] <= TALL_LETTER * th) low++;
        r->baseline_y = base;
        if (standing == 0) {
            r->xheight_px = th;
        } else if (3 * low >= standing) {
            m = 0;
            for (int k = 0; k < standing; k++)
                if (vals[k] <= TALL_LETTER * th) vals[m++] = vals[k];
            r->xheight_px = lt_median(vals, m);
        } else {
            qsort(vals, (size_t)standing, sizeof *vals, lt_cmp_double);
            r->xheight_px = vals[(int)(LARGE_TYPE_RANK * (standing - 1))];
        }
    }
    int kept = 0; /* lines of bodies one over another dropped (see COLUMN_MIN_HEIGHT) */
    for (int l = 0; l < nl; l++) {
        const lt_box *b = &res->items[l].box;
        if (!(first[l + 1] - first[l] >= 2 && lt_box_height(b) >= COLUMN_MIN_HEIGHT * th &&
              lt_box_height(b) >= COLUMN_ASPECT * lt_box_width(b)))
            res->items[kept++] = res->items[l];
    }
    res->count = kept;
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
    free(lettered);
    free(parent);
    free(line_of);
    free(links);
    *out = res;
    return rc;
}

void lt_drop_edge_slivers(lt_raw_lines *lines, const lt_frame *f, double text_height_px)
{
    const double th = text_height_px > 0 ? text_height_px : 20;
    const int w = f->given_width, h = f->given_height;
    int kept = 0;
    for (int i = 0; i < lines->count; i++) {
        lt_point quad[4];
        lt_box hull;
        lt_frame_map_box(f, lines->items[i].box, w, h, quad, &hull);
        int edge = hull.left < hull.top ? hull.left : hull.top;
        if (w - hull.right < edge) edge = w - hull.right;
        if (h - hull.bottom < edge) edge = h - hull.bottom;
        const int width = lt_box_width(&lines->items[i].box);
        const int sliver = (width < EDGE_SLIVER_WIDTH * th && edge < EDGE_BAND * th) ||
                           (width < EDGE_STROKE_WIDTH * th && edge < EDGE_STROKE_BAND * th) ||
                           (width < EDGE_CUT_WIDTH * th && edge <= EDGE_TOUCH * th);
        if (!sliver) lines->items[kept++] = lines->items[i];
    }
    lines->count = kept;
}

void lt_drop_scan_borders(lt_components *c, const lt_raw_lines *lines, const lt_frame *f,
                          double text_height_px)
{
    const double band = EDGE_BAND * (text_height_px > 0 ? text_height_px : 20);
    const int w = f->given_width, h = f->given_height;
    for (int i = 0; i < c->count; i++) {
        lt_component *k = &c->items[i];
        if (k->kind != LT_COMP_PICTURE) continue;
        lt_point quad[4];
        lt_box hull;
        lt_frame_map_box(f, k->box, w, h, quad, &hull);
        if (!((hull.left < band && w - hull.right < band) ||
              (hull.top < band && h - hull.bottom < band)))
            continue;
        for (int l = 0; l < lines->count; l++) {
            const lt_box *b = &lines->items[l].box;
            const int cx = (b->left + b->right) / 2, cy = (b->top + b->bottom) / 2;
            if (cx >= k->box.left && cx < k->box.right && cy >= k->box.top && cy < k->box.bottom) {
                k->kind = LT_COMP_SPECKLE;
                break;
            }
        }
    }
}

void lt_raw_lines_free(lt_raw_lines *l)
{
    if (!l) return;
    free(l->items);
    free(l);
}

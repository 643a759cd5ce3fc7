/* blocks.c — recursive XY-cut (Nagy & Seth 1984) over the text lines: a node is split at
 * its widest white gap, across (a column gutter) or along (a gap between blocks), whichever
 * is wider relative to its threshold in text units; a node without a wide enough gap is a
 * block. Children are in reading order: left to right, top to bottom. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Narrowest column of text, in text heights, that a gutter cut makes: a few words. Narrower
 * columns beside a gutter are list labels or table cells, read row by row. */
static const double COLUMN_MIN_WIDTH = 10.0;
/* Lines that may run across a gutter cut, per line beside it: an index entry run on into the
 * next column's white, an overfull line. */
static const double MAX_CROSSING = 1.0 / 6;
/* A separator (rule or gutter) cuts a node where it runs along this share of the node. */
static const double SEPARATOR_MIN_COVER = 0.6;
/* Each column of a gutter cut that lines run across holds this share of the lines. */
static const double COLUMN_MIN_SHARE = 0.25;
/* Pairs of lines compared to find labels beside a gap, at most (bounds the time on pages of
 * many thousand lines; past it the gap is cut as any other). */
static const long MAX_ROW_TESTS = 4000000;
/* Lines whose baselines differ by at most this, in text heights, share a row (a label and its
 * item, the cells of a table row): half an x-height, as baselines found on real scans wander. */
static const double BASELINE_TOLERANCE = 0.5;
/* The rows of a table (see table_rows): lines on each side of a cut, at least (fewer do not
 * tell a table from columns); share of them standing in the row of a line across, at least
 * (a missing cell, a tall formula whose baseline wanders); share of the lines of a side
 * ending together, within TABLE_END_SPREAD text heights (a word: ragged lines of text, the
 * ends of justified lines on a scan), under which the side is ragged; share ending flush,
 * within TABLE_FLUSH_SPREAD text heights (justified lines, leaders to page numbers), at most. */
static const int TABLE_MIN_LINES = 3;
static const double TABLE_MIN_PAIRED = 0.75;
static const double TABLE_MAX_TOGETHER = 0.5;
static const double TABLE_END_SPREAD = 2.0;
static const double TABLE_MAX_FLUSH = 1.0 / 3;
static const double TABLE_FLUSH_SPREAD = 0.5;
/* Share of the lines facing a cut on each side (no line of theirs between them and the cut)
 * narrower than a column of text (COLUMN_MIN_WIDTH), at least, that make them the cells of a
 * table however their ends line up (short words in columns of one width end flush). */
static const double TABLE_MIN_CELLS = 0.5;
/* A side of a cut that is running text is no column of cells: its lines are at least a column
 * wide (COLUMN_MIN_WIDTH) at the median and RUNNING_MIN_SHARE of those that end a row end
 * within RUNNING_WORD text heights (a long word) of the side's farthest end, being broken
 * where the next word did not fit (ragged prose in narrow columns); or RUNNING_MIN_RUN_OVERS
 * of its lines are run-overs: indented by RUN_OVER_INDENT text heights at least from the
 * side's edge, below a line that starts at the edge and ends within a word of the farthest
 * end (the entries of an index, a bibliography). The cells of a table end where their text
 * does and are not run on indented. */
static const double RUNNING_MIN_SHARE = 0.75;
static const double RUNNING_WORD = 6.0;
static const double RUNNING_MIN_RUN_OVERS = 0.1;
static const double RUN_OVER_INDENT = 0.5;
/* Lines next to a band of white across a node: ending or starting this close to it, in text
 * heights (the lines right above and below it, and where one column breaks a little earlier
 * or later than the other, as the groups of an index do, its line there). */
static const double ROW_GAP_REACH = 3.0;

/* White (text heights) by which a band under a heading over two columns (above a foot) is
 * wider than the white between the columns' lines: half a letter's height more than the
 * leading, a break a reader sees; the lines of a table's first or last row, run across its
 * cells, stand at the table's own leading. */
static const double BAND_OVER_LEADING = 0.5;

typedef struct span {
    int lo, hi, line;
} span;

static int cmp_span(const void *pa, const void *pb)
{
    const span *a = pa, *b = pb;
    if (a->lo != b->lo) return (a->lo > b->lo) - (a->lo < b->lo);
    return (a->line > b->line) - (a->line < b->line);
}

/* Widest gap of the union of spans; *cut is the coordinate of its start (lines starting at
 * or after *cut + gap lie beyond it). Returns the gap width, 0 when there is none. */
static int widest_gap(span *s, int n, int *cut_at)
{
    qsort(s, (size_t)n, sizeof *s, cmp_span);
    int reach = s[0].hi, best = 0;
    for (int i = 1; i < n; i++) {
        if (s[i].lo > reach && s[i].lo - reach > best) {
            best = s[i].lo - reach;
            *cut_at = s[i].lo;
        }
        if (s[i].hi > reach) reach = s[i].hi;
    }
    return best;
}

typedef struct leaf_item {
    lt_box box;
    int line;
} leaf_item;

/* Rows first (by vertical centre), then left to right within a row (right to left for
 * cmp_leaf_rtl). */
static int cmp_leaf_dir(const void *pa, const void *pb, int rtl)
{
    const lt_box *a = &((const leaf_item *)pa)->box, *b = &((const leaf_item *)pb)->box;
    int top = a->top > b->top ? a->top : b->top;
    int bottom = a->bottom < b->bottom ? a->bottom : b->bottom;
    int ha = a->bottom - a->top, hb = b->bottom - b->top;
    int hmin = ha < hb ? ha : hb;
    const int side = rtl ? (b->right > a->right) - (b->right < a->right)
                         : (a->left > b->left) - (a->left < b->left);
    if (2 * (bottom - top) >= hmin && side != 0) return side;
    int ca = a->top + a->bottom, cb = b->top + b->bottom;
    if (ca != cb) return (ca > cb) - (ca < cb);
    return side;
}

static int cmp_leaf(const void *pa, const void *pb)
{
    return cmp_leaf_dir(pa, pb, 0);
}

static int cmp_leaf_rtl(const void *pa, const void *pb)
{
    return cmp_leaf_dir(pa, pb, 1);
}

/* The hull of the boxes idx[0..n), n >= 1. */
static lt_box hull(const lt_box *boxes, const int *idx, int n)
{
    lt_box h = boxes[idx[0]];
    for (int i = 1; i < n; i++)
        lt_box_grow(&h, &boxes[idx[i]]);
    return h;
}

/* A leaf's lines in reading order; obstacles (indices >= nreal) are dropped, and the node's
 * box becomes the hull of its lines (a leaf of obstacles alone has no lines). */
static int leaf_lines(lt_cut_node *node, const lt_box *boxes, int nreal, const int *idx, int n,
                      int rtl)
{
    leaf_item *items = malloc(((size_t)n + 1) * sizeof *items);
    node->lines = malloc(((size_t)n + 1) * sizeof *node->lines);
    if (!items || !node->lines) {
        free(items);
        return LT_ENOMEM;
    }
    int m = 0;
    for (int i = 0; i < n; i++)
        if (idx[i] < nreal) items[m++] = (leaf_item){boxes[idx[i]], idx[i]};
    qsort(items, (size_t)m, sizeof *items, rtl ? cmp_leaf_rtl : cmp_leaf);
    for (int i = 0; i < m; i++)
        node->lines[i] = items[i].line;
    if (m > 0) node->box = hull(boxes, node->lines, m);
    node->nlines = m;
    free(items);
    return 0;
}

static lt_cut_node *node_new(const lt_box *boxes, const int *idx, int n)
{
    lt_cut_node *node = calloc(1, sizeof *node);
    if (!node) return NULL;
    node->box = hull(boxes, idx, n);
    return node;
}

typedef struct cut_context {
    const lt_box *boxes;       /* the lines' boxes, then the obstacles' (pictures) */
    int nreal;                 /* number of lines */
    double col_gap, row_gap;   /* px */
    const lt_separators *seps; /* may be NULL */
    double column_min_width;   /* px: narrowest column of text a gutter cut makes */
    int rtl;
    const lt_raw_line *lines;  /* the lines (boxes[0..nreal)) */
    double baseline_tolerance; /* px: lines on one baseline differ by at most this */
    double band_over_leading;  /* px: see BAND_OVER_LEADING */
    double end_spread;         /* px: line ends this close end together */
    double flush_spread;       /* px: line ends this close end flush */
    span *spans, *near;        /* scratch room for all lines, twice */
    double row_gap_reach;      /* px: lines this close to a band of white stand next to it */
    double running_word;       /* px: see RUNNING_WORD */
    double run_over_indent;    /* px: see RUN_OVER_INDENT */
} cut_context;

/* A rule that separates the lines idx[0..n) of a node with box `nb`: it runs along at least
 * 60 % of the node's height (vertical) or width (horizontal), lies inside the node, has lines
 * on both sides and crosses none. Returns 1 with the cut coordinate (lines starting at or
 * after it lie beyond). */
static int rule_cut(const cut_context *x, const int *idx, int n, const lt_box *nb, int across,
                    int *cut_at)
{
    for (int r = 0; x->seps && r < x->seps->nrules; r++) {
        const lt_box *rb = &x->seps->rules[r];
        const int vertical = rb->bottom - rb->top > rb->right - rb->left;
        if (vertical != across) continue;
        const int lo = across ? nb->top : nb->left, hi = across ? nb->bottom : nb->right;
        const int r0 = across ? rb->top : rb->left, r1 = across ? rb->bottom : rb->right;
        const int run = (r1 < hi ? r1 : hi) - (r0 > lo ? r0 : lo);
        if (run < SEPARATOR_MIN_COVER * (hi - lo)) continue;
        const int at = across ? (rb->left + rb->right) / 2 : (rb->top + rb->bottom) / 2;
        int before = 0, beyond = 0, crossed = 0;
        for (int i = 0; i < n && !crossed; i++) {
            const lt_box *b = &x->boxes[idx[i]];
            const int b0 = across ? b->left : b->top, b1 = across ? b->right : b->bottom;
            if (b1 <= at)
                before++;
            else if (b0 >= at)
                beyond++;
            else
                crossed = 1;
        }
        if (!crossed && before && beyond) {
            *cut_at = at;
            return 1;
        }
    }
    return 0;
}

/* Whether box i is a line cut from one that ran across a gutter. */
static int is_piece(const cut_context *x, int i)
{
    return i < x->nreal && x->lines[i].bridged;
}

/* Whether box i is a line as found: not a picture, nor a piece of a line cut at a gutter. */
static int whole_line(const cut_context *x, int i)
{
    return i < x->nreal && !x->lines[i].bridged;
}

/* Whether box i goes to the first child of a cut at `at` (lines starting at or beyond it go
 * to the second; across, the pieces of a bridged line by their centre against the middle of
 * the gap of width `gap` before `at`). */
static int before_cut(const cut_context *x, int i, int across, int at, int gap)
{
    const lt_box *b = &x->boxes[i];
    if (across && is_piece(x, i)) return b->left + b->right < 2 * at - gap;
    return (across ? b->left : b->top) < at;
}

/* A gutter (or a vertical rule) that separates the lines idx[0..n) of a node with box `nb`
 * into two columns, each holding at least `min_width` px of text beside it (narrower: labels,
 * or the cells of a table, which are read row by row). Either no line crosses the gutter's
 * middle and gutters run along at least 60 % of the node's height there, or a few lines
 * cross it (at most MAX_CROSSING of the others: lines run on across the gutter, which go with
 * the column they start in), standing among the lines of both columns (neither all above nor
 * all below the lines of either: a heading or a footer spans the columns), and each column
 * holds at least a quarter of the lines. The pieces of a line cut at a gutter go by their
 * centre. Returns 1 with the cut coordinate (lines starting at or after it lie beyond), the
 * gutter's width and the number of lines that cross it. */
static int gutter_cut(const cut_context *x, const int *idx, int n, const lt_box *nb,
                      double min_width, int *cut_at, int *width, int *crossing)
{
    if (!x->seps) return 0;
    const int ng = x->seps->ngutters, nr = x->seps->nrules;
    for (int k = 0; k < ng + nr; k++) {
        const lt_box *g = k < ng ? &x->seps->gutters[k] : &x->seps->rules[k - ng];
        if (k >= ng && g->bottom - g->top <= g->right - g->left) continue; /* a horizontal rule */
        const int mid = (g->left + g->right) / 2;
        if (mid - nb->left < min_width || nb->right - mid < min_width) continue;
        int run = 0; /* the node's rows that gutters and vertical rules hold at mid */
        for (int j = 0; j < ng + nr; j++) {
            const lt_box *h = j < ng ? &x->seps->gutters[j] : &x->seps->rules[j - ng];
            const int lo = h->top > nb->top ? h->top : nb->top;
            const int hi = h->bottom < nb->bottom ? h->bottom : nb->bottom;
            if (h->left <= mid && h->right > mid && hi > lo) run += hi - lo;
        }
        /* the lines on each side and across (centres twice over, so in whole numbers) */
        int count[2] = {0, 0}, crossed = 0, reach = nb->left, next = nb->right;
        int top[2] = {1 << 30, 1 << 30}, bottom[2] = {-1, -1}, cross_lo = 1 << 30, cross_hi = -1;
        for (int i = 0; i < n; i++) {
            const lt_box *b = &x->boxes[idx[i]];
            if (is_piece(x, idx[i])) continue;
            const int side = b->right <= mid ? 0 : b->left >= mid ? 1 : -1, cy = b->top + b->bottom;
            if (side < 0) {
                crossed++;
                if (cy < cross_lo) cross_lo = cy;
                if (cy > cross_hi) cross_hi = cy;
                continue;
            }
            if (side == 0 && b->right > reach) reach = b->right;
            if (side == 1 && b->left < next) next = b->left;
            count[side]++;
            if (cy < top[side]) top[side] = cy;
            if (cy > bottom[side]) bottom[side] = cy;
        }
        const int lines = count[0] + count[1];
        if (!count[0] || !count[1]) continue;
        if (crossed == 0 ? run < SEPARATOR_MIN_COVER * (nb->bottom - nb->top)
                         : MAX_CROSSING * lines < crossed || count[0] < COLUMN_MIN_SHARE * lines ||
                               count[1] < COLUMN_MIN_SHARE * lines || cross_hi <= top[0] ||
                               cross_hi <= top[1] || cross_lo >= bottom[0] || cross_lo >= bottom[1])
            continue;
        *cut_at = next;
        *width = next - reach;
        *crossing = crossed;
        return 1;
    }
    return 0;
}

/* Whether line a stands in the row of line b: on its baseline, and at most twice as tall. */
static int shares_row(const cut_context *x, const lt_raw_line *a, const lt_raw_line *b)
{
    return fabs(a->baseline_y - b->baseline_y) <= x->baseline_tolerance &&
           lt_box_height(&a->box) <= 2 * lt_box_height(&b->box);
}

/* Whether line a, on side `from` of a cut at `at` (0: left of it), lies within `reach` px
 * of the gap [at - gap, at). */
static int near_gap(const lt_raw_line *a, int at, int gap, int from, int reach)
{
    if ((a->box.left < at) != (from == 0)) return 0;
    return from == 0 ? a->box.right >= at - gap - reach : a->box.left <= at + reach;
}

/* Of the lines idx[0..n) on side `from` of a cut at `at` within `reach` px of the gap
 * [at - gap, at), how many share a row with a line on the other side within `reach_across`
 * of it (*partnered), of how many (*count). Returns 0, or -1 past MAX_ROW_TESTS pairs. */
static int rows_across(const cut_context *x, const int *idx, int n, int at, int gap, int from,
                       int reach, int reach_across, int *partnered, int *count)
{
    *partnered = *count = 0;
    for (int i = 0; i < n; i++) {
        if (idx[i] >= x->nreal) continue; /* a picture */
        const lt_raw_line *a = &x->lines[idx[i]];
        if (!near_gap(a, at, gap, from, reach)) continue;
        if ((long)++*count * n > MAX_ROW_TESTS) return -1;
        for (int j = 0; j < n; j++) {
            if (idx[j] >= x->nreal) continue;
            const lt_raw_line *b = &x->lines[idx[j]];
            if (near_gap(b, at, gap, !from, reach_across) && shares_row(x, a, b)) {
                ++*partnered;
                break;
            }
        }
    }
    return 0;
}

/* Whether the lines beside the gap [at - gap, at) on one side of a node with box nb make a
 * column of labels, at least half of them sharing a row with a line across the gap (standing
 * on its baseline): labels and their items, the cells of a table, read row by row. Such a
 * column is narrower than column_min_width (unless `sparse_only`), or sparse: at most half as
 * wide as the other side, with a label beside at most half of the lines that start at the
 * gap (one label to a group of lines, as in a form; the lines of two columns set on one
 * leading share rows all along). However wide the gap (the page numbers of a contents list
 * set flush right, far from their titles, a column of check boxes): margin notes beside a
 * paragraph have a pitch of their own, and pieces that share no row (the bits of a scan's dark
 * border) are no such column. */
static int labels_beside_gap(const cut_context *x, const int *idx, int n, const lt_box *nb, int at,
                             int gap, int sparse_only)
{
    const int far = 1 << 29, near = (int)x->column_min_width;
    for (int side = 0; side < 2; side++) {
        const int width = side == 0 ? at - gap - nb->left : nb->right - at;
        const int other = side == 0 ? nb->right - at : at - gap - nb->left;
        const int narrow_column = width < x->column_min_width && !sparse_only;
        if (!narrow_column && 2 * width > other) continue;
        int labelled, lines, beside, across;
        /* the partners of labels are looked for among the lines at the gap; a narrow column's
         * anywhere across */
        if (rows_across(x, idx, n, at, gap, side, far, narrow_column ? far : near, &labelled,
                        &lines) ||
            2 * labelled < lines)
            continue;
        if (!narrow_column &&
            (rows_across(x, idx, n, at, gap, !side, near, far, &beside, &across) ||
             2 * beside > across))
            continue;
        return 1;
    }
    return 0;
}

/* The median white (px, negative where boxes overlap) between each of the lines idx[0..n)
 * (pictures left out) and the nearest line above it that it overlaps horizontally: the
 * leading of the columns; gap[] is room for n values. 0 where no line has one, or past
 * MAX_ROW_TESTS pairs. */
static double median_leading(const cut_context *x, const int *idx, int n, double *gap)
{
    if ((long)n * n > MAX_ROW_TESTS) return 0;
    int ngaps = 0;
    for (int i = 0; i < n; i++) {
        if (idx[i] >= x->nreal) continue;
        const lt_box *a = &x->boxes[idx[i]];
        const lt_box *above = NULL;
        for (int j = 0; j < n; j++) {
            const lt_box *b = &x->boxes[idx[j]];
            if (idx[j] < x->nreal && b->top + b->bottom < a->top + a->bottom &&
                b->left < a->right && a->left < b->right && (!above || b->bottom > above->bottom))
                above = b;
        }
        if (above) gap[ngaps++] = a->top - above->bottom;
    }
    return ngaps ? lt_median(gap, ngaps) : 0;
}

/* Lines set over the two columns of a gutter (a running head, a title) or under them (a
 * foot), which gutter_cut does not cut at, since they cross it: where nothing else cuts the
 * node, the band of white between them and the columns is cut first, however narrow, when it
 * sets them apart (wider by BAND_OVER_LEADING than the white between the lines of the
 * columns: not the first or last lines of a table whose cells they run across) and the lines
 * beyond it are cut at the gutter. Returns 1 with the cut coordinate (lines starting at or
 * below it lie beyond), 0 for none, LT_ENOMEM. */
static int band_beside_columns(const cut_context *x, const int *idx, int n, const lt_box *nb,
                               double min_width, int *cut_at)
{
    if (!x->seps) return 0;
    const lt_separators *s = x->seps;
    int *rest = malloc(((size_t)n + 1) * sizeof *rest);
    double *gap = malloc(((size_t)n + 1) * sizeof *gap);
    if (!rest || !gap) {
        free(rest);
        free(gap);
        return LT_ENOMEM;
    }
    /* the boxes by top, for the bands of white between them */
    span *sp = x->spans;
    for (int i = 0; i < n; i++)
        sp[i] = (span){x->boxes[idx[i]].top, x->boxes[idx[i]].bottom, idx[i]};
    qsort(sp, (size_t)n, sizeof *sp, cmp_span);
    int found = 0;
    for (int k = 0; k < s->ngutters + s->nrules && !found; k++) {
        const lt_box *g = k < s->ngutters ? &s->gutters[k] : &s->rules[k - s->ngutters];
        if (k >= s->ngutters && g->bottom - g->top <= g->right - g->left) continue;
        const int mid = (g->left + g->right) / 2;
        if (mid - nb->left < min_width || nb->right - mid < min_width) continue;
        int cross_top = 1 << 30, cross_bottom = -1;
        for (int i = 0; i < n; i++) {
            const lt_box *b = &x->boxes[idx[i]];
            if (whole_line(x, idx[i]) && b->left < mid && b->right > mid) {
                if (b->top < cross_top) cross_top = b->top;
                if (b->bottom > cross_bottom) cross_bottom = b->bottom;
            }
        }
        if (cross_bottom < 0) continue;
        for (int foot = 0; foot < 2 && !found; foot++) {
            /* the band: the first white below the crossing lines, or the last above them */
            int at = -1, band = 0;
            for (int i = 1, reach = sp[0].hi; i < n; i++) {
                if (sp[i].lo > reach && (foot ? sp[i].lo <= cross_top : reach >= cross_bottom)) {
                    at = sp[i].lo;
                    band = sp[i].lo - reach;
                    if (!foot) break;
                }
                if (sp[i].hi > reach) reach = sp[i].hi;
            }
            if (at < 0) continue;
            int m = 0;
            for (int i = 0; i < n; i++)
                if ((x->boxes[idx[i]].top >= at) != foot) rest[m++] = idx[i];
            const lt_box rb = hull(x->boxes, rest, m);
            int gutter_at, width, crossing;
            found = band >= median_leading(x, rest, m, gap) + x->band_over_leading &&
                    gutter_cut(x, rest, m, &rb, min_width, &gutter_at, &width, &crossing) &&
                    crossing == 0 && !labels_beside_gap(x, rest, m, &rb, gutter_at, width, 1);
            if (found) *cut_at = at;
        }
    }
    free(rest);
    free(gap);
    return found;
}

/* The largest share of the n values v[] (sorted here) that lie within `width` of each other. */
static double largest_cluster_share(int *v, int n, double width)
{
    return n > 0 ? (double)lt_largest_cluster(v, n, width) / n : 0;
}

/* Whether the lines idx[0..n) of a node on side `side` of a cut at `at` (0: left of it) are
 * running text (RUNNING_MIN_SHARE, RUN_OVER_INDENT): ends[0..nends) are the ends of those of
 * them that end a row; widths[] is room for n values. */
static int running_text(const cut_context *x, const int *idx, int n, int at, int side,
                        const int *ends, int nends, double *widths)
{
    /* the side's edge where its lines start and its farthest end (mirrored right to left) */
    int edge = x->rtl ? -(1 << 30) : 1 << 30, reach = x->rtl ? 1 << 30 : -(1 << 30), m = 0;
    for (int i = 0; i < n; i++) {
        if (!whole_line(x, idx[i])) continue;
        const lt_box *a = &x->lines[idx[i]].box;
        if ((a->left >= at) != side) continue;
        widths[m++] = lt_box_width(a);
        edge = x->rtl ? (a->right > edge ? a->right : edge) : (a->left < edge ? a->left : edge);
        reach =
            x->rtl ? (a->left < reach ? a->left : reach) : (a->right > reach ? a->right : reach);
    }
    if (m == 0) return 0;
    int near_end = 0;
    for (int k = 0; k < nends; k++)
        near_end += abs(reach - ends[k]) <= x->running_word;
    if (lt_median(widths, m) >= x->column_min_width && near_end >= RUNNING_MIN_SHARE * nends)
        return 1;
    int run_overs = 0;
    for (int i = 0; i < n; i++) {
        if (!whole_line(x, idx[i])) continue;
        const lt_box *a = &x->lines[idx[i]].box;
        if ((a->left >= at) != side ||
            abs((x->rtl ? a->right : a->left) - edge) < x->run_over_indent)
            continue;
        const lt_box *above = NULL; /* the nearest line above it on its side */
        for (int j = 0; j < n; j++) {
            if (!whole_line(x, idx[j])) continue;
            const lt_box *b = &x->lines[idx[j]].box;
            if ((b->left >= at) == side && b->top + b->bottom <= 2 * a->top &&
                (!above || b->bottom > above->bottom))
                above = b;
        }
        run_overs += above &&
                     abs((x->rtl ? above->right : above->left) - edge) < x->run_over_indent &&
                     abs(reach - (x->rtl ? above->left : above->right)) <= x->running_word;
    }
    return run_overs >= RUNNING_MIN_RUN_OVERS * m;
}

/* Whether the lines idx[0..n) of a node, cut across at `at` (lines starting there or beyond
 * on the right), are the rows of a table: each side holds TABLE_MIN_LINES lines at least,
 * nearly all of which (TABLE_MIN_PAIRED) stand in the row of a line across the cut, and both
 * sides are ragged: of the lines that end a row of a side (right ends; left ends for
 * right-to-left scripts), under TABLE_MAX_TOGETHER end together (within TABLE_END_SPREAD) and
 * at most TABLE_MAX_FLUSH flush (within TABLE_FLUSH_SPREAD); or the lines facing the cut on
 * both sides are cells (TABLE_MIN_CELLS). Columns of text fill their measure (justified
 * lines, ragged lines up to a word short, leaders to page numbers end together); the cells
 * of a key and its value end where their text does.
 * Returns 1, 0 (also past MAX_ROW_TESTS pairs of lines), or -1 out of memory. */
static int table_rows(const cut_context *x, const int *idx, int n, int at)
{
    if ((long)n * n > MAX_ROW_TESTS) return 0;
    int lines[2] = {0, 0}, paired[2] = {0, 0}, nends[2] = {0, 0}, facing[2] = {0, 0},
        cells[2] = {0, 0};
    int *ends = malloc(((size_t)n + 1) * sizeof *ends); /* side 0 from the start, 1 from the end */
    if (!ends) return -1;
    for (int i = 0; i < n; i++) {
        if (!whole_line(x, idx[i])) continue;
        const lt_raw_line *a = &x->lines[idx[i]];
        const int side = a->box.left >= at;
        int partner = 0, beyond = 0, inner = 0;
        for (int j = 0; j < n; j++) {
            if (j == i || !whole_line(x, idx[j])) continue;
            const lt_raw_line *b = &x->lines[idx[j]];
            if (!shares_row(x, a, b)) continue;
            if ((b->box.left >= at) != side) {
                partner = 1;
                continue;
            }
            if (x->rtl ? b->box.right <= a->box.left : b->box.left >= a->box.right)
                beyond = 1; /* the row of its side goes on after a */
            if (side == 0 ? b->box.left >= a->box.right : b->box.right <= a->box.left)
                inner = 1; /* b stands between a and the cut */
        }
        lines[side]++;
        paired[side] += partner;
        if (!inner) {
            facing[side]++;
            cells[side] += lt_box_width(&a->box) < x->column_min_width;
        }
        if (!beyond) {
            const int end = x->rtl ? a->box.left : a->box.right;
            if (side == 0)
                ends[nends[0]++] = end;
            else
                ends[n - ++nends[1]] = end;
        }
    }
    int paired_rows = 1, ragged = 1;
    for (int side = 0; side < 2; side++) {
        int *side_ends = side == 0 ? ends : ends + n - nends[1];
        paired_rows &=
            lines[side] >= TABLE_MIN_LINES && paired[side] >= TABLE_MIN_PAIRED * lines[side];
        ragged &=
            largest_cluster_share(side_ends, nends[side], x->end_spread) < TABLE_MAX_TOGETHER &&
            largest_cluster_share(side_ends, nends[side], x->flush_spread) <= TABLE_MAX_FLUSH;
    }
    int table = paired_rows && (ragged || (cells[0] >= TABLE_MIN_CELLS * facing[0] &&
                                           cells[1] >= TABLE_MIN_CELLS * facing[1]));
    if (table) { /* ... unless a side is running text */
        double *widths = malloc(((size_t)n + 1) * sizeof *widths);
        if (!widths) {
            free(ends);
            return -1;
        }
        for (int side = 0; side < 2 && table; side++)
            table = !running_text(x, idx, n, at, side, side == 0 ? ends : ends + n - nends[1],
                                  nends[side], widths);
        free(widths);
    }
    free(ends);
    return table;
}

/* Whether a horizontal rule in the rows [top, bottom) runs across the columns [x0, x1). */
static int rule_across(const cut_context *x, int x0, int x1, int top, int bottom)
{
    for (int r = 0; x->seps && r < x->seps->nrules; r++) {
        const lt_box *b = &x->seps->rules[r];
        if (lt_box_width(b) > lt_box_height(b) && b->top >= top && b->bottom <= bottom &&
            b->left <= x0 && b->right >= x1)
            return 1;
    }
    return 0;
}

typedef struct labels_memo {
    int at, gap, labels; /* the last strip asked about (at -1: none) and its answer */
} labels_memo;

/* labels_beside_gap(x, idx, n, nb, at, gap, 1), remembered for the strip asked last (the
 * bands of one node mostly meet the same gutter). */
static int sparse_labels(const cut_context *x, const int *idx, int n, const lt_box *nb, int at,
                         int gap, labels_memo *memo)
{
    if (memo->at != at || memo->gap != gap)
        *memo = (labels_memo){at, gap, labels_beside_gap(x, idx, n, nb, at, gap, 1)};
    return memo->labels;
}

/* Whether the band of white [top, bottom) across a node (box nb, lines idx[0..n)) lies inside
 * a column structure: the items next to it (those of s[0..k), which end by `top`, ending
 * within ROW_GAP_REACH above it; those of s[k..n), which start at `bottom` or later, starting
 * within it below) leave a strip of white at least `col_gap` wide, where a gutter or a
 * vertical rule runs and no horizontal rule crosses, with items on both sides of it both
 * above and below the band, each side at least a column wide in the node and neither a
 * sparse column of labels (paragraph breaks side by side in two columns, the rows of a table;
 * not a column of line numbers, nor the labels of a form, whose entries the band parts).
 * s is sorted by top, `tallest` its greatest height; `near` is room for n spans; `memo` the
 * labels' answer for the strip asked last. Past MAX_ROW_TESTS pairs, no. */
static int band_between_columns(const cut_context *x, const int *idx, const lt_box *nb,
                                const span *s, int n, int k, int top, int bottom, int tallest,
                                span *near, labels_memo *memo)
{
    int m = 0; /* near[0..m): the items' horizontal extents, `line` 1 above the band, 0 below */
    /* s is sorted by top: those above that end near the band start at most `tallest` higher */
    for (int j = k - 1; j >= 0 && s[j].lo >= top - x->row_gap_reach - tallest; j--)
        if (s[j].hi >= top - x->row_gap_reach) {
            const lt_box *b = &x->boxes[s[j].line];
            near[m++] = (span){b->left, b->right, 1};
        }
    for (int j = k; j < n && s[j].lo <= bottom + x->row_gap_reach; j++) {
        const lt_box *b = &x->boxes[s[j].line];
        near[m++] = (span){b->left, b->right, 0};
    }
    if ((long)m * m > MAX_ROW_TESTS) return 0;
    qsort(near, (size_t)m, sizeof *near, cmp_span);
    int reach = m ? near[0].hi : 0;
    for (int i = 1; i < m; i++) {
        if (near[i].lo - reach >= x->col_gap) {
            int sides[2] = {0, 0}; /* bit 1: above, bit 2: below; left of the strip, right */
            for (int j = 0; j < m; j++)
                sides[j >= i] |= near[j].line ? 1 : 2;
            if (sides[0] == 3 && sides[1] == 3 && reach - nb->left >= x->column_min_width &&
                nb->right - near[i].lo >= x->column_min_width &&
                lt_separator_between(x->seps, reach, near[i].lo, top, bottom) &&
                !rule_across(x, reach, near[i].lo, top, bottom) &&
                !sparse_labels(x, idx, n, nb, near[i].lo, near[i].lo - reach, memo))
                return 1;
        }
        if (near[i].hi > reach) reach = near[i].hi;
    }
    return 0;
}

/* Widest band of white across a node of the spans s[0..n) (lines' and obstacles' vertical
 * extents) that does not lie inside a column structure (band_between_columns): *cut_at is
 * where it ends. Returns the band's height, 0 when there is none. */
static int widest_row_gap(const cut_context *x, const int *idx, const lt_box *nb, span *s, int n,
                          int *cut_at)
{
    qsort(s, (size_t)n, sizeof *s, cmp_span);
    int reach = s[0].hi, best = 0, tallest = 0;
    labels_memo memo = {-1, 0, 0};
    for (int i = 0; i < n; i++)
        if (s[i].hi - s[i].lo > tallest) tallest = s[i].hi - s[i].lo;
    for (int i = 1; i < n; i++) {
        if (s[i].lo > reach && s[i].lo - reach > best &&
            !band_between_columns(x, idx, nb, s, n, i, reach, s[i].lo, tallest, x->near, &memo)) {
            best = s[i].lo - reach;
            *cut_at = s[i].lo;
        }
        if (s[i].hi > reach) reach = s[i].hi;
    }
    return best;
}

/* Builds the subtree of lines idx[0..n), n >= 1. */
static lt_cut_node *cut(const cut_context *x, int *idx, int n)
{
    const lt_box *boxes = x->boxes;
    span *spans = x->spans;
    lt_cut_node *node = node_new(boxes, idx, n);
    if (!node) return NULL;
    int x_cut = 0, y_cut = 0, gx = 0, gy = 0;
    if (n > 1) {
        /* Across: the pieces of a line cut at a gutter abut there and are left out of the
         * gap search (unless nothing else is left), then go to the side of their centre. */
        int m = 0;
        for (int i = 0; i < n; i++)
            if (!is_piece(x, idx[i]))
                spans[m++] = (span){boxes[idx[i]].left, boxes[idx[i]].right, idx[i]};
        if (m < 2) {
            m = 0;
            for (int i = 0; i < n; i++)
                spans[m++] = (span){boxes[idx[i]].left, boxes[idx[i]].right, idx[i]};
        }
        gx = widest_gap(spans, m, &x_cut);
        for (int i = 0; i < n; i++)
            spans[i] = (span){boxes[idx[i]].top, boxes[idx[i]].bottom, idx[i]};
        gy = widest_row_gap(x, idx, &node->box, spans, n, &y_cut);
    }
    double sx = gx / x->col_gap, sy = gy / x->row_gap;
    /* A gap that leaves a column of labels beside it (narrower than a few words, or sparse
     * beside the lines at the gap), its lines standing in the rows of the lines across the
     * gap, parts labels from their items or the cells of a table: those are read row by row;
     * a sparse column of labels is not cut off at a gutter either. */
    if (gx > 0 && sx >= 1 && labels_beside_gap(x, idx, n, &node->box, x_cut, gx, 0)) sx = 0;
    /* A separating rule counts as a gap twice the narrowest one. */
    if (n > 1 && sx < 2 && rule_cut(x, idx, n, &node->box, 1, &x_cut)) sx = 2;
    if (n > 1 && sy < 2 && rule_cut(x, idx, n, &node->box, 0, &y_cut)) sy = 2;
    /* Columns come from the gutters: a gutter that separates columns of text is cut along
     * before any band of white that happens to line up across the columns; one that a few
     * lines run across only where no gap is wide enough (a heading over two sections of
     * columns is cut above and below first). */
    int gutter_at, gutter_width, crossing;
    if (n > 1 &&
        gutter_cut(x, idx, n, &node->box, x->column_min_width, &gutter_at, &gutter_width,
                   &crossing) &&
        (crossing == 0 || (sx < 1 && sy < 1)) &&
        !labels_beside_gap(x, idx, n, &node->box, gutter_at, gutter_width, 1)) {
        sx = sy + 1;
        gx = gutter_width;
        x_cut = gutter_at;
    }
    /* The rows of a table are read row by row: no cut between its columns. */
    if (sx >= 1 && sx >= sy) {
        const int rows = table_rows(x, idx, n, x_cut);
        if (rows < 0) {
            lt_cut_node_free(node);
            return NULL;
        }
        if (rows) sx = 0;
    }
    if (n > 1 && sx < 1 && sy < 1) {
        const int band = band_beside_columns(x, idx, n, &node->box, x->column_min_width, &y_cut);
        if (band < 0) {
            lt_cut_node_free(node);
            return NULL;
        }
        if (band) {
            sx = 0;
            sy = 1;
        }
    }
    if (sx < 1 && sy < 1) {
        if (leaf_lines(node, boxes, x->nreal, idx, n, x->rtl)) {
            lt_cut_node_free(node);
            return NULL;
        }
        return node;
    }
    /* Partition in place: lines before the cut first (order inside kept stable). */
    int across = sx >= sy;
    int *tmp = malloc((size_t)n * sizeof *tmp);
    node->children = calloc(2, sizeof *node->children);
    if (!tmp || !node->children) {
        free(tmp);
        lt_cut_node_free(node);
        return NULL;
    }
    int k = 0;
    for (int i = 0; i < n; i++)
        if (before_cut(x, idx[i], across, across ? x_cut : y_cut, gx)) tmp[k++] = idx[i];
    int nfirst = k;
    for (int i = 0; i < n; i++)
        if (!before_cut(x, idx[i], across, across ? x_cut : y_cut, gx)) tmp[k++] = idx[i];
    memcpy(idx, tmp, (size_t)n * sizeof *idx);
    free(tmp);
    node->nchildren = 2;
    const int swap = across && x->rtl; /* right-to-left: the right part is read first */
    node->children[swap] = cut(x, idx, nfirst);
    node->children[!swap] = cut(x, idx + nfirst, n - nfirst);
    if (!node->children[0] || !node->children[1]) {
        lt_cut_node_free(node);
        return NULL;
    }
    return node;
}

int lt_xy_cut(const lt_raw_lines *lines, const lt_components *c, const lt_separators *seps,
              double text_height_px, const lt_params *p, lt_cut_node **root, lt_error *err)
{
    *root = NULL;
    if (lines->count == 0) return 0;
    const double th = text_height_px > 0 ? text_height_px : 20;
    int npictures = 0;
    for (int i = 0; c && i < c->count; i++)
        npictures += c->items[i].kind == LT_COMP_PICTURE;
    const int n = lines->count + npictures;
    int *idx = malloc((size_t)n * sizeof *idx);
    span *spans = malloc(2 * (size_t)n * sizeof *spans);
    lt_box *boxes = malloc((size_t)n * sizeof *boxes);
    if (!idx || !spans || !boxes) {
        free(idx);
        free(spans);
        free(boxes);
        return lt_error_set(err, LT_ENOMEM, "blocks: out of memory");
    }
    /* Pictures take part in the cuts as obstacles, so that a figure breaking a column does
     * not leave a white band for a cut across the page; leaves keep only lines. */
    int k = 0;
    for (int i = 0; i < lines->count; i++)
        boxes[k++] = lines->items[i].box;
    for (int i = 0; c && i < c->count; i++)
        if (c->items[i].kind == LT_COMP_PICTURE) boxes[k++] = c->items[i].box;
    for (int i = 0; i < n; i++)
        idx[i] = i;
    const cut_context x = {boxes,
                           lines->count,
                           p->column_min_gap * th,
                           p->block_min_gap * th,
                           seps,
                           COLUMN_MIN_WIDTH * th,
                           p->right_to_left,
                           lines->items,
                           BASELINE_TOLERANCE * th,
                           BAND_OVER_LEADING * th,
                           TABLE_END_SPREAD * th,
                           TABLE_FLUSH_SPREAD * th,
                           spans,
                           spans + n,
                           ROW_GAP_REACH * th,
                           RUNNING_WORD * th,
                           RUN_OVER_INDENT * th};
    *root = cut(&x, idx, n);
    free(idx);
    free(spans);
    free(boxes);
    return *root ? 0 : lt_error_set(err, LT_ENOMEM, "blocks: out of memory");
}

void lt_cut_node_free(lt_cut_node *n)
{
    if (!n) return;
    for (int i = 0; i < n->nchildren; i++)
        lt_cut_node_free(n->children[i]);
    free(n->children);
    free(n->lines);
    free(n);
}

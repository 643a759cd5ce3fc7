/* blocks.c — recursive XY-cut (Nagy & Seth 1984) over the text lines: a node is split at
 * its widest white gap, across (a column gutter) or along (a gap between blocks), whichever
 * is wider relative to its threshold in text units; a node without a wide enough gap is a
 * block. Children are in reading order: left to right, top to bottom. */
#include "internal.h"

#include <stdlib.h>
#include <string.h>

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

/* Rows first (by vertical centre), then left to right within a row. */
static int cmp_leaf(const void *pa, const void *pb)
{
    const lt_box *a = &((const leaf_item *)pa)->box, *b = &((const leaf_item *)pb)->box;
    int top = a->top > b->top ? a->top : b->top;
    int bottom = a->bottom < b->bottom ? a->bottom : b->bottom;
    int ha = a->bottom - a->top, hb = b->bottom - b->top;
    int hmin = ha < hb ? ha : hb;
    if (2 * (bottom - top) >= hmin && a->left != b->left)
        return (a->left > b->left) - (a->left < b->left);
    int ca = a->top + a->bottom, cb = b->top + b->bottom;
    if (ca != cb) return (ca > cb) - (ca < cb);
    return (a->left > b->left) - (a->left < b->left);
}

/* A leaf's lines in reading order. */
static int leaf_lines(lt_cut_node *node, const lt_raw_line *lines, const int *idx, int n)
{
    leaf_item *items = malloc((size_t)n * sizeof *items);
    node->lines = malloc((size_t)n * sizeof *node->lines);
    if (!items || !node->lines) {
        free(items);
        return LT_ENOMEM;
    }
    for (int i = 0; i < n; i++)
        items[i] = (leaf_item){lines[idx[i]].box, idx[i]};
    qsort(items, (size_t)n, sizeof *items, cmp_leaf);
    for (int i = 0; i < n; i++)
        node->lines[i] = items[i].line;
    node->nlines = n;
    free(items);
    return 0;
}

static lt_cut_node *node_new(const lt_raw_line *lines, const int *idx, int n)
{
    lt_cut_node *node = calloc(1, sizeof *node);
    if (!node) return NULL;
    node->box = lines[idx[0]].box;
    for (int i = 1; i < n; i++) {
        const lt_box *b = &lines[idx[i]].box;
        if (b->left < node->box.left) node->box.left = b->left;
        if (b->top < node->box.top) node->box.top = b->top;
        if (b->right > node->box.right) node->box.right = b->right;
        if (b->bottom > node->box.bottom) node->box.bottom = b->bottom;
    }
    return node;
}

/* Builds the subtree of lines idx[0..n), n >= 1. `spans` is scratch room for n spans. */
static lt_cut_node *cut(const lt_raw_line *lines, int *idx, int n, double col_gap, double row_gap,
                        span *spans)
{
    lt_cut_node *node = node_new(lines, idx, n);
    if (!node) return NULL;
    int x_cut = 0, y_cut = 0, gx = 0, gy = 0;
    if (n > 1) {
        for (int i = 0; i < n; i++)
            spans[i] = (span){lines[idx[i]].box.left, lines[idx[i]].box.right, idx[i]};
        gx = widest_gap(spans, n, &x_cut);
        for (int i = 0; i < n; i++)
            spans[i] = (span){lines[idx[i]].box.top, lines[idx[i]].box.bottom, idx[i]};
        gy = widest_gap(spans, n, &y_cut);
    }
    double sx = gx / col_gap, sy = gy / row_gap;
    if (sx < 1 && sy < 1) {
        if (leaf_lines(node, lines, idx, n)) {
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
    for (int i = 0; i < n; i++) {
        const lt_box *b = &lines[idx[i]].box;
        if ((across ? b->left : b->top) < (across ? x_cut : y_cut)) tmp[k++] = idx[i];
    }
    int nfirst = k;
    for (int i = 0; i < n; i++) {
        const lt_box *b = &lines[idx[i]].box;
        if ((across ? b->left : b->top) >= (across ? x_cut : y_cut)) tmp[k++] = idx[i];
    }
    memcpy(idx, tmp, (size_t)n * sizeof *idx);
    free(tmp);
    node->nchildren = 2;
    node->children[0] = cut(lines, idx, nfirst, col_gap, row_gap, spans);
    node->children[1] = cut(lines, idx + nfirst, n - nfirst, col_gap, row_gap, spans);
    if (!node->children[0] || !node->children[1]) {
        lt_cut_node_free(node);
        return NULL;
    }
    return node;
}

int lt_xy_cut(const lt_raw_lines *lines, double text_height_px, const lt_params *p,
              lt_cut_node **root, lt_error *err)
{
    *root = NULL;
    if (lines->count == 0) return 0;
    const double th = text_height_px > 0 ? text_height_px : 20;
    int *idx = malloc((size_t)lines->count * sizeof *idx);
    span *spans = malloc((size_t)lines->count * sizeof *spans);
    if (!idx || !spans) {
        free(idx);
        free(spans);
        return lt_error_set(err, LT_ENOMEM, "blocks: out of memory");
    }
    for (int i = 0; i < lines->count; i++)
        idx[i] = i;
    *root =
        cut(lines->items, idx, lines->count, p->column_min_gap * th, p->block_min_gap * th, spans);
    free(idx);
    free(spans);
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

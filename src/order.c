/* order.c — the text of a page arranged: the leaves of the XY-cut tree become blocks, which
 * get their tables and roles, and are put in reading order. Page heads come first, page feet
 * last; the cells of a table are read row by row as one unit. The other units keep the cut
 * tree's order, repaired by a topological sort wherever the tree would read a unit before
 * one that overlaps it horizontally and stands above it. The full partial order of Breuel
 * (2003, "High performance document layout analysis") — that relation, plus: a unit comes
 * before a unit to its right (left, for right-to-left scripts) unless some unit between them
 * vertically overlaps both — is used to audit the order: a cycle in it, units side by side
 * that it leaves unordered, a sort by it that differs from the order given, or rows that line
 * up across a narrow gutter flag the page for review. (The column rule alone would read
 * every label of a definition list before its descriptions; the cut tree does not.) */
#include "internal.h"

#include <assert.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Above this many units the cubic precedence test is skipped and the cut tree's order kept
 * (pages of thousands of separate blocks are tables of numbers or noise). */
#define MAX_ORDERED_UNITS 400

/* Constants of the stage, in text heights (th) unless said otherwise. */
static const double OVERLAP_TOLERANCE = 0.5; /* boxes overlapping less are disjoint ... */
static const double OVERLAP_SHARE = 0.1;     /* ... or by less than this share of the narrower */
static const double NARROW_GUTTER = 2.5;     /* blocks closer side by side: a narrow gutter */
static const double SAME_TYPE_SIZE = 0.15;   /* x-heights this close (share): one type size */
static const double SHARED_BASELINE = 0.3;   /* baselines this close are shared */

/* Leaves holding lines (a leaf of pictures alone holds none). */
static void count_leaves(const lt_cut_node *n, int *count)
{
    if (n->nchildren == 0) {
        *count += n->nlines > 0;
        return;
    }
    for (int i = 0; i < n->nchildren; i++)
        count_leaves(n->children[i], count);
}

/* Copies the leaves of the tree, in tree order, into blocks[*k...]. */
static int copy_leaves(const lt_cut_node *n, const lt_raw_lines *lines, lt_raw_block *blocks,
                       int *k)
{
    if (n->nchildren == 0) {
        if (n->nlines == 0) return 0;
        lt_raw_block *b = &blocks[(*k)++];
        b->box = n->box;
        b->table = -1;
        b->role = LT_ROLE_BODY;
        b->nlines = n->nlines;
        b->lines = malloc(((size_t)n->nlines + 1) * sizeof *b->lines);
        double *xh = malloc(((size_t)n->nlines + 1) * sizeof *xh);
        if (!b->lines || !xh) {
            free(xh);
            return LT_ENOMEM;
        }
        memcpy(b->lines, n->lines, (size_t)n->nlines * sizeof *b->lines);
        for (int i = 0; i < n->nlines; i++)
            xh[i] = lines->items[n->lines[i]].xheight_px;
        b->xheight_px = lt_median(xh, n->nlines);
        free(xh);
        return 0;
    }
    for (int i = 0; i < n->nchildren; i++)
        if (copy_leaves(n->children[i], lines, blocks, k)) return LT_ENOMEM;
    return 0;
}

static int overlap(int a0, int a1, int b0, int b1)
{
    return (a1 < b1 ? a1 : b1) - (a0 > b0 ? a0 : b0);
}

/* A unit of the partial order: one block, or all blocks of one table. */
typedef struct unit {
    lt_box box;
    int *members; /* block indices in reading order */
    int nmembers;
    int tree_rank; /* smallest tree position of its blocks */
    int body;      /* holds body text (for the doubt tests) */
    int nlines;
} unit;

enum { NOT_BEFORE = 0, ABOVE = 1, EARLIER_COLUMN = 2 };

/* Whether unit a is read before unit b by the rules in the comment at the top: ABOVE (they
 * overlap horizontally and a stands higher, overlapping b vertically by less than half the
 * lower one's height: a line run on across a gutter widens its block over the top of the
 * next column, which then does not stand above it), EARLIER_COLUMN (a lies wholly on the
 * reading side of b and no unit between them vertically overlaps both), or NOT_BEFORE. Boxes
 * overlapping by less than `tol` px, or a tenth of the narrower one's width, count as
 * disjoint: ragged edges and a stray overhang (an index entry run on past the next column's
 * edge) do not tie two columns together. */
static int precedes(const unit *u, int n, int a, int b, int rtl, double tol)
{
    const lt_box *A = &u[a].box, *B = &u[b].box;
    const double narrower = fmin(A->right - A->left, B->right - B->left),
                 t = fmax(tol, OVERLAP_SHARE * narrower);
    if (overlap(A->left, A->right, B->left, B->right) > t) {
        const int ha = A->bottom - A->top, hb = B->bottom - B->top;
        if (2 * overlap(A->top, A->bottom, B->top, B->bottom) >= (ha < hb ? ha : hb))
            return NOT_BEFORE;
        return A->top + A->bottom < B->top + B->bottom ? ABOVE : NOT_BEFORE;
    }
    if (rtl ? A->left < B->right - t : A->right > B->left + t) return NOT_BEFORE;
    const int ca = A->top + A->bottom, cb = B->top + B->bottom;
    const int lo = ca < cb ? ca : cb, hi = ca < cb ? cb : ca;
    for (int c = 0; c < n; c++) {
        if (c == a || c == b) continue;
        const lt_box *C = &u[c].box;
        const int cy = C->top + C->bottom;
        if (cy <= lo || cy >= hi) continue;
        if (overlap(C->left, C->right, A->left, A->right) > tol &&
            overlap(C->left, C->right, B->left, B->right) > tol)
            return NOT_BEFORE;
    }
    return EARLIER_COLUMN;
}

static int side_by_side(const lt_box *a, const lt_box *b)
{
    int hmin = a->bottom - a->top < b->bottom - b->top ? a->bottom - a->top : b->bottom - b->top;
    return overlap(a->left, a->right, b->left, b->right) <= 0 &&
           2 * overlap(a->top, a->bottom, b->top, b->bottom) >= hmin;
}

/* Topological sort (Kahn's algorithm) of units 0..n-1 under the relations rel[a*n+b] whose
 * bit is in `kinds`, free units taken by smallest tree rank. A cycle is broken at the unit
 * with fewest remaining predecessors. Fills seq[0..n) and returns 1 when a cycle was broken,
 * 0 otherwise, LT_ENOMEM on failure. */
static int topological(const unit *u, int n, const uint8_t *rel, int kinds, int *seq)
{
    int *indeg = calloc((size_t)n + 1, sizeof *indeg);
    uint8_t *placed = calloc((size_t)n + 1, 1);
    if (!indeg || !placed) {
        free(indeg);
        free(placed);
        return LT_ENOMEM;
    }
    for (int a = 0; a < n; a++)
        for (int b = 0; b < n; b++)
            indeg[b] += (rel[(size_t)a * n + b] & kinds) != 0;
    int cycle = 0;
    for (int k = 0; k < n; k++) {
        int best = -1;
        for (int i = 0; i < n; i++)
            if (!placed[i] && indeg[i] == 0 && (best < 0 || u[i].tree_rank < u[best].tree_rank))
                best = i;
        if (best < 0) {
            cycle = 1;
            for (int i = 0; i < n; i++)
                if (!placed[i] && (best < 0 || indeg[i] < indeg[best] ||
                                   (indeg[i] == indeg[best] && u[i].tree_rank < u[best].tree_rank)))
                    best = i;
        }
        placed[best] = 1;
        seq[k] = best;
        for (int j = 0; j < n; j++)
            indeg[j] -= (rel[(size_t)best * n + j] & kinds) != 0;
    }
    free(indeg);
    free(placed);
    return cycle;
}

/* Whether two orders of the units put two paragraphs (units of body text of three lines or
 * more) in different relative order: 1 or 0, LT_ENOMEM when out of memory. */
static int disagree(const unit *u, int n, const int *x, const int *y)
{
    int *rank = malloc(((size_t)n + 1) * sizeof *rank);
    if (!rank) return LT_ENOMEM;
    for (int k = 0; k < n; k++)
        rank[y[k]] = k;
    int last = -1, out_of_order = 0;
    for (int k = 0; k < n && !out_of_order; k++) {
        if (u[x[k]].nlines < 3 || !u[x[k]].body) continue;
        out_of_order = rank[x[k]] < last;
        last = rank[x[k]];
    }
    free(rank);
    return out_of_order;
}

/* Orders the units into seq[0..n): the cut tree's order, repaired where it reads a unit
 * before one standing above it in the same column (the ABOVE relation is kept, the tree
 * decides the rest: it knows rows of a definition list from columns, which the column rule
 * alone does not). The full precedence of both rules is checked for doubts. */
static int sort_units(const unit *u, int n, int rtl, double tol, int *seq, int *doubts)
{
    if (n > MAX_ORDERED_UNITS) { /* keep the tree order */
        for (int i = 0; i < n; i++)
            seq[i] = i;
        return 0;
    }
    uint8_t *rel = calloc((size_t)n * n + 1, 1);
    int *full = malloc(((size_t)n + 1) * sizeof *full);
    if (!rel || !full) {
        free(rel);
        free(full);
        return LT_ENOMEM;
    }
    for (int a = 0; a < n; a++)
        for (int b = 0; b < n; b++)
            if (a != b) rel[(size_t)a * n + b] = (uint8_t)precedes(u, n, a, b, rtl, tol);
    int rc = topological(u, n, rel, ABOVE, seq);
    int rc_full = rc < 0 ? rc : topological(u, n, rel, ABOVE | EARLIER_COLUMN, full);
    const int disagreement = rc < 0 || rc_full < 0 ? 0 : disagree(u, n, seq, full);
    if (rc < 0 || rc_full < 0 || disagreement < 0) {
        free(rel);
        free(full);
        return LT_ENOMEM;
    }
    if (rc_full) *doubts |= LT_DOUBT_CYCLE;
    /* Disagreement about paragraphs only: short label and description rows, and margin notes,
     * are what the column rule gets wrong. */
    if (disagreement) *doubts |= LT_DOUBT_DISAGREE;
    for (int a = 0; a < n; a++)
        for (int b = a + 1; b < n; b++)
            if (u[a].body && u[b].body && !rel[(size_t)a * n + b] && !rel[(size_t)b * n + a] &&
                side_by_side(&u[a].box, &u[b].box))
                *doubts |= LT_DOUBT_UNORDERED;
    free(rel);
    free(full);
    return 0;
}

/* Rows of similar text that line up across a narrow gutter: two body blocks side by side,
 * less than 2.5 text heights apart, of the same type size, with at least three pairs of lines
 * sharing a baseline. Such a page may be one column set with tab stops, or two columns. */
static int narrow_gutter(const lt_raw_block *blocks, int n, const lt_raw_lines *lines, double th)
{
    for (int a = 0; a < n && n <= MAX_ORDERED_UNITS; a++) {
        const lt_raw_block *A = &blocks[a];
        if (A->role != LT_ROLE_BODY || A->nlines < 3 || A->table >= 0) continue;
        for (int b = 0; b < n; b++) {
            const lt_raw_block *B = &blocks[b];
            if (b == a || B->role != LT_ROLE_BODY || B->nlines < 3 || B->table >= 0) continue;
            if (B->box.left < A->box.right || B->box.left - A->box.right >= NARROW_GUTTER * th)
                continue;
            if (!side_by_side(&A->box, &B->box)) continue;
            if (fabs(A->xheight_px - B->xheight_px) > SAME_TYPE_SIZE * A->xheight_px) continue;
            int pairs = 0;
            for (int i = 0; i < A->nlines; i++)
                for (int j = 0; j < B->nlines; j++)
                    pairs += fabs(lines->items[A->lines[i]].baseline_y -
                                  lines->items[B->lines[j]].baseline_y) < SHARED_BASELINE * th;
            if (pairs >= 3) return 1;
        }
    }
    return 0;
}

/* Whether a block holds pieces of a line that was cut where it ran across a gutter: its
 * columns nearly touch, and the reading order deserves a look. */
static int bridged_block(const lt_raw_block *blocks, int n, const lt_raw_lines *lines)
{
    for (int k = 0; k < n; k++)
        for (int j = 0; j < blocks[k].nlines; j++)
            if (lines->items[blocks[k].lines[j]].bridged) return 1;
    return 0;
}

/* Blocks of a table in reading order: rows (by vertical overlap) top to bottom, cells of a
 * row along the reading side. Insertion sort: tables have few blocks. */
static void sort_table_members(const lt_raw_block *blocks, int *m, int n, int rtl)
{
    for (int i = 1; i < n; i++) {
        int v = m[i], k = i;
        while (k > 0) {
            const lt_box *a = &blocks[m[k - 1]].box, *b = &blocks[v].box;
            int ha = a->bottom - a->top, hb = b->bottom - b->top;
            int same_row = 2 * overlap(a->top, a->bottom, b->top, b->bottom) >= (ha < hb ? ha : hb);
            int after = same_row ? (rtl ? a->right < b->right : a->left > b->left)
                                 : a->top + a->bottom > b->top + b->bottom;
            if (!after) break;
            m[k] = m[k - 1];
            k--;
        }
        m[k] = v;
    }
}

/* Puts the blocks in reading order: seq[0..n) receives block indices. */
static int order_blocks(const lt_raw_block *blocks, int n, const lt_tables *tables, int page_h,
                        int rtl, double th, int *seq, int *doubts)
{
    unit *u = calloc((size_t)n + 1, sizeof *u);
    int *members = malloc(((size_t)n + 1) * sizeof *members);
    int *unit_of = malloc(((size_t)n + 1) * sizeof *unit_of); /* -1: a head or foot */
    int *unit_of_table = malloc(((size_t)tables->count + 1) * sizeof *unit_of_table);
    int rc = LT_ENOMEM;
    if (!u || !members || !unit_of || !unit_of_table) goto done;
    for (int t = 0; t < tables->count; t++)
        unit_of_table[t] = -1;
    /* Units: each block that is not a head or foot; a table's blocks share one. Members are
     * laid out unit by unit: count first, then fill. */
    int nu = 0;
    for (int i = 0; i < n; i++) {
        const lt_raw_block *b = &blocks[i];
        unit_of[i] = -1;
        if (lt_role_is_head_or_foot(b->role)) continue;
        int k = b->table >= 0 ? unit_of_table[b->table] : -1;
        if (k < 0) {
            k = nu++;
            u[k].box = b->table >= 0 ? tables->boxes[b->table] : b->box;
            u[k].tree_rank = i;
            if (b->table >= 0) unit_of_table[b->table] = k;
        }
        lt_box_grow(&u[k].box, &b->box);
        u[k].nmembers++;
        u[k].nlines += b->nlines;
        u[k].body |= b->role == LT_ROLE_BODY && b->table < 0;
        unit_of[i] = k;
    }
    int pos = 0;
    for (int k = 0; k < nu; k++) {
        u[k].members = members + pos;
        pos += u[k].nmembers;
        u[k].nmembers = 0;
    }
    for (int i = 0; i < n; i++)
        if (unit_of[i] >= 0) {
            unit *x = &u[unit_of[i]];
            x->members[x->nmembers++] = i;
        }
    for (int k = 0; k < nu; k++)
        if (u[k].nmembers > 1) sort_table_members(blocks, u[k].members, u[k].nmembers, rtl);
    int *order_of_units = malloc(((size_t)nu + 1) * sizeof *order_of_units);
    if (!order_of_units) goto done;
    if (sort_units(u, nu, rtl, OVERLAP_TOLERANCE * th, order_of_units, doubts)) {
        free(order_of_units);
        goto done;
    }
    /* Heads (upper half) along the reading side, the units, then the feet. */
    int k = 0;
    for (int pass = 0; pass < 2; pass++) {
        int first = k;
        for (int i = 0; i < n; i++) {
            const lt_raw_block *b = &blocks[i];
            if (!lt_role_is_head_or_foot(b->role) ||
                (b->box.top + b->box.bottom < page_h) != (pass == 0))
                continue;
            int j = k++;
            while (j > first) {
                const lt_box *p = &blocks[seq[j - 1]].box;
                if (rtl ? p->right >= b->box.right : p->left <= b->box.left) break;
                seq[j] = seq[j - 1];
                j--;
            }
            seq[j] = i;
        }
        if (pass == 0)
            for (int q = 0; q < nu; q++) {
                const unit *x = &u[order_of_units[q]];
                for (int m = 0; m < x->nmembers; m++)
                    seq[k++] = x->members[m];
            }
    }
    free(order_of_units);
    rc = 0;
done:
    free(u);
    free(members);
    free(unit_of);
    free(unit_of_table);
    return rc;
}

int lt_arrange(const lt_cut_node *root, const lt_raw_lines *lines, const lt_components *c,
               double th, const lt_params *p, int page_h, lt_arrangement **out, lt_error *err)
{
    *out = NULL;
    lt_arrangement *a = calloc(1, sizeof *a);
    if (!a) return lt_error_set(err, LT_ENOMEM, "order: out of memory");
    int n = 0;
    if (root) count_leaves(root, &n);
    lt_raw_block *tree_blocks = calloc((size_t)n + 1, sizeof *tree_blocks);
    int *seq = malloc(((size_t)n + 1) * sizeof *seq);
    a->blocks = calloc((size_t)n + 1, sizeof *a->blocks);
    a->order = malloc(((size_t)lines->count + 1) * sizeof *a->order);
    a->block_of = malloc(((size_t)lines->count + 1) * sizeof *a->block_of);
    int k = 0, rc = LT_ENOMEM;
    if (!tree_blocks || !seq || !a->blocks || !a->order || !a->block_of) goto fail;
    if (root && copy_leaves(root, lines, tree_blocks, &k)) goto fail;
    if (c && lt_find_tables(c, lines, th, &a->tables)) goto fail;
    for (int i = 0; i < n; i++) {
        lt_raw_block *b = &tree_blocks[i];
        const double cx = 0.5 * (b->box.left + b->box.right),
                     cy = 0.5 * (b->box.top + b->box.bottom);
        for (int t = 0; t < a->tables.count && b->table < 0; t++) {
            const lt_box *tb = &a->tables.boxes[t];
            if (cx >= tb->left && cx < tb->right && cy >= tb->top && cy < tb->bottom) b->table = t;
        }
    }
    lt_assign_roles(tree_blocks, n, lines, c, &a->tables, th, page_h, p->right_to_left);
    if (order_blocks(tree_blocks, n, &a->tables, page_h, p->right_to_left, th, seq,
                     &a->order_doubts))
        goto fail;
    if (narrow_gutter(tree_blocks, n, lines, th)) a->order_doubts |= LT_DOUBT_NARROW_GAP;
    if (bridged_block(tree_blocks, n, lines)) a->order_doubts |= LT_DOUBT_BRIDGED;
    int pos = 0;
    for (int i = 0; i < n; i++) {
        a->blocks[i] = tree_blocks[seq[i]];
        tree_blocks[seq[i]].lines = NULL; /* moved */
        for (int j = 0; j < a->blocks[i].nlines; j++) {
            a->order[pos] = a->blocks[i].lines[j];
            a->block_of[pos++] = i;
        }
    }
    a->nblocks = n;
    a->nlines = pos;
    free(tree_blocks);
    free(seq);
    assert(pos == lines->count); /* every line is in exactly one block */
    *out = a;
    return 0;
fail:
    for (int i = 0; i < k; i++)
        free(tree_blocks[i].lines);
    free(tree_blocks);
    free(seq);
    lt_arrangement_free(a);
    return lt_error_set(err, rc, "order: out of memory");
}

void lt_arrangement_free(lt_arrangement *a)
{
    if (!a) return;
    for (int i = 0; i < a->nblocks; i++)
        free(a->blocks[i].lines);
    free(a->blocks);
    free(a->order);
    free(a->block_of);
    lt_tables_free(&a->tables);
    free(a);
}

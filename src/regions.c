/* regions.c — table regions: a frame (one large, sparse component: box and grid rules drawn
 * as one piece of ink) around a grid of text, or a stack of horizontal rules of one width
 * (head, middle and foot rules of a table) enclosing rows of cells. A region is a table
 * only when the text inside it is a grid: at least two rows, and rows holding two or more
 * cells side by side, so that a framed paragraph or the text between a running-head rule
 * and a footnote rule is not taken for one. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Highest region of rules taken for one table, in text heights (a long table is split at a
 * page break anyway; taller stacks are page furniture). */
#define MAX_RULED_TABLE_HEIGHT 60.0

static int overlap(int a0, int a1, int b0, int b1)
{
    return (a1 < b1 ? a1 : b1) - (a0 > b0 ? a0 : b0);
}

/* Whether the lines whose centres lie in `r` form a grid of cells: >= 3 lines, >= 2 rows,
 * and at least a third of the rows (and at least one) with two or more cells. Rows are
 * runs of lines whose vertical extents overlap by half the smaller height. */
static int holds_grid(const lt_raw_lines *lines, const lt_box *r, int *scratch)
{
    int n = 0;
    for (int i = 0; i < lines->count; i++) {
        const lt_box *b = &lines->items[i].box;
        double cx = 0.5 * (b->left + b->right), cy = 0.5 * (b->top + b->bottom);
        if (cx > r->left && cx < r->right && cy > r->top && cy < r->bottom) scratch[n++] = i;
    }
    if (n < 3) return 0;
    /* Lines are sorted by top (lt_build_lines), so rows are runs of consecutive lines. */
    int rows = 0, multi = 0;
    for (int i = 0; i < n;) {
        const lt_box *first = &lines->items[scratch[i]].box;
        int j = i + 1;
        while (j < n) {
            const lt_box *b = &lines->items[scratch[j]].box;
            int hmin = b->bottom - b->top < first->bottom - first->top ? b->bottom - b->top
                                                                       : first->bottom - first->top;
            if (2 * overlap(first->top, first->bottom, b->top, b->bottom) < hmin) break;
            j++;
        }
        rows++;
        multi += j - i >= 2;
        i = j;
    }
    return rows >= 2 && multi >= 1 && 3 * multi >= rows;
}

static int add_table(lt_tables *t, lt_box box, int component, int *cap)
{
    if (t->count == *cap) {
        int ncap = *cap ? 2 * *cap : 8;
        lt_box *nb = realloc(t->boxes, (size_t)ncap * sizeof *nb);
        if (!nb) return LT_ENOMEM;
        t->boxes = nb;
        int *nf = realloc(t->from_component, (size_t)ncap * sizeof *nf);
        if (!nf) return LT_ENOMEM;
        t->from_component = nf;
        *cap = ncap;
    }
    t->boxes[t->count] = box;
    t->from_component[t->count++] = component;
    return 0;
}

typedef struct rule_ref {
    int top, index;
} rule_ref;

static int cmp_rule(const void *pa, const void *pb)
{
    const rule_ref *a = pa, *b = pb;
    if (a->top != b->top) return (a->top > b->top) - (a->top < b->top);
    return (a->index > b->index) - (a->index < b->index);
}

int lt_find_tables(const lt_components *c, const lt_raw_lines *lines, double th, lt_tables *out)
{
    memset(out, 0, sizeof *out);
    int cap = 0, nrules = 0;
    int *scratch = malloc(((size_t)lines->count + 1) * sizeof *scratch);
    rule_ref *rules = malloc(((size_t)c->count + 1) * sizeof *rules);
    if (!scratch || !rules) goto nomem;
    /* Frames: large components with little ink for their box. */
    for (int i = 0; i < c->count; i++) {
        const lt_component *k = &c->items[i];
        const int w = k->box.right - k->box.left, h = k->box.bottom - k->box.top;
        if (k->kind == LT_COMP_RULE && w > h) rules[nrules++] = (rule_ref){k->box.top, i};
        if (k->kind != LT_COMP_PICTURE || w < 4 * th || h < 2 * th) continue;
        if ((double)k->pixels > 0.15 * (double)w * h) continue;
        if (holds_grid(lines, &k->box, scratch) && add_table(out, k->box, i, &cap)) goto nomem;
    }
    /* Stacks of horizontal rules of one width, each within the table height of the first. */
    qsort(rules, (size_t)nrules, sizeof *rules, cmp_rule);
    uint8_t *used = calloc((size_t)nrules + 1, 1);
    if (!used) goto nomem;
    for (int a = 0; a < nrules; a++) {
        if (used[a]) continue;
        const lt_box *first = &c->items[rules[a].index].box;
        lt_box region = *first;
        int last = -1;
        for (int b = a + 1; b < nrules; b++) {
            const lt_box *r = &c->items[rules[b].index].box;
            if (r->top - first->top > MAX_RULED_TABLE_HEIGHT * th) break;
            if (fabs((double)r->left - first->left) > 1.5 * th ||
                fabs((double)r->right - first->right) > 1.5 * th)
                continue;
            last = b;
            if (r->bottom > region.bottom) region.bottom = r->bottom;
        }
        if (last < 0 || region.bottom - region.top < 2 * th) continue;
        int inside_frame = 0;
        for (int t = 0; t < out->count && !inside_frame; t++)
            inside_frame =
                overlap(out->boxes[t].top, out->boxes[t].bottom, region.top, region.bottom) > 0 &&
                overlap(out->boxes[t].left, out->boxes[t].right, region.left, region.right) > 0;
        if (inside_frame || !holds_grid(lines, &region, scratch)) continue;
        for (int b = a; b <= last; b++) {
            const lt_box *r = &c->items[rules[b].index].box;
            if (fabs((double)r->left - first->left) <= 1.5 * th &&
                fabs((double)r->right - first->right) <= 1.5 * th)
                used[b] = 1;
        }
        if (add_table(out, region, -1, &cap)) {
            free(used);
            goto nomem;
        }
    }
    free(used);
    free(scratch);
    free(rules);
    return 0;
nomem:
    free(scratch);
    free(rules);
    lt_tables_free(out);
    return LT_ENOMEM;
}

void lt_tables_free(lt_tables *t)
{
    free(t->boxes);
    free(t->from_component);
    memset(t, 0, sizeof *t);
}

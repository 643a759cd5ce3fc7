/* roles.c — roles of text blocks from geometry and type size alone (no recognition): page
 * header and footer (short blocks outside the text area, at the top or the foot of the
 * page), page number (a very short one), margin note (narrow, beside the text columns),
 * caption (short, under a picture or table, or in smaller type over one), footnote (smaller type at
 * the foot of a column or under a short rule), heading (larger type, or one short line set apart
 * above a block), list item (hanging indent or a bullet-like first mark) and body text. The
 * thresholds are common practice of book and journal typography, in text heights (x-heights). */
#include "internal.h"

#include <math.h>
#include <stdlib.h>

static int overlap(int a0, int a1, int b0, int b1)
{
    return (a1 < b1 ? a1 : b1) - (a0 > b0 ? a0 : b0);
}

static int width(const lt_box *b)
{
    return b->right - b->left;
}

/* The text area: the hull of the blocks of three lines or more (of all blocks when there
 * are none). */
static lt_box text_area(const lt_raw_block *b, int n)
{
    lt_box a = {1 << 30, 1 << 30, -1, -1};
    for (int pass = 0; pass < 2 && a.right < 0; pass++)
        for (int i = 0; i < n; i++) {
            if (pass == 0 && b[i].nlines < 3) continue;
            if (b[i].box.left < a.left) a.left = b[i].box.left;
            if (b[i].box.top < a.top) a.top = b[i].box.top;
            if (b[i].box.right > a.right) a.right = b[i].box.right;
            if (b[i].box.bottom > a.bottom) a.bottom = b[i].box.bottom;
        }
    return a;
}

/* Median x-height of the lines of blocks with three lines or more (all lines when none). */
static double body_xheight(const lt_raw_block *b, int n, const lt_raw_lines *lines, double th)
{
    double *v = malloc(((size_t)lines->count + 1) * sizeof *v);
    if (!v) return th;
    int m = 0;
    for (int pass = 0; pass < 2 && m == 0; pass++)
        for (int i = 0; i < n; i++)
            if (pass == 1 || b[i].nlines >= 3)
                for (int j = 0; j < b[i].nlines; j++)
                    v[m++] = lines->items[b[i].lines[j]].xheight_px;
    double x = m ? lt_median(v, m) : th;
    free(v);
    return x > 0 ? x : th;
}

/* Head or foot: a block of at most two lines in the outer eighth of the page, near the first
 * (last) row of text — within three text heights of the topmost top (bottommost bottom) of
 * all blocks — with no block beyond it that it overlaps horizontally, and at least two text
 * heights of white between it and the blocks under (over) it. */
static int head_or_foot(const lt_raw_block *b, int n, int i, int head, int page_h, double th)
{
    const lt_box *x = &b[i].box;
    if (b[i].nlines > 2) return 0;
    if (head ? x->bottom > page_h / 8 : x->top < page_h - page_h / 8) return 0;
    int nearest = 1 << 30, outermost = head ? 1 << 30 : -1;
    for (int j = 0; j < n; j++) {
        const lt_box *y = &b[j].box;
        if (head ? y->top < outermost : y->bottom > outermost)
            outermost = head ? y->top : y->bottom;
        if (j == i) continue;
        int beyond = head ? y->bottom <= x->top : y->top >= x->bottom;
        int ov = overlap(x->left, x->right, y->left, y->right);
        if (beyond && ov > 0) return 0;
        if (beyond) continue;
        int gap = head ? y->top - x->bottom : x->top - y->bottom;
        if (ov <= 0) continue;
        if (gap < 0) return 0;
        if (gap < nearest) nearest = gap;
    }
    if (head ? x->top > outermost + 3 * th : x->bottom < outermost - 3 * th) return 0;
    return nearest >= 2 * th;
}

/* Whether box f lies within `reach` px above (when `above`) or below block box x,
 * overlapping it horizontally by half the width of the narrower of the two. */
static int next_to(const lt_box *x, const lt_box *f, double reach, int above)
{
    int ov = overlap(x->left, x->right, f->left, f->right);
    if (2 * ov < width(x) && 2 * ov < width(f)) return 0;
    return above ? f->bottom <= x->top && x->top - f->bottom <= reach
                 : f->top >= x->bottom && f->top - x->bottom <= reach;
}

/* A picture or a table just above the block (when `above`) or just below it. */
static int next_to_figure(const lt_components *c, const lt_tables *tables, const lt_box *x,
                          double reach, int above)
{
    for (int i = 0; c && i < c->count; i++)
        if (c->items[i].kind == LT_COMP_PICTURE && next_to(x, &c->items[i].box, reach, above))
            return 1;
    for (int t = 0; tables && t < tables->count; t++)
        if (next_to(x, &tables->boxes[t], reach, above)) return 1;
    return 0;
}

/* A short horizontal rule just above the block (within 2.5 text heights), shorter than half
 * the text area and than 70 % of the block: the rule that opens the footnotes (a rule as wide
 * as the column, under a heading, is not one). */
static int under_short_rule(const lt_components *c, const lt_box *x, int area_w, double th)
{
    for (int i = 0; c && i < c->count; i++) {
        const lt_component *k = &c->items[i];
        if (k->kind != LT_COMP_RULE || width(&k->box) > area_w / 2 ||
            width(&k->box) > 0.7 * width(x))
            continue;
        if (k->box.bottom > x->top || x->top - k->box.bottom > 2.5 * th) continue;
        if (k->box.left >= x->left - th && k->box.left <= x->left + 2 * th) return 1;
    }
    return 0;
}

/* A bullet-like first mark (small, about as wide as high, set apart from the rest of a
 * long line), or a hanging indent: every line after the first starts a text height or more
 * inside its start. The start is the left end, the right end for right-to-left text. */
static int list_like(const lt_raw_block *b, const lt_raw_lines *lines, double th, int rtl)
{
    const lt_raw_line *first = &lines->items[b->lines[0]];
    const lt_box *mark = rtl ? &first->trail : &first->lead;
    const int gap = rtl ? first->trail_gap_px : first->lead_gap_px;
    const int rest = rtl ? mark->left - first->box.left : first->box.right - mark->right;
    int mw = mark->right - mark->left, mh = mark->bottom - mark->top;
    if (mw > 0 && mw <= 1.2 * th && mh <= 1.2 * th && mh >= 0.2 * th && mw <= 2 * mh &&
        mh <= 2 * mw && gap >= 0.5 * th && rest > 4 * th)
        return 1;
    if (b->nlines < 2) return 0;
    for (int j = 1; j < b->nlines; j++) {
        const lt_box *l = &lines->items[b->lines[j]].box;
        if (rtl ? l->right > first->box.right - th : l->left < first->box.left + th) return 0;
    }
    return 1;
}

void lt_assign_roles(lt_raw_block *b, int n, const lt_raw_lines *lines, const lt_components *c,
                     const lt_tables *tables, double th, int page_h, int rtl)
{
    if (n == 0) return;
    const lt_box area = text_area(b, n);
    const double body_x = body_xheight(b, n, lines, th);
    const int area_w = width(&area);
    /* Heads and feet first: the tests below look past them. */
    for (int i = 0; i < n; i++) {
        lt_raw_block *x = &b[i];
        const lt_box *bx = &x->box;
        x->role = LT_ROLE_BODY;
        if (x->table >= 0) continue; /* cells are body text of their table */
        if (head_or_foot(b, n, i, 1, page_h, th) || head_or_foot(b, n, i, 0, page_h, th)) {
            int head = bx->bottom <= page_h / 8;
            /* Two lines at the top, one across more than half the text area: a paragraph
             * (running heads of two lines, a title over the authors, are short). */
            if (head && x->nlines == 2 &&
                2 * fmax(width(&lines->items[x->lines[0]].box),
                         width(&lines->items[x->lines[1]].box)) >
                    area_w)
                continue;
            int folio =
                x->nlines == 1 && width(bx) <= 5 * th && lines->items[x->lines[0]].ncomponents <= 6;
            x->role = folio  ? LT_ROLE_PAGE_NUMBER
                      : head ? LT_ROLE_PAGE_HEADER
                             : LT_ROLE_PAGE_FOOTER;
        }
    }
    for (int i = 0; i < n; i++) {
        lt_raw_block *x = &b[i];
        const lt_box *bx = &x->box;
        if (x->table >= 0 || x->role != LT_ROLE_BODY) continue;
        /* Outside the columns of the text area, and narrow. */
        int outside = 1;
        for (int j = 0; j < n && outside; j++)
            if (j != i && b[j].nlines >= 3 && width(&b[j].box) > width(bx) &&
                overlap(bx->left, bx->right, b[j].box.left, b[j].box.right) > 0)
                outside = 0;
        if (outside && width(bx) < area_w / 4 && x->nlines <= 12 &&
            (bx->right <= area.left + area_w / 6 || bx->left >= area.right - area_w / 6)) {
            int others_beside = 0;
            for (int j = 0; j < n; j++)
                if (j != i && b[j].nlines >= 3 &&
                    overlap(bx->top, bx->bottom, b[j].box.top, b[j].box.bottom) > 0)
                    others_beside = 1;
            if (others_beside) {
                x->role = LT_ROLE_MARGIN_NOTE;
                continue;
            }
        }
        /* Captions: a short block under a figure, or one in smaller type over it. */
        if (x->nlines <= 6 &&
            (next_to_figure(c, tables, bx, 3 * th, 1) ||
             (x->xheight_px <= 0.92 * body_x && next_to_figure(c, tables, bx, 3 * th, 0)))) {
            x->role = LT_ROLE_CAPTION;
            continue;
        }
        if (x->xheight_px >= 1.2 * body_x && x->nlines <= 3) {
            x->role = LT_ROLE_HEADING;
            continue;
        }
        int low = bx->top >= page_h / 2;
        if (low && x->xheight_px <= 0.88 * body_x && x->nlines <= 12) {
            int body_below = 0; /* text of body size below it in its column: not a foot */
            for (int j = 0; j < n; j++)
                if (j != i && b[j].box.top >= bx->bottom && !lt_role_is_head_or_foot(b[j].role) &&
                    b[j].xheight_px > 0.92 * body_x &&
                    overlap(bx->left, bx->right, b[j].box.left, b[j].box.right) > 0)
                    body_below = 1;
            if (!body_below) {
                x->role = LT_ROLE_FOOTNOTE;
                continue;
            }
        }
        if (low && under_short_rule(c, bx, area_w, th)) {
            x->role = LT_ROLE_FOOTNOTE;
            continue;
        }
        if (list_like(x, lines, th, rtl)) {
            x->role = LT_ROLE_LIST_ITEM;
            continue;
        }
        /* One short line set apart above a wider block it is aligned with. */
        if (x->nlines == 1) {
            for (int j = 0; j < n; j++) {
                const lt_box *y = &b[j].box;
                if (j == i || b[j].nlines < 2) continue;
                int gap_below = y->top - bx->bottom;
                if (gap_below < 0 || gap_below > 3 * th) continue;
                if (abs(y->left - bx->left) > th || width(bx) > 0.75 * width(y)) continue;
                int gap_above = 1 << 30;
                for (int k = 0; k < n; k++) {
                    const lt_box *z = &b[k].box;
                    if (k != i && z->bottom <= bx->top &&
                        overlap(z->left, z->right, bx->left, bx->right) > 0 &&
                        bx->top - z->bottom < gap_above)
                        gap_above = bx->top - z->bottom;
                }
                if (gap_above > gap_below) x->role = LT_ROLE_HEADING;
                break;
            }
        }
    }
}

/* textpage.h — pages of text drawn in memory for the stage tests, with their true lines known
 * by construction: glyph-like boxes (x-height letters, ascenders, descenders, i-dots, commas
 * and periods) in words and lines of book type (word gaps of 0.6 and a line pitch of 2.4 text
 * heights: word space about a third of an em, leading 120% of the body, common practice from
 * memory); the line stages run on them (components, text height, classes, separators, lines)
 * and an exact comparison of the built lines with the drawn ones.
 * Header only, after testutil.h; every function is static inline. */
#ifndef LINEATE_TEXTPAGE_H
#define LINEATE_TEXTPAGE_H

#include "testutil.h"

/* Type metrics of the drawn "font", in pixels (a 300 dpi page of roughly 11 pt type). */
#define XH 20  /* x-height: the text height lineate should measure */
#define ASC 29 /* ascender letters reach this far above the baseline */
#define DESC 8 /* descenders reach this far below it */
#define LETTER_GAP 3
#define WORD_GAP 12 /* 0.6 text heights */
#define PITCH 48    /* baseline to baseline: 2.4 text heights */

#define MAX_LINES 256
#define MAX_MARKS 4096

typedef struct page {
    lt_image *img; /* ink image (1 = ink) */
    int nlines;
    lt_box line_box[MAX_LINES];
    int baseline[MAX_LINES];
    int ncomp[MAX_LINES]; /* components drawn for the line */
    int nmarks;
    lt_box mark_box[MAX_MARKS];
    int mark_line[MAX_MARKS];
} page;

static inline page *page_new(int w, int h)
{
    page *p = calloc(1, sizeof *p);
    if (!p) tu_die("out of memory");
    p->img = tu_image(w, h, LT_IMAGE_INK, 0);
    return p;
}

static inline void page_free(page *p)
{
    if (!p) return;
    lt_image_free(p->img);
    free(p);
}

typedef struct glyph {
    lt_box box; /* x relative to the word start, y absolute */
    int mark;   /* dot, comma, period */
} glyph;

typedef struct word {
    glyph g[24];
    int n, width;
} word;

static inline void add_glyph(word *w, int left, int top, int right, int bottom, int mark)
{
    w->g[w->n].box = tu_box(left, top, right, bottom);
    w->g[w->n].mark = mark;
    w->n++;
    if (right > w->width) w->width = right;
}

/* A random word of 1..7 letters standing on `baseline`, maybe followed by a comma. */
static inline void make_word(tu_rng *r, int baseline, int comma, word *w)
{
    memset(w, 0, sizeof *w);
    int letters = tu_range(r, 1, 7), x = 0;
    for (int i = 0; i < letters; i++) {
        int kind = tu_range(r, 0, 99), lw;
        if (kind < 60) { /* x-height letter */
            lw = tu_range(r, 9, 13);
            add_glyph(w, x, baseline - XH, x + lw, baseline, 0);
        } else if (kind < 80) { /* ascender */
            lw = tu_range(r, 5, 12);
            add_glyph(w, x, baseline - ASC, x + lw, baseline, 0);
        } else if (kind < 92) { /* descender */
            lw = tu_range(r, 9, 12);
            add_glyph(w, x, baseline - XH, x + lw, baseline + DESC, 0);
        } else { /* i: a stem and a dot 4 px above it */
            lw = 4;
            add_glyph(w, x, baseline - XH, x + 4, baseline, 0);
            add_glyph(w, x, baseline - XH - 8, x + 4, baseline - XH - 4, 1);
        }
        x += lw + LETTER_GAP;
    }
    if (comma) add_glyph(w, w->width + 2, baseline - 4, w->width + 6, baseline + 5, 1);
}

/* Draws one line of words from x0 on `baseline`, filling at most to x1 (justified towards x1
 * when `justify`), ending with a period when `period`. Returns the line. */
static inline int draw_line(page *p, tu_rng *r, int x0, int x1, int baseline, int justify,
                            int period)
{
    word words[64];
    int n = 0, width = 0;
    for (;;) {
        word w;
        make_word(r, baseline, tu_range(r, 0, 3) == 0, &w);
        int need = (n ? width + WORD_GAP : 0) + w.width + (period ? 8 : 0);
        if (n > 0 && (x0 + need > x1 || n == 64)) break;
        if (x0 + need > x1) continue; /* first word too long for the measure: draw another */
        width = (n ? width + WORD_GAP : 0) + w.width;
        words[n++] = w;
    }
    if (period) { /* the period replaces a final comma */
        word *last = &words[n - 1];
        if (last->g[last->n - 1].mark && last->g[last->n - 1].box.bottom > baseline) {
            last->n--;
            last->width = 0;
            for (int i = 0; i < last->n; i++)
                if (last->g[i].box.right > last->width) last->width = last->g[i].box.right;
        }
        add_glyph(last, last->width + 2, baseline - 5, last->width + 7, baseline, 1);
    }
    int total = 0;
    for (int i = 0; i < n; i++)
        total += words[i].width;
    /* Justified: the extra space goes into the word gaps, at most 6 px more per gap (a
     * typesetter would hyphenate rather than open wider gaps), so a line may end short. */
    int slack = justify && n > 1 ? x1 - x0 - total - (n - 1) * WORD_GAP : 0;
    if (slack > 6 * (n - 1)) slack = 6 * (n - 1);
    const int l = p->nlines++;
    if (l >= MAX_LINES) tu_die("too many lines");
    p->line_box[l] = tu_box(0, 0, 0, 0);
    p->baseline[l] = baseline;
    p->ncomp[l] = 0;
    int x = x0;
    for (int i = 0; i < n; i++) {
        for (int k = 0; k < words[i].n; k++) {
            lt_box b = words[i].g[k].box;
            b.left += x;
            b.right += x;
            tu_fill_box(p->img, b, 1);
            tu_box_union(&p->line_box[l], b);
            p->ncomp[l]++;
            if (words[i].g[k].mark) {
                if (p->nmarks >= MAX_MARKS) tu_die("too many marks");
                p->mark_box[p->nmarks] = b;
                p->mark_line[p->nmarks++] = l;
            }
        }
        /* Extra space of a justified line, shared out over the gaps. */
        x += words[i].width + WORD_GAP + (n > 1 ? slack / (n - 1) + (i < slack % (n - 1)) : 0);
    }
    return l;
}

/* The page as a gray image: black ink on white paper. */
static inline lt_image *page_gray(const page *p)
{
    const int w = p->img->width, h = p->img->height;
    lt_image *gray = tu_image(w, h, LT_IMAGE_GRAY, 255);
    for (size_t i = 0; i < (size_t)w * h; i++)
        if (p->img->pixels[i]) gray->pixels[i] = 0;
    return gray;
}
/* A paragraph of `lines` lines at x0..x1 from the baseline `first`, justified but the last. */
static inline int draw_paragraph(page *p, tu_rng *r, int x0, int x1, int first, int lines)
{
    for (int i = 0; i < lines; i++)
        draw_line(p, r, x0, x1, first + i * PITCH, i < lines - 1, i == lines - 1);
    return first + lines * PITCH;
}

typedef struct result {
    lt_components *comps;
    lt_separators *seps;
    lt_raw_lines *lines;
    double th;
} result;

/* The line stages of lineate on the page, with lt_params_default; the separators are kept
 * for the checks. */
static inline result run_stages(const page *p, const char *what)
{
    result res = {0};
    lt_params prm;
    lt_params_default(&prm);
    lt_error err = {0};
    if (lt_find_components(p->img, prm.max_components, &res.comps, &err)) {
        tu_fail("%s: components: %s", what, err.message);
        return res;
    }
    res.th = lt_text_height(res.comps, 300);
    lt_classify_components(res.comps, res.th, &prm);
    if (lt_find_separators(res.comps, res.th, &res.seps, &err) ||
        lt_build_lines(res.comps, res.th, res.seps, &prm, &res.lines, &err))
        tu_fail("%s: lines: %s", what, err.message);
    return res;
}

static inline void result_free(result *r)
{
    lt_components_free(r->comps);
    lt_separators_free(r->seps);
    lt_raw_lines_free(r->lines);
}

typedef struct keyed_box {
    lt_box box;
    int index;
} keyed_box;

static inline int cmp_keyed_box(const void *a, const void *b)
{
    return tu_cmp_box(&((const keyed_box *)a)->box, &((const keyed_box *)b)->box);
}

/* Exact comparison of the built lines with the drawn ones: count, boxes, component counts,
 * baselines, x-heights; every mark inside its own line's box. */
static inline void compare_lines(const page *p, const result *r, const char *what)
{
    CHECK_NEAR(r->th, XH, 0.5, "%s: text height", what);
    if (!r->lines) return;
    const lt_raw_lines *got = r->lines;
    CHECK_INT(got->count, p->nlines, "%s: number of lines", what);
    keyed_box *want = malloc(((size_t)p->nlines + 1) * sizeof *want);
    keyed_box *have = malloc(((size_t)got->count + 1) * sizeof *have);
    if (!want || !have) tu_die("out of memory");
    for (int i = 0; i < p->nlines; i++)
        want[i] = (keyed_box){p->line_box[i], i};
    for (int i = 0; i < got->count; i++)
        have[i] = (keyed_box){got->items[i].box, i};
    qsort(want, (size_t)p->nlines, sizeof *want, cmp_keyed_box);
    qsort(have, (size_t)got->count, sizeof *have, cmp_keyed_box);
    int n = p->nlines < got->count ? p->nlines : got->count, shown = 0;
    for (int i = 0; i < n; i++) {
        const lt_raw_line *g = &got->items[have[i].index];
        const int l = want[i].index;
        if (tu_cmp_box(&have[i].box, &want[i].box) != 0) {
            if (shown++ < 6) CHECK_BOX(have[i].box, want[i].box, "%s: line %d (sorted)", what, i);
            continue;
        }
        CHECK_INT(g->ncomponents, p->ncomp[l], "%s: components of line %d", what, i);
        CHECK_NEAR(g->baseline_y, p->baseline[l], 1e-9, "%s: baseline of line %d", what, i);
        CHECK_NEAR(g->xheight_px, XH, 1e-9, "%s: x-height of line %d", what, i);
    }
    if (shown > 6) tu_fail("%s: %d line boxes differ in all", what, shown);
    /* Every mark lies inside exactly one line's box, and that is the line it belongs to. */
    int lost = 0;
    for (int m = 0; m < p->nmarks; m++) {
        int inside = 0, own = 0;
        for (int i = 0; i < got->count; i++)
            if (tu_box_inside(p->mark_box[m], got->items[i].box)) {
                inside++;
                own += tu_cmp_box(&got->items[i].box, &p->line_box[p->mark_line[m]]) == 0;
            }
        if (inside != 1 || own != 1) {
            if (lost++ < 3)
                tu_fail("%s: mark [%d %d %d %d) inside %d line boxes (own line: %d)", what,
                        p->mark_box[m].left, p->mark_box[m].top, p->mark_box[m].right,
                        p->mark_box[m].bottom, inside, own);
        }
    }
    CHECK_INT(lost, 0, "%s: marks (of %d) not inside exactly their own line", what, p->nmarks);
    free(want);
    free(have);
}

/* Lines of res that reach from left of x1 to right of x2. */
static inline int lines_across(const result *res, int x1, int x2)
{
    int n = 0;
    for (int i = 0; res->lines && i < res->lines->count; i++)
        n += res->lines->items[i].box.left < x1 && res->lines->items[i].box.right > x2;
    return n;
}

/* Draws one glyph of line l (a mark when `mark`) and grows the line's box. */
static inline void draw_glyph(page *p, int l, lt_box b, int mark)
{
    tu_fill_box(p->img, b, 1);
    tu_box_union(&p->line_box[l], b);
    p->ncomp[l]++;
    if (mark) {
        if (p->nmarks >= MAX_MARKS) tu_die("too many marks");
        p->mark_box[p->nmarks] = b;
        p->mark_line[p->nmarks++] = l;
    }
}

#endif

/* classify.c — measures the page's text height (the mode of character heights, O'Gorman's
 * docstrum uses the same statistic for its size classes; only characters in a row with
 * another of their size count) and sorts every component into
 * text, speckle, rule or picture by its size in units of that height (a long hairline that is
 * not straight enough for a rule is speckle). */
#include "internal.h"

#include <assert.h>
#include <math.h>
#include <stdlib.h>

/* A character stands in a row with another of about its height: one of height within
 * ROW_MATE_HEIGHT of its own (relative to the taller), overlapping it vertically by half the
 * shorter, at most ROW_MATE_GAP of its height away beside it. Specks of paper texture or noise
 * mostly stand alone, letters of a word or a line do not. */
static const double ROW_MATE_HEIGHT = 0.3;
static const double ROW_MATE_GAP = 1.5;

/* A stroke longer than STROKE_MIN_LENGTH text heights whose ink, spread along its length, is
 * thinner than STROKE_MAX_THICKNESS text heights (a hairline: the stems of body text are about
 * twice as thick, and a long arrow's head adds to its shaft) is no text, whether it belongs to a
 * figure or to the edge of a leaf in a scan: not straight enough for a rule, it is noise. */
static const double STROKE_MIN_LENGTH = 3.0;
static const double STROKE_MAX_THICKNESS = 0.1;

/* A component wider than lt_params.picture_min_height and taller than LETTERS_MIN_HEIGHT text
 * heights is a picture, unless it stands in a row with a character of its own size (a row
 * mate, see ROW_MATE_HEIGHT, itself no wider nor taller than a picture): letters of large
 * type run together, as blur or a coarse JPEG joins them, beside the other letters of their
 * heading or caption. */
static const double LETTERS_MIN_HEIGHT = 2.0;

/* A vertical rule that noise or a threshold broke into pieces: text-sized components no wider
 * than RULE_PIECE_WIDTH text heights (a stroke one or two pixels wide at 300 dpi; a bracket
 * with its serifs is twice as wide) and at least twice as tall as wide, each under the one
 * before within RULE_PIECE_GAP text heights and sharing columns with it, form a rule when
 * the chain is as long and as thin as a whole one would be (lt_classify_components). The
 * brackets of consecutive lines of tightly set type stand as close one under the other: their
 * width, not the gap, keeps them letters. */
static const double RULE_PIECE_WIDTH = 0.15;
static const double RULE_PIECE_GAP = 0.25;

/* A horizontal hairline (an underline, a table's rule) that blur and noise broke into dashes:
 * text pieces no taller than RULE_PIECE_WIDTH text heights and at least twice as wide as tall,
 * each beside the one before within ROW_RULE_PIECE_GAP text heights and sharing rows with
 * it, form a rule when the chain is as thin as a whole rule and ROW_RULE_MIN_LENGTH text
 * heights long, twice a whole one's least length: along a row, flat marks stand a letter space
 * apart in text too (a double minus, dashes), and a leaf's edge in a scan breaks into such
 * chains 3 to 6 text heights long. A hairline of 1.7 px blurred (a Gaussian of 1.2 px), with
 * noise of 5.5 gray levels, breaks into dashes 5 to 25 px long and 5 to 20 px apart (up to a
 * text height); left in pieces it parts nothing, and the words it lies between are joined
 * across it. */
static const double ROW_RULE_PIECE_GAP = 1.0;
static const double ROW_RULE_MIN_LENGTH = 6.0;

/* On a deskewed page the text height is measured by the characters' core heights (see
 * lt_component), which the teeth of the page's turned edges move less than the boxes; a
 * core is shorter than its box by the ink it leaves out, and CORE_TO_BOX turns the mode of
 * the cores into the box height that the page, level, would give: the median ratio of the two
 * modes over 108 level born-digital pages (on 80 % of them within 2.2 % below it and 1.6 %
 * above). */
static const double CORE_TO_BOX = 1.092;

/* Row mates examined per character at most (bounds the work on pages of noise). */
static const int MAX_MATE_TESTS = 256;

typedef struct sized {
    int index, band, left;
} sized;

static int cmp_sized(const void *a, const void *b)
{
    const sized *x = a, *y = b;
    if (x->band != y->band) return (x->band > y->band) - (x->band < y->band);
    return (x->left > y->left) - (x->left < y->left);
}

/* Whether boxes a and b are row mates (see ROW_MATE_HEIGHT). */
static int row_mates(const lt_box *a, const lt_box *b)
{
    const int ha = lt_box_height(a), hb = lt_box_height(b);
    const int hmax = ha > hb ? ha : hb, hmin = ha + hb - hmax;
    const int top = a->top > b->top ? a->top : b->top;
    const int bottom = a->bottom < b->bottom ? a->bottom : b->bottom;
    const int gap = b->left > a->right ? b->left - a->right : a->left - b->right;
    return hmax - hmin <= ROW_MATE_HEIGHT * hmax && 2 * (bottom - top) >= hmin &&
           gap <= ROW_MATE_GAP * hmin;
}

/* Marks character s[k] and the characters s[j] of its band's run from `from` on (while they
 * start by `right`) that are its row mates, counting the tests in *tests. */
static void mark_mates(const lt_components *c, const sized *s, int n, int k, int from, int right,
                       int *tests, uint8_t *mate)
{
    const lt_box *a = &c->items[s[k].index].box;
    for (int j = from; j < n && s[j].band == s[from].band && s[j].left <= right &&
                       *tests < MAX_MATE_TESTS;
         j++, ++*tests)
        if (row_mates(a, &c->items[s[j].index].box)) mate[k] = mate[j] = 1;
}

/* Marks in mate[] the characters of s[0..n) (sorted by band of `band_px` rows by their
 * middle, then by left edge) that have a row mate: in their band, or in the next (a mate
 * overlaps by half the shorter height, so its middle is at most a band away). */
static void find_mates(const lt_components *c, const sized *s, int n, int band_px,
                       uint8_t *mate)
{
    int next = 0; /* first character of the band after the current one */
    for (int k = 0; k < n; k++) {
        const lt_box *a = &c->items[s[k].index].box;
        const double reach = ROW_MATE_GAP * lt_box_height(a);
        const int right = (int)floor(a->right + reach);
        int tests = 0;
        if (k + 1 < n && s[k + 1].band == s[k].band)
            mark_mates(c, s, n, k, k + 1, right, &tests, mate);
        if (next <= k) next = k + 1;
        while (next < n && s[next].band == s[k].band)
            next++;
        if (next >= n || s[next].band != s[k].band + 1) continue;
        /* the next band: from the first that may reach back to a (starts no more than a
         * band's height plus the reach before it) */
        int lo = next, hi = n;
        while (lo < hi) {
            const int mid = lo + (hi - lo) / 2;
            if (s[mid].band > s[next].band || s[mid].left >= a->left - band_px - reach)
                hi = mid;
            else
                lo = mid + 1;
        }
        if (lo < n && s[lo].band == s[next].band) mark_mates(c, s, n, k, lo, right, &tests, mate);
    }
}

/* The mode of a weighted histogram smoothed over three bins, refined: of the three
 * neighbouring bins of weight[lo - 1 .. hi + 1] that hold the most weight together, the
 * weighted mean of their values (bin h standing for h + offset); 0 when the bins are empty. */
static double smoothed_mode(const double *weight, int lo, int hi, double offset)
{
    int best = lo;
    double best_sum = -1;
    for (int h = lo; h <= hi; h++) {
        const double sum = weight[h - 1] + weight[h] + weight[h + 1];
        if (sum > best_sum) {
            best_sum = sum;
            best = h;
        }
    }
    if (!(best_sum > 0)) return 0;
    const double value_sum =
        (best - 1) * weight[best - 1] + best * weight[best] + (best + 1) * weight[best + 1];
    return value_sum / best_sum + offset;
}

/* The text height of lt_text_height, or on a deskewed page (`deskewed`) CORE_TO_BOX times
 * the mode of the core heights of the same characters, in bins of a pixel (a bin standing
 * for its middle). */
static double text_height(const lt_components *c, double dpi, int deskewed)
{
    if (!c || c->count == 0) return 0;
    if (!lt_dpi_plausible(dpi)) dpi = 300; /* keeps the sizes below in range */
    /* Plausible characters: from 1/50 inch (the x-height of 5 pt type) up to a third of an
     * inch tall, not long and thin, standing in a row with another (specks of texture and
     * noise mostly stand alone). Each counts with its width, so that the mass of text, not
     * the many dots and specks, decides. */
    const int min_h = dpi / 50 > 3 ? (int)(dpi / 50) : 3;
    const int max_h = (int)(dpi / 3) > min_h + 1 ? (int)(dpi / 3) : min_h + 1;
    double *hist = calloc((size_t)max_h + 2, sizeof *hist);
    sized *s = malloc(((size_t)c->count + 1) * sizeof *s);
    uint8_t *mate = calloc((size_t)c->count + 1, 1);
    if (!hist || !s || !mate) {
        free(hist);
        free(s);
        free(mate);
        return -1;
    }
    int n = 0;
    for (int i = 0; i < c->count; i++) {
        const lt_box *b = &c->items[i].box;
        int w = b->right - b->left, h = b->bottom - b->top;
        if (h < min_h || h > max_h || w > 3 * h || w * 8 < h) continue;
        s[n++] = (sized){i, (b->top + b->bottom) / 2 / max_h, b->left};
    }
    qsort(s, (size_t)n, sizeof *s, cmp_sized);
    find_mates(c, s, n, max_h, mate);
    for (int k = 0; k < n; k++) {
        if (!mate[k]) continue;
        const lt_component *q = &c->items[s[k].index];
        /* a core is never taller than its box: its bin lies within the histogram */
        const int bin = deskewed ? (int)q->core_height : lt_box_height(&q->box);
        assert(bin >= 0 && bin <= max_h);
        hist[bin] += lt_box_width(&q->box);
    }
    const double mode = deskewed ? CORE_TO_BOX * smoothed_mode(hist, 1, max_h, 0.5)
                                 : smoothed_mode(hist, min_h, max_h, 0);
    free(hist);
    free(s);
    free(mate);
    return mode;
}

double lt_text_height(const lt_components *c, double dpi)
{
    return text_height(c, dpi, 0);
}

double lt_text_height_deskewed(const lt_components *c, double dpi)
{
    return text_height(c, dpi, 1);
}

/* Whether component i of c, of height h, has a row mate (see row_mates) that is a character by
 * its size alone: no wider and no taller than `picture`. `by_top` lists the n components
 * sorted by their top: a mate's top lies within half the shorter height, at most h / 2, of
 * i's. */
static int has_letter_mate(const lt_components *c, const lt_keyed *by_top, int n, int i,
                           double picture)
{
    const lt_box *a = &c->items[i].box;
    const int h = lt_box_height(a);
    for (int k = lt_keyed_first_from(by_top, n, a->top - h / 2), tests = 0;
         k < n && by_top[k].key <= a->top + h / 2 && tests < MAX_MATE_TESTS; k++) {
        const lt_box *b = &c->items[by_top[k].index].box;
        if (by_top[k].index == i || lt_box_width(b) > picture || lt_box_height(b) > picture ||
            lt_box_height(b) < (1 - ROW_MATE_HEIGHT) * h)
            continue;
        tests++;
        if (row_mates(a, b)) return 1;
    }
    return 0;
}

/* Box b in the frame of a rule's length: as it is for a vertical rule, its axes exchanged for a
 * horizontal one (left and right become top and bottom). */
static lt_box along_rule(const lt_box *b, int horizontal)
{
    return horizontal ? (lt_box){b->top, b->left, b->bottom, b->right} : *b;
}

/* Whether component k may be a piece of a broken rule (see RULE_PIECE_WIDTH), vertical or
 * `horizontal`. */
static int rule_piece(const lt_component *k, double max_width, int horizontal)
{
    const lt_box b = along_rule(&k->box, horizontal);
    const int w = lt_box_width(&b), h = lt_box_height(&b);
    return k->kind == LT_COMP_TEXT && w <= max_width && h >= 2 * w;
}

/* Makes rules of the chains of thin text pieces of c, vertical (see RULE_PIECE_WIDTH) or
 * `horizontal` (see ROW_RULE_PIECE_GAP), that are together at least `min_length` px long
 * and `min_aspect` times as long as thick. `by_start` lists the components sorted by their
 * top (by their left when horizontal). Leaves c as it is when out of memory. */
static void join_rule_pieces(lt_components *c, const lt_keyed *by_start, double th,
                             double min_length, double min_aspect, int horizontal)
{
    const int n = c->count;
    int *parent = malloc(((size_t)n + 1) * sizeof *parent);
    lt_box *chain = malloc(((size_t)n + 1) * sizeof *chain);
    uint8_t *linked = calloc((size_t)n + 1, 1); /* a piece with another after or before it */
    if (!parent || !chain || !linked) {
        free(parent);
        free(chain);
        free(linked);
        return;
    }
    const double max_width = RULE_PIECE_WIDTH * th;
    const double max_gap = (horizontal ? ROW_RULE_PIECE_GAP : RULE_PIECE_GAP) * th;
    int npieces = 0;
    for (int i = 0; i < n; i++) {
        parent[i] = i;
        npieces += rule_piece(&c->items[i], max_width, horizontal);
    }
    /* each piece to the pieces after it along the rule, within the gap */
    for (int i = 0; npieces > 1 && i < n; i++) {
        const lt_box a = along_rule(&c->items[i].box, horizontal);
        if (!rule_piece(&c->items[i], max_width, horizontal)) continue;
        for (int j = lt_keyed_first_from(by_start, n, a.bottom);
             j < n && by_start[j].key <= a.bottom + max_gap; j++) {
            const int m = by_start[j].index;
            const lt_box b = along_rule(&c->items[m].box, horizontal);
            if (!rule_piece(&c->items[m], max_width, horizontal) || b.left >= a.right ||
                b.right <= a.left)
                continue;
            lt_uf_unite(parent, i, m);
            linked[i] = linked[m] = 1;
        }
    }
    for (int i = 0; i < n; i++)
        if (lt_uf_find(parent, i) == i) chain[i] = along_rule(&c->items[i].box, horizontal);
    for (int i = 0; i < n; i++) {
        const lt_box b = along_rule(&c->items[i].box, horizontal);
        lt_box_grow(&chain[lt_uf_find(parent, i)], &b);
    }
    for (int i = 0; i < n; i++) {
        const lt_box *h = &chain[lt_uf_find(parent, i)];
        if (linked[i] && lt_box_height(h) >= min_length &&
            lt_box_height(h) >= min_aspect * lt_box_width(h))
            c->items[i].kind = LT_COMP_RULE;
    }
    free(parent);
    free(chain);
    free(linked);
}

void lt_classify_components(lt_components *c, double text_height_px, const lt_params *p)
{
    if (!c) return;
    const double th = text_height_px > 0 ? text_height_px : 20;
    const double speckle = fmax(1.0, p->speckle_max * th);
    const double long_rule = 3 * th, picture = p->picture_min_height * th;
    lt_keyed *by_top = malloc(((size_t)c->count + 1) * sizeof *by_top);
    if (by_top) {
        for (int i = 0; i < c->count; i++)
            by_top[i] = (lt_keyed){c->items[i].box.top, i};
        qsort(by_top, (size_t)c->count, sizeof *by_top, lt_cmp_keyed);
    }
    for (int i = 0; i < c->count; i++) {
        lt_component *k = &c->items[i];
        const double w = k->box.right - k->box.left, h = k->box.bottom - k->box.top;
        if (w <= speckle && h <= speckle)
            k->kind = LT_COMP_SPECKLE;
        else if ((w >= long_rule && w >= p->rule_min_aspect * h) ||
                 (h >= long_rule && h >= p->rule_min_aspect * w))
            k->kind = LT_COMP_RULE;
        else if (h > picture || (w > picture && h > LETTERS_MIN_HEIGHT * th &&
                                 !(by_top && has_letter_mate(c, by_top, c->count, i, picture))))
            k->kind = LT_COMP_PICTURE;
        else if (fmax(w, h) >= STROKE_MIN_LENGTH * th &&
                 k->pixels < STROKE_MAX_THICKNESS * th * fmax(w, h))
            k->kind = LT_COMP_SPECKLE;
        else
            k->kind = LT_COMP_TEXT;
    }
    if (by_top) {
        join_rule_pieces(c, by_top, th, long_rule, p->rule_min_aspect, 0);
        lt_keyed *by_left = by_top; /* the same list, sorted again */
        for (int i = 0; i < c->count; i++)
            by_left[i] = (lt_keyed){c->items[i].box.left, i};
        qsort(by_left, (size_t)c->count, sizeof *by_left, lt_cmp_keyed);
        join_rule_pieces(c, by_left, th, ROW_RULE_MIN_LENGTH * th, p->rule_min_aspect, 1);
    }
    free(by_top);
}

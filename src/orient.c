/* orient.c — which quarter turn makes a page upright, from the components and lines the
 * pipeline finds on the page as given. Two questions, each with its own evidence:
 *  - Do the text lines run across or down the page? The docstrum's nearest-neighbour angles
 *    (O'Gorman 1993, "The document spectrum for page layout analysis", IEEE PAMI 15(11)):
 *    letters of a line stand closer to each other than to the lines above and below, so the
 *    directions to a letter's nearest neighbours lie mostly along the lines. O'Gorman takes
 *    k = 5 neighbours for the whole spectrum; for the direction alone the two nearest, a
 *    letter's neighbours on either side, are least disturbed by tightly set lines (measured
 *    on the development pages).
 *  - Which side is up? Two kinds of evidence, each counted as a binomial z score and added,
 *    with no estimate when their sum is weak or one of them points the other way:
 *    ascenders against descenders, the asymmetry of Latin script that Bloomberg, Kopec &
 *    Dasari (1995, "Measuring document image skew and orientation", SPIE 2422) count with
 *    morphological hit-miss transforms (cited from memory): more letters rise above the
 *    x-height band (b d f h k l t, capitals, figures) than fall below the baseline (g j p q
 *    y). Here each line's band is that of its plain x-height letters, the shortest letters
 *    whichever way the page stands; a page upside down shows its ascenders below. And the
 *    edges of the text: lines of left-to-right text start at the block's left edge and end
 *    where their words end, so left ends line up with those of the lines around them more
 *    often than right ends (ragged right; in justified text the short last lines of
 *    paragraphs); upside down, the ragged edge is on the left. This does not depend on the
 *    script's letter shapes. And the marks at the ends of lines: sentences end with a period
 *    and clauses with a comma, low in the line's band, and many lines end with one, while
 *    hardly any line begins with a mark at the top of its band; upside down, the periods
 *    stand high at the lines' left ends. And the marks over letters: the dots of i and j,
 *    accents and the tildes of abbreviations stand above the band over a letter, few marks
 *    (a cedilla) below it. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>

/* The constants of the stage. Sizes of the direction test are in letter sizes (the longer
 * side of the letters that hold most of the ink, letter_size_px), those of the up/down test in
 * a line's x-height. */
enum {
    NEIGHBOURS = 2,                 /* nearest neighbours a letter's directions are taken to */
    AXIS_MIN_LETTERS = 40,          /* fewer letters: no evidence of the lines' direction */
    UPDOWN_MIN_LINE_COMPONENTS = 4, /* a line with fewer text components gives no band ... */
    UPDOWN_MIN_PLAIN_LETTERS = 3    /* ... nor one with fewer plain x-height letters */
};
static const double NEIGHBOUR_MAX = 3.0;    /* letter sizes: farther is no neighbour (across a
                                               gutter or a paragraph gap, not within a line) */
static const double LETTER_MIN = 0.5;       /* letter sizes: a component's longer side at least
                                               (not a piece of a broken letter, a speck) ... */
static const double LETTER_MAX = 2.0;       /* ... and at most (capitals, ligatures) */
static const double AXIS_TAN = 0.57735;     /* tan 30°: a direction within 30° of an axis counts
                                               for it */
static const double AXIS_MIN_SHARE = 0.6;   /* of the directions counted: below this share along
                                               one axis the page says nothing (measured: 0.63
                                               to 0.97 on upright development pages) */
static const double AXIS_DECISIVE = 0.75;   /* share of full confidence */
static const double PLAIN_QUANTILE = 0.25;  /* the x-height: this quantile of a line's letter
                                               heights (marks, under half the median, left out) */
static const double PLAIN_TOLERANCE = 0.2;  /* of the x-height: letters this close to it are plain
                                               x-height letters, which give the band */
static const double BAND_MARGIN = 0.2;      /* of the x-height: ink beyond the band by more is an
                                               ascender or a descender (they reach 0.4 to 0.6 of
                                               the x-height beyond it in book type, from memory;
                                               less in typewriter faces: 0.2 decided the most
                                               development pages of 0.1, 0.15, 0.2 and 0.3) */
static const double BAND_MIN_SHARE = 0.6;   /* of the line's x-height (lines.c): a lower band is
                                               that of pieces of broken letters (measured: 0.95
                                               to 1 on most lines, 0.25 to 0.6 on typescripts
                                               whose letters are broken) */
static const double LETTER_BIAS = 0.05;     /* of the letters counted: a surplus of ascenders
                                               or of descenders up to this is no evidence (the
                                               script's and the type's own; measured: 0.025
                                               the wrong way on an upright list of Greek names,
                                               0.05 to 0.2 the right way on gothic type) */
static const double MARK_MIN = 0.12;        /* of the band: a mark's sides at least (a period
                                               is about a third of the x-height; not a speck)
                                               ... */
static const double MARK_MAX = 0.5;         /* ... and at most (letters fill the band) */
static const double MARK_ASPECT = 2.0;      /* a mark's longer side at most this times its
                                               shorter one (a dot or a comma, not a dash: a
                                               dialogue's dash begins lines of typescript) */
static const double MARK_LEVEL = 0.3;       /* of the band: a mark whose centre lies this close to
                                               the baseline is low, to the band's top high
                                               (measured on upright development pages: the
                                               marks' z score never below -1.0) */
static const double ACCENT_MAX = 0.6;       /* of the band: a mark over or under a letter no
                                               larger (a dot, an accent, a tilde) ... */
static const double ACCENT_REACH = 0.6;     /* ... and standing at most this far from the band
                                               (measured on upright development pages: the
                                               z score of these marks at worst 1.5 the wrong
                                               way, on a typescript of broken letters) */
static const double EDGE_TOLERANCE = 0.3;   /* x-heights: line ends this close line up */
static const double EDGE_REACH = 8.0;       /* x-heights: the lines an end is compared with, by
                                               the distance of their centres (a few lines above
                                               and below) */
static const double EDGE_MIN_WIDTH = 3.0;   /* x-heights: narrower lines (a page number, a
                                               word alone) say nothing of a block's edges */
static const double UPDOWN_MIN_Z = 4.0;     /* the sum of the evidences' z scores, below which
                                               no estimate (measured on upright development
                                               pages: the sum never below 0, each evidence at
                                               worst 2.0 the wrong way) */
static const double UPDOWN_FULL_Z = 12.0;   /* sum of full confidence */
static const double UPDOWN_AGAINST_Z = 2.0; /* an evidence this strong against the sum: no
                                                estimate (they disagree) */

static double clamp01(double v)
{
    return v < 0 ? 0 : v > 1 ? 1 : v;
}

/* Components the evidence of which side is up rests on. */
static int is_text(const lt_component *c)
{
    return c->kind == LT_COMP_TEXT;
}

/* Components the direction of the lines rests on: text components of a letter's size in
 * their longer side, whichever way the page stands (not pieces of broken letters or specks
 * of noise, whose neighbours lie in any direction). */
static int is_letter(const lt_component *c, double letter_px)
{
    const int side = lt_box_width(&c->box) > lt_box_height(&c->box) ? lt_box_width(&c->box)
                                                                    : lt_box_height(&c->box);
    return c->kind == LT_COMP_TEXT && side >= LETTER_MIN * letter_px &&
           side <= LETTER_MAX * letter_px;
}

/* Letters bucketed by centroid into square cells of cell_px (a counting sort):
 * the members of cell k are members[start[k] .. start[k + 1]). */
typedef struct buckets {
    int cols, rows;
    double cell_px;
    int *start, *members;
} buckets;

static int cell_of(const buckets *b, const lt_component *a)
{
    return (int)(a->cy / b->cell_px) * b->cols + (int)(a->cx / b->cell_px);
}

static int buckets_fill(buckets *b, const lt_components *c, int n, int max_x, int max_y,
                        double letter_px, double cell_px)
{
    b->cell_px = cell_px;
    b->cols = (int)(max_x / cell_px) + 1;
    b->rows = (int)(max_y / cell_px) + 1;
    const size_t cells = (size_t)b->cols * b->rows;
    b->start = calloc(cells + 1, sizeof *b->start);
    b->members = malloc((size_t)n * sizeof *b->members);
    int *pos = malloc((cells + 1) * sizeof *pos);
    if (!b->start || !b->members || !pos) {
        free(pos);
        return LT_ENOMEM;
    }
    for (int i = 0; i < c->count; i++)
        if (is_letter(&c->items[i], letter_px)) b->start[cell_of(b, &c->items[i]) + 1]++;
    for (size_t k = 0; k < cells; k++)
        b->start[k + 1] += b->start[k];
    for (size_t k = 0; k <= cells; k++)
        pos[k] = b->start[k];
    for (int i = 0; i < c->count; i++)
        if (is_letter(&c->items[i], letter_px)) b->members[pos[cell_of(b, &c->items[i])]++] = i;
    free(pos);
    return 0;
}

/* Counts the directions from letter i to its NEIGHBOURS nearest letters at most max_d_px
 * away (at most the cell size) that lie within 30 degrees of the horizontal (*along) or of
 * the vertical (*across). */
static void count_neighbours(const buckets *b, const lt_components *c, int i, double max_d_px,
                             long *along, long *across)
{
    const lt_component *a = &c->items[i];
    const int gx = (int)(a->cx / b->cell_px), gy = (int)(a->cy / b->cell_px);
    const double max_d2 = max_d_px * max_d_px;
    double best_d2[NEIGHBOURS];
    int best[NEIGHBOURS], found = 0;
    for (int y = gy - 1; y <= gy + 1; y++)
        for (int x = gx - 1; x <= gx + 1; x++) {
            if (x < 0 || y < 0 || x >= b->cols || y >= b->rows) continue;
            const int cell = y * b->cols + x;
            for (int m = b->start[cell]; m < b->start[cell + 1]; m++) {
                const int j = b->members[m];
                const double dx = c->items[j].cx - a->cx, dy = c->items[j].cy - a->cy;
                const double d2 = dx * dx + dy * dy;
                if (j == i || d2 > max_d2 || (found == NEIGHBOURS && d2 >= best_d2[found - 1]))
                    continue;
                int k = found < NEIGHBOURS ? found++ : NEIGHBOURS - 1;
                for (; k > 0 && best_d2[k - 1] > d2; k--) { /* insertion, nearest first */
                    best_d2[k] = best_d2[k - 1];
                    best[k] = best[k - 1];
                }
                best_d2[k] = d2;
                best[k] = j;
            }
        }
    for (int k = 0; k < found; k++) {
        const double dx = fabs(c->items[best[k]].cx - a->cx),
                     dy = fabs(c->items[best[k]].cy - a->cy);
        *along += dy <= AXIS_TAN * dx;
        *across += dx <= AXIS_TAN * dy;
    }
}

/* Sort key: a component's longer side, with its ink. */
typedef struct sized {
    int side_px;
    long pixels;
} sized;

static int cmp_sized(const void *pa, const void *pb)
{
    const sized *a = pa, *b = pb;
    return (a->side_px > b->side_px) - (a->side_px < b->side_px);
}

/* The size of the letters that hold most of the text's ink: the longer side of the text
 * component at which half the ink lies in smaller ones (0 without text, -1 when out of
 * memory). Specks of noise, however many, hold little ink, so a noisy page still gives its
 * letters' size; and a longer side does not depend on which way the page stands. */
static double letter_size_px(const lt_components *c)
{
    sized *v = malloc(((size_t)c->count + 1) * sizeof *v);
    if (!v) return -1;
    int n = 0;
    long total = 0;
    for (int i = 0; i < c->count; i++) {
        const lt_component *a = &c->items[i];
        if (a->kind != LT_COMP_TEXT) continue;
        const int w = lt_box_width(&a->box), h = lt_box_height(&a->box);
        v[n++] = (sized){w > h ? w : h, a->pixels};
        total += a->pixels;
    }
    qsort(v, (size_t)n, sizeof *v, cmp_sized);
    double size = 0;
    long below = 0;
    for (int k = 0; k < n && size == 0; k++)
        if ((below += v[k].pixels) * 2 >= total) size = v[k].side_px;
    free(v);
    return size;
}

int lt_estimate_line_axis(const lt_components *c, lt_orientation *out, lt_error *err)
{
    out->turn_deg = 0;
    out->confidence = 0;
    if (!c) return 0;
    const double letter_px = letter_size_px(c);
    if (letter_px < 0) return lt_error_set(err, LT_ENOMEM, "orientation: out of memory");
    if (letter_px == 0) return 0;
    int n = 0, max_x = 0, max_y = 0;
    for (int i = 0; i < c->count; i++)
        if (is_letter(&c->items[i], letter_px)) {
            n++;
            if (c->items[i].box.right > max_x) max_x = c->items[i].box.right;
            if (c->items[i].box.bottom > max_y) max_y = c->items[i].box.bottom;
        }
    if (n < AXIS_MIN_LETTERS) return 0;
    /* cells as wide as the farthest neighbour, and no more cells than twice the letters */
    const double max_d_px = NEIGHBOUR_MAX * letter_px;
    const double cell_px = fmax(max_d_px, sqrt((double)max_x * max_y / (2.0 * n)));
    buckets b = {0};
    if (buckets_fill(&b, c, n, max_x, max_y, letter_px, cell_px)) {
        free(b.start);
        free(b.members);
        return lt_error_set(err, LT_ENOMEM, "orientation: out of memory");
    }
    long along = 0, across = 0;
    for (int i = 0; i < c->count; i++)
        if (is_letter(&c->items[i], letter_px))
            count_neighbours(&b, c, i, max_d_px, &along, &across);
    free(b.start);
    free(b.members);
    if (along + across == 0) return 0;
    const double share = (double)(along > across ? along : across) / (double)(along + across);
    if (share < AXIS_MIN_SHARE) return 0;
    out->turn_deg = across > along ? 90 : 0;
    out->confidence = clamp01((share - AXIS_MIN_SHARE) / (AXIS_DECISIVE - AXIS_MIN_SHARE));
    return 0;
}

/* Sort key of a component or a line: its centre's y, and its index. */
typedef struct by_y {
    double cy;
    int index;
} by_y;

static int cmp_by_y(const void *pa, const void *pb)
{
    const by_y *a = pa, *b = pb;
    return a->cy < b->cy ? -1 : a->cy > b->cy ? 1 : a->index - b->index;
}

/* Adds the evidence of `line`, whose text components are member[0..m), to *rising (letters
 * reaching beyond the x-height band above it) and *falling (below it); heights, tops and
 * bottoms are scratch of m places. Returns 1 and the band in *band (its top and bottom y), or
 * 0 when the line gives no band. */
static int line_evidence(const lt_components *c, const lt_raw_line *line, const int *member, int m,
                         double *heights, double *tops, double *bottoms, long *rising,
                         long *falling, double band[2])
{
    if (m < UPDOWN_MIN_LINE_COMPONENTS) return 0;
    for (int k = 0; k < m; k++)
        heights[k] = lt_box_height(&c->items[member[k]].box);
    /* The x-height: the lower quartile of the heights of the letters (not the marks, under
     * half the median height). Plain x-height letters are the shortest letters whichever way
     * the page stands; the median would be a capital's or a digit's height in lines of
     * capitals, figures and brackets. */
    const double half_median = 0.5 * lt_median(heights, m);
    int letters = 0;
    for (int k = 0; k < m; k++)
        if (heights[k] >= half_median) heights[letters++] = heights[k];
    const double xheight = heights[(int)(PLAIN_QUANTILE * (letters - 1))]; /* sorted by lt_median */
    int plain = 0;
    for (int k = 0; k < m; k++) {
        const lt_box *cb = &c->items[member[k]].box;
        const double h = lt_box_height(cb);
        if (h < (1 - PLAIN_TOLERANCE) * xheight || h > (1 + PLAIN_TOLERANCE) * xheight) continue;
        tops[plain] = cb->top;
        bottoms[plain] = cb->bottom;
        plain++;
    }
    if (plain < UPDOWN_MIN_PLAIN_LETTERS) return 0;
    double band_top = lt_median(tops, plain), band_bottom = lt_median(bottoms, plain);
    if (band_bottom - band_top < BAND_MIN_SHARE * line->xheight_px) {
        /* the plain letters are pieces of broken letters: the band is the line's, from its
         * baseline up by its x-height, both from the line's whole letters (lines.c) */
        band_top = line->baseline_y - line->xheight_px;
        band_bottom = line->baseline_y;
    }
    const double margin = BAND_MARGIN * (band_bottom - band_top);
    if (margin < 1) return 0;
    for (int k = 0; k < m; k++) {
        const lt_box *cb = &c->items[member[k]].box;
        /* a letter that fills the band and reaches beyond it on one side only (one that
         * reaches out on both, a long s, an f of gothic or italic type, a bracket, says
         * nothing; marks fill no band) */
        const int fills = cb->top <= band_top + margin && cb->bottom >= band_bottom - margin;
        const int rises = fills && cb->top < band_top - margin;
        const int falls = fills && cb->bottom > band_bottom + margin;
        *rising += rises && !falls;
        *falling += falls && !rises;
    }
    band[0] = band_top;
    band[1] = band_bottom;
    return 1;
}

/* Whether component i is a mark (a dot or a comma by its size against the height of the
 * x-height band `band`) whose centre lies within MARK_LEVEL of the band from the level at_y. */
static int is_mark_at(const lt_components *c, int i, const double band[2], double at_y)
{
    const lt_box *b = &c->items[i].box;
    const double band_px = band[1] - band[0];
    const double w = lt_box_width(b), h = lt_box_height(b);
    const double longer = w > h ? w : h, shorter = w > h ? h : w;
    return shorter >= MARK_MIN * band_px && longer <= MARK_MAX * band_px &&
           longer <= MARK_ASPECT * shorter &&
           fabs(0.5 * (b->top + b->bottom) - at_y) <= MARK_LEVEL * band_px;
}

/* Whether the centre of component i stands over or under a plain letter of the line whose
 * components are member[0..m): one that fills the x-height band `band` and reaches no further
 * than the plain letters do. */
static int over_plain_letter(const lt_components *c, const int *member, int m, int i,
                             const double band[2])
{
    const double band_px = band[1] - band[0], margin = BAND_MARGIN * band_px;
    for (int k = 0; k < m; k++) {
        const lt_box *b = &c->items[member[k]].box;
        if (b->top <= band[0] + margin && b->bottom >= band[1] - margin &&
            lt_box_height(b) <= (1 + PLAIN_TOLERANCE) * band_px && c->items[i].cx >= b->left &&
            c->items[i].cx < b->right)
            return 1;
    }
    return 0;
}

/* Adds the marks of a line whose components are member[0..m) (letters and marks), with
 * x-height band `band`: to *above the marks over a plain letter within ACCENT_REACH above the
 * band, to *below those under one below it; to *ending when the line ends with a mark low in
 * the band, standing alone (right of every other component), and to *beginning when it
 * begins with a mark alone high in the band. */
static void mark_evidence(const lt_components *c, const int *member, int m, const double band[2],
                          long *above, long *below, long *ending, long *beginning)
{
    const double band_px = band[1] - band[0];
    for (int k = 0; k < m; k++) {
        const lt_box *b = &c->items[member[k]].box;
        const double w = lt_box_width(b), h = lt_box_height(b);
        if (w > ACCENT_MAX * band_px || h > ACCENT_MAX * band_px ||
            (w < MARK_MIN * band_px && h < MARK_MIN * band_px))
            continue;
        const int is_above = b->bottom <= band[0] && b->bottom >= band[0] - ACCENT_REACH * band_px;
        const int is_below = b->top >= band[1] && b->top <= band[1] + ACCENT_REACH * band_px;
        if ((is_above || is_below) && over_plain_letter(c, member, m, member[k], band)) {
            *above += is_above;
            *below += is_below;
        }
    }
    if (m < 2) return;
    int first = member[0], last = member[0];
    for (int k = 1; k < m; k++) {
        if (c->items[member[k]].box.left < c->items[first].box.left) first = member[k];
        if (c->items[member[k]].box.right > c->items[last].box.right) last = member[k];
    }
    int first_alone = 1, last_alone = 1;
    for (int k = 0; k < m; k++) {
        const lt_box *b = &c->items[member[k]].box;
        first_alone &= member[k] == first || b->left >= c->items[first].box.right;
        last_alone &= member[k] == last || b->right <= c->items[last].box.left;
    }
    *ending += last_alone && is_mark_at(c, last, band, band[1]);
    *beginning += first_alone && is_mark_at(c, first, band, band[0]);
}

static int is_edge_line(const lt_box *b, double unit_px)
{
    return unit_px > 0 && lt_box_width(b) >= EDGE_MIN_WIDTH * unit_px;
}

/* Counts the lines whose left end lines up with that of another line in reach (within
 * EDGE_REACH x-heights above or below, overlapping it across) while their right end lines up
 * with none (*flush_left), and the other way round (*flush_right). Sizes are in the median
 * x-height of the lines; lines narrower than EDGE_MIN_WIDTH take no part. 0, or LT_ENOMEM. */
static int edge_evidence(const lt_raw_lines *lines, long *flush_left, long *flush_right)
{
    const int n = lines->count;
    by_y *sorted = malloc((size_t)n * sizeof *sorted);
    double *xheights = malloc((size_t)n * sizeof *xheights);
    if (!sorted || !xheights) {
        free(sorted);
        free(xheights);
        return LT_ENOMEM;
    }
    for (int i = 0; i < n; i++) {
        const lt_box *b = &lines->items[i].box;
        sorted[i] = (by_y){0.5 * (b->top + b->bottom), i};
        xheights[i] = lines->items[i].xheight_px;
    }
    const double unit_px = lt_median(xheights, n);
    free(xheights);
    qsort(sorted, (size_t)n, sizeof *sorted, cmp_by_y);
    const double reach_px = EDGE_REACH * unit_px, tolerance_px = EDGE_TOLERANCE * unit_px;
    int first = 0; /* the first line within reach above line i */
    for (int i = 0; i < n; i++) {
        const lt_box *a = &lines->items[sorted[i].index].box;
        while (sorted[first].cy < sorted[i].cy - reach_px)
            first++;
        if (!is_edge_line(a, unit_px)) continue;
        int left = 0, right = 0;
        for (int j = first; j < n && sorted[j].cy <= sorted[i].cy + reach_px; j++) {
            const lt_box *b = &lines->items[sorted[j].index].box;
            if (j == i || !is_edge_line(b, unit_px)) continue;
            if ((a->right < b->right ? a->right : b->right) <=
                (a->left > b->left ? a->left : b->left))
                continue; /* side by side: another column */
            left |= abs(a->left - b->left) <= tolerance_px;
            right |= abs(a->right - b->right) <= tolerance_px;
        }
        *flush_left += left && !right;
        *flush_right += right && !left;
    }
    free(sorted);
    return 0;
}

/* The binomial z score of `pro` events for a side against `contra` events for the other, the
 * two equally likely without evidence: positive when the first side has more. A surplus of
 * up to bias times the events counted is no evidence (the source's own imbalance). */
static double evidence_z(long pro, long contra, double bias)
{
    const double total = (double)(pro + contra);
    if (total == 0) return 0;
    const double surplus = fabs((double)(pro - contra)) - bias * total;
    if (surplus <= 0) return 0;
    return (pro > contra ? surplus : -surplus) / sqrt(total);
}

int lt_estimate_upright(const lt_components *c, const lt_raw_lines *lines, lt_orientation *out,
                        lt_error *err)
{
    out->turn_deg = 0;
    out->confidence = 0;
    if (!c || !lines || lines->count == 0) return 0;
    int n = 0; /* the text and the marks, which may be specks by their size */
    for (int i = 0; i < c->count; i++)
        n += is_text(&c->items[i]) || c->items[i].kind == LT_COMP_SPECKLE;
    if (n == 0) return 0;
    by_y *sorted = malloc((size_t)n * sizeof *sorted);
    double *heights = malloc((size_t)n * sizeof *heights);
    double *tops = malloc((size_t)n * sizeof *tops), *bottoms = malloc((size_t)n * sizeof *bottoms);
    int *member = malloc((size_t)n * sizeof *member),
        *with_marks = malloc((size_t)n * sizeof *with_marks);
    if (!sorted || !heights || !tops || !bottoms || !member || !with_marks) {
        free(with_marks);
        free(sorted);
        free(heights);
        free(tops);
        free(bottoms);
        free(member);
        return lt_error_set(err, LT_ENOMEM, "orientation: out of memory");
    }
    n = 0;
    for (int i = 0; i < c->count; i++)
        if (is_text(&c->items[i]) || c->items[i].kind == LT_COMP_SPECKLE)
            sorted[n++] = (by_y){c->items[i].cy, i};
    qsort(sorted, (size_t)n, sizeof *sorted, cmp_by_y);
    long up = 0, down = 0, above = 0, below = 0, ending = 0, beginning = 0;
    for (int l = 0; l < lines->count; l++) {
        const lt_box *box = &lines->items[l].box;
        int lo = 0, hi = n; /* first component with cy >= top */
        while (lo < hi) {
            const int mid = (lo + hi) / 2;
            if (sorted[mid].cy < box->top)
                lo = mid + 1;
            else
                hi = mid;
        }
        int m = 0, all = 0;
        for (int k = lo; k < n && sorted[k].cy < box->bottom; k++) {
            const lt_component *a = &c->items[sorted[k].index];
            if (a->cx < box->left || a->cx >= box->right) continue;
            with_marks[all++] = sorted[k].index;
            if (is_text(a)) member[m++] = sorted[k].index;
        }
        double band[2];
        if (line_evidence(c, &lines->items[l], member, m, heights, tops, bottoms, &up, &down, band))
            mark_evidence(c, with_marks, all, band, &above, &below, &ending, &beginning);
    }
    free(with_marks);
    free(sorted);
    free(heights);
    free(tops);
    free(bottoms);
    free(member);
    long flush_left = 0, flush_right = 0;
    if (edge_evidence(lines, &flush_left, &flush_right))
        return lt_error_set(err, LT_ENOMEM, "orientation: out of memory");
    /* positive: upright as given */
    const double z_letters = evidence_z(up, down, LETTER_BIAS);
    const double z_edges = evidence_z(flush_left, flush_right, 0);
    const double z_marks = evidence_z(ending, beginning, 0);
    const double z_accents = evidence_z(above, below, 0);
    const double z = z_letters + z_edges + z_marks + z_accents;
    if (fabs(z) < UPDOWN_MIN_Z) return 0;
    const double each[] = {z_letters, z_edges, z_marks, z_accents};
    for (size_t k = 0; k < sizeof each / sizeof *each; k++)
        if (z * each[k] < 0 && fabs(each[k]) >= UPDOWN_AGAINST_Z) return 0; /* they disagree */
    out->turn_deg = z < 0 ? 180 : 0;
    out->confidence = clamp01((fabs(z) - UPDOWN_MIN_Z) / (UPDOWN_FULL_Z - UPDOWN_MIN_Z));
    return 0;
}

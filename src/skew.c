/* skew.c — skew by projection profiles (Postl 1986; Baird 1987): the angle at which the
 * horizontal projection of the ink is sharpest, measured as the sum of squared differences
 * of adjacent bins (insensitive to the slow variation that uneven column lengths give).
 * Coarse-to-fine: a sweep over the whole range on an 8x-reduced image, then refinements on
 * 4x and 2x reductions, then a parabola through the best three angles. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Steps of the coarse sweeps, degrees: on the 8x reduction, and on the 4x one (sharper
 * peaks); share of the profile's bins nearly empty (white between lines) below which a sharp
 * projection is weak evidence. */
static const double COARSE_STEP = 0.5;
static const double FINE_COARSE_STEP = 0.25;
static const double GAP_EVIDENCE = 0.25;

typedef struct cell {
    float x, y; /* centre relative to the grid centre, full-resolution pixels */
    int32_t weight;
} cell;

typedef struct cells {
    cell *items;
    int count;
} cells;

/* Ink count grid of an image reduced by `factor`. */
typedef struct grid {
    int width, height, factor;
    uint16_t *count;
} grid;

/* Grid of 2x2 tile counts of the ink image (whose pixels are 0 or 1), in one pass over its
 * rows. On a little-endian machine four tiles of a row come from one 64-bit word: the bytes
 * added pairwise (each sum at most 2) into its four 16-bit lanes. */
static int grid_from_ink(const lt_image *ink, grid *g)
{
    const int w = ink->width, h = ink->height;
    g->factor = 2;
    g->width = (w + 1) / 2;
    g->height = (h + 1) / 2;
    g->count = calloc((size_t)g->width * g->height, sizeof *g->count);
    if (!g->count) return LT_ENOMEM;
    const int pairs = w / 2; /* tiles with two columns */
    for (int y = 0; y < h; y++) {
        const uint8_t *row = ink->pixels + (size_t)y * w;
        uint16_t *dst = g->count + (size_t)(y / 2) * g->width;
        int t = 0;
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
        for (; t + 4 <= pairs; t += 4) {
            uint64_t v;
            memcpy(&v, row + 2 * t, 8);
            v = (v + (v >> 8)) & 0x00ff00ff00ff00ffu;
            dst[t] += (uint16_t)(v & 0xffff);
            dst[t + 1] += (uint16_t)((v >> 16) & 0xffff);
            dst[t + 2] += (uint16_t)((v >> 32) & 0xffff);
            dst[t + 3] += (uint16_t)(v >> 48);
        }
#endif
        for (; t < pairs; t++)
            dst[t] += (uint16_t)(row[2 * t] + row[2 * t + 1]);
        if (w % 2) dst[pairs] += row[w - 1];
    }
    return 0;
}

/* Grid halved in both directions (tile sums). */
static int grid_halve(const grid *src, grid *g)
{
    const int w = src->width, h = src->height;
    g->factor = src->factor * 2;
    g->width = (w + 1) / 2;
    g->height = (h + 1) / 2;
    g->count = malloc((size_t)g->width * g->height * sizeof *g->count);
    if (!g->count) return LT_ENOMEM;
    for (int gy = 0; gy < g->height; gy++) {
        const uint16_t *r0 = src->count + (size_t)(2 * gy) * w;
        const uint16_t *r1 = 2 * gy + 1 < h ? r0 + w : NULL;
        uint16_t *dst = g->count + (size_t)gy * g->width;
        for (int x = 0; x < w; x += 2) {
            unsigned v = r0[x] + (x + 1 < w ? r0[x + 1] : 0u);
            if (r1) v += r1[x] + (x + 1 < w ? r1[x + 1] : 0u);
            dst[x / 2] = (uint16_t)v;
        }
    }
    return 0;
}

/* The non-empty tiles of a grid as weighted cells. */
static int cells_from_grid(const grid *g, cells *out)
{
    size_t n = 0;
    const size_t total = (size_t)g->width * g->height;
    for (size_t i = 0; i < total; i++)
        n += g->count[i] != 0;
    out->items = malloc((n ? n : 1) * sizeof *out->items);
    out->count = 0;
    if (!out->items) return LT_ENOMEM;
    /* The origin is a cell centre, so that on a level page every cell lies exactly on a bin
     * and the interpolation below adds no blur at angle 0. */
    const float f = (float)g->factor;
    const float half_w = (g->width / 2 + 0.5f) * f, half_h = (g->height / 2 + 0.5f) * f;
    for (int y = 0; y < g->height; y++) {
        const uint16_t *row = g->count + (size_t)y * g->width;
        for (int x = 0; x < g->width; x++) {
            if (!row[x]) continue;
            cell *c = &out->items[out->count++];
            c->x = (x + 0.5f) * f - half_w;
            c->y = (y + 0.5f) * f - half_h;
            c->weight = row[x];
        }
    }
    return 0;
}

/* Sharpness of the projection at angle_deg: sum of squared differences of adjacent bins of height
 * bin_px of the ink rotated by -angle_deg. `profile` (nbins bins) is left holding the
 * projection, in units of 1/256 of an ink pixel. */
static double sharpness(const cells *c, double angle_deg, double bin_px, int interpolate,
                        int32_t *profile, int nbins)
{
    const double a = angle_deg * LT_PI / 180.0;
    /* Positions in bins, in 24.8 fixed point. */
    const float s = (float)(256.0 * sin(a) / bin_px), co = (float)(256.0 * cos(a) / bin_px);
    const float offset = (float)(256 * (nbins / 2));
    const int32_t frac_mask = interpolate ? 255 : 0;
    memset(profile, 0, (size_t)nbins * sizeof *profile);
    /* With `interpolate`, each cell is shared linearly between its two nearest bins, so that
     * the criterion varies smoothly with the angle instead of in steps of one bin. The cells
     * come row by row, and along a row the bin changes only every few cells: the shares are
     * summed in registers while it stays, and added to the profile when it moves on. */
    int32_t bin = 0, low = 0, high = 0;
    for (int i = 0; i < c->count; i++) {
        const cell *p = &c->items[i];
        const int32_t pos = (int32_t)(p->x * s + p->y * co + offset);
        const int32_t b = pos >> 8, frac = pos & frac_mask;
        if (b != bin) {
            profile[bin] += low;
            profile[bin + 1] += high;
            bin = b;
            low = high = 0;
        }
        low += p->weight * (256 - frac);
        high += p->weight * frac;
    }
    profile[bin] += low;
    profile[bin + 1] += high;
    double sum = 0;
    for (int b = 0; b + 1 < nbins; b++) {
        double d = (double)(profile[b + 1] - profile[b]);
        sum += d * d;
    }
    return sum;
}

/* Share of the profile's bins, within the central 98% of its mass, that are nearly empty
 * (under 15% of the mean bin): the white between text lines. Structureless ink (noise,
 * halftone) has none, whatever its projection's sharpness. `profile` holds the last profile
 * computed by sharpness(). */
static double gap_fraction(const int32_t *profile, int nbins)
{
    double total = 0;
    for (int b = 0; b < nbins; b++)
        total += profile[b];
    if (total <= 0) return 0;
    int first = 0, last = nbins - 1;
    double acc = 0;
    while (first < nbins && (acc += profile[first]) < 0.01 * total)
        first++;
    acc = 0;
    while (last > first && (acc += profile[last]) < 0.01 * total)
        last--;
    const int n = last - first + 1;
    if (n < 8) return 0;
    double mean = 0;
    for (int b = first; b <= last; b++)
        mean += profile[b];
    mean /= n;
    int gaps = 0;
    for (int b = first; b <= last; b++)
        gaps += profile[b] < 0.15 * mean;
    return (double)gaps / n;
}

/* Best angle in [lo, hi] at `step` (index of the maximum in *best), the criterion of every
 * angle in crit[] (room for the number of steps). */
static int sweep(const cells *c, double lo, double hi, double step, double bin_px, int interpolate,
                 int32_t *profile, int nbins, double *crit)
{
    int n = (int)floor((hi - lo) / step + 0.5) + 1, best = 0;
    for (int i = 0; i < n; i++) {
        crit[i] = sharpness(c, lo + i * step, bin_px, interpolate, profile, nbins);
        if (crit[i] > crit[best]) best = i;
    }
    return best;
}

/* The reductions of the ink the search runs on: 8x, 4x and 2x. */
typedef struct levels {
    const cells *c8, *c4, *c2;
} levels;

/* One search: a coarse sweep over [-range_deg, range_deg] at `step` on the reduction of
 * `coarse_factor` (8 or 4; bins that many px), then refinements on the finer reductions around
 * the best angle so far, then the vertex of the parabola through the best angle and its
 * neighbours. *confidence: how far the coarse peak stands out (1 - median / peak), scaled
 * down where the profile at the angle found shows less white between lines than
 * GAP_EVIDENCE; *gaps: that share. crit and sorted have room for the coarse sweep's angles. */
static void search(const levels *lv, int coarse_factor, double step, double range_deg,
                   int32_t *profile, int nbins, double *crit, double *sorted, double *angle_out,
                   double *confidence_out, double *gaps_out)
{
    const cells *coarse = coarse_factor == 8 ? lv->c8 : lv->c4;
    const int coarse_n = (int)floor(2 * range_deg / step + 0.5) + 1;
    int best = sweep(coarse, -range_deg, range_deg, step, coarse_factor, 1, profile, nbins, crit);
    double angle = -range_deg + best * step;
    memcpy(sorted, crit, (size_t)coarse_n * sizeof *sorted);
    double peak = crit[best], typical = lt_median(sorted, coarse_n);
    double confidence = peak > 0 ? 1.0 - typical / peak : 0;

    /* Refinements on finer reductions around the best angle so far. */
    const struct {
        const cells *c;
        double bin_px, span_deg, step_deg;
    } stages[] = {{lv->c4, 4, 0.35, 0.05}, {lv->c2, 2, 0.06, 0.02}};
    double prev = 0, next = 0;
    for (size_t s = 0; s < sizeof stages / sizeof stages[0]; s++) {
        double lo = angle - stages[s].span_deg, hi = angle + stages[s].span_deg;
        step = stages[s].step_deg;
        int n = (int)floor((hi - lo) / step + 0.5) + 1;
        int b = sweep(stages[s].c, lo, hi, step, stages[s].bin_px, 1, profile, nbins, crit);
        angle = lo + b * step;
        prev = b > 0 ? crit[b - 1] : crit[b];
        next = b < n - 1 ? crit[b + 1] : crit[b];
        peak = crit[b];
    }
    /* The vertex of the parabola through the best angle and its neighbours. */
    double denom = prev - 2 * peak + next;
    if (denom < 0) {
        double shift = 0.5 * (prev - next) / denom;
        if (fabs(shift) <= 1) angle += shift * step;
    }
    /* A sharp projection counts as evidence only when it shows white between lines. */
    sharpness(lv->c2, angle, 2, 1, profile, nbins);
    const double gaps = gap_fraction(profile, nbins);
    *angle_out = angle;
    *confidence_out = confidence * (gaps >= GAP_EVIDENCE ? 1.0 : gaps / GAP_EVIDENCE);
    *gaps_out = gaps;
}

int lt_estimate_skew(const lt_image *ink, double range_deg, double min_confidence, lt_skew *out,
                     lt_error *err)
{
    out->angle_deg = 0;
    out->confidence = 0;
    if (!ink || ink->kind != LT_IMAGE_INK || range_deg < 0 || range_deg > 45)
        return lt_error_set(err, LT_EINVAL, "skew: bad arguments");
    if (ink->width < 16 || ink->height < 16) return 0;
    const double diag = hypot(ink->width, ink->height);
    const int nbins = (int)(diag / 2.0) + 8; /* bins of >= 2 px span the diagonal */
    const int coarse_n = (int)floor(2 * range_deg / FINE_COARSE_STEP + 0.5) + 1;
    int32_t *profile = malloc((size_t)nbins * sizeof *profile);
    double *crit = malloc((size_t)(coarse_n + 64) * sizeof *crit);
    double *sorted = malloc((size_t)(coarse_n + 64) * sizeof *sorted);
    grid g2 = {0}, g4 = {0}, g8 = {0};
    cells c2 = {0}, c4 = {0}, c8 = {0};
    int rc = 0;
    if (!profile || !crit || !sorted || grid_from_ink(ink, &g2) || grid_halve(&g2, &g4) ||
        grid_halve(&g4, &g8) || cells_from_grid(&g2, &c2) || cells_from_grid(&g4, &c4) ||
        cells_from_grid(&g8, &c8)) {
        rc = lt_error_set(err, LT_ENOMEM, "skew: out of memory");
        goto done;
    }
    if (c8.count < 8) goto done; /* blank page: no evidence */

    /* Lines of small type (a pitch of a bin or two of the 8x reduction) can give the coarse
     * sweep there a false peak, at which the profile shows no white between lines: then the
     * search starts again from a sweep of the 4x reduction, at the step its narrower peaks
     * need, and the angle with the clearer evidence is kept. */
    const levels levels = {&c8, &c4, &c2};
    double angle, confidence, gaps;
    search(&levels, 8, COARSE_STEP, range_deg, profile, nbins, crit, sorted, &angle, &confidence,
           &gaps);
    if (gaps < GAP_EVIDENCE) {
        double angle4, confidence4, gaps4;
        search(&levels, 4, FINE_COARSE_STEP, range_deg, profile, nbins, crit, sorted, &angle4,
               &confidence4, &gaps4);
        if (confidence4 > confidence) {
            angle = angle4;
            confidence = confidence4;
        }
    }
    if (confidence >= min_confidence) {
        out->angle_deg = angle;
        out->confidence = confidence;
    }
done:
    free(profile);
    free(crit);
    free(sorted);
    free(g2.count);
    free(g4.count);
    free(g8.count);
    free(c2.items);
    free(c4.items);
    free(c8.items);
    return rc;
}

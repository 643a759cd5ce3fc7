/* skew.c — skew by projection profiles (Postl 1986; Baird 1987): the angle at which the
 * horizontal projection of the ink is sharpest, measured as the sum of squared differences
 * of adjacent bins (insensitive to the slow variation that uneven column lengths give).
 * Coarse-to-fine: a sweep over the whole range on tiles 64 px wide, two refinements on tiles
 * 8 px wide, then a parabola through the best three angles; tiles 2 px tall, bins of 2 px. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* A tile's ink is projected from its centre, so a tile w px wide blurs it across the lines by
 * up to w·sin|angle|: the projection needs fine steps across the lines only. Tiles 8 px wide
 * blur by at most 1 px (half a bin) up to 7 degrees, and read eight pixels of a row at a time;
 * the coarse sweep only has to find the peak's neighbourhood, so its tiles are 64 px wide
 * (blur 1.1 px at 1 degree). Its bins are as fine as the refinements': on a page whose
 * columns' baselines do not line up (staggered by part of the line pitch), the overlap of the
 * columns' profiles adds to the sharpness at the angle that lines one column's lines up with
 * the other's, and coarser bins let that false peak win (8 px bins: 1.5 degrees found for 2.29
 * on a two-column list, beyond the refinements' reach; 4 px bins: 0.16 off there). */
enum { FINE_TILE_PX = 8, COARSE_TILE_PX = 64 };

/* Step of the coarse sweep, degrees; span and step of the two refinements around the best
 * angle so far, degrees (the first spans more than a coarse step: pages of short lines show
 * two peaks a few tenths of a degree apart on coarse grids); share of the profile's bins
 * nearly empty (white between lines) below which a sharp projection is weak evidence. */
static const double COARSE_STEP_DEG = 0.25;
static const double REFINE_SPAN_DEG[2] = {0.3, 0.04}, REFINE_STEP_DEG[2] = {0.05, 0.02};
static const double GAP_EVIDENCE = 0.25;
/* Bins, at least, between neighbouring cells of a row at an angle from which a projection adds
 * each cell to the profile at once (project): the bin changes at nearly every cell there, and
 * summing the cells of one bin first only adds a branch that is hard to predict. */
static const double DIRECT_STEP_BINS = 0.5;

/* The non-empty tiles of a grid, row by row: a cell's position is its column's centre x and
 * its row's centre y, relative to the grid centre in full-resolution pixels, so that a
 * projection multiplies once per column and once per row. */
typedef struct cells {
    int count, columns, rows, tile_w; /* tile_w: the grid's, px */
    uint16_t *column, *weight;        /* of each cell: its grid column and ink count */
    float *column_x, *row_y;          /* centres of the grid's columns and of its rows */
    int *row_end;                     /* cells of row r: [row_end[r - 1], row_end[r]) */
    float *scratch;                   /* one entry per column */
} cells;

/* Ink counts of the tiles of an image, tile_w by tile_h px. */
typedef struct grid {
    int width, height, tile_w, tile_h;
    uint16_t *count;
} grid;

/* Grid of tiles FINE_TILE_PX wide and 2 tall of the ink image (whose pixels are 0 or 1), in
 * one pass over its rows: the two rows' 64-bit words added (bytes of at most 2), their eight
 * bytes summed by one multiplication into the top byte. */
static int grid_from_ink(const lt_image *ink, grid *g)
{
    const int w = ink->width, h = ink->height;
    g->tile_w = FINE_TILE_PX;
    g->tile_h = 2;
    g->width = (w + FINE_TILE_PX - 1) / FINE_TILE_PX;
    g->height = (h + 1) / 2;
    g->count = malloc((size_t)g->width * g->height * sizeof *g->count);
    if (!g->count) return LT_ENOMEM;
    const int whole = w / FINE_TILE_PX;
    for (int gy = 0; gy < g->height; gy++) {
        const uint8_t *r0 = ink->pixels + (size_t)(2 * gy) * w;
        const uint8_t *r1 = 2 * gy + 1 < h ? r0 + w : NULL;
        uint16_t *dst = g->count + (size_t)gy * g->width;
        for (int t = 0; t < whole; t++) {
            uint64_t v0, v1 = 0;
            memcpy(&v0, r0 + FINE_TILE_PX * t, 8);
            if (r1) memcpy(&v1, r1 + FINE_TILE_PX * t, 8);
            dst[t] = (uint16_t)(((v0 + v1) * 0x0101010101010101u) >> 56);
        }
        if (whole < g->width) {
            unsigned sum = 0;
            for (int x = whole * FINE_TILE_PX; x < w; x++)
                sum += r0[x] + (r1 ? r1[x] : 0u);
            dst[whole] = (uint16_t)sum;
        }
    }
    return 0;
}

/* Grid of the sums of k tiles side by side of another. */
static int grid_widen(const grid *src, int k, grid *g)
{
    const int w = src->width;
    g->tile_w = src->tile_w * k;
    g->tile_h = src->tile_h;
    g->width = (w + k - 1) / k;
    g->height = src->height;
    g->count = calloc((size_t)g->width * g->height, sizeof *g->count);
    if (!g->count) return LT_ENOMEM;
    for (int y = 0; y < g->height; y++) {
        const uint16_t *row = src->count + (size_t)y * w;
        uint16_t *dst = g->count + (size_t)y * g->width;
        for (int x = 0; x < w; x++)
            dst[x / k] += row[x];
    }
    return 0;
}

/* The non-empty tiles of a grid as weighted cells, row by row. */
static int cells_from_grid(const grid *g, cells *out)
{
    size_t n = 0;
    const size_t total = (size_t)g->width * g->height;
    for (size_t i = 0; i < total; i++)
        n += g->count[i] != 0;
    *out = (cells){0, g->width, g->height, g->tile_w, NULL, NULL, NULL, NULL, NULL, NULL};
    out->column = malloc((n + 1) * sizeof *out->column); /* + 1: written past the last cell */
    out->weight = malloc((n + 1) * sizeof *out->weight);
    out->column_x = malloc((size_t)g->width * sizeof *out->column_x);
    out->scratch = malloc((size_t)g->width * sizeof *out->scratch);
    out->row_y = malloc((size_t)g->height * sizeof *out->row_y);
    out->row_end = malloc((size_t)g->height * sizeof *out->row_end);
    if (!out->column || !out->weight || !out->column_x || !out->scratch || !out->row_y ||
        !out->row_end)
        return LT_ENOMEM;
    /* The origin is a cell centre, so that on a level page every cell lies exactly on a bin
     * and the interpolation below adds no blur at angle 0. */
    const float fx = (float)g->tile_w, fy = (float)g->tile_h;
    const float half_w = (g->width / 2 + 0.5f) * fx, half_h = (g->height / 2 + 0.5f) * fy;
    for (int x = 0; x < g->width; x++)
        out->column_x[x] = (x + 0.5f) * fx - half_w;
    for (int y = 0; y < g->height; y++) {
        const uint16_t *row = g->count + (size_t)y * g->width;
        out->row_y[y] = (y + 0.5f) * fy - half_h;
        for (int x = 0; x < g->width; x++) { /* without a branch: ink and blank alternate */
            out->column[out->count] = (uint16_t)x;
            out->weight[out->count] = row[x];
            out->count += row[x] != 0;
        }
        out->row_end[y] = out->count;
    }
    return 0;
}

static void cells_free(cells *c)
{
    free(c->column);
    free(c->weight);
    free(c->column_x);
    free(c->scratch);
    free(c->row_y);
    free(c->row_end);
}

/* Adds the projection of the cells at angle_deg, in bins of bin_px, to `profile` (nbins
 * bins, in units of 1/256 of an ink pixel, the page's centre at the middle bin); the bins
 * touched are lo..hi (lo > hi when there are no cells). */
static void project(const cells *c, double angle_deg, double bin_px, int32_t *profile, int nbins,
                    int *lo, int *hi)
{
    *lo = 1;
    *hi = 0;
    if (c->count == 0) return;
    const double a = angle_deg * LT_PI / 180.0;
    /* Positions in bins, in 24.8 fixed point. */
    const float s = (float)(256.0 * sin(a) / bin_px), co = (float)(256.0 * cos(a) / bin_px);
    const float offset = (float)(256 * (nbins / 2));
    /* Each cell is shared linearly between its two nearest bins, so that the criterion varies
     * smoothly with the angle instead of in steps of one bin. The cells come row by row; where
     * the bin changes at nearly every cell along a row (DIRECT_STEP_BINS), each cell is added to
     * the profile at once; elsewhere the shares are summed in registers while the bin stays,
     * and added to the profile when it moves on. */
    float *const x_s = c->scratch; /* each column's x times s */
    for (int x = 0; x < c->columns; x++)
        x_s[x] = c->column_x[x] * s;
    int first_row = 0;
    while (c->row_end[first_row] == 0)
        first_row++;
    int32_t bin = (int32_t)(x_s[c->column[0]] + c->row_y[first_row] * co + offset) >> 8;
    int32_t low = 0, high = 0, bmin = bin, bmax = bin;
    if (fabsf(s) * c->tile_w >= DIRECT_STEP_BINS * 256) {
        for (int y = first_row, i = 0; y < c->rows; y++) {
            const float y_co = c->row_y[y] * co;
            for (const int end = c->row_end[y]; i < end; i++) {
                const int32_t pos = (int32_t)(x_s[c->column[i]] + y_co + offset);
                const int32_t b = pos >> 8, frac = pos & 255;
                profile[b] += c->weight[i] * (256 - frac);
                profile[b + 1] += c->weight[i] * frac;
                bmin = b < bmin ? b : bmin;
                bmax = b > bmax ? b : bmax;
            }
        }
        *lo = bmin;
        *hi = bmax + 1;
        return;
    }
    for (int y = first_row, i = 0; y < c->rows; y++) {
        const float y_co = c->row_y[y] * co;
        for (const int end = c->row_end[y]; i < end; i++) {
            const int32_t pos = (int32_t)(x_s[c->column[i]] + y_co + offset);
            const int32_t b = pos >> 8, frac = pos & 255;
            if (b != bin) {
                profile[bin] += low;
                profile[bin + 1] += high;
                bmin = b < bmin ? b : bmin;
                bmax = b > bmax ? b : bmax;
                bin = b;
                low = high = 0;
            }
            low += c->weight[i] * (256 - frac);
            high += c->weight[i] * frac;
        }
    }
    profile[bin] += low;
    profile[bin + 1] += high;
    *lo = bmin;
    *hi = bmax + 1;
}

/* Sharpness of the projection at angle_deg: sum of squared differences of adjacent bins of
 * height bin_px of the ink rotated by -angle_deg. `profile` (nbins bins) is scratch, zero on
 * entry and on return. */
static double sharpness(const cells *c, double angle_deg, double bin_px, int32_t *profile,
                        int nbins)
{
    int lo, hi;
    project(c, angle_deg, bin_px, profile, nbins, &lo, &hi);
    double sum = 0, prev = 0;
    for (int b = lo; b <= hi; b++) {
        const double d = profile[b] - prev;
        sum += d * d;
        prev = profile[b];
        profile[b] = 0;
    }
    return sum + prev * prev;
}

/* Share of the profile's bins, within the central 98% of its mass, that are nearly empty
 * (under 15% of the mean bin): the white between text lines. Structureless ink (noise,
 * halftone) has none, whatever its projection's sharpness. */
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

/* Best angle in [lo, hi] at `step` (its index returned), the criterion of every angle in
 * crit[] (room for the number of steps). */
static int sweep(const grid *g, const cells *c, double lo, double hi, double step, int32_t *profile,
                 int nbins, double *crit)
{
    int n = (int)floor((hi - lo) / step + 0.5) + 1, best = 0;
    for (int i = 0; i < n; i++) {
        crit[i] = sharpness(c, lo + i * step, g->tile_h, profile, nbins);
        if (crit[i] > crit[best]) best = i;
    }
    return best;
}

/* The search: the coarse sweep over [-range_deg, range_deg] on the coarse grid, two
 * refinements on the fine grid around the best angle so far, then the vertex of the parabola
 * through the best angle and its neighbours. *confidence: how far the coarse peak stands out (1 -
 * median / peak), scaled down where the profile at the angle found shows less white between lines
 * than GAP_EVIDENCE. crit and sorted have room for the coarse sweep's angles. */
static void search(const grid *const gr[2], const cells *const ce[2], double range_deg,
                   int32_t *profile, int nbins, double *crit, double *sorted, double *angle_out,
                   double *confidence_out)
{
    const int coarse_n = (int)floor(2 * range_deg / COARSE_STEP_DEG + 0.5) + 1;
    int best = sweep(gr[0], ce[0], -range_deg, range_deg, COARSE_STEP_DEG, profile, nbins, crit);
    double angle = -range_deg + best * COARSE_STEP_DEG;
    memcpy(sorted, crit, (size_t)coarse_n * sizeof *sorted);
    double peak = crit[best], typical = lt_median(sorted, coarse_n);
    const double confidence = peak > 0 ? 1.0 - typical / peak : 0;

    double prev = 0, next = 0;
    for (int s = 0; s < 2; s++) {
        const double lo = angle - REFINE_SPAN_DEG[s], hi = angle + REFINE_SPAN_DEG[s];
        const double step = REFINE_STEP_DEG[s];
        int n = (int)floor((hi - lo) / step + 0.5) + 1;
        int b = sweep(gr[1], ce[1], lo, hi, step, profile, nbins, crit);
        angle = lo + b * step;
        prev = b > 0 ? crit[b - 1] : crit[b];
        next = b < n - 1 ? crit[b + 1] : crit[b];
        peak = crit[b];
    }
    /* The vertex of the parabola through the best angle and its neighbours. */
    double denom = prev - 2 * peak + next;
    if (denom < 0) {
        double shift = 0.5 * (prev - next) / denom;
        if (fabs(shift) <= 1) angle += shift * REFINE_STEP_DEG[1];
    }
    /* A sharp projection counts as evidence only when it shows white between lines. */
    int lo, hi;
    project(ce[1], angle, gr[1]->tile_h, profile, nbins, &lo, &hi);
    const double gaps = gap_fraction(profile, nbins);
    memset(profile, 0, (size_t)nbins * sizeof *profile);
    *angle_out = angle;
    *confidence_out = confidence * (gaps >= GAP_EVIDENCE ? 1.0 : gaps / GAP_EVIDENCE);
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
    const int coarse_n = (int)floor(2 * range_deg / COARSE_STEP_DEG + 0.5) + 1;
    const int refine_n = (int)floor(2 * REFINE_SPAN_DEG[0] / REFINE_STEP_DEG[0] + 0.5) + 1;
    const int crit_n = coarse_n > refine_n ? coarse_n : refine_n;
    int32_t *profile = calloc((size_t)nbins, sizeof *profile);
    double *crit = malloc((size_t)crit_n * sizeof *crit);
    double *sorted = malloc((size_t)crit_n * sizeof *sorted);
    /* Tiles 8 x 2 px and 64 x 2 px. */
    grid fine = {0}, coarse = {0};
    cells fine_c = {0}, coarse_c = {0};
    int rc = 0;
    if (!profile || !crit || !sorted || grid_from_ink(ink, &fine) ||
        grid_widen(&fine, COARSE_TILE_PX / FINE_TILE_PX, &coarse) ||
        cells_from_grid(&fine, &fine_c) || cells_from_grid(&coarse, &coarse_c)) {
        rc = lt_error_set(err, LT_ENOMEM, "skew: out of memory");
        goto done;
    }
    if (coarse_c.count < 8) goto done; /* blank page: no evidence */
    const grid *const gr[2] = {&coarse, &fine};
    const cells *const ce[2] = {&coarse_c, &fine_c};
    double angle, confidence;
    search(gr, ce, range_deg, profile, nbins, crit, sorted, &angle, &confidence);
    if (confidence >= min_confidence) {
        out->angle_deg = angle;
        out->confidence = confidence;
    }
done:
    free(profile);
    free(crit);
    free(sorted);
    free(fine.count);
    free(coarse.count);
    cells_free(&fine_c);
    cells_free(&coarse_c);
    return rc;
}

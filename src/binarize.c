/* binarize.c — Sauvola & Pietikäinen (2000) adaptive thresholding,
 *   T(x,y) = m(x,y) * (1 + k * (s(x,y) / R - 1)),
 * m and s the mean and standard deviation over a window x window neighbourhood (clipped at
 * the image border). Running column and row sums give O(pixels) time for any window, the
 * same complexity as the integral images of Shafait, Keysers & Breuel (2008) with memory
 * proportional to the width only. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Ink decision without a square root: g < m(1-k) + (m k / R) s holds when the left part
 * a = g - m(1-k) is negative, or else when a^2 < (m k / R)^2 * variance. */
static inline uint8_t is_ink(double g, double sum, double sumsq, double inv_n, double k,
                             double k_over_r, int paper_above_mean)
{
    double m = sum * inv_n;
    if (paper_above_mean && g > m) return 0; /* T <= m when s <= R: most of a page */
    double a = g - m * (1.0 - k);
    if (a <= 0) return 1;
    double var = sumsq * inv_n - m * m;
    if (var <= 0) return 0;
    double b = m * k_over_r;
    return a * a < b * b * var;
}

int lt_sauvola_window_px(const lt_params *p, double dpi)
{
    if (p && p->sauvola_window_px > 0) return p->sauvola_window_px;
    int w = (int)lround(0.17 * dpi);
    if (w < 15) w = 15;
    return w | 1;
}

int lt_binarize(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                lt_error *err)
{
    *ink = NULL;
    if (!gray || gray->kind != LT_IMAGE_GRAY || window_px < 1 || window_px > LT_MAX_WINDOW_PX ||
        r <= 0 || k < 0)
        return lt_error_set(err, LT_EINVAL, "binarize: bad arguments");
    const int w = gray->width, h = gray->height, half = window_px / 2;
    lt_image *out = lt_image_new(w, h, LT_IMAGE_INK);
    uint32_t *colsum = calloc((size_t)w, sizeof *colsum);
    uint32_t *colsq = calloc((size_t)w, sizeof *colsq); /* <= 65535 rows x 255^2 < 2^32 */
    if (!out || !colsum || !colsq) {
        lt_image_free(out);
        free(colsum);
        free(colsq);
        return lt_error_set(err, LT_ENOMEM, "binarize: out of memory");
    }
    out->dpi = gray->dpi;
    const double k_over_r = k / r;
    /* The deviation of 8-bit values is at most 127.5, so with R >= 127.5 the threshold never
     * exceeds the mean, and a pixel above the mean is paper. */
    const int paper_above_mean = r >= 127.5;
    /* Column sums hold rows [y - half, y + half] clipped; start with rows [0, half). */
    for (int y = 0; y < half && y < h; y++) {
        const uint8_t *row = gray->pixels + (size_t)y * w;
        for (int x = 0; x < w; x++) {
            colsum[x] += row[x];
            colsq[x] += (uint32_t)row[x] * row[x];
        }
    }
    for (int y = 0; y < h; y++) {
        int add = y + half, drop = y - half - 1;
        if (add < h) {
            const uint8_t *row = gray->pixels + (size_t)add * w;
            for (int x = 0; x < w; x++) {
                colsum[x] += row[x];
                colsq[x] += (uint32_t)row[x] * row[x];
            }
        }
        if (drop >= 0) {
            const uint8_t *row = gray->pixels + (size_t)drop * w;
            for (int x = 0; x < w; x++) {
                colsum[x] -= row[x];
                colsq[x] -= (uint32_t)row[x] * row[x];
            }
        }
        const int rows = (add < h ? add : h - 1) - (drop + 1 > 0 ? drop + 1 : 0) + 1;
        const uint8_t *src = gray->pixels + (size_t)y * w;
        uint8_t *dst = out->pixels + (size_t)y * w;
        int64_t sum = 0, sumsq = 0; /* signed: converts to double in one instruction */
        for (int x = 0; x < half && x < w; x++) {
            sum += colsum[x];
            sumsq += colsq[x];
        }
        for (int x = 0; x < w; x++) {
            int right = x + half, left = x - half - 1;
            if (right < w) {
                sum += colsum[right];
                sumsq += colsq[right];
            }
            if (left >= 0) {
                sum -= colsum[left];
                sumsq -= colsq[left];
            }
            int cols = (right < w ? right : w - 1) - (left + 1 > 0 ? left + 1 : 0) + 1;
            double inv_n = 1.0 / ((double)rows * cols);
            dst[x] =
                is_ink(src[x], (double)sum, (double)sumsq, inv_n, k, k_over_r, paper_above_mean);
        }
    }
    free(colsum);
    free(colsq);
    *ink = out;
    return 0;
}

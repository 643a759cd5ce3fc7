/* test_binarize.c — checks lt_binarize against the published Sauvola & Pietikäinen (2000)
 * threshold T = m * (1 + k * (s / R - 1)): exact results on built pages, a worked example done
 * by hand, and a naive per-pixel reference (written here, independently) on random images;
 * lt_binarize_sampled against its bilinear interpolation of exact thresholds at tile centres;
 * lt_binarize_normalized on pale strokes that Sauvola's threshold loses and on pale copies of a
 * page with black and gray print; lt_binarize_page on
 * light strokes on a dark ground, also at its edge.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"

/* Naive reference: for every pixel, the mean m and standard deviation s of the window x window
 * neighbourhood clipped to the image, straight from the definition (integer sums, so m and the
 * variance are exact rationals), then T. The neighbourhood of an odd window w is the pixels at
 * most w/2 away in x and in y. Result per pixel: 1 ink (g < T), 0 paper (g > T), 2 a tie
 * (|g - T| within rounding, s > 0), which either answer satisfies. half_px = window / 2. */
static void naive_sauvola(const lt_image *g, int half_px, double k, double r, uint8_t *out)
{
    const int w = g->width, h = g->height;
    for (int y = 0; y < h; y++)
        for (int x = 0; x < w; x++) {
            int64_t sum = 0, sumsq = 0, n = 0;
            for (int v = y - half_px; v <= y + half_px; v++) {
                if (v < 0 || v >= h) continue;
                for (int u = x - half_px; u <= x + half_px; u++) {
                    if (u < 0 || u >= w) continue;
                    int64_t p = g->pixels[(size_t)v * w + u];
                    sum += p;
                    sumsq += p * p;
                    n++;
                }
            }
            const int64_t var_num = n * sumsq - sum * sum; /* n^2 * variance, exact */
            const int gray = g->pixels[(size_t)y * w + x];
            if (var_num == 0) {
                /* Flat window: g = m, s = 0, T = m (1 - k) < g unless g = 0 = T, a pixel
                 * exactly at the threshold, which lineate counts as ink (an all-black window
                 * is ink, not paper). */
                out[(size_t)y * w + x] = gray == 0 || k == 0;
                continue;
            }
            double m = (double)sum / n;
            double s = sqrt((double)var_num) / n;
            double t = m * (1 + k * (s / r - 1));
            out[(size_t)y * w + x] = fabs(gray - t) <= 1e-9 * (1 + t) ? 2 : gray < t;
        }
}

static lt_image *binarize(const lt_image *gray, int window, double k, double r, const char *what)
{
    lt_error err = {0};
    lt_image *ink = NULL;
    int rc = lt_binarize(gray, window, k, r, &ink, &err);
    if (rc || !ink) {
        tu_fail("%s: lt_binarize failed (%d): %s", what, rc, err.message);
        return NULL;
    }
    CHECK(ink->kind == LT_IMAGE_INK, "%s: result kind %d, want LT_IMAGE_INK", what, ink->kind);
    CHECK(ink->width == gray->width && ink->height == gray->height, "%s: size %dx%d, want %dx%d",
          what, ink->width, ink->height, gray->width, gray->height);
    return ink;
}

/* Uniform pages: white has no ink at all; pure black is all ink. For white, s = 0 and
 * T = 255 (1 - k) < 255. For black, m = s = 0 so T = 0 = g: the pixel is at the threshold, and
 * lineate counts ink at the threshold as ink (the mean of an all-black window is black). */
static void test_uniform(void)
{
    const int windows[] = {1, 3, 15, 51, 201};
    for (size_t i = 0; i < sizeof windows / sizeof windows[0]; i++) {
        lt_image *white = tu_image(120, 90, LT_IMAGE_GRAY, 255);
        lt_image *black = tu_image(120, 90, LT_IMAGE_GRAY, 0);
        lt_image *a = binarize(white, windows[i], 0.34, 128, "uniform white");
        lt_image *b = binarize(black, windows[i], 0.34, 128, "uniform black");
        if (a) CHECK_INT(tu_count_ink(a), 0, "uniform white, window %d: ink pixels", windows[i]);
        if (b)
            CHECK_INT(tu_count_ink(b), 120L * 90, "uniform black, window %d: ink pixels",
                      windows[i]);
        /* Uniform mid gray: s = 0, T = m (1 - k) < m = g, so paper for any k > 0. */
        lt_image *mid = tu_image(120, 90, LT_IMAGE_GRAY, 128);
        lt_image *c = binarize(mid, windows[i], 0.34, 128, "uniform gray");
        if (c) CHECK_INT(tu_count_ink(c), 0, "uniform gray 128, window %d: ink", windows[i]);
        lt_image_free(white);
        lt_image_free(black);
        lt_image_free(mid);
        lt_image_free(a);
        lt_image_free(b);
        lt_image_free(c);
    }
}

/* A dark square on paper, with a window larger than the square: ink is exactly the square.
 * Worked out from the formula for the 20 x 20 square of gray 30 on paper 220 at [40, 60) of a
 * 100 x 100 page and a 41 px window: every square pixel's window holds the whole square,
 * p = 400/1681 dark, m = 220 - 190 p = 174.8, s = 190 sqrt(p (1 - p)) = 80.9,
 * T = 174.8 (1 + 0.34 (80.9/128 - 1)) = 152.9 > 30: ink. A paper pixel (g = 220) has
 * T <= m (1 + k (s/R - 1)) < m <= 220 since s < R: paper. */
static void test_square(void)
{
    struct {
        int ink_gray, paper_gray, window;
        double k;
    } cases[] = {{30, 220, 41, 0.34}, {0, 255, 41, 0.34}, {0, 255, 63, 0.5}, {60, 200, 25, 0.2}};
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        lt_image *g = tu_image(100, 100, LT_IMAGE_GRAY, cases[i].paper_gray);
        tu_fill(g, 40, 40, 60, 60, cases[i].ink_gray);
        g->dpi = 150;
        lt_image *ink = binarize(g, cases[i].window, cases[i].k, 128, "square");
        if (ink) {
            long wrong = 0;
            for (int y = 0; y < 100; y++)
                for (int x = 0; x < 100; x++) {
                    int want = x >= 40 && x < 60 && y >= 40 && y < 60;
                    wrong += ink->pixels[y * 100 + x] != want;
                }
            CHECK_INT(wrong, 0, "square %d on %d, window %d: pixels differing from the square",
                      cases[i].ink_gray, cases[i].paper_gray, cases[i].window);
            CHECK_NEAR(ink->dpi, 150, 0, "square: dpi carried over");
        }
        lt_image_free(g);
        lt_image_free(ink);
    }
}

/* Worked example by hand (k = 0.5, R = 128, window 3): a pixel of gray c amid eight of 200.
 * c = 115: sum = 1715, m = 190.5556; sum of squares = 333225, E[g^2] = 37025,
 *   var = 37025 - 190.5556^2 = 713.58, s = 26.713, s/R = 0.20870,
 *   T = 190.5556 * (1 + 0.5 * (0.20870 - 1)) = 115.162 > 115: ink.
 * c = 116: m = 190.6667, var = 696.889, s = 26.399, T = 114.995 < 116: paper.
 * The corner pixels (gray 200) see a clipped 2 x 2 window {200, 200, 200, c}: for c = 115,
 * m = 178.75, var = 1354.69, s = 36.81, T = 178.75 * 0.64378 = 115.07 < 200: paper. */
static void test_worked_example(void)
{
    for (int c = 115; c <= 116; c++) {
        lt_image *g = tu_image(3, 3, LT_IMAGE_GRAY, 200);
        g->pixels[4] = (uint8_t)c;
        lt_image *ink = binarize(g, 3, 0.5, 128, "worked example");
        if (ink) {
            CHECK_INT(ink->pixels[4], c == 115, "worked example: centre %d ink", c);
            CHECK_INT(tu_count_ink(ink), c == 115, "worked example: ink pixels (centre %d)", c);
        }
        lt_image_free(g);
        lt_image_free(ink);
    }
}

/* Random pages (fixed seeds) against the naive reference, every pixel. Two kinds: uniform
 * noise, and flat patches with noise and black areas (so that windows with s = 0, all-black
 * windows and sharp edges all occur). Even windows: lt_binarize uses the odd neighbourhood
 * of side window + 1 (pixels at most window/2 away), the only centred choice; the reference
 * is given the same half width. */
static void test_against_naive(void)
{
    const int windows[] = {1, 2, 3, 4, 5, 7, 8, 15, 16, 31, 60, 61, 150};
    const double ks[] = {0.2, 0.34, 0.5};
    const double rs[] = {128, 64};
    const int sizes[][2] = {{61, 47}, {33, 70}};
    long ties = 0, compared = 0;
    for (int kind = 0; kind < 2; kind++)
        for (size_t sz = 0; sz < 2; sz++) {
            const int w = sizes[sz][0], h = sizes[sz][1];
            tu_rng rng = {1000 + 10 * (uint64_t)kind + sz};
            lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, 0);
            if (kind == 0) {
                for (int i = 0; i < w * h; i++)
                    g->pixels[i] = (uint8_t)tu_range(&rng, 0, 255);
            } else {
                tu_fill(g, 0, 0, w, h, 230);
                for (int b = 0; b < 12; b++) {
                    int x0 = tu_range(&rng, -5, w - 1), y0 = tu_range(&rng, -5, h - 1);
                    int v = b % 4 == 0 ? 0 : tu_range(&rng, 0, 255);
                    tu_fill(g, x0, y0, x0 + tu_range(&rng, 2, 25), y0 + tu_range(&rng, 2, 25), v);
                }
                for (int i = 0; i < w * h / 20; i++)
                    g->pixels[tu_range(&rng, 0, w * h - 1)] = (uint8_t)tu_range(&rng, 0, 255);
            }
            uint8_t *want = malloc((size_t)w * h);
            if (!want) tu_die("out of memory");
            for (size_t wi = 0; wi < sizeof windows / sizeof windows[0]; wi++)
                for (size_t ki = 0; ki < 3; ki++)
                    for (size_t ri = 0; ri < 2; ri++) {
                        const int win = windows[wi];
                        naive_sauvola(g, win / 2, ks[ki], rs[ri], want);
                        lt_image *ink = binarize(g, win, ks[ki], rs[ri], "random");
                        if (!ink) continue;
                        long wrong = 0, first = -1, inked = 0;
                        for (int i = 0; i < w * h; i++) {
                            compared++;
                            if (want[i] == 2) {
                                ties++;
                                continue;
                            }
                            inked += want[i];
                            if (ink->pixels[i] != want[i]) {
                                if (first < 0) first = i;
                                wrong++;
                            }
                        }
                        CHECK(wrong == 0,
                              "random kind %d %dx%d, window %d, k %.2f, R %.0f: %ld pixels "
                              "differ from the naive Sauvola reference (first at x %ld y %ld)",
                              kind, w, h, win, ks[ki], rs[ri], wrong, first % w, first / w);
                        /* The reference must see both classes, or the comparison is empty. */
                        if (win > 1)
                            CHECK(inked > 0 && inked < w * h,
                                  "random kind %d window %d: reference has %ld ink pixels", kind,
                                  win, inked);
                        lt_image_free(ink);
                    }
            free(want);
            lt_image_free(g);
        }
    /* With s > 0 a tie needs T to be an exact integer: this should (nearly) never happen. */
    printf("naive comparison: %ld pixels, %ld near-ties (either answer accepted)\n", compared,
           ties);
    CHECK(ties * 10000 < compared, "naive comparison: %ld near-ties of %ld", ties, compared);
}

/* lt_binarize_sampled against the naive reference on built pages: a paper gradient with
 * text-like strokes and noise, and the random patch pages of test_against_naive, in sizes that
 * are and are not multiples of the 3 px tile, down to one pixel. At the pixels where it samples the
 * threshold (the centres of the 3 x 3 tiles: x % 3 == 1, y % 3 == 1) it must agree exactly, ties
 * apart; elsewhere the interpolated threshold may flip pixels within a fraction of a gray level of
 * it, which the floor below bounds (measured when this test was written: at most 0.07% of the
 * pixels here; up to 0.06% on real pages, see tests/ref_sauvola.py). A window that
 * it does not sample (not an odd multiple of 3, or under 27 px) gives lt_binarize's result. */
static void test_sampled(void)
{
    const int windows[] = {27, 33, 51, 99};
    const double ks[] = {0.2, 0.34, 0.5};
    const int sizes[][2] = {{61, 47}, {100, 71}, {150, 99}, {1, 1}, {2, 5}, {7, 4}};
    double worst = 0;
    for (int kind = 0; kind < 2; kind++)
        for (size_t sz = 0; sz < sizeof sizes / sizeof sizes[0]; sz++) {
            const int w = sizes[sz][0], h = sizes[sz][1];
            tu_rng rng = {2000 + 10 * (uint64_t)kind + sz};
            lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, 0);
            for (int y = 0; y < h; y++)
                for (int x = 0; x < w; x++)
                    g->pixels[(size_t)y * w + x] =
                        (uint8_t)(kind ? 230 : 220 - 90 * x / w - 40 * y / h);
            for (int b = 0; b < w * h / 150; b++) {
                int x0 = tu_range(&rng, -3, w - 1), y0 = tu_range(&rng, -3, h - 1);
                int v = kind && b % 4 == 0 ? 0 : tu_range(&rng, 20, 130);
                tu_fill(g, x0, y0, x0 + tu_range(&rng, 2, 6), y0 + tu_range(&rng, 4, 14), v);
            }
            for (int i = 0; i < w * h / 10; i++) {
                int at = tu_range(&rng, 0, w * h - 1), v = g->pixels[at] + tu_range(&rng, -12, 12);
                g->pixels[at] = (uint8_t)(v < 0 ? 0 : v > 255 ? 255 : v);
            }
            uint8_t *want = malloc((size_t)w * h);
            if (!want) tu_die("out of memory");
            for (size_t wi = 0; wi < sizeof windows / sizeof windows[0]; wi++)
                for (size_t ki = 0; ki < 3; ki++) {
                    const int win = windows[wi];
                    naive_sauvola(g, win / 2, ks[ki], 128, want);
                    lt_error err = {0};
                    lt_image *ink = NULL;
                    if (lt_binarize_sampled(g, win, ks[ki], 128, &ink, &err)) {
                        tu_fail("sampled: lt_binarize_sampled failed: %s", err.message);
                        continue;
                    }
                    long centre_wrong = 0, wrong = 0, compared = 0;
                    for (int y = 0; y < h; y++)
                        for (int x = 0; x < w; x++) {
                            const size_t i = (size_t)y * w + x;
                            if (want[i] == 2) continue;
                            compared++;
                            if (ink->pixels[i] == want[i]) continue;
                            wrong++;
                            centre_wrong += x % 3 == 1 && y % 3 == 1;
                        }
                    const double share = (double)wrong / compared;
                    if (share > worst) worst = share;
                    CHECK(centre_wrong == 0,
                          "sampled kind %d %dx%d, window %d, k %.2f: %ld tile-centre pixels "
                          "differ from the naive reference",
                          kind, w, h, win, ks[ki], centre_wrong);
                    CHECK(share <= 0.005,
                          "sampled kind %d %dx%d, window %d, k %.2f: %.3f%% of the pixels "
                          "differ from the naive reference (at most 0.5%%)",
                          kind, w, h, win, ks[ki], 100 * share);
                    lt_image_free(ink);
                }
            /* Windows it does not sample: lt_binarize's result, pixel for pixel. */
            const int plain[] = {25, 29, 52};
            for (size_t pi = 0; pi < 3; pi++) {
                lt_error err = {0};
                lt_image *a = NULL, *b = NULL;
                if (lt_binarize(g, plain[pi], 0.34, 128, &a, &err) ||
                    lt_binarize_sampled(g, plain[pi], 0.34, 128, &b, &err))
                    tu_fail("sampled: binarize failed: %s", err.message);
                else
                    CHECK(memcmp(a->pixels, b->pixels, (size_t)w * h) == 0,
                          "sampled %dx%d, window %d: differs from lt_binarize", w, h, plain[pi]);
                lt_image_free(a);
                lt_image_free(b);
            }
            free(want);
            lt_image_free(g);
        }
    printf("sampled: worst share of pixels off the naive reference %.3f%%\n", 100 * worst);
}

/* Sauvola's T at (cx, cy), which may lie just outside the image (the centre of a partial tile):
 * the mean and deviation of the pixels at most half_px away in x and y, from the definition as
 * in naive_sauvola. */
static double naive_threshold_at(const lt_image *g, int cx, int cy, int half_px, double k, double r)
{
    int64_t sum = 0, sumsq = 0, n = 0;
    for (int v = cy - half_px; v <= cy + half_px; v++)
        for (int u = cx - half_px; u <= cx + half_px; u++) {
            if (u < 0 || u >= g->width || v < 0 || v >= g->height) continue;
            const int64_t p = g->pixels[(size_t)v * g->width + u];
            sum += p, sumsq += p * p, n++;
        }
    const double m = (double)sum / n, s = sqrt((double)(n * sumsq - sum * sum)) / n;
    return m * (1 + k * (s / r - 1));
}

/* Position of coordinate c among the tile centres 3 t + 1 (t < count): the centre at or before
 * it in *t, the share of the way to the next one in *frac; held at the first and the last. */
static void between_centres(int c, int count, int *t, double *frac)
{
    *t = c < 1 ? 0 : (c - 1) / 3;
    *frac = c < 1 ? 0 : ((c - 1) % 3) / 3.0;
    if (*t >= count - 1) *t = count - 1, *frac = 0;
}

/* lt_binarize_sampled on text-like pages with wide blank margins and gaps, at every pixel, against
 * its definition computed here independently: Sauvola's T (naive_threshold_at) at the centre of
 * every 3 x 3 tile, interpolated bilinearly in between, held beyond the outermost centres, ink
 * where gray <= T; a pixel within rounding of T (the thresholds are kept to 1/65536 of a level)
 * is left out. Widths of every remainder modulo 3 and around multiples of 16. */
static void test_sampled_interpolation(void)
{
    const int sizes[][2] = {{201, 100}, {256, 62}, {257, 48}};
    const int windows[] = {27, 51};
    for (size_t sz = 0; sz < sizeof sizes / sizeof sizes[0]; sz++) {
        const int w = sizes[sz][0], h = sizes[sz][1], gw = (w + 2) / 3, gh = (h + 2) / 3;
        tu_rng rng = {3000 + (uint64_t)sz};
        lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, 236);
        for (int y = 10; y + 12 < h; y += 22) /* lines of letters, margins of 30 px */
            for (int x = 30; x + 36 < w; x += tu_range(&rng, 6, 14))
                tu_fill(g, x, y, x + tu_range(&rng, 2, 5), y + tu_range(&rng, 6, 12),
                        tu_range(&rng, 0, 3) ? tu_range(&rng, 120, 180) : tu_range(&rng, 10, 100));
        tu_fill(g, w - 40, 0, w - 20, h / 3, 0); /* a black bar: thresholds that vary fast */
        for (int i = 0; i < w * h / 8; i++) {
            const int at = tu_range(&rng, 0, w * h - 1), v = g->pixels[at] + tu_range(&rng, -9, 9);
            g->pixels[at] = (uint8_t)(v < 0 ? 0 : v > 255 ? 255 : v);
        }
        double *centre = malloc((size_t)gw * gh * sizeof *centre);
        if (!centre) tu_die("out of memory");
        for (size_t wi = 0; wi < sizeof windows / sizeof windows[0]; wi++) {
            for (int ty = 0; ty < gh; ty++)
                for (int tx = 0; tx < gw; tx++)
                    centre[ty * gw + tx] =
                        naive_threshold_at(g, 3 * tx + 1, 3 * ty + 1, windows[wi] / 2, 0.34, 128);
            lt_error err = {0};
            lt_image *ink = NULL;
            if (lt_binarize_sampled(g, windows[wi], 0.34, 128, &ink, &err)) {
                tu_fail("sampled interpolation: lt_binarize_sampled failed: %s", err.message);
                continue;
            }
            long wrong = 0, inked = 0, near = 0, first = -1;
            for (int y = 0; y < h; y++)
                for (int x = 0; x < w; x++) {
                    int tx, ty;
                    double fx, fy;
                    between_centres(x, gw, &tx, &fx);
                    between_centres(y, gh, &ty, &fy);
                    const int tx1 = fx > 0 ? tx + 1 : tx, ty1 = fy > 0 ? ty + 1 : ty;
                    const double t =
                        (1 - fy) * ((1 - fx) * centre[ty * gw + tx] + fx * centre[ty * gw + tx1]) +
                        fy * ((1 - fx) * centre[ty1 * gw + tx] + fx * centre[ty1 * gw + tx1]);
                    const int gray = g->pixels[(size_t)y * w + x];
                    if (fabs(gray - t) < 2.0 / 65536) continue;
                    inked += gray <= t;
                    near += fabs(gray - t) < 4;
                    if (ink->pixels[(size_t)y * w + x] != (gray <= t)) {
                        if (first < 0) first = (long)y * w + x;
                        wrong++;
                    }
                }
            CHECK(wrong == 0,
                  "sampled interpolation %dx%d, window %d: %ld pixels differ from the "
                  "interpolated thresholds (first at x %ld y %ld)",
                  w, h, windows[wi], wrong, first % w, first / w);
            CHECK(inked > w * h / 50 && inked < w * h / 2,
                  "sampled interpolation %dx%d: %ld ink pixels, want a page of text", w, h, inked);
            CHECK(near > w * h / 200,
                  "sampled interpolation %dx%d: %ld pixels within 4 levels of the threshold, "
                  "want at least 0.5%%",
                  w, h, near);
            lt_image_free(ink);
        }
        free(centre);
        lt_image_free(g);
    }
}

/* Window 1: m = g and s = 0, so T = g (1 - k): only black pixels (g = 0 = T, at the threshold)
 * are ink. */
static void test_window_one(void)
{
    tu_rng rng = {77};
    lt_image *g = tu_image(50, 40, LT_IMAGE_GRAY, 0);
    for (int i = 0; i < 2000; i++)
        g->pixels[i] = (uint8_t)(tu_range(&rng, 0, 3) ? tu_range(&rng, 1, 255) : 0);
    lt_image *ink = binarize(g, 1, 0.34, 128, "window 1");
    if (ink) {
        long wrong = 0;
        for (int i = 0; i < 2000; i++)
            wrong += ink->pixels[i] != (g->pixels[i] == 0);
        CHECK_INT(wrong, 0, "window 1: pixels where ink != (gray == 0)");
    }
    lt_image_free(g);
    lt_image_free(ink);
}

/* Pale print (Wolf & Jolion's normalised form, lt_binarize_normalized): strokes of gray 170 on
 * paper of 235, the darkest 3 x 3 tile 170, ink a fifth of any window at most. Sauvola's
 * published threshold over paper, 235 (1 - 0.34) = 155, lies below the ink: plain Sauvola
 * finds none. The normalised threshold, exact and sampled, must give exactly the strokes: the
 * range [170, 235] stretched to [0, 255] makes them black strokes on white, whose ink Sauvola's
 * threshold gets exactly (the second pass). A page of black strokes (gray points 0 and 255)
 * gives lt_binarize's ink bit for bit. */
static void test_pale(void)
{
    const int w = 240, h = 180;
    for (int pass = 0; pass < 2; pass++) {
        const int ink_gray = pass == 0 ? 170 : 0, paper = pass == 0 ? 235 : 230;
        lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, paper);
        for (int row = 0; row < 4; row++) /* "lines" of 5 px strokes, 14 px apart */
            for (int x = 12; x + 5 < w - 12; x += 14)
                tu_fill(g, x, 20 + 40 * row, x + 5, 20 + 40 * row + 22 - (x % 3) * 4, ink_gray);
        double black = -1, white = -1;
        CHECK_INT(lt_gray_points(g, &black, &white), 0, "pale %d: lt_gray_points", pass);
        /* Strokes of 170 on 235 (black over white 0.72): the range stretched fully; black on
         * 230 (0): not at all, which is plain Sauvola. */
        CHECK(black == (pass == 0 ? ink_gray : 0) && white == (pass == 0 ? paper : 255),
              "pale %d: gray points %g %g", pass, black, white);
        lt_image *plain = binarize(g, 33, 0.34, 128, "pale: plain");
        for (int sampled = 0; sampled < 2; sampled++) {
            lt_error err = {0};
            lt_image *ink = NULL;
            if (lt_binarize_normalized(g, 33, 0.34, 128, LT_GRAY_POINT_AUTO, LT_GRAY_POINT_AUTO,
                                       sampled, &ink, &err)) {
                tu_fail("pale: lt_binarize_normalized failed: %s", err.message);
                continue;
            }
            long wrong = 0, plain_ink = 0, differ = 0;
            for (int i = 0; i < w * h; i++) {
                wrong += ink->pixels[i] != (g->pixels[i] == ink_gray);
                plain_ink += plain && plain->pixels[i];
                differ += plain && plain->pixels[i] != ink->pixels[i];
            }
            if (pass == 0) {
                CHECK_INT(wrong, 0, "pale, sampled %d: pixels where ink != stroke", sampled);
                CHECK_INT(plain_ink, 0, "pale: plain Sauvola's ink pixels");
            } else if (!sampled) {
                CHECK_INT(differ, 0, "black strokes: pixels where lt_binarize differs");
            }
            lt_image_free(ink);
        }
        lt_image_free(plain);
        lt_image_free(g);
    }
}

/* Sets the whole 3 x 3 tile whose top left pixel is (x, y) to `low` in its first `lows` pixels
 * (row by row) and `high` in the rest. */
static void set_tile(lt_image *g, int x, int y, int lows, int low, int high)
{
    for (int i = 0; i < 9; i++)
        g->pixels[(size_t)(y + i / 3) * g->width + x + i % 3] = (uint8_t)(i < lows ? low : high);
}

/* The black point of a pale page (paper 235, stretched fully) when its darkest tile is not the
 * ink's level. The darkest tile here has 4 pixels of 140 and 5 of 190 (mean 167.78, a tile
 * across a stroke's edge where a resampled copy rings below black); the range to the paper is
 * 67.22 levels. A solid tile (nine pixels within 2 % of the range, 1.34 levels: 8 d^2 <= 146
 * for 8 pixels at v and one at v + d) at most an eighth of the range (8.4 levels, sums up to
 * 1585) above the darkest is the black point: v = 170 with d = 4 (mean 170.44) is, d = 5 is not;
 * a flat tile of 176 is, 177 is not. Without one, the level a quarter of the ink's pixels
 * (darker than halfway to the paper) reach, where darker than the darkest tile: tiles of 4
 * pixels of 150 and 5 of 200 (mean 177.78, the darkest) and tiles of 5 pixels of 200 and 4 of
 * 215 (200 is ink, 215 is not); with 10 of the first, 13 of the second put 40 of 155 ink pixels
 * (25.8 %) at 150, the black point; 15 put 40 of 165 (24.2 %), and the black point stays at the
 * darkest tile. Expectations worked by hand from the rule in binarize.c. */
static void test_black_point(void)
{
    const struct {
        const char *what;
        int solid_low, solid_high, solid_lows; /* a tile at (150, 150); 0 lows: none */
        int thin_tiles; /* tiles of 200 and 215 beside ten of 150 and 200, in place of the above */
        double black;
    } cases[] = {
        {"solid tile deviating 1.26 levels", 170, 174, 8, 0, 1534.0 / 9},
        {"solid tile deviating 1.57 levels", 170, 175, 8, 0, 1510.0 / 9},
        {"solid tile 8.2 levels above the darkest", 176, 176, 9, 0, 176},
        {"solid tile 9.2 levels above the darkest", 177, 177, 9, 0, 1510.0 / 9},
        {"thin type, 25.8 % of the ink at 150", 0, 0, 0, 13, 150},
        {"thin type, 24.2 % of the ink at 150", 0, 0, 0, 15, 1600.0 / 9},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        lt_image *g = tu_image(300, 300, LT_IMAGE_GRAY, 235);
        if (cases[c].thin_tiles) {
            for (int i = 0; i < 10; i++)
                set_tile(g, 30 + 6 * i, 30, 4, 150, 200);
            for (int i = 0; i < cases[c].thin_tiles; i++)
                set_tile(g, 30 + 6 * i, 60, 5, 200, 215);
        } else {
            set_tile(g, 30, 30, 4, 140, 190);
            set_tile(g, 150, 150, cases[c].solid_lows, cases[c].solid_low, cases[c].solid_high);
        }
        double black = -1, white = -1;
        CHECK_INT(lt_gray_points(g, &black, &white), 0, "black point, %s: lt_gray_points",
                  cases[c].what);
        CHECK(fabs(black - cases[c].black) < 1e-9 && white == 235,
              "black point, %s: gray points %.4f %g, want %.4f 235", cases[c].what, black, white,
              cases[c].black);
        lt_image_free(g);
    }
}

/* Pale copies of a page with black print and a block of gray print (170, as captions,
 * marginal notes or shaded headings are set): its gray range mapped linearly onto [170, 235]
 * (pale), [150, 255] (light) and [170, 255] (gray), and onto [170, 255] with the last two rows
 * of strokes on a tint of 235 (its edge between rows, a window away from the strokes above).
 * The reference is the original page's ink under plain Sauvola (lt_binarize and
 * lt_binarize_sampled, whose formula tests/ref_sauvola.py checks against scikit-image's
 * threshold_sauvola), which holds every stroke of both blocks; the normalised form on each copy
 * (its own gray points) must give that ink pixel for pixel, as the copy is a known linear map of
 * the gray levels (rounded to whole levels). A threshold that stretches the pale copy by less
 * than its whole range loses the gray block there. */
static void test_pale_copies(void)
{
    const int w = 480, h = 200, window = 33;
    const struct {
        int ink, paper, tint_paper; /* tint_paper: of the rows from tint_top down */
        const char *name;
    } copies[] = {{170, 235, 235, "pale"},
                  {150, 255, 255, "light"},
                  {170, 255, 255, "gray"},
                  {170, 255, 235, "tint"}};
    const int tint_top = 91; /* the last two rows of strokes */
    lt_image *page = tu_image(w, h, LT_IMAGE_GRAY, 255);
    for (int block = 0; block < 2; block++) /* black strokes left, gray strokes right */
        for (int row = 0; row < 4; row++)
            for (int x = 20 + block * 240; x + 5 < 220 + block * 240; x += 14)
                tu_fill(page, x, 20 + 40 * row, x + 5, 20 + 40 * row + 22 - (x % 3) * 4,
                        block ? 170 : 0);
    for (int sampled = 0; sampled < 2; sampled++) {
        lt_error err = {0};
        lt_image *original = NULL;
        int rc = sampled ? lt_binarize_sampled(page, window, 0.34, 128, &original, &err)
                         : lt_binarize(page, window, 0.34, 128, &original, &err);
        if (rc) {
            tu_fail("pale copies: the original's ink: %s", err.message);
            continue;
        }
        long missed = 0;
        for (int i = 0; i < w * h; i++)
            missed += original->pixels[i] != (page->pixels[i] < 255);
        CHECK_INT(missed, 0, "pale copies, sampled %d: the original's strokes lost", sampled);
        for (size_t c = 0; c < sizeof copies / sizeof copies[0]; c++) {
            lt_image *copy = tu_image(w, h, LT_IMAGE_GRAY, 0), *ink = NULL;
            for (int i = 0; i < w * h; i++) {
                const int paper = i / w < tint_top ? copies[c].paper : copies[c].tint_paper;
                copy->pixels[i] = (uint8_t)lround(
                    copies[c].ink + page->pixels[i] * (paper - copies[c].ink) / 255.0);
            }
            if (lt_binarize_normalized(copy, window, 0.34, 128, LT_GRAY_POINT_AUTO,
                                       LT_GRAY_POINT_AUTO, sampled, &ink, &err)) {
                tu_fail("pale copies: %s: %s", copies[c].name, err.message);
                lt_image_free(copy);
                continue;
            }
            long differ = 0, gray_lost = 0;
            for (int i = 0; i < w * h; i++) {
                differ += ink->pixels[i] != original->pixels[i];
                gray_lost += page->pixels[i] == 170 && !ink->pixels[i];
            }
            CHECK(differ == 0,
                  "pale copies, %s, sampled %d: %ld pixels differ from the "
                  "original's ink (%ld of the gray block's lost)",
                  copies[c].name, sampled, differ, gray_lost);
            lt_image_free(ink);
            lt_image_free(copy);
        }
        lt_image_free(original);
    }
    lt_image_free(page);
}

/* Light print on a dark ground (lt_binarize_page): a box of gray 20 on white paper with
 * strokes of 230 in it, 180 px tall and 20 windows wide, clear of the page's edge: the strokes
 * are the ink, the ground and the paper are not, and the map marks the box's middle; the same
 * box only two windows wide (a black mark, not a ground) stays dark ink with no mark. A box on
 * the page's left edge is a bleed, read as the framed one, when it reaches farther into the
 * page (195 px, 840 px) than it runs along the edge (180 px), and the scanner's ground (dark
 * ink, no mark) when it reaches in less (165 px). */
static void test_light_on_dark(void)
{
    const int w = 900, h = 600, window = 33;
    const int lefts[] = {60, 60, 0, 0, 0}, rights[] = {840, 60 + 2 * window, 165, 195, 840};
    const int kept[] = {1, 0, 0, 1, 1};
    for (int pass = 0; pass < 5; pass++) {
        const int left = lefts[pass], right = rights[pass];
        lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, 250);
        tu_fill(g, left, 60, right, 240, 20);
        for (int x = left + 20; x + 5 < right - 20; x += 14)
            tu_fill(g, x, 100, x + 5, 122 + (x % 3) * 4, 230);
        lt_error err = {0};
        lt_image *ink = NULL;
        lt_dark_map dark = {0};
        if (lt_binarize_page(g, window, 0.34, 128, &ink, &dark, &err)) {
            tu_fail("light on dark: lt_binarize_page failed: %s", err.message);
            lt_image_free(g);
            continue;
        }
        const int marked = lt_dark_at(&dark, (left + right) / 2.0, 150);
        CHECK_INT(marked, kept[pass], "light on dark, pass %d: the box's middle marked", pass);
        long stroke_ink = 0, strokes = 0, ground_ink = 0, ground = 0;
        for (int y = 80; y < 220; y++) /* away from the box's edge */
            for (int x = left + 10; x < right - 10; x++) {
                const int v = g->pixels[(size_t)y * w + x], is_ink = ink->pixels[(size_t)y * w + x];
                long *count = v == 230 ? &strokes : &ground;
                long *inked = v == 230 ? &stroke_ink : &ground_ink;
                (*count)++;
                *inked += is_ink;
            }
        if (kept[pass]) {
            CHECK(stroke_ink == strokes, "light on dark, pass %d: %ld of %ld stroke pixels ink",
                  pass, stroke_ink, strokes);
            CHECK_INT(ground_ink, 0, "light on dark: ground pixels read as ink");
        } else {
            CHECK_INT(stroke_ink, 0, "dark mark, pass %d: light pixels read as ink", pass);
        }
        lt_dark_map_clear(&dark);
        lt_image_free(ink);
        lt_image_free(g);
    }
}

/* Counts the pixels of gray `value` in [left, right) x [top, bottom) of g, and how many of them
 * are ink. */
static void count_ink(const lt_image *g, const lt_image *ink, int left, int top, int right,
                      int bottom, int value, long *pixels, long *inked)
{
    *pixels = 0, *inked = 0;
    for (int y = top; y < bottom; y++)
        for (int x = left; x < right; x++)
            if (g->pixels[(size_t)y * g->width + x] == value) {
                (*pixels)++;
                *inked += ink->pixels[(size_t)y * g->width + x];
            }
}

/* Light print at a dark band's edge (lt_binarize_page, window 33: windows' reach 5 tiles of 3
 * px, light runs up to 2 tiles closed). A band of gray 20 on paper 250, 80 windows wide and 7
 * tall; light strokes of 230 (5 px wide, a T's bar and stem) start 3 px under its top edge,
 * where every window reaches the paper above, its mean light (over 100): all their pixels are
 * ink, the ground's around them is not (the ground followed to the band's edge and closed
 * across the strokes), up to a reach from them (4-connected steps). Farther from any stroke
 * the band's edge stays as its windows read it, dark ink. Light squares 9 px tall from the band's
 * edge: 6 px wide (2 tiles) a stroke, 9 px wide (3 tiles) paper beside the ground at the edge. A
 * dark arm out of the band with a light stroke down its middle is followed two reaches from the
 * band's dark windows, not to its end 12 tiles out (a mark on the paper, its ink dark). A band 45
 * px tall is read light on dark at its edge, one 42 px tall (dark windows under a window tall: a
 * bar whose light marks are ornament) only in its middle. */
static void test_light_at_dark_edge(void)
{
    const int w = 900, h = 360, window = 33, top = 60, bottom = 300, left = 60, right = 840;
    lt_image *g = tu_image(w, h, LT_IMAGE_GRAY, 250);
    tu_fill(g, left, top, right, bottom, 20);
    for (int x = 90; x < 400; x += 21)
        tu_fill(g, x, top + 3, x + 5, top + 40, 230);
    tu_fill(g, 402, top + 3, 432, top + 8, 230); /* the T's bar */
    tu_fill(g, 414, top + 3, 420, top + 36, 230);
    tu_fill(g, 510, top, 516, top + 9, 230);
    tu_fill(g, 600, top, 609, top + 9, 230);
    tu_fill(g, 780, bottom, 795, bottom + 36, 20); /* a dark arm, 12 tiles long */
    tu_fill(g, 786, bottom - 12, 789, bottom + 36, 230);
    lt_error err = {0};
    lt_image *ink = NULL;
    lt_dark_map dark = {0};
    if (lt_binarize_page(g, window, 0.34, 128, &ink, &dark, &err)) {
        tu_fail("light at a dark edge: lt_binarize_page failed: %s", err.message);
        lt_image_free(g);
        return;
    }
    long pixels, inked;
    count_ink(g, ink, 0, 0, 460, h, 230, &pixels, &inked);
    CHECK(inked == pixels, "light at a dark edge: %ld of %ld stroke pixels ink", inked, pixels);
    count_ink(g, ink, 85, top, 437, top + 45, 20, &pixels, &inked);
    CHECK_INT(inked, 0, "light at a dark edge: ground pixels round the strokes ink");
    /* The T's bar ends in the tile from x = 429 (tile 143, under the edge's row of tiles): the
     * edge's tiles a reach (5 steps) from it are ground, the next one (x = 444) is not. */
    CHECK(!ink->pixels[(size_t)top * w + 443] && lt_dark_at(&dark, 443, top) &&
              ink->pixels[(size_t)top * w + 444] && !lt_dark_at(&dark, 444, top),
          "light at a dark edge: the edge kept ground a reach from the T's bar, not beyond");
    CHECK(ink->pixels[(size_t)200 * w + left] && !lt_dark_at(&dark, left, 200),
          "light at a dark edge: the band's edge far from strokes not dark ink");
    count_ink(g, ink, 500, 0, 520, h, 230, &pixels, &inked);
    CHECK(inked == pixels, "light at a dark edge: %ld of %ld pixels of the square 2 tiles wide ink",
          inked, pixels);
    count_ink(g, ink, 590, top, 620, top + 3, 230, &pixels, &inked);
    CHECK_INT(inked, 0, "light at a dark edge: top pixels of the square 3 tiles wide ink");
    count_ink(g, ink, 0, 0, w, h, 250, &pixels, &inked);
    CHECK_INT(inked, 0, "light at a dark edge: paper pixels ink");
    CHECK(lt_dark_at(&dark, 200, top) && !lt_dark_at(&dark, 200, top - 1),
          "light at a dark edge: the band marked to its edge at the strokes");
    CHECK(lt_dark_at(&dark, 781, bottom + 3) && !lt_dark_at(&dark, 781, bottom + 33) &&
              ink->pixels[(size_t)(bottom + 33) * w + 781],
          "light at a dark edge: the arm followed beyond two reaches of the band");
    lt_dark_map_clear(&dark);
    lt_image_free(ink);
    lt_image_free(g);

    for (int tall = 42; tall <= 45; tall += 3) {
        g = tu_image(w, 240, LT_IMAGE_GRAY, 250);
        tu_fill(g, left, 90, right, 90 + tall, 20);
        for (int x = 90; x + 5 < right - 30; x += 21)
            tu_fill(g, x, 93, x + 5, 90 + tall - 3, 230);
        if (lt_binarize_page(g, window, 0.34, 128, &ink, &dark, &err)) {
            tu_fail("dark bar: lt_binarize_page failed: %s", err.message);
            lt_image_free(g);
            return;
        }
        CHECK(lt_dark_at(&dark, 450, 90 + tall / 2), "dark bar %d px tall: middle not marked",
              tall);
        CHECK_INT(lt_dark_at(&dark, 450, 91), tall == 45, "dark bar %d px tall: edge marked", tall);
        lt_dark_map_clear(&dark);
        lt_image_free(ink);
        lt_image_free(g);
    }
}

/* Bad arguments: LT_EINVAL, no image, a message. */
static void test_bad_arguments(void)
{
    lt_image *g = tu_image(10, 10, LT_IMAGE_GRAY, 128);
    lt_image *inkimg = tu_image(10, 10, LT_IMAGE_INK, 0);
    struct {
        const lt_image *img;
        int window;
        double k, r;
        const char *what;
    } cases[] = {
        {NULL, 15, 0.34, 128, "NULL image"},
        {inkimg, 15, 0.34, 128, "ink image as input"},
        {g, 0, 0.34, 128, "window 0"},
        {g, -3, 0.34, 128, "negative window"},
        {g, 15, 0.34, 0, "R = 0"},
        {g, 15, 0.34, -128, "negative R"},
        {g, 15, -0.1, 128, "negative k"},
        {g, LT_MAX_WINDOW_PX + 1, 0.34, 128, "window too large"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        lt_error err = {0};
        lt_image *out = (lt_image *)&err; /* must be reset to NULL */
        int rc = lt_binarize(cases[i].img, cases[i].window, cases[i].k, cases[i].r, &out, &err);
        CHECK_INT(rc, LT_EINVAL, "bad arguments (%s): return code", cases[i].what);
        CHECK_INT(err.code, LT_EINVAL, "bad arguments (%s): error code", cases[i].what);
        CHECK(err.message[0] != 0, "bad arguments (%s): no message", cases[i].what);
        CHECK(out == NULL, "bad arguments (%s): output not NULL", cases[i].what);
        if (out != NULL && out != (lt_image *)&err) lt_image_free(out);
    }
    const double points[][2] = {{-2, 255}, {256, LT_GRAY_POINT_AUTO}, {NAN, 255}, {0, -2},
                                {0, 256},  {LT_GRAY_POINT_AUTO, NAN}, {200, 200}, {210, 40}};
    for (size_t i = 0; i < sizeof points / sizeof points[0]; i++) {
        lt_error err = {0};
        lt_image *out = NULL;
        const double black = points[i][0], white = points[i][1];
        int rc = lt_binarize_normalized(g, 15, 0.34, 128, black, white, 1, &out, &err);
        CHECK_INT(rc, LT_EINVAL, "bad gray points %g %g: return code", black, white);
        CHECK(out == NULL && err.message[0], "bad gray points %g %g: output or message", black,
              white);
        lt_image_free(out);
    }
    lt_image_free(g);
    lt_image_free(inkimg);
}

int main(void)
{
    double t0 = tu_now_s();
    test_uniform();
    test_square();
    test_worked_example();
    test_window_one();
    test_against_naive();
    test_sampled();
    test_sampled_interpolation();
    test_pale();
    test_black_point();
    test_pale_copies();
    test_light_on_dark();
    test_light_at_dark_edge();
    test_bad_arguments();
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_binarize");
}

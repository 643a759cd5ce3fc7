/* test_components.c — checks lt_find_components against leptonica's pixConnComp(pix, &pixa, 8)
 * (Debian libleptonica-dev, a general-purpose image library lineate did not write): count,
 * every box, the order, pixel counts, centroids and core heights (from leptonica's ink count
 * of each row of a component) on random, real and border-case images;
 * plus a hand-made example and the max_components limit.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"

typedef struct ref_comp {
    lt_box box;
    long pixels;
    double cx, cy; /* centroid of pixel centres, lineate's convention */
    double core;   /* core height (lt_component) from leptonica's ink count of each row */
} ref_comp;

/* The height of the rows that hold all but `trim` of the ink at the top and at the bottom,
 * from the ink of each row (n rows), a row's ink spread evenly over it: the definition of
 * lt_component's core_height, computed here from the rows directly. */
static double core_from_rows(const double *row, int n, double trim)
{
    double total = 0;
    for (int y = 0; y < n; y++)
        total += row[y];
    const double lo = trim * total, hi = total - lo;
    double above = 0, top = 0, bottom = n;
    int have_top = 0;
    for (int y = 0; y < n; y++) {
        if (!have_top && above + row[y] >= lo) {
            top = y + (lo - above) / row[y];
            have_top = 1;
        }
        if (above + row[y] >= hi) {
            bottom = y + (hi - above) / row[y];
            break;
        }
        above += row[y];
    }
    return bottom - top;
}

/* The components leptonica finds, in its order. pixConnComp finds each component by scanning
 * for the next ON pixel in raster order and filling from it, so its order is "first pixel in
 * raster order" as well (checked below, not assumed). pixCentroid averages pixel indices of
 * the component's clipped image, so the centre of pixel x is box.left + x + 0.5 here. */
static ref_comp *leptonica_components(const lt_image *ink, int *count)
{
    PIX *pix = tu_pix_from_ink(ink);
    PIXA *pixa = NULL;
    BOXA *boxa = pixConnComp(pix, &pixa, 8);
    if (!boxa || !pixa) tu_die("pixConnComp failed");
    int n = boxaGetCount(boxa);
    ref_comp *r = calloc((size_t)n + 1, sizeof *r);
    l_int32 *centtab = makePixelCentroidTab8(), *sumtab = makePixelSumTab8();
    if (!r || !centtab || !sumtab) tu_die("out of memory");
    for (int i = 0; i < n; i++) {
        l_int32 x, y, w, h, cnt = 0;
        boxaGetBoxGeometry(boxa, i, &x, &y, &w, &h);
        r[i].box = tu_box(x, y, x + w, y + h);
        PIX *c = pixaGetPix(pixa, i, L_CLONE);
        l_float32 xave = 0, yave = 0;
        pixCountPixels(c, &cnt, sumtab);
        pixCentroid(c, centtab, sumtab, &xave, &yave);
        r[i].pixels = cnt;
        r[i].cx = x + xave + 0.5;
        r[i].cy = y + yave + 0.5;
        NUMA *rows = pixCountPixelsByRow(c, NULL);
        if (!rows) tu_die("pixCountPixelsByRow failed");
        double *row = malloc(((size_t)h + 1) * sizeof *row);
        if (!row) tu_die("out of memory");
        for (int k = 0; k < h; k++) {
            l_float32 v = 0;
            numaGetFValue(rows, k, &v);
            row[k] = v;
        }
        r[i].core = core_from_rows(row, h, 0.03);
        free(row);
        numaDestroy(&rows);
        pixDestroy(&c);
    }
    LEPT_FREE(centtab);
    LEPT_FREE(sumtab);
    boxaDestroy(&boxa);
    pixaDestroy(&pixa);
    pixDestroy(&pix);
    *count = n;
    return r;
}

static lt_components *find(const lt_image *ink, long max, const char *what)
{
    lt_error err = {0};
    lt_components *c = NULL;
    int rc = lt_find_components(ink, max, &c, &err);
    if (rc || !c) {
        tu_fail("%s: lt_find_components failed (%d): %s", what, rc, err.message);
        return NULL;
    }
    return c;
}

/* Compares lineate's components of `ink` with leptonica's: count, sorted box lists, the
 * order, then per component (matched by order) pixel count and centroid. */
static void compare_with_leptonica(const lt_image *ink, const char *what)
{
    int nref = 0;
    ref_comp *ref = leptonica_components(ink, &nref);
    lt_components *c = find(ink, LT_DEFAULT_MAX_COMPONENTS, what);
    if (!c) {
        free(ref);
        return;
    }
    CHECK_INT(c->count, nref, "%s: component count vs leptonica", what);
    int n = c->count < nref ? c->count : nref;
    /* Sorted lists of boxes. */
    lt_box *a = malloc(((size_t)c->count + 1) * sizeof *a);
    lt_box *b = malloc(((size_t)nref + 1) * sizeof *b);
    if (!a || !b) tu_die("out of memory");
    for (int i = 0; i < c->count; i++)
        a[i] = c->items[i].box;
    for (int i = 0; i < nref; i++)
        b[i] = ref[i].box;
    qsort(a, (size_t)c->count, sizeof *a, tu_cmp_box);
    qsort(b, (size_t)nref, sizeof *b, tu_cmp_box);
    int box_diff = 0;
    for (int i = 0; i < n; i++)
        if (tu_cmp_box(&a[i], &b[i]) != 0) {
            if (box_diff++ == 0) CHECK_BOX(a[i], b[i], "%s: sorted box %d vs leptonica", what, i);
        }
    CHECK_INT(box_diff, 0, "%s: boxes (sorted) differing from leptonica", what);
    /* Order: leptonica's is by first pixel in raster order, the order lineate documents. */
    int order_diff = 0, pix_diff = 0, cent_diff = 0, core_diff = 0;
    for (int i = 0; i < n; i++) {
        const lt_component *k = &c->items[i];
        if (tu_cmp_box(&k->box, &ref[i].box) != 0) {
            if (order_diff++ == 0)
                CHECK_BOX(k->box, ref[i].box, "%s: component %d in order vs leptonica", what, i);
            continue;
        }
        if (k->pixels != ref[i].pixels && pix_diff++ == 0)
            CHECK_INT(k->pixels, ref[i].pixels, "%s: pixels of component %d", what, i);
        /* leptonica's centroid is single precision: tolerance 1e-3 px (from its float type). */
        if ((fabs(k->cx - ref[i].cx) > 1e-3 || fabs(k->cy - ref[i].cy) > 1e-3) && cent_diff++ == 0)
            tu_fail("%s: centroid of component %d: (%.4f, %.4f), leptonica (%.4f, %.4f)", what, i,
                    k->cx, k->cy, ref[i].cx, ref[i].cy);
        /* lineate keeps the core height in single precision (it fills the record's padding) */
        if (fabs(k->core_height - ref[i].core) > 1e-6 * fmax(1, ref[i].core) && core_diff++ == 0)
            tu_fail("%s: core height of component %d: %.6f, from leptonica's rows %.6f", what, i,
                    k->core_height, ref[i].core);
    }
    CHECK_INT(order_diff, 0, "%s: components out of leptonica's (raster) order", what);
    CHECK_INT(pix_diff, 0, "%s: components whose pixel count differs from leptonica", what);
    CHECK_INT(cent_diff, 0, "%s: components whose centroid differs from leptonica", what);
    CHECK_INT(core_diff, 0, "%s: components whose core height differs from leptonica's rows", what);
    /* Raster order of the first pixel, checked on lineate's own result too: the first pixel
     * of a component is on its top row, so tops never decrease. */
    int raster_bad = 0;
    for (int i = 1; i < c->count; i++)
        raster_bad += c->items[i].box.top < c->items[i - 1].box.top;
    CHECK_INT(raster_bad, 0, "%s: tops decreasing in the component order", what);
    long total = 0;
    for (int i = 0; i < c->count; i++)
        total += c->items[i].pixels;
    CHECK_INT(total, tu_count_ink(ink), "%s: pixels of all components vs ink pixels", what);
    printf("%-34s %7d components, leptonica %7d: boxes %s, order %s\n", what, c->count, nref,
           box_diff || c->count != nref ? "DIFFER" : "agree", order_diff ? "DIFFERS" : "agrees");
    free(a);
    free(b);
    free(ref);
    lt_components_free(c);
}

/* Random blobs: filled rectangles and discs of random sizes, plus salt noise; fixed seed. */
static lt_image *random_blobs(int w, int h, int nblobs, double noise, uint64_t seed)
{
    tu_rng rng = {seed};
    lt_image *img = tu_image(w, h, LT_IMAGE_INK, 0);
    for (int b = 0; b < nblobs; b++) {
        int cx = tu_range(&rng, -10, w + 10), cy = tu_range(&rng, -10, h + 10);
        int rw = tu_range(&rng, 1, 18), rh = tu_range(&rng, 1, 18);
        if (b % 3 == 0) {
            for (int y = cy - rh; y <= cy + rh; y++)
                for (int x = cx - rw; x <= cx + rw; x++) {
                    double dx = (double)(x - cx) / rw, dy = (double)(y - cy) / rh;
                    if (x >= 0 && y >= 0 && x < w && y < h && dx * dx + dy * dy <= 1)
                        img->pixels[(size_t)y * w + x] = 1;
                }
        } else {
            tu_fill(img, cx, cy, cx + rw, cy + rh, 1);
        }
    }
    for (size_t i = 0; i < (size_t)w * h; i++)
        if (tu_unit(&rng) < noise) img->pixels[i] = 1;
    return img;
}

static void test_random(void)
{
    char what[64];
    const int sizes[][2] = {{200, 150}, {31, 40}, {32, 32}, {33, 17}, {65, 90}, {640, 480}};
    for (size_t i = 0; i < sizeof sizes / sizeof sizes[0]; i++) {
        lt_image *img = random_blobs(sizes[i][0], sizes[i][1], sizes[i][0] * sizes[i][1] / 900 + 3,
                                     0.02, 42 + i);
        snprintf(what, sizeof what, "blobs %dx%d", sizes[i][0], sizes[i][1]);
        compare_with_leptonica(img, what);
        lt_image_free(img);
    }
    /* Dense noise: long chains, U shapes and spirals whose halves meet rows later. */
    const double densities[] = {0.1, 0.3, 0.45, 0.6};
    for (size_t i = 0; i < sizeof densities / sizeof densities[0]; i++) {
        lt_image *img = random_blobs(300, 200, 0, densities[i], 7 + i);
        snprintf(what, sizeof what, "noise %.2f 300x200", densities[i]);
        compare_with_leptonica(img, what);
        lt_image_free(img);
    }
}

/* A real page: testdata/newsletter.png binarized as lineate's pipeline does (51 px window). */
static void test_page(void)
{
    lt_image *gray = tu_load_testdata("newsletter.png");
    lt_error err = {0};
    lt_image *ink = NULL;
    if (lt_binarize(gray, 51, 0.34, 128, &ink, &err)) tu_die("binarize: %s", err.message);
    compare_with_leptonica(ink, "newsletter.png binarized");
    lt_image_free(gray);
    lt_image_free(ink);
}

/* Pixels that touch only at corners: 8-connectivity joins them, 4-connectivity would not. */
static void test_diagonals(void)
{
    lt_image *img = tu_image(40, 30, LT_IMAGE_INK, 0);
    for (int i = 0; i < 10; i++)
        img->pixels[(size_t)(2 + i) * 40 + 2 + i] = 1; /* "\" */
    for (int i = 0; i < 10; i++)
        img->pixels[(size_t)(2 + i) * 40 + 30 - i] = 1; /* "/" */
    /* An "X" of two diagonals crossing between pixels, and a checkerboard patch. */
    for (int i = 0; i < 6; i++) {
        img->pixels[(size_t)(15 + i) * 40 + 5 + i] = 1;
        img->pixels[(size_t)(15 + i) * 40 + 10 - i] = 1;
    }
    for (int y = 15; y < 25; y++)
        for (int x = 20; x < 30; x++)
            img->pixels[(size_t)y * 40 + x] = (x + y) % 2;
    lt_components *c = find(img, 100, "diagonals");
    if (c) {
        CHECK_INT(c->count, 4, "diagonals: components (two diagonal lines, an X, a checkerboard)");
        if (c->count == 4) {
            CHECK_BOX(c->items[0].box, tu_box(2, 2, 12, 12), "diagonals: the \\ line");
            CHECK_BOX(c->items[1].box, tu_box(21, 2, 31, 12), "diagonals: the / line");
            CHECK_BOX(c->items[2].box, tu_box(5, 15, 11, 21), "diagonals: the X");
            CHECK_BOX(c->items[3].box, tu_box(20, 15, 30, 25), "diagonals: the checkerboard");
            CHECK_INT(c->items[0].pixels, 10, "diagonals: pixels of the \\ line");
            CHECK_INT(c->items[3].pixels, 50, "diagonals: pixels of the checkerboard");
        }
    }
    compare_with_leptonica(img, "diagonals");
    lt_components_free(c);
    lt_image_free(img);
}

/* Ink on the image border: corners, full rows and columns, the whole image, 1-pixel images. */
static void test_borders(void)
{
    lt_image *img = tu_image(50, 40, LT_IMAGE_INK, 0);
    img->pixels[0] = img->pixels[49] = img->pixels[39 * 50] = img->pixels[39 * 50 + 49] = 1;
    tu_fill(img, 5, 0, 45, 1, 1);   /* top row */
    tu_fill(img, 0, 39, 50, 40, 1); /* bottom row, touching two corners */
    tu_fill(img, 49, 5, 50, 35, 1); /* right column */
    lt_components *c = find(img, 100, "borders");
    if (c) {
        /* top-left corner, top row, top-right corner, right column, bottom row + corners */
        CHECK_INT(c->count, 5, "borders: components");
        if (c->count == 5) {
            CHECK_BOX(c->items[0].box, tu_box(0, 0, 1, 1), "borders: top-left corner");
            CHECK_BOX(c->items[1].box, tu_box(5, 0, 45, 1), "borders: top row");
            CHECK_BOX(c->items[2].box, tu_box(49, 0, 50, 1), "borders: top-right corner");
            CHECK_BOX(c->items[3].box, tu_box(49, 5, 50, 35), "borders: right column");
            CHECK_BOX(c->items[4].box, tu_box(0, 39, 50, 40), "borders: bottom row");
        }
    }
    compare_with_leptonica(img, "border ink");
    lt_components_free(c);
    lt_image_free(img);

    const int sizes[][2] = {{1, 1}, {1, 37}, {37, 1}, {64, 3}};
    for (size_t i = 0; i < sizeof sizes / sizeof sizes[0]; i++) {
        char what[64];
        lt_image *full = tu_image(sizes[i][0], sizes[i][1], LT_IMAGE_INK, 1);
        snprintf(what, sizeof what, "all ink %dx%d", sizes[i][0], sizes[i][1]);
        lt_components *f = find(full, 10, what);
        if (f) {
            CHECK_INT(f->count, 1, "%s: components", what);
            if (f->count == 1) {
                CHECK_BOX(f->items[0].box, tu_box(0, 0, sizes[i][0], sizes[i][1]), "%s", what);
                CHECK_NEAR(f->items[0].cx, sizes[i][0] / 2.0, 1e-9, "%s: cx", what);
                CHECK_NEAR(f->items[0].cy, sizes[i][1] / 2.0, 1e-9, "%s: cy", what);
            }
        }
        lt_components_free(f);
        compare_with_leptonica(full, what);
        memset(full->pixels, 0, (size_t)sizes[i][0] * sizes[i][1]);
        f = find(full, 0, "blank");
        if (f) CHECK_INT(f->count, 0, "blank %dx%d: components", sizes[i][0], sizes[i][1]);
        lt_components_free(f);
        lt_image_free(full);
    }
    /* Alternating columns on a 1-row and a 1-column image: separate pixels. */
    lt_image *row = tu_image(33, 1, LT_IMAGE_INK, 0);
    for (int x = 0; x < 33; x += 2)
        row->pixels[x] = 1;
    compare_with_leptonica(row, "alternating 33x1");
    lt_image_free(row);
}

/* Hand-made example with pixel counts and centroids worked out by hand (pixel x covers
 * [x, x+1), so its centre is x + 0.5):
 *  A: an L — column x = 2, rows 1..5 (5 pixels) and row 5, x = 3..6 (4 more): 9 pixels,
 *     cx = (5 * 2.5 + 3.5 + 4.5 + 5.5 + 6.5) / 9 = 32.5 / 9, cy = (1.5+2.5+3.5+4.5+5.5 +
 *     4 * 5.5) / 9 = 39.5 / 9.
 *  B: a plus centred on (12, 3) with arms of 2: 9 pixels, centroid (12.5, 3.5).
 *  C: a ring 5 x 5 at x 20..24, y 0..4 (16 pixels), centroid (22.5, 2.5); its hole holds
 *  D: one pixel at (22, 2), not touching the ring (two pixels away): its own component. */
static void test_hand_made(void)
{
    lt_image *img = tu_image(30, 8, LT_IMAGE_INK, 0);
    tu_fill(img, 2, 1, 3, 6, 1);
    tu_fill(img, 3, 5, 7, 6, 1);
    tu_fill(img, 10, 3, 15, 4, 1);
    tu_fill(img, 12, 1, 13, 6, 1);
    tu_fill(img, 20, 0, 25, 5, 1);
    tu_fill(img, 21, 1, 24, 4, 0);
    img->pixels[2 * 30 + 22] = 1;
    lt_components *c = find(img, 10, "hand-made");
    if (c) {
        CHECK_INT(c->count, 4, "hand-made: components");
        if (c->count == 4) {
            /* Raster order of first pixels: C (0, 20), A (1, 2), B (1, 12), D (2, 22). */
            const lt_component *C = &c->items[0], *A = &c->items[1], *B = &c->items[2],
                               *D = &c->items[3];
            CHECK_BOX(C->box, tu_box(20, 0, 25, 5), "hand-made: ring");
            CHECK_BOX(A->box, tu_box(2, 1, 7, 6), "hand-made: L");
            CHECK_BOX(B->box, tu_box(10, 1, 15, 6), "hand-made: plus");
            CHECK_BOX(D->box, tu_box(22, 2, 23, 3), "hand-made: dot in the ring");
            CHECK_INT(A->pixels, 9, "hand-made: L pixels");
            CHECK_NEAR(A->cx, 32.5 / 9, 1e-12, "hand-made: L cx");
            CHECK_NEAR(A->cy, 39.5 / 9, 1e-12, "hand-made: L cy");
            CHECK_INT(B->pixels, 9, "hand-made: plus pixels");
            CHECK_NEAR(B->cx, 12.5, 1e-12, "hand-made: plus cx");
            CHECK_NEAR(B->cy, 3.5, 1e-12, "hand-made: plus cy");
            CHECK_INT(C->pixels, 16, "hand-made: ring pixels");
            CHECK_NEAR(C->cx, 22.5, 1e-12, "hand-made: ring cx");
            CHECK_NEAR(C->cy, 2.5, 1e-12, "hand-made: ring cy");
            CHECK_INT(D->pixels, 1, "hand-made: dot pixels");
            CHECK_NEAR(D->cx, 22.5, 1e-12, "hand-made: dot cx");
        }
    }
    compare_with_leptonica(img, "hand-made");
    lt_components_free(c);
    lt_image_free(img);
}

/* Core heights by hand: a square 20 px a side leaves out 3 % of its 400 pixels, 0.6 of a row,
 * at each end: 18.8. One row of 3 pixels on top (a tooth of a turned edge) adds a row to the
 * box and 0.141 to the core (403 pixels: 12.09 left out at each end, the tooth's 3 and 0.4545
 * of the next row; 7.91 pixels of the last row). A top row of 12 pixels, under 3 % of 412, is
 * left out whole (core 19.364: from 1.018 to 20.382); one of 13, over 3 % of 413, only in
 * part (19.42742: from 0.95308 to 20.3805). */
static void test_core_heights(void)
{
    const struct {
        int tooth;
        double core;
    } cases[] = {{0, 18.8}, {3, 20.3955 - 1.4545}, {12, 20.382 - 1.018}, {13, 20.3805 - 0.95308}};
    for (int ci = 0; ci < 4; ci++) {
        char what[64];
        snprintf(what, sizeof what, "square with a top row of %d pixels", cases[ci].tooth);
        lt_image *img = tu_image(40, 40, LT_IMAGE_INK, 0);
        tu_fill(img, 10, 11, 30, 31, 1);
        tu_fill(img, 14, 10, 14 + cases[ci].tooth, 11, 1);
        lt_components *c = find(img, 10, what);
        if (c && c->count == 1) {
            CHECK_INT(lt_box_height(&c->items[0].box), cases[ci].tooth ? 21 : 20, "%s: box", what);
            CHECK_NEAR(c->items[0].core_height, cases[ci].core, 1e-4, "%s: core height", what);
        } else {
            tu_fail("%s: want one component", what);
        }
        lt_components_free(c);
        lt_image_free(img);
    }
}

/* max_components: exactly at the limit passes, one over gives LT_ELIMIT and no result. */
static void test_limit(void)
{
    lt_image *img = tu_image(100, 100, LT_IMAGE_INK, 0);
    for (int y = 0; y < 100; y += 2)
        for (int x = 0; x < 100; x += 2)
            img->pixels[y * 100 + x] = 1; /* 2500 specks */
    lt_components *c = find(img, 2500, "limit 2500");
    if (c) CHECK_INT(c->count, 2500, "limit: components at the limit");
    lt_components_free(c);
    lt_error err = {0};
    lt_components *over = (lt_components *)&err;
    int rc = lt_find_components(img, 2499, &over, &err);
    CHECK_INT(rc, LT_ELIMIT, "limit 2499: return code");
    CHECK_INT(err.code, LT_ELIMIT, "limit 2499: error code");
    CHECK(over == NULL, "limit 2499: result not NULL");
    CHECK(strstr(err.message, "2499") != NULL, "limit: message '%s' lacks the limit", err.message);
    /* Bad arguments. */
    lt_image *gray = tu_image(10, 10, LT_IMAGE_GRAY, 0);
    lt_error e2 = {0}, e3 = {0};
    lt_components *o2 = NULL, *o3 = NULL;
    CHECK_INT(lt_find_components(gray, 10, &o2, &e2), LT_EINVAL, "gray image: return code");
    CHECK_INT(lt_find_components(NULL, 10, &o3, &e3), LT_EINVAL, "NULL image: return code");
    CHECK(o2 == NULL && o3 == NULL, "bad arguments: result not NULL");
    lt_image_free(gray);
    lt_image_free(img);
}

int main(void)
{
    setMsgSeverity(L_SEVERITY_WARNING);
    double t0 = tu_now_s();
    test_hand_made();
    test_core_heights();
    test_diagonals();
    test_borders();
    test_random();
    test_page();
    test_limit();
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_components");
}

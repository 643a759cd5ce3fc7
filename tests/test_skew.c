/* test_skew.c — checks lt_estimate_skew by known transformations: born-digital pages (level by
 * construction) rotated by leptonica's pixRotate (a general-purpose image library lineate did
 * not write) by known angles must give those angles back within 0.05 degree, a page of small
 * type with salt and pepper within 0.15, a two-column list whose columns' baselines are
 * staggered within 0.15; blank, noise and single-rule pages; the text height of a rotated
 * page turned level again (by its letters' core heights) against the level page's; and
 * lt_rotate_ink with the lt_frame mappings (inverses of each other, and a rotated pixel maps
 * back onto the original pixel it came from).
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"
#include "textpage.h"

#define TOLERANCE_DEG 0.05 /* accuracy required on a clean page (project target) */

/* Sign of leptonica's pixRotate as displayed (image y down), measured: rotate a horizontal
 * line and see where its right end goes. leptonica documents "clockwise is positive"; as
 * displayed, clockwise moves the right end of a line down, i.e. the line falls to the right,
 * which is a NEGATIVE skew in lineate's convention (positive = lines rise to the right).
 * Returns the factor f such that lineate's skew of a page rotated by leptonica angle a is
 * f * a: -1 when the documented convention holds. */
static double leptonica_sign(void)
{
    PIX *pix = pixCreate(400, 400, 8);
    pixSetAllArbitrary(pix, 255);
    pixRasterop(pix, 100, 199, 200, 3, PIX_CLR, NULL, 0, 0); /* black line x 100..299, y 199..201 */
    PIX *rot =
        pixRotate(pix, (l_float32)(5.0 * LT_PI / 180.0), L_ROTATE_AREA_MAP, L_BRING_IN_WHITE, 0, 0);
    if (!rot) tu_die("pixRotate failed");
    /* Mean row of the dark pixels near the right end (x 280..299) vs near the left end. */
    double ysum[2] = {0, 0};
    int n[2] = {0, 0};
    for (int y = 0; y < 400; y++)
        for (int side = 0; side < 2; side++)
            for (int x = side ? 270 : 110; x < (side ? 290 : 130); x++) {
                l_uint32 v = 255;
                pixGetPixel(rot, x, y, &v);
                if (v < 128) {
                    ysum[side] += y;
                    n[side]++;
                }
            }
    pixDestroy(&pix);
    pixDestroy(&rot);
    if (!n[0] || !n[1]) tu_die("leptonica sign check: line lost in rotation");
    double left = ysum[0] / n[0], right = ysum[1] / n[1];
    /* Rotating by 5 degrees about the centre moves the ends 160 px apart by 160 * tan(5) = 14. */
    CHECK(right > left + 10,
          "leptonica pixRotate(+5 deg): right end of a line at y %.1f, left end at y %.1f; "
          "expected the right end to go down (clockwise as displayed)",
          right, left);
    return right > left ? -1.0 : 1.0;
}

static lt_image *binarize(const lt_image *gray)
{
    lt_error err = {0};
    lt_image *ink = NULL;
    /* 51 px: lineate's automatic window at 300 dpi (0.17 inch). */
    if (lt_binarize(gray, 51, 0.34, 128, &ink, &err)) tu_die("binarize: %s", err.message);
    return ink;
}

static lt_skew estimate(const lt_image *ink, const char *what)
{
    lt_error err = {0};
    lt_skew s = {-99, -99};
    int rc = lt_estimate_skew(ink, 15, 0.05, &s, &err);
    if (rc) tu_fail("%s: lt_estimate_skew failed (%d): %s", what, rc, err.message);
    return s;
}

/* The page rotated by leptonica so that its lines have lineate skew `truth_deg`, binarized. */
static lt_image *rotated_ink(PIX *page, double truth_deg, double sign)
{
    const double lept_rad = truth_deg / sign * LT_PI / 180.0;
    PIX *rot = pixRotate(page, (l_float32)lept_rad, L_ROTATE_AREA_MAP, L_BRING_IN_WHITE, 0, 0);
    if (!rot) tu_die("pixRotate failed");
    lt_image *gray = tu_gray_from_pix(rot);
    pixDestroy(&rot);
    lt_image *ink = binarize(gray);
    lt_image_free(gray);
    return ink;
}

static void test_rotated_pages(double sign)
{
    const char *pages[] = {"minutes.png", "newsletter.png"};
    const double angles[] = {-12, -8, -4, -1.5, -0.3, 0, 0.3, 1.5, 4, 8, 12};
    const int nangles = sizeof angles / sizeof angles[0];
    double worst = 0;
    for (int p = 0; p < 2; p++) {
        lt_image *gray = tu_load_testdata(pages[p]);
        PIX *pix = tu_pix_from_gray(gray);
        lt_image_free(gray);
        printf("%s:", pages[p]);
        for (int i = 0; i < nangles; i++) {
            lt_image *ink = rotated_ink(pix, angles[i], sign);
            char what[96];
            snprintf(what, sizeof what, "%s rotated to %+.1f deg", pages[p], angles[i]);
            lt_skew s = estimate(ink, what);
            double e = s.angle_deg - angles[i];
            printf(" %+.1f:%+.3f", angles[i], e);
            if (fabs(e) > worst) worst = fabs(e);
            CHECK_NEAR(s.angle_deg, angles[i], TOLERANCE_DEG, "%s: estimated skew", what);
            CHECK(s.confidence >= 0.05 && s.confidence <= 1, "%s: confidence %.3f", what,
                  s.confidence);
            /* Deskewing by the estimate with lt_rotate_ink levels the page. */
            if (angles[i] == 4 || angles[i] == -8) {
                lt_error err = {0};
                lt_image *level = NULL;
                if (lt_rotate_ink(ink, s.angle_deg, &level, &err)) {
                    tu_fail("%s: lt_rotate_ink: %s", what, err.message);
                } else {
                    lt_skew s2 = estimate(level, what);
                    CHECK_NEAR(s2.angle_deg, 0, TOLERANCE_DEG, "%s, deskewed: residual skew", what);
                }
                lt_image_free(level);
            }
            lt_image_free(ink);
        }
        printf("  (errors, deg)\n");
        pixDestroy(&pix);
    }
    printf("worst skew error %.4f deg (tolerance %.2f)\n", worst, TOLERANCE_DEG);
}

/* No evidence: a blank page and uniform random noise give angle 0 and confidence 0. A page
 * with a single long horizontal rule is level.
 * Guards against a defect seen in skew.c while this test was written: uniform noise filling the
 * page got a confidence far above skew_min_confidence at angle ~0 instead of "no estimate", and so
 * did noise filling a disc, which has no straight edges at all. Two causes: the top and bottom
 * edges of a page-filling ink area are horizontal steps of the profile (sharp at angle 0 only),
 * and at angle 0 every grid cell falls exactly on a bin, so the interpolation that smooths every
 * other angle does not, and the criterion peaks at 0 even for isotropic noise; the confidence (1 -
 * median / peak of the criterion) did not tell such a peak from that of text lines. */
static void test_no_evidence(void)
{
    lt_image *blank = tu_image(2550, 3300, LT_IMAGE_INK, 0);
    lt_skew s = estimate(blank, "blank page");
    CHECK(s.angle_deg == 0 && s.confidence == 0, "blank page: angle %.4f confidence %.4f, want 0",
          s.angle_deg, s.confidence);
    /* A single long rule: 1800 x 4 px. */
    tu_fill(blank, 375, 1600, 2175, 1604, 1);
    s = estimate(blank, "single rule");
    CHECK_NEAR(s.angle_deg, 0, TOLERANCE_DEG, "single horizontal rule: angle");
    printf("single rule: angle %.4f confidence %.3f\n", s.angle_deg, s.confidence);
    lt_image_free(blank);

    const double densities[] = {0.5, 0.1, 0.02};
    for (int i = 0; i < 3; i++) {
        tu_rng rng = {99 + (uint64_t)i};
        lt_image *noise = tu_image(1700, 2200, LT_IMAGE_INK, 0);
        for (size_t k = 0; k < (size_t)1700 * 2200; k++)
            noise->pixels[k] = tu_unit(&rng) < densities[i];
        s = estimate(noise, "noise");
        CHECK(s.angle_deg == 0 && s.confidence == 0,
              "uniform noise %.2f: angle %.4f confidence %.4f, want 0 and 0", densities[i],
              s.angle_deg, s.confidence);
        lt_image_free(noise);
    }
    /* The same noise inside a disc: no horizontal edges, only the grid bias remains. */
    tu_rng rng = {7};
    lt_image *disc = tu_image(1700, 2200, LT_IMAGE_INK, 0);
    for (int y = 0; y < 2200; y++)
        for (int x = 0; x < 1700; x++) {
            double dx = x - 850.0, dy = y - 1100.0;
            disc->pixels[(size_t)y * 1700 + x] =
                dx * dx + dy * dy < 800.0 * 800 && tu_unit(&rng) < 0.1;
        }
    s = estimate(disc, "noise disc");
    CHECK(s.angle_deg == 0 && s.confidence == 0,
          "uniform noise 0.10 in a disc: angle %.4f confidence %.4f, want 0 and 0", s.angle_deg,
          s.confidence);
    lt_image_free(disc);
    /* Tiny images carry no estimate; bad arguments are rejected. */
    lt_image *tiny = tu_image(10, 10, LT_IMAGE_INK, 1);
    s = estimate(tiny, "10x10 page");
    CHECK(s.angle_deg == 0 && s.confidence == 0, "10x10 page: angle %.3f", s.angle_deg);
    lt_error err = {0};
    CHECK_INT(lt_estimate_skew(tiny, 50, 0.05, &s, &err), LT_EINVAL, "range 50: return code");
    lt_image *gray = tu_image(100, 100, LT_IMAGE_GRAY, 255);
    lt_error err2 = {0};
    CHECK_INT(lt_estimate_skew(gray, 15, 0.05, &s, &err2), LT_EINVAL, "gray input: return code");
    lt_image_free(gray);
    lt_image_free(tiny);
}

/* Random sparse blobs, odd size, for the rotation checks. */
static lt_image *blob_page(int w, int h, uint64_t seed)
{
    tu_rng rng = {seed};
    lt_image *img = tu_image(w, h, LT_IMAGE_INK, 0);
    for (int b = 0; b < 300; b++) {
        int x = tu_range(&rng, 0, w - 1), y = tu_range(&rng, 0, h - 1);
        tu_fill(img, x, y, x + tu_range(&rng, 1, 12), y + tu_range(&rng, 1, 12), 1);
    }
    for (int k = 0; k < w * h / 50; k++)
        img->pixels[tu_range(&rng, 0, w * h - 1)] = 1;
    return img;
}

/* Distance of v from the nearest integer. */
static double off_grid(double v)
{
    return fabs(v - floor(v + 0.5));
}

/* lt_rotate_ink and the frame: canvas size, inverse mappings, levelling direction, and every
 * rotated pixel equal to the original pixel its centre maps to (nearest-neighbour sampling). */
static void test_rotate_and_frame(void)
{
    const double angles[] = {-12, -3.7, -0.3, 0, 0.3, 5, 12, 45};
    const int w = 301, h = 211;
    lt_image *ink = blob_page(w, h, 5);
    for (size_t i = 0; i < sizeof angles / sizeof angles[0]; i++) {
        const double a = angles[i], ar = a * LT_PI / 180.0;
        lt_frame f;
        lt_frame_init(&f, w, h, a);
        lt_error err = {0};
        lt_image *rot = NULL;
        if (lt_rotate_ink(ink, a, &rot, &err)) {
            tu_fail("rotate %+.1f: %s", a, err.message);
            continue;
        }
        /* Canvas: the bounding box of the rotated image, w|cos| + h|sin| by w|sin| + h|cos|. */
        int want_w = (int)ceil(w * fabs(cos(ar)) + h * fabs(sin(ar)) - 1e-9);
        int want_h = (int)ceil(w * fabs(sin(ar)) + h * fabs(cos(ar)) - 1e-9);
        CHECK_INT(rot->width, want_w, "rotate %+.1f: canvas width", a);
        CHECK_INT(rot->height, want_h, "rotate %+.1f: canvas height", a);
        CHECK_INT(f.desk_width, rot->width, "frame %+.1f: desk_width vs lt_rotate_ink", a);
        CHECK_INT(f.desk_height, rot->height, "frame %+.1f: desk_height vs lt_rotate_ink", a);
        CHECK(rot->kind == LT_IMAGE_INK, "rotate %+.1f: kind", a);

        /* Inverse mappings, at random points inside and outside the image. */
        tu_rng rng = {123};
        double worst = 0;
        for (int k = 0; k < 1000; k++) {
            double x = tu_unit(&rng) * 1.4 * w - 0.2 * w, y = tu_unit(&rng) * 1.4 * h - 0.2 * h;
            lt_point d = lt_frame_to_deskewed(&f, x, y);
            lt_point o = lt_frame_to_original(&f, d.x, d.y);
            lt_point o2 = lt_frame_to_original(&f, x, y);
            lt_point d2 = lt_frame_to_deskewed(&f, o2.x, o2.y);
            worst = fmax(worst, fmax(hypot(o.x - x, o.y - y), hypot(d2.x - x, d2.y - y)));
            /* Rotation preserves distances: from the centre, before and after. */
            double r0 = hypot(x - f.orig_cx, y - f.orig_cy);
            double r1 = hypot(d.x - f.desk_cx, d.y - f.desk_cy);
            worst = fmax(worst, fabs(r0 - r1));
        }
        CHECK(worst < 1e-9, "frame %+.1f: round trip / distance error %.3g px", a, worst);
        /* Centres map onto each other. */
        lt_point c = lt_frame_to_deskewed(&f, w / 2.0, h / 2.0);
        CHECK(fabs(c.x - rot->width / 2.0) < 1e-9 && fabs(c.y - rot->height / 2.0) < 1e-9,
              "frame %+.1f: centre maps to (%.3f, %.3f)", a, c.x, c.y);
        /* Levelling: a segment rising to the right at angle a (as displayed, y down) becomes
         * horizontal, left end still left. */
        lt_point p0 = lt_frame_to_deskewed(&f, 50, 150);
        lt_point p1 = lt_frame_to_deskewed(&f, 50 + 200 * cos(ar), 150 - 200 * sin(ar));
        CHECK(fabs(p1.y - p0.y) < 1e-9 && p1.x - p0.x > 199.999,
              "frame %+.1f: a line rising at the skew maps to (%.3f,%.3f)-(%.3f,%.3f)", a, p0.x,
              p0.y, p1.x, p1.y);

        /* Every pixel of the rotated image equals the original pixel under its centre (paper
         * outside the original). Centres within 1e-6 px of a pixel border are skipped: there
         * floating-point rounding may pick either pixel. */
        long wrong = 0, skipped = 0, ink_rot = 0;
        for (int y = 0; y < rot->height; y++)
            for (int x = 0; x < rot->width; x++) {
                lt_point s = lt_frame_to_original(&f, x + 0.5, y + 0.5);
                if (off_grid(s.x) < 1e-6 || off_grid(s.y) < 1e-6) {
                    skipped++;
                    continue;
                }
                int sx = (int)floor(s.x), sy = (int)floor(s.y);
                int want = sx >= 0 && sy >= 0 && sx < w && sy < h ? ink->pixels[sy * w + sx] : 0;
                int got = rot->pixels[(size_t)y * rot->width + x];
                ink_rot += got != 0;
                wrong += got != want;
            }
        CHECK_INT(wrong, 0, "rotate %+.1f: pixels not equal to the original pixel they map to", a);
        CHECK(skipped * 100 < (long)rot->width * rot->height, "rotate %+.1f: %ld skipped", a,
              skipped);
        /* Rotation keeps area: ink within 3% of the original's (nearest-neighbour sampling). */
        long ink0 = tu_count_ink(ink);
        CHECK(labs(ink_rot - ink0) * 100 <= 3 * ink0, "rotate %+.1f: %ld ink pixels, original %ld",
              a, ink_rot, ink0);
        lt_image_free(rot);
    }
    /* Angle 0: the identity. */
    lt_frame f0;
    lt_frame_init(&f0, w, h, 0);
    lt_point q = lt_frame_to_deskewed(&f0, 17.25, 3.5);
    CHECK(q.x == 17.25 && q.y == 3.5, "frame 0: identity maps to (%g, %g)", q.x, q.y);
    lt_image *same = NULL;
    lt_error err = {0};
    if (!lt_rotate_ink(ink, 0, &same, &err))
        CHECK(same->width == w && same->height == h &&
                  !memcmp(same->pixels, ink->pixels, (size_t)w * h),
              "rotate 0: not a copy of the input");
    lt_image_free(same);
    /* Bad arguments. */
    const double bad[] = {45.5, -90, NAN};
    for (int i = 0; i < 3; i++) {
        lt_error e = {0};
        lt_image *o = NULL;
        CHECK_INT(lt_rotate_ink(ink, bad[i], &o, &e), LT_EINVAL, "rotate %g: return code", bad[i]);
        CHECK(o == NULL, "rotate %g: result not NULL", bad[i]);
    }
    lt_image_free(ink);
}

/* Small type: a page of two reduced page images set in type about 6 px high (text height;
 * testdata/small-type.png, from the development set of other documents), rotated by
 * leptonica by known angles and sprinkled with salt and pepper (0.21 % of the pixels, fixed
 * seed): its lines' pitch was a bin or two of the 8x-reduced grid that the coarse sweep once
 * ran on, where it found a false peak at +3.1 degrees for -2.48. Within 0.15 degree (the
 * small lines carry less evidence than body type). */
static void test_small_type(double sign)
{
    lt_image *gray = tu_load_testdata("small-type.png");
    PIX *pix = tu_pix_from_gray(gray);
    lt_image_free(gray);
    const double angles[] = {-2.48, 1.5, 4};
    for (int i = 0; i < 3; i++) {
        const double lept_rad = angles[i] / sign * LT_PI / 180.0;
        PIX *rot = pixRotate(pix, (l_float32)lept_rad, L_ROTATE_AREA_MAP, L_BRING_IN_WHITE, 0, 0);
        if (!rot) tu_die("pixRotate failed");
        tu_rng r = {7 + (uint64_t)i};
        const int w = pixGetWidth(rot), h = pixGetHeight(rot);
        for (long k = 0; k < (long)w * h * 21 / 10000; k++)
            pixSetPixel(rot, tu_range(&r, 0, w - 1), tu_range(&r, 0, h - 1),
                        tu_range(&r, 0, 1) ? 255 : 0);
        lt_image *g = tu_gray_from_pix(rot);
        pixDestroy(&rot);
        lt_image *ink = binarize(g);
        lt_image_free(g);
        char what[96];
        snprintf(what, sizeof what, "small type with salt and pepper, rotated to %+.2f deg",
                 angles[i]);
        lt_skew s = estimate(ink, what);
        printf("%s: error %+.3f\n", what, s.angle_deg - angles[i]);
        CHECK_NEAR(s.angle_deg, angles[i], 0.15, "%s: estimated skew", what);
        lt_image_free(ink);
    }
    pixDestroy(&pix);
}

/* One column of list items from baseline `top` down to `bottom`: items of one line, a quarter
 * of them of two, each line 40 to 90 % of the column's width (flush left), 56 px of white
 * between items. */
static void draw_list_column(page *p, tu_rng *r, int x0, int x1, int top, int bottom)
{
    for (int y = top; y + 2 * PITCH < bottom; y += 56) {
        const int lines = tu_range(r, 0, 3) == 0 ? 2 : 1;
        for (int i = 0; i < lines; i++, y += PITCH)
            draw_line(p, r, x0, x0 + tu_range(r, (x1 - x0) * 2 / 5, (x1 - x0) * 9 / 10), y, 0, 0);
    }
}

/* Columns whose baselines do not line up: a page of two columns of list items drawn upright
 * (tests/textpage.h), the right column starting 30 px lower, so that its baselines stand a
 * varying part of the pitch off the left one's; turned to gray and rotated by leptonica's
 * pixRotate by known angles. At the angle that lines the left column's lines up with the
 * right one's (tan = offset / the columns' distance), the overlap of the two columns'
 * profiles adds to the sharpness of the whole page's projection; with bins of 8 px in the
 * coarse sweep that false peak won (errors of 0.48, 0.78 and 0.48 degree on these three
 * pages), with 2 px bins the true one does. Within 0.15 degree. */
static void test_staggered_columns(double sign)
{
    const double angles[] = {3.1, -1.2, 0.6};
    for (int i = 0; i < 3; i++) {
        tu_rng r = {1000};
        page *p = page_new(2550, 3300);
        draw_list_column(p, &r, 350, 1150, 450, 2950);
        draw_list_column(p, &r, 1350, 2150, 480, 2950);
        lt_image *gray = page_gray(p);
        page_free(p);
        PIX *pix = tu_pix_from_gray(gray);
        lt_image_free(gray);
        lt_image *ink = rotated_ink(pix, angles[i], sign);
        pixDestroy(&pix);
        char what[96];
        snprintf(what, sizeof what, "two columns, baselines staggered, rotated to %+.1f deg",
                 angles[i]);
        lt_skew s = estimate(ink, what);
        printf("%s: error %+.3f\n", what, s.angle_deg - angles[i]);
        CHECK_NEAR(s.angle_deg, angles[i], 0.15, "%s: estimated skew", what);
        lt_image_free(ink);
    }
}

/* The text height of ink (turned level by lt_rotate_ink when `angle_deg` is not 0, the text
 * height then measured as lt_analyze measures that of a deskewed page). */
static double level_text_height(const lt_image *ink, double angle_deg, int by_boxes,
                                const char *what)
{
    lt_error err = {0};
    lt_image *level = NULL;
    lt_components *c = NULL;
    double th = -1;
    if (angle_deg != 0 && lt_rotate_ink(ink, angle_deg, &level, &err))
        tu_fail("%s: lt_rotate_ink: %s", what, err.message);
    else if (lt_find_components(level ? level : ink, LT_DEFAULT_MAX_COMPONENTS, &c, &err))
        tu_fail("%s: lt_find_components: %s", what, err.message);
    else
        th = by_boxes ? lt_text_height(c, 300) : lt_text_height_deskewed(c, 300);
    lt_components_free(c);
    lt_image_free(level);
    return th;
}

/* A page rotated by leptonica, binarized and turned level again: its letters' top and bottom
 * edges, binarized at an angle, carry teeth (a staircase) that add to their boxes (the text
 * height by boxes, lt_text_height, 2.6 to 3.9 % over the level page's), less to the rows
 * that hold all but the outermost 3 % of their ink (their core heights: the text height by
 * cores, lt_text_height_deskewed, within 2 % of the level page's by cores, and nearer to it
 * at every angle than the text height by boxes is to the level page's). */
static void test_rotated_text_height(double sign)
{
    const char *pages[] = {"minutes.png", "newsletter.png"};
    const double angles[] = {-12, -8, -4, -1.5, 1.5, 4, 8, 12};
    for (int p = 0; p < 2; p++) {
        lt_image *gray = tu_load_testdata(pages[p]);
        PIX *pix = tu_pix_from_gray(gray);
        lt_image *ink = binarize(gray);
        lt_image_free(gray);
        const double level = level_text_height(ink, 0, 1, pages[p]),
                     level_cores = level_text_height(ink, 0, 0, pages[p]);
        lt_image_free(ink);
        printf("%s: text height %.2f (cores %.2f); turned level from", pages[p], level,
               level_cores);
        for (size_t i = 0; i < sizeof angles / sizeof angles[0]; i++) {
            char what[96];
            snprintf(what, sizeof what, "%s rotated to %+.1f deg", pages[p], angles[i]);
            ink = rotated_ink(pix, angles[i], sign);
            const double cores = level_text_height(ink, angles[i], 0, what),
                         boxes = level_text_height(ink, angles[i], 1, what);
            printf(" %+.1f: %.2f (boxes %.2f)", angles[i], cores, boxes);
            CHECK_NEAR(cores, level_cores, 0.02 * level_cores, "%s: text height by cores", what);
            CHECK(fabs(cores - level_cores) < fabs(boxes - level),
                  "%s: text height by cores %.2f (level %.2f) no nearer than by boxes %.2f "
                  "(level %.2f)",
                  what, cores, level_cores, boxes, level);
            lt_image_free(ink);
        }
        printf("\n");
        pixDestroy(&pix);
    }
}

int main(void)
{
    setMsgSeverity(L_SEVERITY_WARNING);
    double t0 = tu_now_s();
    double sign = leptonica_sign();
    test_rotate_and_frame();
    test_no_evidence();
    test_rotated_pages(sign);
    test_small_type(sign);
    test_staggered_columns(sign);
    test_rotated_text_height(sign);
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_skew");
}

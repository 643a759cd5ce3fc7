/* test_polygon.c — checks the line outlines of lt_analyze (polygon.c) on pages drawn here:
 * lines of letter-sized blobs that bend along a sine curve, and straight lines on a page
 * tilted by 4 degrees. Every ink pixel of a line must lie inside its polygon (crossing-number
 * point-in-polygon test, Shimrat 1962), a bent line's polygon must be much smaller than its
 * box (shoelace area), and every point of a tilted line's polygon must lie in its quad.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"

#include <math.h>

#define LT_TEST_PI 3.14159265358979323846

#define BLOB_W 12 /* a letter: 12 x 20 px, 6 px apart */
#define BLOB_H 20
#define BLOB_GAP 6

/* Whether (x, y) lies inside the polygon p[0..n) (crossing number). */
static int inside(const lt_point *p, int n, double x, double y)
{
    int in = 0;
    for (int i = 0, j = n - 1; i < n; j = i++) {
        if ((p[i].y > y) != (p[j].y > y) &&
            x < (p[j].x - p[i].x) * (y - p[i].y) / (p[j].y - p[i].y) + p[i].x)
            in = !in;
    }
    return in;
}

static double area(const lt_point *p, int n) /* shoelace formula */
{
    double a = 0;
    for (int i = 0, j = n - 1; i < n; j = i++)
        a += (p[j].x + p[i].x) * (p[j].y - p[i].y);
    return fabs(a) / 2;
}

/* The line of `l` whose box holds (x, y), -1 when none. */
static int line_at(const lt_layout *l, double x, double y)
{
    for (int i = 0; i < l->nlines; i++) {
        const lt_box *b = &l->lines[i].box;
        if (x >= b->left && x < b->right && y >= b->top && y < b->bottom) return i;
    }
    return -1;
}

/* Lines of blobs bending along y = base + amp * sin(2 pi x / period): every ink pixel inside
 * its line's polygon, the polygon far smaller than the box. */
static void bent_lines(void)
{
    lt_image *img = tu_image(1800, 1400, LT_IMAGE_GRAY, 255);
    img->dpi = 300;
    const double amp = 30, period = 1600;
    for (int row = 0; row < 8; row++) {
        const int base = 150 + row * 140;
        for (int x = 100; x + BLOB_W < 1700; x += BLOB_W + BLOB_GAP) {
            if ((x / (BLOB_W + BLOB_GAP)) % 7 == 6) continue; /* a word space */
            int y = base + (int)lround(amp * sin(2 * LT_TEST_PI * x / period));
            tu_fill(img, x, y - BLOB_H, x + BLOB_W, y, 0);
        }
    }
    lt_layout *lay = NULL;
    lt_error err = {0};
    if (lt_analyze(img, NULL, &lay, &err)) tu_die("analyze: %s", err.message);
    CHECK_INT(lay->nlines, 8, "bent lines: one line per row");
    long outside = 0, ink = 0;
    for (int y = 0; y < img->height; y++)
        for (int x = 0; x < img->width; x++) {
            if (img->pixels[(size_t)y * img->width + x] != 0) continue;
            int i = line_at(lay, x + 0.5, y + 0.5);
            ink++;
            if (i < 0 || !lay->lines[i].polygon ||
                !inside(lay->lines[i].polygon, lay->lines[i].npolygon, x + 0.5, y + 0.5))
                outside++;
        }
    CHECK(outside == 0, "bent lines: %ld of %ld ink pixels outside their line's polygon", outside,
          ink);
    for (int i = 0; i < lay->nlines; i++) {
        const lt_line *ln = &lay->lines[i];
        CHECK(ln->npolygon >= 8, "bent line %d: a polygon of %d points follows the bend", i,
              ln->npolygon);
        if (!ln->polygon) continue;
        const double a = area(ln->polygon, ln->npolygon);
        const double box = (double)(ln->box.right - ln->box.left) * (ln->box.bottom - ln->box.top);
        CHECK(a < 0.7 * box, "bent line %d: polygon area %.0f not under 0.7 of the box's %.0f", i,
              a, box);
    }
    lt_layout_free(lay);
    lt_image_free(img);
}

/* Straight lines on a page tilted by 4 degrees: every polygon point within a pixel of the
 * line's quad, and the polygon holds the line's ink. */
static void tilted_lines(void)
{
    lt_image *img = tu_image(1800, 1400, LT_IMAGE_GRAY, 255);
    img->dpi = 300;
    const double slope = tan(4 * LT_TEST_PI / 180); /* rising to the right */
    for (int row = 0; row < 8; row++) {
        const int base = 250 + row * 120;
        for (int x = 100; x + BLOB_W < 1700; x += BLOB_W + BLOB_GAP) {
            int y = base - (int)lround(slope * x);
            tu_fill(img, x, y - BLOB_H, x + BLOB_W, y, 0);
        }
    }
    lt_layout *lay = NULL;
    lt_error err = {0};
    if (lt_analyze(img, NULL, &lay, &err)) tu_die("analyze: %s", err.message);
    CHECK_INT(lay->nlines, 8, "tilted lines: one line per row");
    CHECK_NEAR(lay->skew_deg, 4.0, 0.1, "tilted lines: skew");
    for (int i = 0; i < lay->nlines; i++) {
        const lt_line *ln = &lay->lines[i];
        CHECK(ln->npolygon >= 4, "tilted line %d has a polygon", i);
        int off = 0;
        for (int k = 0; k < ln->npolygon; k++) {
            /* the point, or one within a pixel of it, inside the quad */
            int near = 0;
            for (int d = 0; d < 9 && !near; d++)
                near = inside(ln->quad, 4, ln->polygon[k].x + (d % 3 - 1),
                              ln->polygon[k].y + (d / 3 - 1));
            off += !near;
        }
        CHECK(off == 0, "tilted line %d: %d polygon points outside its quad", i, off);
    }
    lt_layout_free(lay);
    lt_image_free(img);
}

int main(void)
{
    bent_lines();
    tilted_lines();
    return tu_summary("test_polygon");
}

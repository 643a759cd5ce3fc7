/* crop.c — text-line images cut from a page: rectangles copied as they are, and rectified
 * crops that resample the page along a line's (rotated) quad with bilinear interpolation, the
 * textbook inverse-mapping scheme: every output pixel is mapped back into the page. */
#include "crop.h"

#include <math.h>
#include <string.h>

int lt_crop_default_margin_px(double xheight_px)
{
    const double m = xheight_px > 0 ? round(0.25 * xheight_px) : 0;
    return m < 2 ? 2 : m > 1e6 ? 1000000 : (int)m;
}

int lt_ink_to_gray(const lt_image *ink, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK || !ink->pixels)
        return lt_error_set(err, LT_EINVAL, "crop: not an ink image");
    lt_image *g = lt_image_new(ink->width, ink->height, LT_IMAGE_GRAY);
    if (!g) return lt_error_set(err, LT_ENOMEM, "out of memory");
    g->dpi = ink->dpi;
    const size_t n = (size_t)ink->width * (size_t)ink->height;
    for (size_t i = 0; i < n; i++)
        g->pixels[i] = ink->pixels[i] ? 0 : 255;
    *out = g;
    return 0;
}

static int clampi(long v, int lo, int hi)
{
    return v < lo ? lo : v > hi ? hi : (int)v;
}

lt_box lt_crop_grow_box(lt_box b, int margin_px, int width, int height)
{
    lt_box g = {
        clampi((long)b.left - margin_px, 0, width), clampi((long)b.top - margin_px, 0, height),
        clampi((long)b.right + margin_px, 0, width), clampi((long)b.bottom + margin_px, 0, height)};
    return g;
}

int lt_crop_box(const lt_image *page, lt_box b, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!page || page->kind != LT_IMAGE_GRAY || !page->pixels)
        return lt_error_set(err, LT_EINVAL, "crop: not a gray page");
    if (b.left < 0 || b.top < 0 || b.right > page->width || b.bottom > page->height ||
        b.left >= b.right || b.top >= b.bottom)
        return lt_error_set(err, LT_EINVAL, "crop: box [%d, %d, %d, %d) outside the %d x %d page",
                            b.left, b.top, b.right, b.bottom, page->width, page->height);
    const int w = b.right - b.left, h = b.bottom - b.top;
    lt_image *c = lt_image_new(w, h, LT_IMAGE_GRAY);
    if (!c) return lt_error_set(err, LT_ENOMEM, "out of memory");
    c->dpi = page->dpi;
    for (int y = 0; y < h; y++)
        memcpy(c->pixels + (size_t)y * w, page->pixels + (size_t)(b.top + y) * page->width + b.left,
               (size_t)w);
    *out = c;
    return 0;
}

/* Gray value of page pixel (x, y), white outside the page. */
static inline double pixel_or_white(const lt_image *page, long x, long y)
{
    if (x < 0 || y < 0 || x >= page->width || y >= page->height) return 255.0;
    return page->pixels[(size_t)y * page->width + (size_t)x];
}

/* Bilinear interpolation of the page at the continuous point (sx, sy); pixel centres lie at
 * i + 0.5, so a point on a centre returns that pixel exactly. */
static double sample_bilinear(const lt_image *page, double sx, double sy)
{
    const double fx = sx - 0.5, fy = sy - 0.5;
    if (!(fx > -2 && fy > -2 && fx < page->width + 1.0 && fy < page->height + 1.0))
        return 255.0; /* far outside (also NaN): all four neighbours are white */
    const double x0f = floor(fx), y0f = floor(fy);
    const long x0 = (long)x0f, y0 = (long)y0f;
    const double ax = fx - x0f, ay = fy - y0f;
    const int inside = x0 >= 0 && y0 >= 0 && x0 + 1 < page->width && y0 + 1 < page->height;
    double p00, p10, p01, p11;
    if (inside) { /* the common case: no bounds test per neighbour */
        const uint8_t *r0 = page->pixels + (size_t)y0 * page->width + (size_t)x0;
        const uint8_t *r1 = r0 + page->width;
        p00 = r0[0], p10 = r0[1], p01 = r1[0], p11 = r1[1];
    } else {
        p00 = pixel_or_white(page, x0, y0);
        p10 = pixel_or_white(page, x0 + 1, y0);
        p01 = pixel_or_white(page, x0, y0 + 1);
        p11 = pixel_or_white(page, x0 + 1, y0 + 1);
    }
    const double top = p00 + ax * (p10 - p00), bottom = p01 + ax * (p11 - p01);
    return top + ay * (bottom - top);
}

/* Output value of an interpolated gray level g in [0, 255]. */
static inline uint8_t out_value(double g, int binary)
{
    if (binary) return g >= 128.0 ? 255 : 0;
    return (uint8_t)(g + 0.5); /* g >= 0: truncation of g + 0.5 rounds */
}

/* Fills one crop row of w pixels with samples at (sx, sy) + u (dx, dy), u = 0 .. w-1. When the
 * whole segment lies where all four neighbours are inside the page (convex: both ends
 * suffice), the bounds tests are skipped. */
static void sample_row(const lt_image *page, double sx, double sy, double dx, double dy, int w,
                       int binary, uint8_t *row)
{
    const double ex = sx + (w - 1) * dx, ey = sy + (w - 1) * dy;
    const double lo = 0.5, hi_x = page->width - 0.5 - 1e-9, hi_y = page->height - 0.5 - 1e-9;
    const int inside = sx >= lo && ex >= lo && sy >= lo && ey >= lo && sx < hi_x && ex < hi_x &&
                       sy < hi_y && ey < hi_y;
    if (!inside) {
        for (int u = 0; u < w; u++)
            row[u] = out_value(sample_bilinear(page, sx + u * dx, sy + u * dy), binary);
        return;
    }
    const size_t stride = (size_t)page->width;
    for (int u = 0; u < w; u++) {
        const double fx = sx + u * dx - 0.5, fy = sy + u * dy - 0.5; /* >= 0 here */
        const long x0 = (long)fx, y0 = (long)fy;
        const double ax = fx - x0, ay = fy - y0;
        const uint8_t *r0 = page->pixels + (size_t)y0 * stride + (size_t)x0;
        /* x0 + 1 and y0 + 1 may equal width or height only with a zero weight: clamp. */
        const size_t step_x = x0 + 1 < page->width ? 1 : 0;
        const size_t step_y = y0 + 1 < page->height ? stride : 0;
        const double p00 = r0[0], p10 = r0[step_x], p01 = r0[step_y], p11 = r0[step_y + step_x];
        const double top = p00 + ax * (p10 - p00), bottom = p01 + ax * (p11 - p01);
        row[u] = out_value(top + ay * (bottom - top), binary);
    }
}

/* The level, whole-pixel case of lt_crop_quad: crop pixel (u, v) is page pixel
 * (x0 + u, y0 + v), white outside the page. */
static void copy_level(const lt_image *page, long x0, long y0, lt_image *c, int binary)
{
    memset(c->pixels, 255, (size_t)c->width * (size_t)c->height);
    const long u0 = x0 < 0 ? -x0 : 0,
               u1 = page->width - x0 < c->width ? page->width - x0 : c->width;
    for (long v = 0; v < c->height; v++) {
        const long y = y0 + v;
        if (y < 0 || y >= page->height || u1 <= u0) continue;
        uint8_t *row = c->pixels + (size_t)v * c->width;
        const uint8_t *src = page->pixels + (size_t)y * page->width + (size_t)(x0 + u0);
        for (long u = u0; u < u1; u++)
            row[u] = out_value(src[u - u0], binary);
    }
}

int lt_crop_quad(const lt_image *page, const lt_point quad[4], double margin_px, int binary,
                 lt_image **out, lt_point cut[4], lt_error *err)
{
    *out = NULL;
    if (!page || page->kind != LT_IMAGE_GRAY || !page->pixels || !(margin_px >= 0))
        return lt_error_set(err, LT_EINVAL, "crop: bad arguments");
    const double tx = quad[1].x - quad[0].x, ty = quad[1].y - quad[0].y;
    const double lx = quad[3].x - quad[0].x, ly = quad[3].y - quad[0].y;
    const double top_len = hypot(tx, ty), left_len = hypot(lx, ly);
    if (!(top_len > 1e-9 && left_len > 1e-9) || !isfinite(top_len + left_len))
        return lt_error_set(err, LT_EINVAL, "crop: degenerate line quad");
    const double ex_x = tx / top_len, ex_y = ty / top_len;   /* along the line */
    const double ey_x = lx / left_len, ey_y = ly / left_len; /* down the line */
    const double wf = round(top_len + 2 * margin_px), hf = round(left_len + 2 * margin_px);
    const double w_d = wf < 1 ? 1 : wf, h_d = hf < 1 ? 1 : hf;
    if (w_d * h_d > (double)LT_CROP_MAX_PIXELS)
        return lt_error_set(err, LT_ELIMIT, "crop: %.0f x %.0f pixels, more than the limit of %ld",
                            w_d, h_d, (long)LT_CROP_MAX_PIXELS);
    const int w = (int)w_d, h = (int)h_d;
    /* Corners of the crop in page coordinates: the grown quad. */
    const lt_point o = {quad[0].x - margin_px * (ex_x + ey_x),
                        quad[0].y - margin_px * (ex_y + ey_y)};
    cut[0] = o;
    cut[1] = (lt_point){o.x + w * ex_x, o.y + w * ex_y};
    cut[2] = (lt_point){o.x + w * ex_x + h * ey_x, o.y + w * ex_y + h * ey_y};
    cut[3] = (lt_point){o.x + h * ey_x, o.y + h * ey_y};
    lt_image *c = lt_image_new(w, h, LT_IMAGE_GRAY);
    if (!c) return lt_error_set(err, LT_ENOMEM, "out of memory");
    c->dpi = page->dpi;
    if (ex_x == 1 && ex_y == 0 && ey_x == 0 && ey_y == 1 && o.x == floor(o.x) &&
        o.y == floor(o.y) && fabs(o.x) < 1e9 && fabs(o.y) < 1e9) {
        /* A level quad on whole pixels: every sample falls on a pixel centre, where the
         * interpolation returns the pixel itself, so the rows are copied (same result). */
        copy_level(page, (long)o.x, (long)o.y, c, binary);
    } else {
        for (int v = 0; v < h; v++) {
            const double bx = o.x + (v + 0.5) * ey_x, by = o.y + (v + 0.5) * ey_y;
            sample_row(page, bx + 0.5 * ex_x, by + 0.5 * ex_y, ex_x, ex_y, w, binary,
                       c->pixels + (size_t)v * w);
        }
    }
    *out = c;
    return 0;
}

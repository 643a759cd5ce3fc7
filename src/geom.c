/* geom.c — the deskewed frame: rotation of the ink image and the mapping of every output
 * coordinate back to the image the user gave. The only place where angles meet pixels. */
#include "internal.h"

#include <assert.h>
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

void lt_frame_init(lt_frame *f, int width, int height, double angle_deg)
{
    const double a = angle_deg * LT_PI / 180.0;
    f->cos_a = cos(a);
    f->sin_a = sin(a);
    if (angle_deg == 0) {
        f->cos_a = 1;
        f->sin_a = 0;
    }
    const double ac = fabs(f->cos_a), as = fabs(f->sin_a);
    f->desk_width = angle_deg == 0 ? width : (int)ceil(width * ac + height * as - 1e-9);
    f->desk_height = angle_deg == 0 ? height : (int)ceil(width * as + height * ac - 1e-9);
    f->orig_cx = width * 0.5;
    f->orig_cy = height * 0.5;
    f->desk_cx = f->desk_width * 0.5;
    f->desk_cy = f->desk_height * 0.5;
    f->turn_deg = 0;
    f->given_width = width;
    f->given_height = height;
}

void lt_frame_set_turn(lt_frame *f, int turn_deg, int given_width, int given_height)
{
    assert(turn_deg == 0 || turn_deg == 90 || turn_deg == 180 || turn_deg == 270);
    f->turn_deg = turn_deg;
    f->given_width = given_width;
    f->given_height = given_height;
}

lt_point lt_frame_to_original(const lt_frame *f, double x, double y)
{
    const double dx = x - f->desk_cx, dy = y - f->desk_cy;
    const double u = f->orig_cx + dx * f->cos_a + dy * f->sin_a,
                 v = f->orig_cy - dx * f->sin_a + dy * f->cos_a;
    const double w = f->given_width, h = f->given_height;
    /* the inverse of the clockwise quarter turns of lt_frame_to_deskewed */
    switch (f->turn_deg) {
    case 90: return (lt_point){v, h - u};
    case 180: return (lt_point){w - u, h - v};
    case 270: return (lt_point){w - v, u};
    default: return (lt_point){u, v};
    }
}

lt_point lt_frame_to_deskewed(const lt_frame *f, double x, double y)
{
    const double w = f->given_width, h = f->given_height;
    /* turned clockwise: the given image's left edge becomes the top for 90 */
    const lt_point up = f->turn_deg == 90    ? (lt_point){h - y, x}
                        : f->turn_deg == 180 ? (lt_point){w - x, h - y}
                        : f->turn_deg == 270 ? (lt_point){y, w - x}
                                             : (lt_point){x, y};
    const double dx = up.x - f->orig_cx, dy = up.y - f->orig_cy;
    lt_point p = {f->desk_cx + dx * f->cos_a - dy * f->sin_a,
                  f->desk_cy + dx * f->sin_a + dy * f->cos_a};
    return p;
}

static int clampi(int v, int lo, int hi)
{
    return v < lo ? lo : v > hi ? hi : v;
}

void lt_frame_map_box(const lt_frame *f, lt_box b, int width, int height, lt_point quad[4],
                      lt_box *hull)
{
    quad[0] = lt_frame_to_original(f, b.left, b.top);
    quad[1] = lt_frame_to_original(f, b.right, b.top);
    quad[2] = lt_frame_to_original(f, b.right, b.bottom);
    quad[3] = lt_frame_to_original(f, b.left, b.bottom);
    double x0 = quad[0].x, x1 = quad[0].x, y0 = quad[0].y, y1 = quad[0].y;
    for (int i = 1; i < 4; i++) {
        x0 = fmin(x0, quad[i].x);
        x1 = fmax(x1, quad[i].x);
        y0 = fmin(y0, quad[i].y);
        y1 = fmax(y1, quad[i].y);
    }
    /* The small epsilon keeps an exact integer corner from growing by one pixel. */
    hull->left = clampi((int)floor(x0 + 1e-6), 0, width);
    hull->top = clampi((int)floor(y0 + 1e-6), 0, height);
    hull->right = clampi((int)ceil(x1 - 1e-6), 0, width);
    hull->bottom = clampi((int)ceil(y1 - 1e-6), 0, height);
}

/* Source positions in lt_rotate_ink are fixed-point numbers with as many fractional bits as
 * leave room for four times the largest side in a signed 64-bit integer (a position along a
 * row stays within that): 48 bits on a page of 4,000 pixels a side. The rounding of a step
 * then moves a row's last pixel by at most side x 2^-(bits + 1) px (2^-37 px on that page),
 * so a pixel centre is read from another source pixel than exact arithmetic would read only
 * where it falls that close to a pixel's edge. */
static int position_fraction_bits(int side_px)
{
    int bits = 0;
    while (((int64_t)1 << bits) < (int64_t)side_px + 2)
        bits++;
    return 62 - 2 - bits;
}

static int64_t min64(int64_t a, int64_t b)
{
    return a < b ? a : b;
}

/* Fills one row of the deskewed canvas, dw pixels, from the source (w x h): pixel x takes the
 * source pixel under (x0 + x * step_x, y0 - x * step_y) (fixed point with `frac` fractional
 * bits; 0 < step_x <= 1), paper outside the source. Copies whole stretches at a time: along a
 * stretch the source row stays the same and the source column moves one pixel per pixel
 * (it stays behind once every 1 / (1 - cos) pixels and changes row every 1 / |sin|). */
static void rotate_row(const uint8_t *src, int w, int h, int64_t x0, int64_t y0, int64_t step_x,
                       int64_t step_y, int frac, uint8_t *row, int dw)
{
    const int64_t one = (int64_t)1 << frac, lag = one - step_x, height_fx = (int64_t)h << frac;
    int64_t px = x0, py = y0;
    int x = 0;
    while (x < dw) {
        int64_t skip = 0; /* pixels up to the source, when outside it */
        if (px < 0) skip = (-px + step_x - 1) / step_x;
        if (py < 0 || py >= height_fx) {
            int64_t in;
            if (py >= height_fx && step_y > 0)
                in = (py - height_fx) / step_y + 1;
            else if (py < 0 && step_y < 0)
                in = (-py - step_y - 1) / -step_y;
            else
                break; /* moving away from the source */
            if (in > skip) skip = in;
        }
        if (skip > 0) {
            if (skip >= dw - x) break;
            memset(row + x, 0, (size_t)skip);
            x += (int)skip;
            px += skip * step_x;
            py -= skip * step_y;
            continue;
        }
        const int64_t ix = px >> frac, iy = py >> frac;
        if (ix >= w) break; /* the column only grows along the row */
        /* the stretch: up to the end of the row or of the source row, to the pixel where the
         * column stays behind, and to the last pixel before the row changes */
        int64_t n = min64(dw - x, w - ix);
        if (lag > 0) n = min64(n, (px & (one - 1)) / lag + 1);
        if (step_y > 0) n = min64(n, (py - (iy << frac)) / step_y + 1);
        if (step_y < 0) n = min64(n, (((iy + 1) << frac) - 1 - py) / -step_y + 1);
        memcpy(row + x, src + (size_t)iy * w + ix, (size_t)n);
        x += (int)n;
        px += n * step_x;
        py -= n * step_y;
    }
    memset(row + x, 0, (size_t)(dw - x)); /* beyond the source */
}

int lt_rotate_ink(const lt_image *ink, double angle_deg, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK || !(fabs(angle_deg) <= 45))
        return lt_error_set(err, LT_EINVAL, "rotate: bad arguments");
    lt_frame f;
    lt_frame_init(&f, ink->width, ink->height, angle_deg);
    lt_image *dst = lt_image_alloc(f.desk_width, f.desk_height, LT_IMAGE_INK, 0);
    if (!dst) return lt_error_set(err, LT_ENOMEM, "rotate: out of memory");
    dst->dpi = ink->dpi;
    int side = ink->width > ink->height ? ink->width : ink->height;
    if (dst->width > side) side = dst->width;
    if (dst->height > side) side = dst->height;
    const int frac = position_fraction_bits(side);
    const double one = ldexp(1.0, frac);
    /* one step right on the canvas moves (cos, -sin) in the source; cos > 0 up to 45 degrees */
    const int64_t step_x = llround(f.cos_a * one), step_y = llround(f.sin_a * one);
    assert(step_x > 0 && step_x <= (int64_t)1 << frac);
    for (int y = 0; y < dst->height; y++) {
        /* source position of the centre of the row's first pixel */
        const lt_point p = lt_frame_to_original(&f, 0.5, y + 0.5);
        rotate_row(ink->pixels, ink->width, ink->height, llround(p.x * one), llround(p.y * one),
                   step_x, step_y, frac, dst->pixels + (size_t)y * dst->width, dst->width);
    }
    *out = dst;
    return 0;
}

/* Tiles of TURN_TILE x TURN_TILE pixels keep the reads of a quarter turn, which walk down the
 * source's columns, within a few cache lines. */
#define TURN_TILE 64

int lt_turn_ink(const lt_image *ink, int turn_deg, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK ||
        (turn_deg != 0 && turn_deg != 90 && turn_deg != 180 && turn_deg != 270))
        return lt_error_set(err, LT_EINVAL, "turn: bad arguments");
    const int w = ink->width, h = ink->height, quarter = turn_deg % 180 != 0;
    lt_image *dst = lt_image_alloc(quarter ? h : w, quarter ? w : h, LT_IMAGE_INK, 0);
    if (!dst) return lt_error_set(err, LT_ENOMEM, "turn: out of memory");
    dst->dpi = ink->dpi;
    /* The source pixel whose centre the clockwise turn carries to (u, v) lies at
     * origin + u * step_u + v * step_v in the source's pixels. */
    const ptrdiff_t wd = w, hd = h;
    const ptrdiff_t origin = turn_deg == 90    ? (hd - 1) * wd
                             : turn_deg == 180 ? (hd - 1) * wd + wd - 1
                             : turn_deg == 270 ? wd - 1
                                               : 0;
    const ptrdiff_t step_u = turn_deg == 90 ? -wd : turn_deg == 180 ? -1 : turn_deg == 270 ? wd : 1;
    const ptrdiff_t step_v = turn_deg == 90 ? 1 : turn_deg == 180 ? -wd : turn_deg == 270 ? -1 : wd;
    const uint8_t *src = ink->pixels;
    const int dw = dst->width, dh = dst->height;
    for (int ty = 0; ty < dh; ty += TURN_TILE)
        for (int tx = 0; tx < dw; tx += TURN_TILE)
            for (int v = ty; v < dh && v < ty + TURN_TILE; v++) {
                uint8_t *row = dst->pixels + (size_t)v * dw;
                const uint8_t *from = src + origin + v * step_v;
                for (int u = tx; u < dw && u < tx + TURN_TILE; u++)
                    row[u] = from[u * step_u];
            }
    *out = dst;
    return 0;
}

/* geom.c — the deskewed frame: rotation of the ink image and the mapping of every output
 * coordinate back to the image the user gave. The only place where angles meet pixels. */
#include "internal.h"

#include <assert.h>
#include <math.h>
#include <stddef.h>
#include <stdlib.h>

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

int lt_rotate_ink(const lt_image *ink, double angle_deg, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK || !(fabs(angle_deg) <= 45))
        return lt_error_set(err, LT_EINVAL, "rotate: bad arguments");
    lt_frame f;
    lt_frame_init(&f, ink->width, ink->height, angle_deg);
    lt_image *dst = lt_image_new(f.desk_width, f.desk_height, LT_IMAGE_INK);
    if (!dst) return lt_error_set(err, LT_ENOMEM, "rotate: out of memory");
    dst->dpi = ink->dpi;
    const int w = ink->width, h = ink->height;
    for (int y = 0; y < dst->height; y++) {
        /* Source position of the centre of the row's first pixel, then one step per pixel. */
        lt_point p = lt_frame_to_original(&f, 0.5, y + 0.5);
        double sx = p.x, sy = p.y;
        uint8_t *row = dst->pixels + (size_t)y * dst->width;
        for (int x = 0; x < dst->width; x++, sx += f.cos_a, sy -= f.sin_a) {
            if (sx < 0 || sy < 0) continue;
            int ix = (int)sx, iy = (int)sy;
            if (ix < w && iy < h) row[x] = ink->pixels[(size_t)iy * w + ix];
        }
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
    lt_image *dst = lt_image_new(quarter ? h : w, quarter ? w : h, LT_IMAGE_INK);
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

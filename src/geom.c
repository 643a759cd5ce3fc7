/* geom.c — the deskewed frame: rotation of the ink image and the mapping of every output
 * coordinate back to the image the user gave. The only place where angles meet pixels. */
#include "internal.h"

#include <math.h>
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
}

lt_point lt_frame_to_original(const lt_frame *f, double x, double y)
{
    const double dx = x - f->desk_cx, dy = y - f->desk_cy;
    lt_point p = {f->orig_cx + dx * f->cos_a + dy * f->sin_a,
                  f->orig_cy - dx * f->sin_a + dy * f->cos_a};
    return p;
}

lt_point lt_frame_to_deskewed(const lt_frame *f, double x, double y)
{
    const double dx = x - f->orig_cx, dy = y - f->orig_cy;
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

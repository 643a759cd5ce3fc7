/* crop.h — cutting text-line images out of a page (src/crop.c): axis-aligned rectangles, and
 * rectified crops sampled along a line's quad with bilinear interpolation. Used by the crop
 * command (src/cmd_crop.c); pure functions, no printing. */
#ifndef LINEATE_CROP_H
#define LINEATE_CROP_H

#include "lineate.h"

/* Largest crop, width times height, lt_crop_quad will make (a margin that would need more
 * fails with LT_ELIMIT rather than allocating without bound). */
#define LT_CROP_MAX_PIXELS LT_DEFAULT_MAX_PIXELS

/* Default margin of a line: 0.25 x its x-height, rounded, at least 2 pixels. */
int lt_crop_default_margin_px(double xheight_px);

/* An 8-bit gray copy of an ink image: ink 0 (black), paper 255 (white). */
int lt_ink_to_gray(const lt_image *ink, lt_image **out, lt_error *err);

/* `box` grown by margin_px on every side and clipped to a page of width x height. */
lt_box lt_crop_grow_box(lt_box box, int margin_px, int width, int height);

/* The pixels of `box` (which must lie inside the page and not be empty) copied from a gray
 * page into a new gray image of the box's size. */
int lt_crop_box(const lt_image *page, lt_box box, lt_image **out, lt_error *err);

/* Rectified crop of a line: `quad` (top-left, top-right, bottom-right, bottom-left, in page
 * coordinates) is grown by margin_px along its own edges, giving `cut` (the corners of the
 * crop in page coordinates, same order). The crop is round(top edge length + 2 margin_px)
 * wide and round(left edge length + 2 margin_px) tall, one crop pixel per page pixel along the
 * quad's edges, so its top row runs along the quad's top edge. Pixel (u, v) of the crop is the gray
 * page sampled with bilinear interpolation at cut[0] + (u + 0.5) e_x + (v + 0.5) e_y (e_x, e_y the
 * unit vectors of the top and left edges; page pixel centres at i + 0.5); page pixels outside the
 * page count as white (255). With `binary` the result is thresholded: 255 where the
 * interpolated value is at least 128, else 0. The quad is taken as a rectangle (a line's quad is
 * one): its bottom-right corner is not used. A degenerate quad fails with LT_EINVAL. */
int lt_crop_quad(const lt_image *page, const lt_point quad[4], double margin_px, int binary,
                 lt_image **out, lt_point cut[4], lt_error *err);

#endif

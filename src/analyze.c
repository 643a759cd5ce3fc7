/* analyze.c — the pipeline: the one place where the stages are called in order, and where
 * the deskewed results are mapped back to the coordinates of the image as given. */
#include "internal.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* A box frame: a large component with little ink for its box (under 15 %) around text lines.
 * It is made of rules and reported as one, not as a picture. */
static int is_frame(const lt_component *c, const lt_raw_lines *raw)
{
    const double w = c->box.right - c->box.left, h = c->box.bottom - c->box.top;
    if ((double)c->pixels >= 0.15 * w * h) return 0;
    for (int i = 0; i < raw->count; i++) {
        const lt_box *b = &raw->items[i].box;
        const int cx = (b->left + b->right) / 2, cy = (b->top + b->bottom) / 2;
        if (cx > c->box.left && cx < c->box.right && cy > c->box.top && cy < c->box.bottom)
            return 1;
    }
    return 0;
}

/* Fills layout->lines and ->blocks: text blocks in reading order, then the tables, then one
 * block per rule or picture component (a frame found to be a table is reported as the table
 * only). */
static int assemble(lt_layout *out, const lt_raw_lines *raw, const lt_arrangement *arr,
                    const lt_components *comps, const lt_frame *frame)
{
    const lt_tables *tables = &arr->tables;
    int nontext = tables->count;
    for (int i = 0; i < comps->count; i++) {
        int kind = comps->items[i].kind;
        nontext += kind == LT_COMP_RULE || kind == LT_COMP_PICTURE;
    }
    out->lines = calloc((size_t)raw->count + 1, sizeof *out->lines);
    out->blocks = calloc((size_t)arr->nblocks + nontext + 1, sizeof *out->blocks);
    uint8_t *is_table = calloc((size_t)comps->count + 1, 1);
    if (!out->lines || !out->blocks || !is_table) {
        free(is_table);
        return LT_ENOMEM;
    }
    const int w = out->width, h = out->height;
    for (int i = 0; i < arr->nlines; i++) {
        const lt_raw_line *r = &raw->items[arr->order[i]];
        lt_line *l = &out->lines[i];
        lt_frame_map_box(frame, r->box, w, h, l->quad, &l->box);
        l->baseline[0] = lt_frame_to_original(frame, r->box.left, r->baseline_y);
        l->baseline[1] = lt_frame_to_original(frame, r->box.right, r->baseline_y);
        l->xheight_px = r->xheight_px;
        l->components = r->ncomponents;
        l->block = arr->block_of[i];
        lt_block *b = &out->blocks[arr->block_of[i]];
        if (b->nlines++ == 0) b->first_line = i;
    }
    int nb = arr->nblocks;
    for (int k = 0; k < arr->nblocks; k++) {
        lt_block *b = &out->blocks[k];
        b->kind = LT_BLOCK_TEXT;
        b->role = arr->blocks[k].role;
        b->table = arr->blocks[k].table >= 0 ? nb + arr->blocks[k].table : -1;
        lt_frame_map_box(frame, arr->blocks[k].box, w, h, b->quad, &b->box);
    }
    for (int t = 0; t < tables->count; t++) {
        lt_block *b = &out->blocks[nb++];
        b->kind = LT_BLOCK_TABLE;
        b->table = -1;
        lt_frame_map_box(frame, tables->boxes[t], w, h, b->quad, &b->box);
        if (tables->from_component[t] >= 0) is_table[tables->from_component[t]] = 1;
    }
    for (int i = 0; i < comps->count; i++) {
        const lt_component *c = &comps->items[i];
        if ((c->kind != LT_COMP_RULE && c->kind != LT_COMP_PICTURE) || is_table[i]) continue;
        lt_block *b = &out->blocks[nb++];
        b->kind = c->kind == LT_COMP_RULE || is_frame(c, raw) ? LT_BLOCK_RULE : LT_BLOCK_PICTURE;
        b->table = -1;
        lt_frame_map_box(frame, c->box, w, h, b->quad, &b->box);
    }
    free(is_table);
    out->nlines = arr->nlines;
    out->nblocks = nb;
    out->order_doubts = arr->order_doubts;
    return 0;
}

/* Checks every field of `p` against its range (given beside the field in lineate.h); the
 * message names the first field outside it. The flags force_dpi and right_to_left take any
 * value. */
static int check_params(const lt_params *p, lt_error *err)
{
    const struct {
        const char *name;
        double value, min, max;
    } fields[] = {
        {"dpi", p->dpi, LT_MIN_DPI, LT_MAX_DPI},
        {"sauvola_window_px", p->sauvola_window_px, 0, LT_MAX_WINDOW_PX},
        {"sauvola_k", p->sauvola_k, 0, 1},
        {"sauvola_r", p->sauvola_r, 1, 255},
        {"skew_range_deg", p->skew_range_deg, 0, 45},
        {"skew_min_confidence", p->skew_min_confidence, 0, 1},
        {"deskew_min_deg", p->deskew_min_deg, 0, 45},
        {"speckle_max", p->speckle_max, 0, LT_MAX_TEXT_UNITS},
        {"rule_min_aspect", p->rule_min_aspect, 1, LT_MAX_TEXT_UNITS},
        {"picture_min_height", p->picture_min_height, 0, LT_MAX_TEXT_UNITS},
        {"link_max_gap", p->link_max_gap, 0, LT_MAX_TEXT_UNITS},
        {"column_min_gap", p->column_min_gap, 0, LT_MAX_TEXT_UNITS},
        {"block_min_gap", p->block_min_gap, 0, LT_MAX_TEXT_UNITS},
        {"max_pixels", (double)p->max_pixels, 1, (double)LONG_MAX},
        {"max_components", (double)p->max_components, 1, INT_MAX},
    };
    for (size_t i = 0; i < sizeof fields / sizeof *fields; i++)
        if (!(fields[i].value >= fields[i].min && fields[i].value <= fields[i].max))
            return lt_error_set(err, LT_EINVAL, "%s: %g is outside %g..%g", fields[i].name,
                                fields[i].value, fields[i].min, fields[i].max);
    return 0;
}

/* The analysis of img; when `consumed` is not NULL, it points to img, which is freed (and
 * *consumed set to NULL) as soon as it is no longer needed, and in any case before return. */
static int analyze(const lt_image *img, lt_image **consumed, const lt_params *params,
                   lt_layout **out, lt_error *err)
{
    *out = NULL;
    lt_params defaults;
    if (!params) {
        lt_params_default(&defaults);
        params = &defaults;
    }
    if (!img || img->width <= 0 || img->height <= 0 || !img->pixels)
        return lt_error_set(err, LT_EINVAL, "analyze: no image");
    if (check_params(params, err)) return LT_EINVAL;
    if ((double)img->width * img->height > (double)params->max_pixels)
        return lt_error_set(err, LT_ELIMIT, "%d x %d pixels, more than the limit of %ld",
                            img->width, img->height, params->max_pixels);
    lt_layout *res = calloc(1, sizeof *res);
    if (!res) return lt_error_set(err, LT_ENOMEM, "out of memory");
    res->width = img->width;
    res->height = img->height;
    /* Every size derived from the resolution (window, plausible text heights) stays in range
     * because the resolution does: an implausible one from the file is ignored. */
    const int file_dpi_plausible = lt_dpi_plausible(img->dpi);
    res->dpi_from_file = file_dpi_plausible && !params->force_dpi;
    res->dpi_rejected =
        (img->dpi_rejected || (img->dpi != 0 && !file_dpi_plausible)) && !params->force_dpi;
    res->dpi = res->dpi_from_file ? img->dpi : params->dpi;

    lt_image *ink_own = NULL, *deskewed_own = NULL;
    lt_components *comps = NULL;
    lt_separators *seps = NULL;
    lt_raw_lines *raw = NULL;
    lt_cut_node *tree = NULL;
    lt_arrangement *arr = NULL;
    int rc = 0;

    /* 1. Binarize (1-bit input is used as it is). */
    const lt_image *ink = img;
    if (img->kind == LT_IMAGE_GRAY) {
        int window = lt_sauvola_window_px(params, res->dpi);
        rc = lt_binarize_sampled(img, window, params->sauvola_k, params->sauvola_r, &ink_own, err);
        if (rc) goto done;
        ink = ink_own;
        if (consumed) { /* the gray page is done with: its memory goes before the next stages */
            lt_image_free(*consumed);
            *consumed = NULL;
            img = NULL;
        }
    }
    /* 2. Skew, and the deskewed page the rest works on. */
    lt_skew skew;
    rc = lt_estimate_skew(ink, params->skew_range_deg, params->skew_min_confidence, &skew, err);
    if (rc) goto done;
    res->skew_deg = skew.angle_deg;
    res->skew_confidence = skew.confidence;
    double rotate_deg = fabs(skew.angle_deg) >= params->deskew_min_deg ? skew.angle_deg : 0;
    const lt_image *page = ink;
    if (rotate_deg != 0) {
        rc = lt_rotate_ink(ink, rotate_deg, &deskewed_own, err);
        if (rc) goto done;
        page = deskewed_own;
        lt_image_free(ink_own); /* the unrotated ink is no longer needed */
        ink_own = NULL;
    }
    lt_frame frame;
    lt_frame_init(&frame, res->width, res->height, rotate_deg);
    /* 3. Components and their classes. */
    rc = lt_find_components(page, params->max_components, &comps, err);
    if (rc) goto done;
    res->ncomponents = comps->count;
    res->text_height_px = lt_text_height(comps, res->dpi);
    if (res->text_height_px < 0) {
        rc = lt_error_set(err, LT_ENOMEM, "out of memory");
        goto done;
    }
    lt_classify_components(comps, res->text_height_px, params);
    /* 4. Separators, 5. lines, 6. blocks, 7. tables, roles and reading order. */
    rc = lt_find_separators(comps, res->text_height_px, &seps, err);
    if (rc) goto done;
    rc = lt_build_lines(comps, res->text_height_px, seps, params, &raw, err);
    if (rc) goto done;
    rc = lt_xy_cut(raw, comps, seps, res->text_height_px, params, &tree, err);
    if (rc) goto done;
    rc = lt_arrange(tree, raw, comps, res->text_height_px, params, page->height, &arr, err);
    if (rc) goto done;
    if (assemble(res, raw, arr, comps, &frame)) {
        rc = lt_error_set(err, LT_ENOMEM, "out of memory");
        goto done;
    }
    /* 7. An outline of each line's ink. */
    rc = lt_line_polygons(raw, arr->order, arr->nlines, comps, res->text_height_px, &frame, res,
                          err);
done:
    lt_image_free(ink_own);
    lt_image_free(deskewed_own);
    lt_components_free(comps);
    lt_separators_free(seps);
    lt_raw_lines_free(raw);
    lt_cut_node_free(tree);
    lt_arrangement_free(arr);
    if (rc) {
        lt_layout_free(res);
        return rc;
    }
    *out = res;
    return 0;
}

int lt_analyze(const lt_image *img, const lt_params *params, lt_layout **out, lt_error *err)
{
    return analyze(img, NULL, params, out, err);
}

int lt_analyze_consume(lt_image **img, const lt_params *params, lt_layout **out, lt_error *err)
{
    int rc = analyze(*img, img, params, out, err);
    lt_image_free(*img);
    *img = NULL;
    return rc;
}

void lt_layout_free(lt_layout *layout)
{
    if (!layout) return;
    free(layout->lines);
    free(layout->blocks);
    free(layout->polygon_points);
    free(layout);
}

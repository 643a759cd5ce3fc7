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

/* The stages that depend on which way the page stands: from the skew to the text lines. */
typedef struct level_page {
    lt_skew skew;
    lt_frame frame;  /* from the deskewed canvas to the image as given */
    int page_height; /* of the deskewed canvas */
    lt_components *comps;
    double th; /* text height, px */
    lt_separators *seps;
    lt_raw_lines *raw;
} level_page;

static void level_page_free(level_page *lp)
{
    lt_components_free(lp->comps);
    lt_separators_free(lp->seps);
    lt_raw_lines_free(lp->raw);
    *lp = (level_page){0};
}

/* Runs skew, components, classification, separators and lines on `ink` turned clockwise by
 * turn_deg; the turned and deskewed images are freed before return, `ink` is left as it is
 * (the caller may need it again for another turn). */
static int level_stages(const lt_image *ink, int turn_deg, const lt_params *params, double dpi,
                        level_page *lp, lt_error *err)
{
    *lp = (level_page){0};
    lt_image *turned = NULL, *deskewed = NULL;
    const lt_image *page = ink;
    int rc = 0;
    if (turn_deg != 0) {
        if ((rc = lt_turn_ink(ink, turn_deg, &turned, err))) goto done;
        page = turned;
    }
    rc =
        lt_estimate_skew(page, params->skew_range_deg, params->skew_min_confidence, &lp->skew, err);
    if (rc) goto done;
    const double rotate_deg =
        fabs(lp->skew.angle_deg) >= params->deskew_min_deg ? lp->skew.angle_deg : 0;
    lt_frame_init(&lp->frame, page->width, page->height, rotate_deg);
    lt_frame_set_turn(&lp->frame, turn_deg, ink->width, ink->height);
    if (rotate_deg != 0) {
        if ((rc = lt_rotate_ink(page, rotate_deg, &deskewed, err))) goto done;
        page = deskewed;
        lt_image_free(turned); /* the level copy replaces it */
        turned = NULL;
    }
    lp->page_height = page->height;
    if ((rc = lt_find_components(page, params->max_components, &lp->comps, err))) goto done;
    lt_image_free(turned);
    lt_image_free(deskewed);
    turned = deskewed = NULL;
    /* the letters of a deskewed page carry the teeth of their turned edges: measured by cores */
    lp->th =
        rotate_deg != 0 ? lt_text_height_deskewed(lp->comps, dpi) : lt_text_height(lp->comps, dpi);
    if (lp->th < 0) {
        rc = lt_error_set(err, LT_ENOMEM, "out of memory");
        goto done;
    }
    lt_classify_components(lp->comps, lp->th, params);
    if ((rc = lt_find_separators(lp->comps, lp->th, &lp->seps, err))) goto done;
    rc = lt_build_lines(lp->comps, lp->th, lp->seps, params, &lp->raw, err);
    if (!rc) {
        lt_drop_edge_slivers(lp->raw, &lp->frame, lp->th);
        lt_drop_scan_borders(lp->comps, lp->raw, &lp->frame, lp->th);
    }
done:
    lt_image_free(turned);
    lt_image_free(deskewed);
    if (rc) level_page_free(lp);
    return rc;
}

/* Estimates which quarter turn makes the page upright, from the stages run as the page was
 * given (in *lp), and runs them again on the page turned so (at most twice: a quarter turn
 * when the lines run down the page, then half a turn when it then stands upside down). Sets
 * the layout's orientation_deg and orientation_confidence (see lineate.h). */
static int orient(const lt_image *ink, const lt_params *params, lt_layout *res, level_page *lp,
                  lt_error *err)
{
    lt_orientation axis, upright;
    int rc = lt_estimate_line_axis(lp->comps, &axis, err);
    if (rc || axis.confidence == 0) return rc;
    if (axis.turn_deg == 90) {
        level_page_free(lp);
        res->orientation_deg = 90;
        if ((rc = level_stages(ink, 90, params, res->dpi, lp, err))) return rc;
    }
    if ((rc = lt_estimate_upright(lp->comps, lp->raw, &upright, err))) return rc;
    if (upright.turn_deg == 180) {
        level_page_free(lp);
        res->orientation_deg = (res->orientation_deg + 180) % 360;
        if ((rc = level_stages(ink, res->orientation_deg, params, res->dpi, lp, err))) return rc;
    }
    res->orientation_confidence = fmin(axis.confidence, upright.confidence);
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
    const int o = p->orientation_deg;
    if (o != LT_ORIENTATION_AUTO && o != 0 && o != 90 && o != 180 && o != 270)
        return lt_error_set(err, LT_EINVAL,
                            "orientation_deg: %d is not -1 (auto), 0, 90, 180 or 270", o);
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

    lt_image *ink_own = NULL;
    lt_dark_map dark = {0};
    level_page lp = {0};
    lt_cut_node *tree = NULL;
    lt_arrangement *arr = NULL;
    int rc = 0;

    /* 1. Binarize (1-bit input is used as it is). */
    const lt_image *ink = img;
    if (img->kind == LT_IMAGE_GRAY) {
        int window = lt_sauvola_window_px(params, res->dpi);
        rc = lt_binarize_page(img, window, params->sauvola_k, params->sauvola_r, &ink_own, &dark,
                              err);
        if (rc) goto done;
        ink = ink_own;
        if (consumed) { /* the gray page is done with: its memory goes before the next stages */
            lt_image_free(*consumed);
            *consumed = NULL;
            img = NULL;
        }
    }
    /* 2. Orientation, skew, components and their classes, separators and lines, on the page
     * turned upright and levelled. */
    const int estimate = params->orientation_deg == LT_ORIENTATION_AUTO;
    res->orientation_deg = estimate ? 0 : params->orientation_deg;
    rc = level_stages(ink, res->orientation_deg, params, res->dpi, &lp, err);
    if (!rc && estimate) rc = orient(ink, params, res, &lp, err);
    if (rc) goto done;
    lt_image_free(ink_own); /* the page as given is no longer needed */
    ink_own = NULL;
    res->skew_deg = lp.skew.angle_deg;
    res->skew_confidence = lp.skew.confidence;
    res->ncomponents = lp.comps->count;
    res->text_height_px = lp.th;
    /* 3. Blocks, 4. tables, roles and reading order. */
    rc = lt_xy_cut(lp.raw, lp.comps, lp.seps, lp.th, params, &tree, err);
    if (rc) goto done;
    rc = lt_arrange(tree, lp.raw, lp.comps, lp.th, params, lp.page_height, &arr, err);
    if (rc) goto done;
    if (assemble(res, lp.raw, arr, lp.comps, &lp.frame)) {
        rc = lt_error_set(err, LT_ENOMEM, "out of memory");
        goto done;
    }
    for (int i = 0; i < res->nlines; i++) { /* lines read light on dark */
        const lt_box *b = &res->lines[i].box;
        res->lines[i].light_on_dark =
            lt_dark_at(&dark, (b->left + b->right) / 2.0, (b->top + b->bottom) / 2.0);
    }
    /* 5. An outline of each line's ink. */
    rc = lt_line_polygons(lp.raw, arr->order, arr->nlines, lp.comps, lp.th, &lp.frame, res, err);
done:
    lt_image_free(ink_own);
    lt_dark_map_clear(&dark);
    level_page_free(&lp);
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

/* cmd_crop.c — `lineate crop [OPTIONS] IMAGE|FOLDER... --out-dir DIR`: every text line of every
 * page as its own PNG, named in reading order, from the page's analysis or from a saved (maybe
 * hand-corrected) layout stream. The pages go through the analyse command's batch machinery
 * (src/batch.c): worker threads, progress and summary, --resume; each page's crops are
 * written first, then the page's manifest file (its page record and one record per crop),
 * each under a temporary name renamed into place, so a page whose manifest file exists is
 * complete. At the end the page manifests are merged, in input and page order, into
 * DIR/manifest.jsonl. The records are described by schema/lineate-crop.schema.json. */
#include "batch.h"
#include "cli.h"
#include "crop.h"
#include "internal.h" /* lt_json_add_source, lt_source_bytes_decode */
#include "layoutfile.h"
#include "pngwrite.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <math.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define CROP_FORMAT_NAME "lineate-crop-2"
#define MANIFEST_NAME "manifest.jsonl"
#define PAGE_MANIFEST_SUFFIX "crops.jsonl" /* DIR/NAME.crops.jsonl, DIR/NAME.pN.crops.jsonl */
#define MAX_MARGIN_PX 1000 /* wider margins make crops mostly of paper, or of other lines */
#define MAX_LINES 1000000  /* lines of one page in a saved layout (the reader's bound) */

/* clang-format off */
static const char usage_text[] =
    "Usage: lineate crop [OPTIONS] IMAGE|FOLDER... --out-dir DIR\n"
    "Write each text line of every page as its own PNG image into DIR, in reading order\n"
    "(NAME-pPAGE-lLINE.png, NAME the input's path as for lineate --out-dir), with a manifest\n"
    "per page (NAME.crops.jsonl) and all of them merged into DIR/manifest.jsonl: a record per\n"
    "page, per crop, and per page that failed. The lines come from the page's analysis, or\n"
    "from a saved layout with --layout.\n"
    "\n"
    "Options:\n"
    "      --out-dir DIR     write the crops and the manifests into DIR (created if missing)\n"
    "      --resume          skip the pages whose manifest and crops are already complete\n"
    "      --layout FILE     crop the lines of this saved layout stream ('-': stdin), found by\n"
    "                        each record's source and page, instead of analysing the pages\n"
    "      --rectify         sample along the line's skew so that the line comes out level\n"
    "      --binary          black and white crops from Sauvola binarization of the page\n"
    "      --margin PX       grow every crop by PX pixels (default: 0.25 x-height, >= 2)\n"
    LT_CLI_ANALYSIS_HELP
    LT_CLI_HELP_VERSION_HELP
    "\n"
    "Exit status: 0 every page cropped, 1 some input failed (the others are written),\n"
    "2 bad command line, 3 DIR or a file in it could not be written.\n";
/* clang-format on */

enum { OPT_OUT_DIR = 256, OPT_RESUME, OPT_LAYOUT, OPT_RECTIFY, OPT_BINARY, OPT_MARGIN };

static const lt_cli_option crop_options_list[] = {{"out-dir", OPT_OUT_DIR, 1},
                                                  {"resume", OPT_RESUME, 0},
                                                  {"layout", OPT_LAYOUT, 1},
                                                  {"rectify", OPT_RECTIFY, 0},
                                                  {"binary", OPT_BINARY, 0},
                                                  {"margin", OPT_MARGIN, 1},
                                                  {NULL, 0, 0}};
static const lt_cli_command crop_command = {"lineate crop", usage_text, crop_options_list};
#define PREFIX "lineate crop: "

typedef struct crop_options {
    const char *out_dir;
    int resume, rectify, binary;
    int margin_px; /* -1: per line, from its x-height */
    lt_cli_analysis an;
    const char *layout_path;   /* --layout, or NULL: the pages are analysed */
    lt_layout_file *layouts;   /* the stream read from layout_path */
    atomic_long crops_written; /* line images written by this run */
} crop_options;

/* A line to crop, read from a page object. */
typedef struct crop_line {
    lt_line line;     /* box, quad, baseline, xheight_px, block (-1: none) */
    int index;        /* in the layout's "lines", from 0 */
    const char *role; /* its block's role, or NULL (points into the page object) */
} crop_line;

/* ---- PNG ----------------------------------------------------------------------------- */

/* Writes an 8-bit gray image as a PNG file at `path` (src/pngwrite.c), with its resolution
 * when known. 0, or -1 with errno set; a failed file is removed. */
static int write_png(const char *path, const lt_image *img)
{
    FILE *fp = fopen(path, "wb");
    if (!fp) return -1;
    int rc = lt_png_write(fp, img->pixels, img->width, img->height, 1, img->dpi);
    int saved = errno;
    if (fclose(fp) != 0 && rc == 0) {
        saved = errno ? errno : EIO;
        rc = -1;
    }
    if (rc) {
        remove(path);
        errno = saved;
    }
    return rc;
}

/* ---- the manifest's values ------------------------------------------------------------ */

static double round2(double v)
{
    double r = round(v * 100.0) / 100.0;
    return r == 0 ? 0 : r; /* no "-0" */
}

static cJSON *box_json(lt_box b)
{
    const int v[4] = {b.left, b.top, b.right, b.bottom};
    return cJSON_CreateIntArray(v, 4);
}

static cJSON *quad_json(const lt_point q[4])
{
    cJSON *a = cJSON_CreateArray();
    for (int i = 0; a && i < 4; i++) {
        cJSON *p = cJSON_CreateArray();
        if (!p) break;
        cJSON_AddItemToArray(p, cJSON_CreateNumber(round2(q[i].x)));
        cJSON_AddItemToArray(p, cJSON_CreateNumber(round2(q[i].y)));
        cJSON_AddItemToArray(a, p);
    }
    return a;
}

/* What a crop was cut from, for the manifest. */
typedef struct cut_info {
    lt_box box;       /* rectangle copied (plain) or hull of the sampled quad (rectified) */
    lt_point quad[4]; /* corners of the crop in page coordinates */
    int margin_px;
} cut_info;

/* Cuts line `l` from `page` (gray: the page as decoded, or its Sauvola black and white). */
static int cut_line(const crop_options *opt, const lt_image *page, const lt_line *l, lt_image **out,
                    cut_info *info, lt_error *err)
{
    info->margin_px =
        opt->margin_px >= 0 ? opt->margin_px : lt_crop_default_margin_px(l->xheight_px);
    if (opt->rectify) {
        int rc = lt_crop_quad(page, l->quad, info->margin_px, opt->binary, out, info->quad, err);
        if (rc) return rc;
        double x0 = info->quad[0].x, x1 = x0, y0 = info->quad[0].y, y1 = y0;
        for (int i = 1; i < 4; i++) {
            x0 = fmin(x0, info->quad[i].x);
            x1 = fmax(x1, info->quad[i].x);
            y0 = fmin(y0, info->quad[i].y);
            y1 = fmax(y1, info->quad[i].y);
        }
        info->box = (lt_box){(int)floor(x0 + 1e-6), (int)floor(y0 + 1e-6), (int)ceil(x1 - 1e-6),
                             (int)ceil(y1 - 1e-6)};
        return 0;
    }
    info->box = lt_crop_grow_box(l->box, info->margin_px, page->width, page->height);
    const lt_box b = info->box;
    info->quad[0] = (lt_point){b.left, b.top};
    info->quad[1] = (lt_point){b.right, b.top};
    info->quad[2] = (lt_point){b.right, b.bottom};
    info->quad[3] = (lt_point){b.left, b.bottom};
    return lt_crop_box(page, b, out, err);
}

/* The image the crops of a page are cut from: the decoded page as 8-bit gray (a 1-bit page
 * as 0/255), or with --binary its Sauvola black and white with the analyser's defaults. */
static int crop_source(const crop_options *opt, const lt_image *img, double dpi, lt_image **out,
                       lt_error *err)
{
    *out = NULL;
    if (img->kind == LT_IMAGE_INK) return lt_ink_to_gray(img, out, err); /* 1-bit: used as is */
    if (!opt->binary) return 0;                              /* the decoded page itself */
    int window = lt_sauvola_window_px(&opt->an.params, dpi); /* the analyser's window */
    lt_image *ink = NULL;
    int rc = lt_binarize_normalized(img, window, opt->an.params.sauvola_k,
                                    opt->an.params.sauvola_r, LT_GRAY_POINT_AUTO,
                                    LT_GRAY_POINT_AUTO, 0, &ink, err);
    if (rc == 0) rc = lt_ink_to_gray(ink, out, err);
    lt_image_free(ink);
    return rc;
}

/* ---- the page object ------------------------------------------------------------------ */

/* The lines of a page object in reading order: the blocks in their order, the lines of each
 * as the block lists them, then the lines no block lists, in their order. A line needs a
 * "quad" or a "box"; "xheight_px" (default: half the quad's height), "baseline" (default: the
 * quad's bottom edge) and "block" are read when present, so that a hand-corrected layout
 * need only give the geometry. The page's "width" and "height" must be the image's. */
static int read_lines(const cJSON *o, const lt_image *img, crop_line **out, int *n, lt_error *err)
{
    *out = NULL;
    *n = 0;
    int width, height;
    if (lt_json_int(cJSON_GetObjectItemCaseSensitive(o, "width"), 1, INT32_MAX, &width) ||
        lt_json_int(cJSON_GetObjectItemCaseSensitive(o, "height"), 1, INT32_MAX, &height))
        return lt_error_set(err, LT_EPARSE, "layout: no valid \"width\" and \"height\"");
    if (width != img->width || height != img->height)
        return lt_error_set(err, LT_EINVAL, "the layout is %dx%d pixels, but the page is %dx%d",
                            width, height, img->width, img->height);
    const cJSON *lines = cJSON_GetObjectItemCaseSensitive(o, "lines");
    const cJSON *blocks = cJSON_GetObjectItemCaseSensitive(o, "blocks");
    if (!cJSON_IsArray(lines)) return lt_error_set(err, LT_EPARSE, "layout: no \"lines\" array");
    if (blocks && !cJSON_IsArray(blocks))
        return lt_error_set(err, LT_EPARSE, "layout: \"blocks\" is not an array");
    const int nl = cJSON_GetArraySize(lines), nb = blocks ? cJSON_GetArraySize(blocks) : 0;
    if (nl > MAX_LINES || nb > MAX_LINES)
        return lt_error_set(err, LT_ELIMIT, "layout: more than %d lines or blocks", MAX_LINES);
    /* cJSON arrays are lists: walked once each, the blocks kept by index. */
    crop_line *all = calloc((size_t)nl + 1, sizeof *all);
    crop_line *ordered = calloc((size_t)nl + 1, sizeof *ordered);
    const cJSON **block = calloc((size_t)nb + 1, sizeof *block);
    char *placed = calloc((size_t)nl + 1, 1);
    int rc = 0, k = 0, i = 0;
    if (!all || !ordered || !block || !placed) {
        rc = lt_error_set(err, LT_ENOMEM, "out of memory");
        goto done;
    }
    const cJSON *item;
    cJSON_ArrayForEach(item, blocks) block[k++] = item;
    k = 0;
    cJSON_ArrayForEach(item, lines)
    {
        crop_line *c = &all[i];
        c->index = i;
        c->line.block = -1;
        if (!cJSON_IsObject(item) || lt_json_quad(item, c->line.quad)) {
            rc = lt_error_set(err, LT_EPARSE, "layout: lines[%d]: no valid \"quad\" or \"box\"", i);
            goto done;
        }
        const lt_point *q = c->line.quad;
        double x0 = q[0].x, x1 = x0, y0 = q[0].y, y1 = y0;
        for (int j = 1; j < 4; j++) {
            x0 = fmin(x0, q[j].x);
            x1 = fmax(x1, q[j].x);
            y0 = fmin(y0, q[j].y);
            y1 = fmax(y1, q[j].y);
        }
        c->line.box = (lt_box){(int)floor(x0), (int)floor(y0), (int)ceil(x1), (int)ceil(y1)};
        int box[4], j = 0;
        const cJSON *jb = cJSON_GetObjectItemCaseSensitive(item, "box"), *v;
        cJSON_ArrayForEach(v, jb) if (j < 4 && lt_json_int(v, -1e9, 1e9, &box[j]) == 0) j++;
        if (j == 4 && cJSON_IsArray(jb) && cJSON_GetArraySize(jb) == 4)
            c->line.box = (lt_box){box[0], box[1], box[2], box[3]};
        const cJSON *xh = cJSON_GetObjectItemCaseSensitive(item, "xheight_px");
        c->line.xheight_px = cJSON_IsNumber(xh) && xh->valuedouble > 0 && xh->valuedouble < 1e6
                                 ? xh->valuedouble
                                 : 0.5 * hypot(q[3].x - q[0].x, q[3].y - q[0].y);
        const cJSON *bl = cJSON_GetObjectItemCaseSensitive(item, "baseline");
        if (!(cJSON_IsArray(bl) && cJSON_GetArraySize(bl) == 2 &&
              lt_json_point(bl->child, &c->line.baseline[0]) == 0 &&
              lt_json_point(bl->child->next, &c->line.baseline[1]) == 0)) {
            c->line.baseline[0] = q[3];
            c->line.baseline[1] = q[2];
        }
        int b;
        if (lt_json_int(cJSON_GetObjectItemCaseSensitive(item, "block"), 0, nb - 1, &b) == 0) {
            c->line.block = b;
            const cJSON *role = cJSON_GetObjectItemCaseSensitive(block[b], "role");
            c->role = cJSON_IsString(role) ? role->valuestring : NULL;
        }
        i++;
    }
    for (int b = 0; b < nb; b++) {
        const cJSON *members = cJSON_GetObjectItemCaseSensitive(block[b], "lines"), *member;
        if (!cJSON_IsArray(members)) continue;
        cJSON_ArrayForEach(member, members)
        {
            int m;
            if (lt_json_int(member, 0, nl - 1, &m) == 0 && !placed[m]) {
                placed[m] = 1;
                ordered[k++] = all[m];
            }
        }
    }
    for (i = 0; i < nl; i++)
        if (!placed[i]) ordered[k++] = all[i];
done:
    free(all);
    free(block);
    free(placed);
    if (rc) {
        free(ordered);
        return rc;
    }
    *out = ordered;
    *n = nl;
    return 0;
}

/* The page object of page `page` of `in`: from the saved stream, or analysed and converted
 * through the JSON writer, so that crops from a fresh analysis and from its saved layout are
 * the same. */
static int page_layout(const crop_options *opt, const lt_input *in, int page, int pages,
                       const lt_image *img, cJSON **out, lt_error *err)
{
    if (opt->layouts) return lt_layout_file_find(opt->layouts, in->path, page, pages, out, err);
    lt_layout *layout = NULL;
    int rc = lt_analyze(img, &opt->an.params, &layout, err);
    if (rc) return rc;
    char *json = lt_layout_to_json(layout, in->path, page, pages, 0);
    lt_layout_free(layout);
    *out = json ? cJSON_Parse(json) : NULL;
    free(json);
    return *out ? 0 : lt_error_set(err, LT_ENOMEM, "out of memory");
}

/* ---- the records ------------------------------------------------------------------------- */

/* Appends the object as one line to *text (a growing string) and deletes it; -1 when out of
 * memory. */
static int append_record(char **text, size_t *len, cJSON *o)
{
    char *s = o ? cJSON_PrintUnformatted(o) : NULL;
    cJSON_Delete(o);
    if (!s) return -1;
    size_t n = strlen(s);
    char *bigger = realloc(*text, *len + n + 2);
    if (bigger) {
        if (*len) bigger[(*len)++] = '\n';
        memcpy(bigger + *len, s, n + 1);
        *len += n;
        *text = bigger;
    }
    free(s);
    return bigger ? 0 : -1;
}

/* The fields that start every record: format, kind, source, page, pages. */
static cJSON *record_head(const char *kind, const lt_input *in, int page, int pages)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    cJSON_AddStringToObject(o, "format", CROP_FORMAT_NAME);
    cJSON_AddStringToObject(o, "kind", kind);
    if (lt_json_add_source(o, in->path)) { /* a name not in UTF-8 also as source_bytes */
        cJSON_Delete(o);
        return NULL;
    }
    cJSON_AddNumberToObject(o, "page", page);
    cJSON_AddNumberToObject(o, "pages", pages);
    return o;
}

/* The crop settings, in the page record: a resumed run redoes pages made with others. */
static void add_settings(cJSON *o, const crop_options *opt)
{
    cJSON_AddStringToObject(o, "mode", opt->binary ? "binary" : "gray");
    cJSON_AddBoolToObject(o, "rectified", opt->rectify);
    if (opt->margin_px >= 0)
        cJSON_AddNumberToObject(o, "margin", opt->margin_px);
    else
        cJSON_AddStringToObject(o, "margin", "auto");
}

static cJSON *point_pair_json(const lt_point p[2])
{
    lt_point q[4] = {p[0], p[1], p[1], p[1]};
    cJSON *a = quad_json(q);
    if (a) {
        cJSON_DeleteItemFromArray(a, 3);
        cJSON_DeleteItemFromArray(a, 2);
    }
    return a;
}

/* Adds "file" to o and, for a name that is not valid UTF-8, "file_bytes": the exact bytes,
 * percent-encoded as "source_bytes" is. */
static void add_file_name(cJSON *o, const char *file)
{
    cJSON *names = cJSON_CreateObject();
    if (names && lt_json_add_source(names, file) == 0) {
        cJSON_AddItemToObject(o, "file", cJSON_DetachItemFromObject(names, "source"));
        cJSON *exact = cJSON_DetachItemFromObject(names, "source_bytes");
        if (exact) cJSON_AddItemToObject(o, "file_bytes", exact);
    }
    cJSON_Delete(names);
}

static cJSON *line_record(const crop_options *opt, const lt_input *in, int page, int pages,
                          const crop_line *c, int order, double skew_deg, const char *file,
                          const lt_image *crop, const cut_info *info)
{
    cJSON *o = record_head("line", in, page, pages);
    if (!o) return NULL;
    cJSON_AddNumberToObject(o, "line", c->index + 1);
    cJSON_AddNumberToObject(o, "order", order);
    if (c->line.block >= 0)
        cJSON_AddNumberToObject(o, "block", c->line.block);
    else
        cJSON_AddNullToObject(o, "block");
    if (c->role)
        cJSON_AddStringToObject(o, "role", c->role);
    else
        cJSON_AddNullToObject(o, "role");
    cJSON_AddItemToObject(o, "box", box_json(c->line.box));
    cJSON_AddItemToObject(o, "quad", quad_json(c->line.quad));
    cJSON_AddItemToObject(o, "baseline", point_pair_json(c->line.baseline));
    cJSON_AddNumberToObject(o, "xheight_px", round2(c->line.xheight_px));
    cJSON_AddNumberToObject(o, "skew_deg", skew_deg);
    add_file_name(o, file);
    cJSON_AddNumberToObject(o, "width", crop->width);
    cJSON_AddNumberToObject(o, "height", crop->height);
    cJSON_AddStringToObject(o, "mode", opt->binary ? "binary" : "gray");
    cJSON_AddBoolToObject(o, "rectified", opt->rectify);
    cJSON_AddNumberToObject(o, "margin_px", info->margin_px);
    cJSON_AddItemToObject(o, "cut_box", box_json(info->box));
    cJSON_AddItemToObject(o, "cut_quad", quad_json(info->quad));
    return o;
}

/* ---- one page ---------------------------------------------------------------------------- */

/* Writes `crop` as DIR/FILE through DIR/FILE.tmp (the same temporary name in every run, so
 * that what a killed run left is replaced); the folders leading to it must exist. 0, or -1
 * with errno set. */
static int write_crop(const char *dir, const char *file, const lt_image *crop)
{
    size_t n = strlen(dir) + strlen(file) + 8;
    char *path = malloc(n), *tmp = malloc(n);
    int rc = -1;
    if (path && tmp) {
        snprintf(path, n, "%s/%s", dir, file);
        snprintf(tmp, n, "%s/%s.tmp", dir, file);
        rc = write_png(tmp, crop) || rename(tmp, path) ? -1 : 0;
        if (rc) {
            int saved = errno;
            remove(tmp);
            errno = saved;
        }
    } else {
        errno = ENOMEM;
    }
    free(path);
    free(tmp);
    return rc;
}

/* The page task (lt_page_task.page_record): crops every line of the page in reading order,
 * then gives the page's manifest: its page record and a record per crop. */
static int crop_page_record(void *ctx, const lt_input *in, int page, int pages, lt_image **imgp,
                            char **record, lt_error *err)
{
    crop_options *opt = ctx;
    const lt_image *img = *imgp;
    cJSON *lay = NULL;
    crop_line *lines = NULL;
    lt_image *own = NULL;
    int n = 0, rc = page_layout(opt, in, page, pages, img, &lay, err);
    if (rc == 0) rc = read_lines(lay, img, &lines, &n, err);
    if (rc == 0) {
        const cJSON *dpi = cJSON_GetObjectItemCaseSensitive(lay, "dpi");
        rc = crop_source(opt, img,
                         cJSON_IsNumber(dpi) && dpi->valuedouble > 0 ? dpi->valuedouble
                         : img->dpi > 0                              ? img->dpi
                                                                     : opt->an.params.dpi,
                         &own, err);
    }
    if (rc) {
        free(lines);
        cJSON_Delete(lay);
        return -1;
    }
    const lt_image *source = own ? own : img;
    char *text = NULL;
    size_t len = 0;
    const cJSON *skew = cJSON_GetObjectItemCaseSensitive(lay, "skew_deg");
    const double skew_deg = cJSON_IsNumber(skew) ? skew->valuedouble : 0;
    cJSON *head = record_head("page", in, page, pages);
    if (head) {
        cJSON_AddNumberToObject(head, "width", img->width);
        cJSON_AddNumberToObject(head, "height", img->height);
        cJSON_AddNumberToObject(head, "skew_deg", skew_deg);
        cJSON_AddStringToObject(head, "layout", opt->layout_path ? opt->layout_path : "analysis");
        cJSON_AddNumberToObject(head, "lines", n);
        add_settings(head, opt);
    }
    int status = append_record(&text, &len, head) ? -1 : 0;
    if (status) lt_error_set(err, LT_ENOMEM, "out of memory");
    /* The crops of a page share one folder: made once, not once per crop. */
    const size_t folder_size = strlen(opt->out_dir) + strlen(in->out_name) + 2;
    char *folder = status ? NULL : malloc(folder_size);
    if (folder) {
        snprintf(folder, folder_size, "%s/%s", opt->out_dir, in->out_name);
        const int made = lt_make_parents(folder);
        if (made) {
            lt_error_set(err, LT_EIO, "%s: cannot write: %s", opt->out_dir, strerror(made));
            status = -2;
        }
        free(folder);
    } else if (!status) {
        lt_error_set(err, LT_ENOMEM, "out of memory");
        status = -1;
    }
    for (int k = 0; k < n && status == 0; k++) {
        lt_image *crop = NULL;
        cut_info info;
        lt_error cerr = {0};
        if (cut_line(opt, source, &lines[k].line, &crop, &info, &cerr)) {
            lt_error_set(err, cerr.code, "line %d: %s", lines[k].index + 1, cerr.message);
            status = -1;
            break;
        }
        const size_t file_size = strlen(in->out_name) + 48;
        char *file = malloc(file_size);
        if (file) snprintf(file, file_size, "%s-p%04d-l%04d.png", in->out_name, page, k + 1);
        if (!file) {
            lt_error_set(err, LT_ENOMEM, "out of memory");
            status = -1;
        } else if (write_crop(opt->out_dir, file, crop)) {
            lt_error_set(err, LT_EIO, "%s/%s: cannot write: %s", opt->out_dir, file,
                         strerror(errno ? errno : EIO));
            status = -2;
        } else if (append_record(&text, &len,
                                 line_record(opt, in, page, pages, &lines[k], k + 1, skew_deg, file,
                                             crop, &info))) {
            lt_error_set(err, LT_ENOMEM, "out of memory");
            status = -1;
        } else {
            atomic_fetch_add(&opt->crops_written, 1);
        }
        free(file);
        lt_image_free(crop);
    }
    lt_image_free(own);
    free(lines);
    cJSON_Delete(lay);
    if (status) { /* the batch writes the page's error record */
        free(text);
        return status;
    }
    *record = text;
    return 0;
}

/* Whether a page's manifest from an earlier run is complete (lt_page_task.complete): a page
 * record made with the same settings, as many crop records as it has lines, every crop file
 * in place, no error record. */
static int page_manifest_complete(void *ctx, const char *content)
{
    const crop_options *opt = ctx;
    cJSON *want = cJSON_CreateObject();
    if (!want) return 0;
    add_settings(want, opt);
    int ok = 1, lines = -1, crops = 0;
    for (const char *s = content; ok && *s;) {
        const char *end = strchr(s, '\n');
        size_t n = end ? (size_t)(end - s) : strlen(s);
        cJSON *o = cJSON_ParseWithLength(s, n);
        const cJSON *kind = cJSON_GetObjectItemCaseSensitive(o, "kind");
        if (!cJSON_IsString(kind)) {
            ok = 0;
        } else if (strcmp(kind->valuestring, "page") == 0 && lines < 0) {
            for (const cJSON *w = want->child; ok && w; w = w->next)
                ok = cJSON_Compare(w, cJSON_GetObjectItemCaseSensitive(o, w->string), 1);
            const cJSON *jl = cJSON_GetObjectItemCaseSensitive(o, "lines");
            if (ok && lt_json_int(jl, 0, MAX_LINES, &lines)) ok = 0;
        } else if (strcmp(kind->valuestring, "line") == 0 && lines >= 0) {
            const cJSON *file = cJSON_GetObjectItemCaseSensitive(o, "file");
            const cJSON *exact = cJSON_GetObjectItemCaseSensitive(o, "file_bytes");
            char *name = cJSON_IsString(exact)  ? lt_source_bytes_decode(exact->valuestring)
                         : cJSON_IsString(file) ? strdup(file->valuestring)
                                                : NULL;
            char path[8192];
            struct stat st;
            ok = name &&
                 (size_t)snprintf(path, sizeof path, "%s/%s", opt->out_dir, name) < sizeof path &&
                 stat(path, &st) == 0 && S_ISREG(st.st_mode);
            free(name);
            crops++;
        } else {
            ok = 0; /* an error record, or records out of place */
        }
        cJSON_Delete(o);
        s += end ? n + 1 : n;
    }
    cJSON_Delete(want);
    return ok && lines >= 0 && crops == lines;
}

/* ---- the command ---------------------------------------------------------------------- */

/* Parses the command line into `opt` and `in`; 0, or the exit status to stop with (-1:
 * --help or --version was shown). An argument that lists no input (a folder without images or
 * that cannot be read) is reported on stderr and makes the exit status 1 (*status). */
static int parse_args(int argc, char **argv, crop_options *opt, lt_inputs *in, int *status)
{
    lt_cli_parser p;
    const char *arg;
    double v;
    int c;
    lt_cli_begin(&p, &crop_command, &opt->an, argc, argv);
    while ((c = lt_cli_next(&p, &arg)) > 0) {
        switch (c) {
        case OPT_OUT_DIR: opt->out_dir = arg; break;
        case OPT_RESUME: opt->resume = 1; break;
        case OPT_LAYOUT: opt->layout_path = arg; break;
        case OPT_RECTIFY: opt->rectify = 1; break;
        case OPT_BINARY: opt->binary = 1; break;
        case OPT_MARGIN:
            if (lt_cli_number(&crop_command, "--margin", arg, 0, MAX_MARGIN_PX, 1, &v))
                return LT_EXIT_USAGE;
            opt->margin_px = (int)v;
            break;
        }
    }
    if (c < 0) return p.status == LT_EXIT_OK ? -1 : p.status;
    if (p.operands >= argc && !opt->an.from)
        return lt_cli_usage_error(&crop_command, "no input image");
    if (!opt->out_dir || !*opt->out_dir)
        return lt_cli_usage_error(&crop_command, "--out-dir DIR is required");
    int stdin_inputs = opt->an.from && strcmp(opt->an.from, "-") == 0;
    for (int i = p.operands; i < argc; i++) {
        stdin_inputs |= strcmp(argv[i], "-") == 0;
        if (lt_inputs_add_arg(in, argv[i])) *status = LT_EXIT_FAILED;
    }
    if (opt->an.from && lt_inputs_add_list(in, opt->an.from)) *status = LT_EXIT_FAILED;
    if (opt->layout_path && strcmp(opt->layout_path, "-") == 0 && stdin_inputs)
        return lt_cli_usage_error(&crop_command,
                                  "--layout - and an input from standard input exclude each other");
    if (lt_inputs_check_out_names(in, opt->out_dir, "." PAGE_MANIFEST_SUFFIX)) return LT_EXIT_USAGE;
    return 0;
}

/* "DIR/NAME" as a new string. */
static char *join_path(const char *dir, const char *name)
{
    size_t n = strlen(dir) + strlen(name) + 2;
    char *p = malloc(n);
    if (p) snprintf(p, n, "%s/%s", dir, name);
    return p;
}

int lt_cmd_crop(int argc, char **argv)
{
    crop_options opt;
    memset(&opt, 0, sizeof opt);
    opt.margin_px = -1;
    lt_cli_analysis_default(&opt.an);
    atomic_init(&opt.crops_written, 0);
    lt_inputs inputs = {0};
    inputs.command = crop_command.name;
    int status = LT_EXIT_OK, stop = parse_args(argc, argv, &opt, &inputs, &status);
    char *manifest = NULL, *manifest_tmp = NULL;
    if (stop) {
        status = stop < 0 ? LT_EXIT_OK : stop;
        goto done;
    }
    lt_error err = {0};
    if (opt.layout_path && lt_layout_file_read(opt.layout_path, &opt.layouts, &err)) {
        fprintf(stderr, PREFIX "%s\n", err.message);
        status = LT_EXIT_FAILED;
        goto done;
    }
    manifest = join_path(opt.out_dir, MANIFEST_NAME);
    manifest_tmp = manifest ? join_path(opt.out_dir, MANIFEST_NAME ".tmp") : NULL;
    if (!manifest_tmp) {
        fprintf(stderr, PREFIX "out of memory\n");
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    if (mkdir(opt.out_dir, 0777) != 0 && errno != EEXIST) {
        fprintf(stderr, PREFIX "%s: %s\n", opt.out_dir, strerror(errno));
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    FILE *out = fopen(manifest_tmp, "wb");
    if (!out) {
        fprintf(stderr, PREFIX "%s: cannot write: %s\n", opt.out_dir, strerror(errno));
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    const lt_page_task task = {CROP_FORMAT_NAME, PAGE_MANIFEST_SUFFIX, crop_page_record,
                               page_manifest_complete, &opt};
    const int many = inputs.count > 1;
    lt_batch_options bopt = {&opt.an.params,
                             opt.an.max_pages,
                             0,
                             opt.an.jobs,
                             out,
                             opt.out_dir,
                             opt.resume,
                             opt.an.progress     ? 1
                             : isatty(2) && many ? 2
                                                 : 0,
                             1,
                             LT_OUTPUT_JSON,
                             0,
                             &task,
                             1,
                             crop_command.name};
    lt_batch_totals totals;
    int write_failed = lt_batch_run(&inputs, &bopt, &totals) != 0 || totals.write_failed;
    errno = 0;
    if (fflush(out) != 0 || ferror(out)) write_failed = 1;
    if (fclose(out) != 0) write_failed = 1;
    if (!write_failed && rename(manifest_tmp, manifest) != 0) write_failed = 1;
    if (write_failed) {
        fprintf(stderr, PREFIX "%s: not written: %s\n", manifest,
                errno ? strerror(errno) : "an output file could not be written");
        remove(manifest_tmp);
    }
    fprintf(stderr, PREFIX "%ld line images written\n", atomic_load(&opt.crops_written));
    status = write_failed ? LT_EXIT_OUTPUT : totals.failed ? LT_EXIT_FAILED : status;
done:
    free(manifest);
    free(manifest_tmp);
    lt_layout_file_free(opt.layouts);
    lt_inputs_free(&inputs);
    return status;
}

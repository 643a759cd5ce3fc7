/* cmd_crop.c — `lineate crop [OPTIONS] IMAGE|FOLDER... --out-dir DIR`: every text line of every
 * page as its own PNG, in reading order, with a JSON Lines manifest (DIR/manifest.jsonl). Each
 * page is decoded and analysed once (lt_analyze); the crops come from src/crop.c, the Sauvola
 * page for --binary from lt_binarize. Every file goes to a temporary name and is renamed. */
#include "batch.h"
#include "cli.h"
#include "crop.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <getopt.h>
#include <math.h>
#include <png.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define CROP_FORMAT_NAME "lineate-crop-1"
#define MANIFEST_NAME "manifest.jsonl"
#define MAX_MARGIN_PX 1000 /* wider margins make crops mostly of paper, or of other lines */

static const char usage_text[] =
    "Usage: lineate crop [OPTIONS] IMAGE|FOLDER... --out-dir DIR\n"
    "Analyse every page and write each text line as its own PNG image into DIR, in reading\n"
    "order (NAME-pPAGE-lLINE.png), with DIR/manifest.jsonl: one JSON object per crop, and one\n"
    "per page that failed.\n"
    "\n"
    "Options:\n"
    "      --out-dir DIR     write the crops and the manifest into DIR (created if missing)\n"
    "      --rectify         sample along the line's skew so that the line comes out level\n"
    "      --binary          black and white crops from Sauvola binarization of the page\n"
    "      --margin PX       grow every crop by PX pixels (default: 0.25 x-height, >= 2)\n"
    "      --dpi N           resolution to assume when a file gives none (default 300)\n"
    "  -h, --help            show this help and exit\n"
    "\n"
    "Exit status: 0 every page cropped, 1 some input failed (the others are written),\n"
    "2 bad command line, 3 DIR or a file in it could not be written.\n";

enum { OPT_OUT_DIR = 256, OPT_RECTIFY, OPT_BINARY, OPT_MARGIN, OPT_DPI };

typedef struct crop_options {
    const char *out_dir;
    int rectify, binary;
    int margin_px; /* -1: per line, from its x-height */
    lt_params params;
} crop_options;

/* State of one run: the manifest being written and the counts behind the exit status. */
typedef struct crop_run {
    const crop_options *opt;
    FILE *manifest; /* the temporary manifest */
    long crops, failed;
    int write_failed; /* a crop or the manifest could not be written: stop */
} crop_run;

/* ---- output names ---------------------------------------------------------------------- */

/* Base name of an input without folder and extension ("stdin" for "-"); a new string. */
static char *base_name(const char *path)
{
    if (strcmp(path, "-") == 0) return strdup("stdin");
    const char *slash = strrchr(path, '/');
    const char *base = slash ? slash + 1 : path;
    const char *dot = strrchr(base, '.');
    size_t n = dot && dot > base ? (size_t)(dot - base) : strlen(base);
    if (n == 0) return strdup("page"); /* "dir/" or ".png": never an empty name */
    char *s = malloc(n + 1);
    if (s) {
        memcpy(s, base, n);
        s[n] = 0;
    }
    return s;
}

static uint64_t hash_name(const char *s)
{
    uint64_t h = 1469598103934665603ull; /* FNV-1a, 64 bit */
    for (; *s; s++)
        h = (h ^ (unsigned char)*s) * 1099511628211ull;
    return h;
}

/* A set of strings (open addressing); the strings belong to the caller. */
typedef struct name_set {
    const char **slots;
    size_t mask;
} name_set;

static int name_set_has(const name_set *s, const char *name)
{
    for (size_t i = hash_name(name) & s->mask; s->slots[i]; i = (i + 1) & s->mask)
        if (strcmp(s->slots[i], name) == 0) return 1;
    return 0;
}

static void name_set_put(name_set *s, const char *name)
{
    size_t i = hash_name(name) & s->mask;
    while (s->slots[i])
        i = (i + 1) & s->mask;
    s->slots[i] = name;
}

/* Output name of every input, in input order: its base name, or NAME~2, NAME~3 ... for the
 * later inputs whose base name is taken (by an earlier input's name, which may itself carry a
 * suffix). Returns an array of in->count new strings, or NULL when out of memory. */
static char **output_names(const lt_inputs *in)
{
    size_t cap = 16;
    while (cap < 2 * (size_t)in->count + 2)
        cap *= 2;
    name_set set = {calloc(cap, sizeof(const char *)), cap - 1};
    char **names = calloc((size_t)in->count + 1, sizeof *names);
    int ok = set.slots && names;
    for (int k = 0; ok && k < in->count; k++) {
        char *base = base_name(in->items[k].path);
        if (!base) {
            ok = 0;
            break;
        }
        char *name = base;
        for (long n = 2; name_set_has(&set, name); n++) {
            if (name != base) free(name);
            size_t len = strlen(base) + 24;
            if (!(name = malloc(len))) break;
            snprintf(name, len, "%s~%ld", base, n);
        }
        if (name != base) free(base);
        if (!name) {
            ok = 0;
            break;
        }
        names[k] = name;
        name_set_put(&set, name);
    }
    free(set.slots);
    if (!ok && names) {
        for (int k = 0; k < in->count; k++)
            free(names[k]);
        free(names);
        names = NULL;
    }
    return names;
}

/* "DIR/NAME" as a new string. */
static char *join_path(const char *dir, const char *name)
{
    size_t n = strlen(dir) + strlen(name) + 2;
    char *p = malloc(n);
    if (p) snprintf(p, n, "%s/%s", dir, name);
    return p;
}

/* The temporary name beside `path` ("PATH.tmp.PID"), a new string. */
static char *temp_path(const char *path)
{
    size_t n = strlen(path) + 32;
    char *p = malloc(n);
    if (p) snprintf(p, n, "%s.tmp.%ld", path, (long)getpid());
    return p;
}

/* ---- PNG ----------------------------------------------------------------------------- */

static void png_write_fail(png_structp png, png_const_charp msg)
{
    (void)msg;
    png_longjmp(png, 1);
}

static void png_write_warning(png_structp png, png_const_charp msg)
{
    (void)png;
    (void)msg;
}

/* Writes an 8-bit gray image as a PNG file at `path`, with its resolution (pHYs) when known.
 * 0, or -1 with errno set (EIO when libpng failed); a failed file is removed. */
static int write_png(const char *path, const lt_image *img)
{
    FILE *volatile fp = fopen(path, "wb");
    if (!fp) return -1;
    png_structp png =
        png_create_write_struct(PNG_LIBPNG_VER_STRING, NULL, png_write_fail, png_write_warning);
    png_infop info = png ? png_create_info_struct(png) : NULL;
    if (!png || !info) {
        png_destroy_write_struct(png ? &png : NULL, NULL);
        fclose(fp);
        remove(path);
        errno = ENOMEM;
        return -1;
    }
    if (setjmp(png_jmpbuf(png))) {
        int saved = errno ? errno : EIO;
        png_destroy_write_struct(&png, &info);
        fclose(fp);
        remove(path);
        errno = saved;
        return -1;
    }
    png_init_io(png, fp);
    /* Measured on the crops of the newsletter test page (libpng 1.6.39, zlib 1.2.13): no row
     * filter and zlib level 3 cost a quarter of the instructions of libpng's default (adaptive
     * filters) and give smaller files for these two-tone text images; level 6 saves another
     * 14% of bytes for three times the time. */
    png_set_filter(png, 0, PNG_FILTER_NONE);
    png_set_compression_level(png, 3);
    png_set_IHDR(png, info, (png_uint_32)img->width, (png_uint_32)img->height, 8,
                 PNG_COLOR_TYPE_GRAY, PNG_INTERLACE_NONE, PNG_COMPRESSION_TYPE_DEFAULT,
                 PNG_FILTER_TYPE_DEFAULT);
    if (img->dpi > 0) {
        png_uint_32 ppm = (png_uint_32)lround(img->dpi / 0.0254);
        png_set_pHYs(png, info, ppm, ppm, PNG_RESOLUTION_METER);
    }
    png_write_info(png, info);
    for (int y = 0; y < img->height; y++)
        png_write_row(png, img->pixels + (size_t)y * (size_t)img->width);
    png_write_end(png, info);
    png_destroy_write_struct(&png, &info);
    errno = 0;
    if (fflush(fp) != 0 || ferror(fp)) {
        int saved = errno ? errno : EIO;
        fclose(fp);
        remove(path);
        errno = saved;
        return -1;
    }
    if (fclose(fp) != 0) {
        int saved = errno ? errno : EIO;
        remove(path);
        errno = saved;
        return -1;
    }
    return 0;
}

/* ---- the manifest ---------------------------------------------------------------------- */

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

/* Writes one object as one line of the manifest and frees it; a failure stops the run. */
static void manifest_put(crop_run *run, cJSON *o)
{
    char *s = o ? cJSON_PrintUnformatted(o) : NULL;
    cJSON_Delete(o);
    if (!s || fputs(s, run->manifest) < 0 || fputc('\n', run->manifest) == EOF) {
        if (!run->write_failed)
            fprintf(stderr, "lineate: %s/%s: cannot write: %s\n", run->opt->out_dir, MANIFEST_NAME,
                    strerror(s ? (errno ? errno : EIO) : ENOMEM));
        run->write_failed = 1;
    }
    free(s);
}

/* A failed file (page <= 0), page or line (line > 0): the message on stderr, a record in the
 * manifest. `message` names the file already. */
static void fail(crop_run *run, const char *source, int page, int pages, int line,
                 const char *message)
{
    fprintf(stderr, "lineate: %s\n", message);
    cJSON *o = cJSON_CreateObject();
    if (o) {
        cJSON_AddStringToObject(o, "format", CROP_FORMAT_NAME);
        cJSON_AddStringToObject(o, "source", source);
        if (page > 0)
            cJSON_AddNumberToObject(o, "page", page);
        else
            cJSON_AddNullToObject(o, "page");
        if (pages > 0) cJSON_AddNumberToObject(o, "pages", pages);
        if (line > 0) cJSON_AddNumberToObject(o, "line", line);
        cJSON_AddStringToObject(o, "error", message);
    }
    manifest_put(run, o);
    run->failed++;
}

/* ---- one page ---------------------------------------------------------------------------- */

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

/* Writes every line of one analysed page: the PNGs (temporary name, then renamed) and their
 * manifest records. `page` is the gray image the crops are cut from; `source` is the input as
 * given, `shown` its name in messages ("stdin" for "-"), `name` its output name. */
static void crop_page(crop_run *run, const char *source, const char *shown, const char *name,
                      int page_no, int pages, const lt_layout *layout, const lt_image *page)
{
    const crop_options *opt = run->opt;
    for (int i = 0; i < layout->nlines && !run->write_failed; i++) {
        const lt_line *l = &layout->lines[i];
        lt_error err = {0};
        lt_image *crop = NULL;
        cut_info info;
        if (cut_line(opt, page, l, &crop, &info, &err)) {
            char msg[512];
            snprintf(msg, sizeof msg, "%s: page %d: line %d: %s", shown, page_no, i + 1,
                     err.message);
            fail(run, source, page_no, pages, i + 1, msg);
            continue;
        }
        char file[600];
        snprintf(file, sizeof file, "%s-p%04d-l%04d.png", name, page_no, i + 1);
        char *path = join_path(opt->out_dir, file);
        char *tmp = path ? temp_path(path) : NULL;
        errno = 0;
        if (!tmp || write_png(tmp, crop) != 0 || rename(tmp, path) != 0) {
            fprintf(stderr, "lineate: %s: cannot write: %s\n", path ? path : opt->out_dir,
                    strerror(tmp ? (errno ? errno : EIO) : ENOMEM));
            if (tmp) remove(tmp);
            run->write_failed = 1;
        } else {
            cJSON *o = cJSON_CreateObject();
            if (o) {
                cJSON_AddStringToObject(o, "format", CROP_FORMAT_NAME);
                cJSON_AddStringToObject(o, "source", source);
                cJSON_AddNumberToObject(o, "page", page_no);
                cJSON_AddNumberToObject(o, "pages", pages);
                cJSON_AddNumberToObject(o, "line", i + 1);
                cJSON_AddNumberToObject(o, "block", l->block);
                cJSON_AddItemToObject(o, "box", box_json(l->box));
                cJSON_AddItemToObject(o, "quad", quad_json(l->quad));
                cJSON_AddNumberToObject(o, "xheight_px", round2(l->xheight_px));
                cJSON_AddNumberToObject(o, "skew_deg", round(layout->skew_deg * 1000) / 1000 + 0.0);
                cJSON_AddStringToObject(o, "file", file);
                cJSON_AddNumberToObject(o, "width", crop->width);
                cJSON_AddNumberToObject(o, "height", crop->height);
                cJSON_AddStringToObject(o, "mode", opt->binary ? "binary" : "gray");
                cJSON_AddBoolToObject(o, "rectified", opt->rectify);
                cJSON_AddNumberToObject(o, "margin_px", info.margin_px);
                cJSON_AddItemToObject(o, "cut_box", box_json(info.box));
                cJSON_AddItemToObject(o, "cut_quad", quad_json(info.quad));
            }
            manifest_put(run, o);
            run->crops++;
        }
        free(tmp);
        free(path);
        lt_image_free(crop);
    }
}

/* The image the crops of a page are cut from: the decoded page as 8-bit gray (a 1-bit page
 * as 0/255), or with --binary its Sauvola black and white with the analyser's defaults. */
static int crop_source(const crop_options *opt, const lt_image *img, double dpi, lt_image **out,
                       lt_error *err)
{
    *out = NULL;
    if (img->kind == LT_IMAGE_INK) return lt_ink_to_gray(img, out, err); /* 1-bit: used as is */
    if (!opt->binary) return 0;                           /* the decoded page itself */
    int window = lt_sauvola_window_px(&opt->params, dpi); /* the analyser's window */
    lt_image *ink = NULL;
    int rc = lt_binarize(img, window, opt->params.sauvola_k, opt->params.sauvola_r, &ink, err);
    if (rc == 0) rc = lt_ink_to_gray(ink, out, err);
    lt_image_free(ink);
    return rc;
}

static void crop_input(crop_run *run, const char *path, const char *name)
{
    const crop_options *opt = run->opt;
    lt_error err = {0};
    lt_source *src = NULL;
    if (lt_source_open(path, LT_DEFAULT_MAX_PAGES, &src, &err)) {
        fail(run, path, 0, 0, 0, err.message);
        return;
    }
    const int pages = lt_source_pages(src);
    for (int i = 0; i < pages && !run->write_failed; i++) {
        lt_error perr = {0};
        lt_image *img = NULL, *own = NULL;
        lt_layout *layout = NULL;
        if (lt_source_read_page(src, i, opt->params.max_pixels, &img, &perr) ||
            lt_analyze(img, &opt->params, &layout, &perr) ||
            crop_source(opt, img, layout->dpi, &own, &perr)) {
            char msg[512];
            lt_page_message(msg, sizeof msg, lt_source_name(src), i + 1, perr.message);
            fail(run, path, i + 1, pages, 0, msg);
        } else {
            crop_page(run, path, lt_source_name(src), name, i + 1, pages, layout, own ? own : img);
        }
        lt_layout_free(layout);
        lt_image_free(own);
        lt_image_free(img);
    }
    lt_source_free(src);
}

/* ---- the command ---------------------------------------------------------------------- */

/* The error record of an argument that gave no input; its message went to stderr when the
 * inputs were listed (src/batch.c). */
static void bad_arg_record(crop_run *run, const char *arg)
{
    char msg[512];
    snprintf(msg, sizeof msg, "%s: no image file could be listed", arg);
    cJSON *o = cJSON_CreateObject();
    if (o) {
        cJSON_AddStringToObject(o, "format", CROP_FORMAT_NAME);
        cJSON_AddStringToObject(o, "source", arg);
        cJSON_AddNullToObject(o, "page");
        cJSON_AddStringToObject(o, "error", msg);
    }
    manifest_put(run, o);
    run->failed++;
}

/* A command-line argument that gave no input (a folder without images or that cannot be
 * read): its error record goes before the input at position `before`. */
typedef struct bad_arg {
    const char *arg;
    int before;
} bad_arg;

/* Parses the command line into `opt`, `in` and `bad`; 0, or the exit status to stop with
 * (-1: --help was shown). */
static int parse_args(int argc, char **argv, crop_options *opt, lt_inputs *in, bad_arg **bad,
                      int *nbad)
{
    static const struct option longopts[] = {{"out-dir", required_argument, NULL, OPT_OUT_DIR},
                                             {"rectify", no_argument, NULL, OPT_RECTIFY},
                                             {"binary", no_argument, NULL, OPT_BINARY},
                                             {"margin", required_argument, NULL, OPT_MARGIN},
                                             {"dpi", required_argument, NULL, OPT_DPI},
                                             {"help", no_argument, NULL, 'h'},
                                             {NULL, 0, NULL, 0}};
    double v;
    int c;
    opterr = 0;
    while ((c = getopt_long(argc, argv, ":h", longopts, NULL)) != -1) {
        switch (c) {
        case OPT_OUT_DIR: opt->out_dir = optarg; break;
        case OPT_RECTIFY: opt->rectify = 1; break;
        case OPT_BINARY: opt->binary = 1; break;
        case OPT_MARGIN:
            if (lt_cli_number("lineate: ", "--margin", optarg, 0, MAX_MARGIN_PX, &v))
                return LT_EXIT_USAGE;
            if (v != floor(v)) {
                fprintf(stderr, "lineate: --margin: '%s' is not a whole number of pixels\n",
                        optarg);
                return LT_EXIT_USAGE;
            }
            opt->margin_px = (int)v;
            break;
        case OPT_DPI:
            if (lt_cli_number("lineate: ", "--dpi", optarg, 10, 100000, &opt->params.dpi))
                return LT_EXIT_USAGE;
            break;
        case 'h': fputs(usage_text, stdout); return -1;
        case ':':
            fprintf(stderr, "lineate: option '%s' needs a value (see lineate crop --help)\n",
                    argv[optind - 1]);
            return LT_EXIT_USAGE;
        default:
            fprintf(stderr, "lineate: unknown option '%s' (see lineate crop --help)\n",
                    argv[optind - 1]);
            return LT_EXIT_USAGE;
        }
    }
    if (optind >= argc) {
        fprintf(stderr, "lineate: crop: no input image (see lineate crop --help)\n");
        return LT_EXIT_USAGE;
    }
    if (!opt->out_dir || !*opt->out_dir) {
        fprintf(stderr, "lineate: crop: --out-dir DIR is required (see lineate crop --help)\n");
        return LT_EXIT_USAGE;
    }
    /* An argument that lists nothing (a folder without images or that cannot be read) has its
     * message on stderr from lt_inputs_add_arg and, later, an error record. */
    *bad = calloc((size_t)(argc - optind), sizeof **bad);
    if (!*bad) {
        fprintf(stderr, "lineate: out of memory\n");
        return LT_EXIT_FAILED;
    }
    for (int i = optind; i < argc; i++) {
        const int before = in->count;
        if (lt_inputs_add_arg(in, argv[i])) (*bad)[(*nbad)++] = (bad_arg){argv[i], before};
    }
    return 0;
}

int lt_cmd_crop(int argc, char **argv)
{
    crop_options opt;
    memset(&opt, 0, sizeof opt);
    opt.margin_px = -1;
    lt_params_default(&opt.params);
    lt_inputs inputs = {0};
    bad_arg *bad = NULL;
    int nbad = 0;
    int status = parse_args(argc, argv, &opt, &inputs, &bad, &nbad);
    if (status) {
        lt_inputs_free(&inputs);
        free(bad);
        return status < 0 ? LT_EXIT_OK : status;
    }
    char *manifest = join_path(opt.out_dir, MANIFEST_NAME);
    char *manifest_tmp = manifest ? temp_path(manifest) : NULL;
    char **names = output_names(&inputs);
    if (!manifest_tmp || !names) {
        fprintf(stderr, "lineate: out of memory\n");
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    if (mkdir(opt.out_dir, 0777) != 0 && errno != EEXIST) {
        fprintf(stderr, "lineate: %s: %s\n", opt.out_dir, strerror(errno));
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    crop_run run = {&opt, fopen(manifest_tmp, "wb"), 0, 0, 0};
    if (!run.manifest) {
        fprintf(stderr, "lineate: %s: cannot write: %s\n", opt.out_dir, strerror(errno));
        status = LT_EXIT_OUTPUT;
        goto done;
    }
    for (int k = 0, b = 0; k <= inputs.count && !run.write_failed; k++) {
        for (; b < nbad && bad[b].before == k; b++)
            bad_arg_record(&run, bad[b].arg);
        if (k < inputs.count) crop_input(&run, inputs.items[k].path, names[k]);
    }
    errno = 0;
    if (fflush(run.manifest) != 0 || ferror(run.manifest)) {
        if (!run.write_failed)
            fprintf(stderr, "lineate: %s: cannot write: %s\n", manifest,
                    strerror(errno ? errno : EIO));
        run.write_failed = 1;
    }
    if (fclose(run.manifest) != 0 && !run.write_failed) {
        fprintf(stderr, "lineate: %s: cannot write: %s\n", manifest, strerror(errno));
        run.write_failed = 1;
    }
    if (!run.write_failed && rename(manifest_tmp, manifest) != 0) {
        fprintf(stderr, "lineate: %s: cannot write: %s\n", manifest, strerror(errno));
        run.write_failed = 1;
    }
    if (run.write_failed) remove(manifest_tmp);
    status = run.write_failed ? LT_EXIT_OUTPUT : run.failed ? LT_EXIT_FAILED : LT_EXIT_OK;
done:
    if (names)
        for (int k = 0; k < inputs.count; k++)
            free(names[k]);
    free(names);
    free(manifest);
    free(manifest_tmp);
    free(bad);
    lt_inputs_free(&inputs);
    return status;
}

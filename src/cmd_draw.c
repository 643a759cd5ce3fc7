/* cmd_draw.c — `lineate draw IMAGE [LAYOUT] -o OUT.png`: reads one page of an image and its
 * layout (a saved JSON page object, or the analysis of the page when no LAYOUT is given), and
 * writes the audit picture of src/draw.c as an RGB PNG (src/pngwrite.c) under a temporary name
 * in the output's folder, renamed into place once complete, so a failed run leaves no file. */
#include "cli.h"
#include "draw.h"
#include "layoutfile.h"
#include "pngwrite.h"
#include "score.h" /* lt_read_whole_file and the reader's limits */

#include <cjson/cJSON.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define PREFIX "lineate draw: "
#define DEFAULT_SCALE_ABOVE_PX 2000 /* pages wider than this are drawn at half size */

static const char usage_text[] =
    "Usage: lineate draw [OPTIONS] IMAGE [LAYOUT] -o OUT.png\n"
    "Draw the layout of one page over the page: text blocks tinted by role, rules, pictures\n"
    "and tables in their own styles, line outlines, the reading order as numbered arrows\n"
    "(jumps wider, in vermillion), and a legend beside the page. LAYOUT is a saved layout (one\n"
    "JSON object or JSON Lines); without it the page is analysed first.\n"
    "\n"
    "Options:\n"
    "  -o, --output FILE     write the PNG picture to FILE ('-': standard output)\n"
    "      --page N          page N of a multi-page image and of LAYOUT (default 1)\n"
    "      --scale F         page size in the picture / page size, 0.1 to 1 (default 0.5 for\n"
    "                        pages wider than 2000 pixels, else 1)\n"
    "      --no-order        leave out the reading-order arrows and line numbers\n"
    LT_CLI_HELP_VERSION_HELP
    "\n"
    "Exit status: 0 picture written, 1 an input could not be read, 2 bad command line,\n"
    "3 the picture could not be written.\n";

enum { OPT_PAGE = 256, OPT_SCALE, OPT_NO_ORDER };

static const lt_cli_option draw_options[] = {{"output", 'o', 1},
                                             {"page", OPT_PAGE, 1},
                                             {"scale", OPT_SCALE, 1},
                                             {"no-order", OPT_NO_ORDER, 0},
                                             {NULL, 0, 0}};
static const lt_cli_command draw_command = {"lineate draw", usage_text, draw_options};

/* ---- layout JSON -> lt_draw_layout ------------------------------------------------------- */

static char *xstrdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d) memcpy(d, s, n);
    return d;
}

/* Converts one page object into a new layout. `name` and `page` are for messages, which read
 * "NAME: page N: what is wrong". Fails with LT_EPARSE or LT_ENOMEM. */
static int layout_from_json(const cJSON *o, const char *name, int page, lt_draw_layout **out,
                            lt_error *err)
{
    *out = NULL;
    lt_draw_layout *l = calloc(1, sizeof *l);
    if (!l) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    int rc = 0;
#define BAD(...)                                                                                   \
    do {                                                                                           \
        rc = lt_error_set(err, LT_EPARSE, __VA_ARGS__);                                            \
        goto fail;                                                                                 \
    } while (0)
    if (lt_json_int(cJSON_GetObjectItemCaseSensitive(o, "width"), 1, LT_SCORE_MAX_COORD, &l->width) ||
        lt_json_int(cJSON_GetObjectItemCaseSensitive(o, "height"), 1, LT_SCORE_MAX_COORD, &l->height))
        BAD("%s: page %d: no valid \"width\" and \"height\" (positive integers)", name, page);
    const cJSON *lines = cJSON_GetObjectItemCaseSensitive(o, "lines");
    const cJSON *blocks = cJSON_GetObjectItemCaseSensitive(o, "blocks");
    if (!cJSON_IsArray(lines)) BAD("%s: page %d: no \"lines\" array", name, page);
    if (!cJSON_IsArray(blocks)) BAD("%s: page %d: no \"blocks\" array", name, page);
    int nl = cJSON_GetArraySize(lines), nb = cJSON_GetArraySize(blocks);
    if (nl > LT_SCORE_MAX_LINES || nb > LT_SCORE_MAX_LINES) {
        rc = lt_error_set(err, LT_ELIMIT, "%s: page %d: more than %d lines or blocks", name, page,
                          LT_SCORE_MAX_LINES);
        goto fail;
    }
    if ((nl && !(l->lines = calloc((size_t)nl, sizeof *l->lines))) ||
        (nb && !(l->blocks = calloc((size_t)nb, sizeof *l->blocks)))) {
        rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
        goto fail;
    }
    int i = 0;
    for (const cJSON *b = blocks->child; b; b = b->next, i++) {
        lt_draw_block *d = &l->blocks[i];
        if (!cJSON_IsObject(b)) BAD("%s: page %d: blocks[%d] is not an object", name, page, i);
        const cJSON *kind = cJSON_GetObjectItemCaseSensitive(b, "kind");
        if (!cJSON_IsString(kind)) BAD("%s: page %d: blocks[%d] has no \"kind\"", name, page, i);
        d->kind = lt_draw_kind_from_name(kind->valuestring);
        const cJSON *role = cJSON_GetObjectItemCaseSensitive(b, "role");
        if (role && !cJSON_IsString(role) && !cJSON_IsNull(role))
            BAD("%s: page %d: blocks[%d]: \"role\" is not a string", name, page, i);
        d->role = lt_role_from_name(cJSON_IsString(role) ? role->valuestring : NULL);
        if (lt_json_quad(b, d->quad))
            BAD("%s: page %d: blocks[%d]: no valid \"quad\" (4 points [x, y]) or \"box\"", name,
                page, i);
    }
    l->nblocks = nb;
    i = 0;
    for (const cJSON *ln = lines->child; ln; ln = ln->next, i++) {
        lt_draw_line *d = &l->lines[i];
        if (!cJSON_IsObject(ln)) BAD("%s: page %d: lines[%d] is not an object", name, page, i);
        if (lt_json_quad(ln, d->quad))
            BAD("%s: page %d: lines[%d]: no valid \"quad\" (4 points [x, y]) or \"box\"", name,
                page, i);
        const cJSON *block = cJSON_GetObjectItemCaseSensitive(ln, "block");
        d->block = -1;
        if (block && !cJSON_IsNull(block) && lt_json_int(block, 0, nb - 1, &d->block))
            BAD("%s: page %d: lines[%d]: \"block\" is not an index into the %d blocks", name, page,
                i, nb);
    }
    l->nlines = nl;
    const cJSON *review = cJSON_GetObjectItemCaseSensitive(o, "order_review");
    if (review && !cJSON_IsNull(review)) {
        if (!cJSON_IsObject(review))
            BAD("%s: page %d: \"order_review\" is not an object", name, page);
        const cJSON *needed = cJSON_GetObjectItemCaseSensitive(review, "needed");
        const cJSON *reasons = cJSON_GetObjectItemCaseSensitive(review, "reasons");
        if (needed && !cJSON_IsBool(needed))
            BAD("%s: page %d: \"order_review\": \"needed\" is not true or false", name, page);
        if (reasons && !cJSON_IsArray(reasons))
            BAD("%s: page %d: \"order_review\": \"reasons\" is not an array", name, page);
        l->review_needed = cJSON_IsTrue(needed);
        int nr = reasons ? cJSON_GetArraySize(reasons) : 0;
        if (l->review_needed && nr > 0) {
            if (!(l->reasons = calloc((size_t)nr, sizeof *l->reasons))) {
                rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
                goto fail;
            }
            for (const cJSON *r = reasons->child; r; r = r->next) {
                if (!cJSON_IsString(r)) continue; /* only text can be shown */
                if (!(l->reasons[l->nreasons] = xstrdup(r->valuestring))) {
                    rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
                    goto fail;
                }
                l->nreasons++;
            }
        }
    }
#undef BAD
    *out = l;
    return 0;
fail:
    lt_draw_layout_free(l);
    return rc;
}

/* The layout of page `page` of `image` (a file of `image_pages` pages) from the saved stream
 * at `path`: the object whose source is the image (see lt_layout_file_find). */
static int read_layout(const char *path, const char *image, int page, int image_pages,
                       lt_draw_layout **out, lt_error *err)
{
    lt_layout_file *f = NULL;
    cJSON *found = NULL;
    int rc = lt_layout_file_read(path, &f, err);
    if (rc == 0) rc = lt_layout_file_find(f, image, page, image_pages, &found, err);
    if (rc == 0)
        rc = layout_from_json(found, strcmp(path, "-") == 0 ? "stdin" : path, page, out, err);
    cJSON_Delete(found);
    lt_layout_file_free(f);
    return rc;
}

/* Analyses the page and converts the result through the JSON writer, so that a drawing of a
 * fresh analysis and of its saved JSON are the same picture. */
static int analyse_layout(const lt_image *img, const char *name, int page, int pages,
                          lt_draw_layout **out, lt_error *err)
{
    lt_layout *res = NULL;
    lt_error aerr = {0};
    if (lt_analyze(img, NULL, &res, &aerr)) {
        if (strncmp(aerr.message, name, strlen(name)) == 0)
            return lt_error_set(err, aerr.code, "%s", aerr.message);
        return lt_error_set(err, aerr.code, "%s: page %d: %s", name, page, aerr.message);
    }
    char *json = lt_layout_to_json(res, name, page, pages, 0);
    lt_layout_free(res);
    cJSON *obj = json ? cJSON_Parse(json) : NULL;
    free(json);
    if (!obj) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    int rc = layout_from_json(obj, name, page, out, err);
    cJSON_Delete(obj);
    return rc;
}

/* ---- PNG writing ---------------------------------------------------------------------------- */

/* Writes the picture to fp as an 8-bit RGB PNG (src/pngwrite.c); the resolution, when dpi > 0,
 * goes into pHYs. Returns 0, or -1 with the reason in why. */
static int write_png(FILE *fp, const lt_picture *p, double dpi, char *why, size_t why_size)
{
    if (lt_png_write(fp, p->rgb, p->width, p->height, 3, dpi) == 0) return 0;
    snprintf(why, why_size, "%s", strerror(errno));
    return -1;
}

/* Writes the picture to `path`: "-" is standard output; an existing file that is not a
 * regular file (a device, a pipe) is written in place; anything else goes to PATH.tmp.PID in
 * the same folder, renamed to PATH when complete and removed when not. Prints the message
 * and returns LT_EXIT_OUTPUT on failure. */
static int write_output(const char *path, const lt_picture *c, double dpi)
{
    char why[256] = "";
    if (strcmp(path, "-") == 0) {
        if (write_png(stdout, c, dpi, why, sizeof why)) {
            fprintf(stderr, PREFIX "standard output: %s\n", why);
            return LT_EXIT_OUTPUT;
        }
        return LT_EXIT_OK;
    }
    struct stat st;
    if (stat(path, &st) == 0 && !S_ISREG(st.st_mode)) {
        FILE *fp = fopen(path, "wb");
        int bad = !fp;
        if (!fp) snprintf(why, sizeof why, "%s", strerror(errno));
        if (fp) bad = write_png(fp, c, dpi, why, sizeof why) != 0;
        if (fp && fclose(fp) != 0 && !bad) {
            snprintf(why, sizeof why, "%s", strerror(errno));
            bad = 1;
        }
        if (bad) fprintf(stderr, PREFIX "%s: %s\n", path, why);
        return bad ? LT_EXIT_OUTPUT : LT_EXIT_OK;
    }
    size_t n = strlen(path) + 32;
    char *tmp = malloc(n);
    if (!tmp) {
        fprintf(stderr, PREFIX "%s: out of memory\n", path);
        return LT_EXIT_OUTPUT;
    }
    snprintf(tmp, n, "%s.tmp.%ld", path, (long)getpid());
    FILE *fp = fopen(tmp, "wb");
    int bad = 0;
    if (!fp) {
        snprintf(why, sizeof why, "%s", strerror(errno));
        bad = 1;
    } else {
        bad = write_png(fp, c, dpi, why, sizeof why) != 0;
        if (fclose(fp) != 0 && !bad) {
            snprintf(why, sizeof why, "%s", strerror(errno));
            bad = 1;
        }
        if (!bad && rename(tmp, path) != 0) {
            snprintf(why, sizeof why, "%s", strerror(errno));
            bad = 1;
        }
        if (bad) remove(tmp);
    }
    free(tmp);
    if (bad) fprintf(stderr, PREFIX "%s: %s\n", path, why);
    return bad ? LT_EXIT_OUTPUT : LT_EXIT_OK;
}

/* ---- the command ------------------------------------------------------------------------------
 */

int lt_cmd_draw(int argc, char **argv)
{
    const char *output = NULL, *arg;
    double page_d = 1, scale = 0;
    int show_order = 1, c;
    lt_cli_parser p;
    lt_cli_begin(&p, &draw_command, NULL, argc, argv);
    while ((c = lt_cli_next(&p, &arg)) > 0) {
        switch (c) {
        case 'o': output = arg; break;
        case OPT_PAGE:
            if (lt_cli_number(&draw_command, "--page", arg, 1, LT_DEFAULT_MAX_PAGES, 1, &page_d))
                return LT_EXIT_USAGE;
            break;
        case OPT_SCALE:
            if (lt_cli_number(&draw_command, "--scale", arg, 0.1, 1, 0, &scale))
                return LT_EXIT_USAGE;
            break;
        case OPT_NO_ORDER: show_order = 0; break;
        }
    }
    if (c < 0) return p.status;
    const int nargs = argc - p.operands;
    if (nargs < 1 || nargs > 2)
        return lt_cli_usage_error(&draw_command, "%s",
                                  nargs < 1 ? "no input image"
                                            : "more than one image and one layout given");
    if (!output) return lt_cli_usage_error(&draw_command, "no output file: give -o OUT.png");
    const char *image_path = argv[p.operands];
    const char *layout_path = nargs == 2 ? argv[p.operands + 1] : NULL;
    if (layout_path && strcmp(image_path, "-") == 0 && strcmp(layout_path, "-") == 0)
        return lt_cli_usage_error(&draw_command,
                                  "the image and the layout cannot both be standard input");
    const int page = (int)page_d;

    lt_error err = {0};
    lt_source *src = NULL;
    lt_image *img = NULL;
    lt_draw_layout *lay = NULL;
    lt_draw_font *font = NULL;
    lt_picture *picture = NULL;
    int status = LT_EXIT_FAILED;
    if (lt_source_open(image_path, LT_DEFAULT_MAX_PAGES, &src, &err)) goto fail;
    const char *name = lt_source_name(src);
    const int pages = lt_source_pages(src);
    if (page > pages) {
        lt_error_set(&err, LT_EINVAL, "%s: no page %d (the file has %d %s)", name, page, pages,
                     pages == 1 ? "page" : "pages");
        goto fail;
    }
    if (lt_source_read_page(src, page - 1, LT_DEFAULT_MAX_PIXELS, &img, &err)) goto fail;
    if (layout_path) {
        if (read_layout(layout_path, image_path, page, pages, &lay, &err)) goto fail;
        if (lay->width != img->width || lay->height != img->height) {
            lt_error_set(&err, LT_EINVAL, "%s: layout is %dx%d pixels, but page %d of %s is %dx%d",
                         strcmp(layout_path, "-") == 0 ? "stdin" : layout_path, lay->width,
                         lay->height, page, name, img->width, img->height);
            goto fail;
        }
    } else if (analyse_layout(img, name, page, pages, &lay, &err)) {
        goto fail;
    }
    lt_draw_options opt = {scale > 0                             ? scale
                           : img->width > DEFAULT_SCALE_ABOVE_PX ? 0.5
                                                                 : 1,
                           show_order};
    if (lt_draw_font_open(NULL, &font, &err)) goto fail;
    if (lt_draw_page(img, lay, &opt, font, &picture, &err)) {
        char msg[sizeof err.message];
        snprintf(msg, sizeof msg, "%s", err.message);
        err.code = 0;
        lt_error_set(&err, LT_EINVAL, "%s: %s", name, msg);
        goto fail;
    }
    status = write_output(output, picture, img->dpi > 0 ? img->dpi * opt.scale : 0);
    goto done;
fail:
    fprintf(stderr, PREFIX "%s\n", err.message[0] ? err.message : "failed");
done:
    lt_picture_free(picture);
    lt_draw_font_close(font);
    lt_draw_release_caches();
    lt_draw_layout_free(lay);
    lt_image_free(img);
    lt_source_free(src);
    return status;
}

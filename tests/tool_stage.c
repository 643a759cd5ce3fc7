/* tool_stage.c — runs one pipeline stage on an image, for reference tests and benchmarks.
 *   tool_stage binarize IN W K R OUT.pgm [sampled|exact [BLACK WHITE|auto]]
 *                                          Sauvola ink as PGM (0 = ink, 255 = paper), from
 *                                          lt_binarize, or lt_binarize_sampled with "sampled";
 *                                          with BLACK WHITE, lt_binarize_normalized with those
 *                                          gray points ("auto": the page's, lt_gray_points),
 *                                          printed as "black B white W"
 *   tool_stage skew IN                     prints "angle_deg confidence"
 *   tool_stage components IN              prints "count", then "left top right bottom pixels"
 *   tool_stage separators IN               prints the text height, then "rule|gutter left top
 *                                          right bottom" in the deskewed frame
 *   tool_stage time IN [REPEAT]            best-of-REPEAT times in ms of decoding, of each stage
 *                                          (run in the order src/analyze.c runs them) and of
 *                                          lt_analyze as a whole, on one line of "key value" */
#include "internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

static lt_image *load(const char *path)
{
    lt_error err = {0};
    lt_source *src = NULL;
    lt_image *img = NULL;
    if (lt_source_open(path, 1, &src, &err) ||
        lt_source_read_page(src, 0, LT_DEFAULT_MAX_PIXELS, &img, &err)) {
        fprintf(stderr, "tool_stage: %s\n", err.message);
        lt_source_free(src);
        exit(1);
    }
    lt_source_free(src);
    return img;
}

static lt_image *to_ink(lt_image *img)
{
    if (img->kind == LT_IMAGE_INK) return img;
    lt_error err = {0};
    lt_image *ink = NULL;
    int window = lt_sauvola_window_px(NULL, img->dpi > 0 ? img->dpi : 300);
    if (lt_binarize(img, window, 0.34, 128, &ink, &err)) {
        fprintf(stderr, "tool_stage: %s\n", err.message);
        exit(1);
    }
    lt_image_free(img);
    return ink;
}

static double now_ms(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec * 1e3 + ts.tv_nsec / 1e6;
}

/* Stages timed by `time`, in the order src/analyze.c runs them. */
enum {
    ST_DECODE,
    ST_BINARIZE,
    ST_SKEW,
    ST_ROTATE,
    ST_COMPONENTS,
    ST_LINES,
    ST_ORIENT,
    ST_BLOCKS,
    ST_COUNT
};
static const char *const stage_names[ST_COUNT] = {"decode",     "binarize", "skew",
                                                  "rotate",     "components", "lines",
                                                  "orient",     "blocks"};

/* One pass of the pipeline of lt_analyze (src/analyze.c), stage by stage with the same
 * parameters, adding each stage's time in ms to stage_ms[] (the decode is not timed here).
 * "components" includes the text height and the classification; "orient" the two estimates
 * of the orientation (an upright page, as the bench's are, is not turned; a page that asks
 * for a turn is analysed turned by lt_analyze, and the counts then differ); "blocks" is the XY-cut and
 * the reading order (the final mapping to image coordinates is lt_analyze's own, and only in
 * the whole-analysis time). Sets *nlines and *nblocks (text blocks). Returns 0 or LT_E*. */
/* When set, run_stages prints the separators it finds here (tool_stage separators). */
static FILE *separators_out;

static int run_stages(const lt_image *img, const lt_params *p, double stage_ms[ST_COUNT],
                      int *nlines, int *nblocks, lt_error *err)
{
    const double dpi = img->dpi > 0 && !p->force_dpi ? img->dpi : p->dpi;
    lt_image *ink_own = NULL, *rot_own = NULL;
    lt_components *comps = NULL;
    lt_separators *seps = NULL;
    lt_raw_lines *raw = NULL;
    lt_cut_node *tree = NULL;
    lt_arrangement *arr = NULL;
    int rc = 0;
    double t = now_ms(), t_next;
    const lt_image *ink = img;
    if (img->kind == LT_IMAGE_GRAY) {
        int window = lt_sauvola_window_px(p, dpi);
        lt_dark_map dark = {0}; /* lt_analyze's binarization; the map is only for the output */
        rc = lt_binarize_page(img, window, p->sauvola_k, p->sauvola_r, &ink_own, &dark, err);
        lt_dark_map_clear(&dark);
        if (rc) goto done;
        ink = ink_own;
    }
    t_next = now_ms();
    stage_ms[ST_BINARIZE] += t_next - t;
    t = t_next;
    lt_skew skew;
    if ((rc = lt_estimate_skew(ink, p->skew_range_deg, p->skew_min_confidence, &skew, err)))
        goto done;
    t_next = now_ms();
    stage_ms[ST_SKEW] += t_next - t;
    t = t_next;
    const lt_image *page = ink;
    const int deskewed = fabs(skew.angle_deg) >= p->deskew_min_deg;
    lt_frame frame; /* as analyze.c builds it for an upright page */
    lt_frame_init(&frame, ink->width, ink->height, deskewed ? skew.angle_deg : 0);
    if (deskewed) {
        if ((rc = lt_rotate_ink(ink, skew.angle_deg, &rot_own, err))) goto done;
        page = rot_own;
        lt_image_free(ink_own); /* as analyze.c does: the unrotated ink is no longer needed */
        ink_own = NULL;
    }
    t_next = now_ms();
    stage_ms[ST_ROTATE] += t_next - t;
    t = t_next;
    if ((rc = lt_find_components(page, p->max_components, &comps, err))) goto done;
    double text_height_px =
        deskewed ? lt_text_height_deskewed(comps, dpi) : lt_text_height(comps, dpi);
    if (text_height_px < 0) { /* as lt_analyze reports it */
        rc = lt_error_set(err, LT_ENOMEM, "text height: out of memory");
        goto done;
    }
    lt_classify_components(comps, text_height_px, p);
    t_next = now_ms();
    stage_ms[ST_COMPONENTS] += t_next - t;
    t = t_next;
    if ((rc = lt_find_separators(comps, text_height_px, &seps, err))) goto done;
    if (separators_out) {
        fprintf(separators_out, "text_height %.2f skew %.3f\n", text_height_px, skew.angle_deg);
        for (int i = 0; i < seps->nrules; i++)
            fprintf(separators_out, "rule %d %d %d %d\n", seps->rules[i].left, seps->rules[i].top,
                    seps->rules[i].right, seps->rules[i].bottom);
        for (int i = 0; i < seps->ngutters; i++)
            fprintf(separators_out, "gutter %d %d %d %d\n", seps->gutters[i].left,
                    seps->gutters[i].top, seps->gutters[i].right, seps->gutters[i].bottom);
    }
    if ((rc = lt_build_lines(comps, text_height_px, seps, p, &raw, err))) goto done;
    lt_drop_edge_slivers(raw, &frame, text_height_px);
    lt_drop_scan_borders(comps, raw, &frame, text_height_px);
    t_next = now_ms();
    stage_ms[ST_LINES] += t_next - t;
    t = t_next;
    lt_orientation axis, upright;
    if ((rc = lt_estimate_line_axis(comps, &axis, err))) goto done;
    if ((rc = lt_estimate_upright(comps, raw, &upright, err))) goto done;
    t_next = now_ms();
    stage_ms[ST_ORIENT] += t_next - t;
    t = t_next;
    if ((rc = lt_xy_cut(raw, comps, seps, text_height_px, p, &tree, err))) goto done;
    if ((rc = lt_arrange(tree, raw, comps, text_height_px, p, page->height, &arr, err))) goto done;
    *nblocks = arr->nblocks;
    *nlines = raw->count;
    stage_ms[ST_BLOCKS] += now_ms() - t;
done:
    lt_image_free(ink_own);
    lt_image_free(rot_own);
    lt_components_free(comps);
    lt_separators_free(seps);
    lt_raw_lines_free(raw);
    lt_cut_node_free(tree);
    lt_arrangement_free(arr);
    return rc;
}

/* `tool_stage time IN REPEAT`: best of `repeat` runs of the decode, of every stage (each its
 * own minimum) and of the whole lt_analyze; prints one line of "key value" pairs (times in
 * ms; binarize_ms is "-" for a 1-bit page, which is not binarized), the page size and the
 * line and block counts. Fails (exit 1) when the staged run and lt_analyze disagree on the
 * number of lines or text blocks, i.e. when the staged copy no longer mirrors analyze.c. */
static int time_page(const char *path, int repeat)
{
    double best[ST_COUNT], best_all = 1e300;
    for (int s = 0; s < ST_COUNT; s++)
        best[s] = 1e300;
    int kind = LT_IMAGE_GRAY, width = 0, height = 0, nlines = -1, nblocks = -1;
    int all_lines = -1, all_blocks = -1;
    for (int r = 0; r < repeat; r++) {
        /* Each of the two runs follows its own decode, as the analysis of a page does in a
         * batch: the first pass after a decode pays for memory the decode gave back (a run
         * straight after another measured up to twice as fast in its skew stage). */
        lt_error err = {0};
        double stage_ms[ST_COUNT] = {0};
        lt_params params;
        lt_params_default(&params);
        double t0 = now_ms();
        lt_image *img = load(path);
        stage_ms[ST_DECODE] = now_ms() - t0;
        kind = img->kind;
        width = img->width;
        height = img->height;
        int rc = run_stages(img, &params, stage_ms, &nlines, &nblocks, &err);
        lt_image_free(img);
        if (rc) {
            fprintf(stderr, "tool_stage: %s: %s\n", path, err.message);
            return 1;
        }
        t0 = now_ms();
        img = load(path);
        double decode_ms = now_ms() - t0;
        if (decode_ms < stage_ms[ST_DECODE]) stage_ms[ST_DECODE] = decode_ms;
        lt_layout *layout = NULL;
        t0 = now_ms();
        rc = lt_analyze(img, &params, &layout, &err);
        double all_ms = now_ms() - t0;
        lt_image_free(img);
        if (rc) {
            fprintf(stderr, "tool_stage: %s: %s\n", path, err.message);
            return 1;
        }
        all_lines = layout->nlines;
        all_blocks = 0;
        for (int b = 0; b < layout->nblocks; b++)
            all_blocks += layout->blocks[b].kind == LT_BLOCK_TEXT;
        lt_layout_free(layout);
        for (int s = 0; s < ST_COUNT; s++)
            if (stage_ms[s] < best[s]) best[s] = stage_ms[s];
        if (all_ms < best_all) best_all = all_ms;
    }
    if (nlines != all_lines || nblocks != all_blocks) {
        fprintf(stderr,
                "tool_stage: %s: staged run found %d lines, %d blocks; lt_analyze %d, %d: "
                "the stages no longer mirror src/analyze.c\n",
                path, nlines, nblocks, all_lines, all_blocks);
        return 1;
    }
    for (int s = 0; s < ST_COUNT; s++) {
        if (s == ST_BINARIZE && kind == LT_IMAGE_INK)
            printf("%s_ms - ", stage_names[s]);
        else
            printf("%s_ms %.1f ", stage_names[s], best[s]);
    }
    printf("analyze_ms %.1f ratio %.2f width %d height %d lines %d blocks %d\n", best_all,
           best_all / best[ST_DECODE], width, height, all_lines, all_blocks);
    return 0;
}

static int write_pgm(const lt_image *ink, const char *path)
{
    FILE *fp = fopen(path, "wb");
    if (!fp) return 1;
    fprintf(fp, "P5\n%d %d\n255\n", ink->width, ink->height);
    size_t n = (size_t)ink->width * ink->height;
    for (size_t i = 0; i < n; i++)
        fputc(ink->pixels[i] ? 0 : 255, fp);
    return fclose(fp) != 0;
}

int main(int argc, char **argv)
{
#ifdef __GLIBC__
    /* The memory settings of the lineate command (src/main.c), so that the times are its. */
    mallopt(M_MMAP_THRESHOLD, 64 * 1024 * 1024);
    mallopt(M_TRIM_THRESHOLD, 512 * 1024 * 1024);
#endif
    lt_error err = {0};
    if (argc >= 7 && strcmp(argv[1], "binarize") == 0) {
        lt_image *img = load(argv[2]), *ink = NULL;
        if (img->kind != LT_IMAGE_GRAY) return fprintf(stderr, "tool_stage: not gray\n"), 1;
        const int sampled = argc >= 8 && strcmp(argv[7], "sampled") == 0;
        double black = 0, white = 255; /* plain Sauvola */
        const int automatic = argc >= 9 && strcmp(argv[8], "auto") == 0;
        if (automatic) {
            if (lt_gray_points(img, &black, &white))
                return fprintf(stderr, "tool_stage: out of memory\n"), 1;
        } else if (argc >= 10) {
            black = atof(argv[8]), white = atof(argv[9]);
        }
        if (argc >= 9) printf("black %.6f white %.6f\n", black, white);
        if (lt_binarize_normalized(img, atoi(argv[3]), atof(argv[4]), atof(argv[5]),
                                   automatic ? LT_GRAY_POINT_AUTO : black,
                                   automatic ? LT_GRAY_POINT_AUTO : white, sampled, &ink, &err))
            return fprintf(stderr, "tool_stage: %s\n", err.message), 1;
        int bad = write_pgm(ink, argv[6]);
        lt_image_free(img);
        lt_image_free(ink);
        return bad;
    }
    if (argc >= 3 && strcmp(argv[1], "skew") == 0) {
        lt_image *ink = to_ink(load(argv[2]));
        lt_skew s;
        if (lt_estimate_skew(ink, 15, 0.05, &s, &err))
            return fprintf(stderr, "tool_stage: %s\n", err.message), 1;
        printf("%.4f %.4f\n", s.angle_deg, s.confidence);
        lt_image_free(ink);
        return 0;
    }
    if (argc >= 3 && strcmp(argv[1], "components") == 0) {
        lt_image *ink = to_ink(load(argv[2]));
        lt_components *c = NULL;
        if (lt_find_components(ink, LT_DEFAULT_MAX_COMPONENTS, &c, &err))
            return fprintf(stderr, "tool_stage: %s\n", err.message), 1;
        printf("%d\n", c->count);
        for (int i = 0; i < c->count; i++)
            printf("%d %d %d %d %ld\n", c->items[i].box.left, c->items[i].box.top,
                   c->items[i].box.right, c->items[i].box.bottom, c->items[i].pixels);
        lt_components_free(c);
        lt_image_free(ink);
        return 0;
    }
    if (argc >= 3 && strcmp(argv[1], "separators") == 0) {
        lt_image *img = load(argv[2]);
        lt_params params;
        lt_params_default(&params);
        double stage_ms[ST_COUNT] = {0};
        int nlines, nblocks;
        separators_out = stdout;
        int rc = run_stages(img, &params, stage_ms, &nlines, &nblocks, &err);
        lt_image_free(img);
        if (rc) return fprintf(stderr, "tool_stage: %s\n", err.message), 1;
        return 0;
    }
    if (argc >= 3 && strcmp(argv[1], "time") == 0) {
        int repeat = argc >= 4 ? atoi(argv[3]) : 3;
        return time_page(argv[2], repeat > 0 ? repeat : 1);
    }
    fprintf(stderr, "usage: tool_stage binarize|skew|components|separators|time IN ...\n");
    return 2;
}

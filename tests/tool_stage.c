/* tool_stage.c — runs one pipeline stage on an image, for reference tests and benchmarks.
 *   tool_stage binarize IN W K R OUT.pgm   Sauvola ink as PGM (0 = ink, 255 = paper)
 *   tool_stage skew IN                     prints "angle_deg confidence"
 *   tool_stage components IN              prints "count", then "left top right bottom pixels"
 *   tool_stage time IN [REPEAT]            prints per-stage and decode times in ms */
#include "internal.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

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
    int window = (int)(0.17 * (img->dpi > 0 ? img->dpi : 300)) | 1;
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
    lt_error err = {0};
    if (argc >= 7 && strcmp(argv[1], "binarize") == 0) {
        lt_image *img = load(argv[2]), *ink = NULL;
        if (img->kind != LT_IMAGE_GRAY) return fprintf(stderr, "tool_stage: not gray\n"), 1;
        if (lt_binarize(img, atoi(argv[3]), atof(argv[4]), atof(argv[5]), &ink, &err))
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
    if (argc >= 3 && strcmp(argv[1], "time") == 0) {
        int repeat = argc >= 4 ? atoi(argv[3]) : 3;
        double t_decode = 1e300, t_bin = 1e300, t_skew = 1e300, t_all = 1e300;
        for (int r = 0; r < repeat; r++) {
            double t0 = now_ms();
            lt_image *img = load(argv[2]);
            double t1 = now_ms();
            lt_image *ink = NULL;
            if (img->kind == LT_IMAGE_GRAY) lt_binarize(img, 51, 0.34, 128, &ink, &err);
            double t2 = now_ms();
            lt_skew s;
            lt_estimate_skew(ink ? ink : img, 15, 0.05, &s, &err);
            double t3 = now_ms();
            lt_layout *layout = NULL;
            lt_analyze(img, NULL, &layout, &err);
            double t4 = now_ms();
            if (t1 - t0 < t_decode) t_decode = t1 - t0;
            if (t2 - t1 < t_bin) t_bin = t2 - t1;
            if (t3 - t2 < t_skew) t_skew = t3 - t2;
            if (t4 - t3 < t_all) t_all = t4 - t3;
            lt_layout_free(layout);
            lt_image_free(ink);
            lt_image_free(img);
        }
        printf("decode %.1f binarize %.1f skew %.1f analyze %.1f ratio %.2f\n", t_decode, t_bin,
               t_skew, t_all, t_all / t_decode);
        return 0;
    }
    fprintf(stderr, "usage: tool_stage binarize|skew|components|time IN ...\n");
    return 2;
}

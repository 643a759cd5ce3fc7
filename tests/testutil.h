/* testutil.h — small functions shared by lineate's stage tests: checks that count failures and
 * print one line per failed check, drawing of filled boxes into an lt_image, a fixed-seed
 * random generator (splitmix64), conversions to and from leptonica images, and temp folders.
 * Header only; every function is static inline so that a test uses what it needs. */
#ifndef LINEATE_TESTUTIL_H
#define LINEATE_TESTUTIL_H

#include "internal.h"

#include <leptonica/allheaders.h>

#include <dirent.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

/* ---- checks ------------------------------------------------------------------------------ */
static int tu_failures __attribute__((unused));
static int tu_checks __attribute__((unused));

/* Records one failed check: "FAIL: <message>" on stderr. */
static inline void tu_fail(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
static inline void tu_fail(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fputs("FAIL: ", stderr);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    tu_failures++;
}

#define CHECK(cond, ...)                                                                           \
    do {                                                                                           \
        tu_checks++;                                                                               \
        if (!(cond)) tu_fail(__VA_ARGS__);                                                         \
    } while (0)
#define CHECK_INT(got, want, ...)                                                                  \
    do {                                                                                           \
        long g_ = (long)(got), w_ = (long)(want);                                                  \
        tu_checks++;                                                                               \
        if (g_ != w_) {                                                                            \
            char what_[512];                                                                       \
            snprintf(what_, sizeof what_, __VA_ARGS__);                                            \
            tu_fail("%s: got %ld, want %ld", what_, g_, w_);                                       \
        }                                                                                          \
    } while (0)
#define CHECK_NEAR(got, want, tol, ...)                                                            \
    do {                                                                                           \
        double g_ = (got), w_ = (want);                                                            \
        tu_checks++;                                                                               \
        if (!(fabs(g_ - w_) <= (tol))) {                                                           \
            char what_[512];                                                                       \
            snprintf(what_, sizeof what_, __VA_ARGS__);                                            \
            tu_fail("%s: got %.9g, want %.9g (tolerance %g)", what_, g_, w_, (double)(tol));       \
        }                                                                                          \
    } while (0)
#define CHECK_BOX(got, want, ...)                                                                  \
    do {                                                                                           \
        lt_box g_ = (got), w_ = (want);                                                            \
        tu_checks++;                                                                               \
        if (g_.left != w_.left || g_.top != w_.top || g_.right != w_.right ||                      \
            g_.bottom != w_.bottom) {                                                              \
            char what_[512];                                                                       \
            snprintf(what_, sizeof what_, __VA_ARGS__);                                            \
            tu_fail("%s: got box [%d %d %d %d), want [%d %d %d %d)", what_, g_.left, g_.top,       \
                    g_.right, g_.bottom, w_.left, w_.top, w_.right, w_.bottom);                    \
        }                                                                                          \
    } while (0)

/* Prints "NAME: N passed, N failed" and returns the exit status (0 or 1). */
static inline int tu_summary(const char *name)
{
    printf("%s: %d passed, %d failed\n", name, tu_checks - tu_failures, tu_failures);
    return tu_failures ? 1 : 0;
}

/* Fails the test at once (setup went wrong, nothing sensible can follow). */
static inline void tu_die(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
static inline void tu_die(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fputs("FAIL: ", stderr);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    exit(1);
}

static inline double tu_now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec + ts.tv_nsec * 1e-9;
}

/* ---- random numbers: splitmix64 (Steele, Lea & Flood 2014), fixed seeds ------------------- */
typedef struct tu_rng {
    uint64_t state;
} tu_rng;

static inline uint64_t tu_next(tu_rng *r)
{
    uint64_t z = (r->state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

/* Uniform integer in [lo, hi]. */
static inline int tu_range(tu_rng *r, int lo, int hi)
{
    return lo + (int)(tu_next(r) % (uint64_t)(hi - lo + 1));
}

/* Uniform double in [0, 1). */
static inline double tu_unit(tu_rng *r)
{
    return (tu_next(r) >> 11) * (1.0 / 9007199254740992.0);
}

/* ---- images ------------------------------------------------------------------------------ */
static inline lt_image *tu_image(int width, int height, int kind, int fill)
{
    lt_image *img = lt_image_new(width, height, kind);
    if (!img) tu_die("out of memory for a %d x %d image", width, height);
    if (fill) memset(img->pixels, fill, (size_t)width * height);
    return img;
}

/* Sets the pixels of [left, right) x [top, bottom), clipped to the image, to `value`. */
static inline void tu_fill(lt_image *img, int left, int top, int right, int bottom, int value)
{
    if (left < 0) left = 0;
    if (top < 0) top = 0;
    if (right > img->width) right = img->width;
    if (bottom > img->height) bottom = img->height;
    for (int y = top; y < bottom; y++)
        for (int x = left; x < right; x++)
            img->pixels[(size_t)y * img->width + x] = (uint8_t)value;
}

static inline void tu_fill_box(lt_image *img, lt_box b, int value)
{
    tu_fill(img, b.left, b.top, b.right, b.bottom, value);
}

static inline lt_box tu_box(int left, int top, int right, int bottom)
{
    lt_box b = {left, top, right, bottom};
    return b;
}

/* Grows *acc to hold b; an accumulator with right <= left is empty. */
static inline void tu_box_union(lt_box *acc, lt_box b)
{
    if (acc->right <= acc->left) {
        *acc = b;
        return;
    }
    if (b.left < acc->left) acc->left = b.left;
    if (b.top < acc->top) acc->top = b.top;
    if (b.right > acc->right) acc->right = b.right;
    if (b.bottom > acc->bottom) acc->bottom = b.bottom;
}

static inline int tu_box_inside(lt_box inner, lt_box outer)
{
    return inner.left >= outer.left && inner.top >= outer.top && inner.right <= outer.right &&
           inner.bottom <= outer.bottom;
}

static inline int tu_cmp_box(const void *pa, const void *pb)
{
    const lt_box *a = pa, *b = pb;
    if (a->top != b->top) return (a->top > b->top) - (a->top < b->top);
    if (a->left != b->left) return (a->left > b->left) - (a->left < b->left);
    if (a->bottom != b->bottom) return (a->bottom > b->bottom) - (a->bottom < b->bottom);
    return (a->right > b->right) - (a->right < b->right);
}

static inline long tu_count_ink(const lt_image *img)
{
    long n = 0;
    for (size_t i = 0; i < (size_t)img->width * img->height; i++)
        n += img->pixels[i] != 0;
    return n;
}

/* ---- leptonica (a general-purpose image library the project did not write) ---------------- */
/* An ink image as a 1-bpp PIX (1 = black, leptonica's convention). */
static inline PIX *tu_pix_from_ink(const lt_image *ink)
{
    PIX *pix = pixCreate(ink->width, ink->height, 1);
    if (!pix) tu_die("pixCreate failed");
    for (int y = 0; y < ink->height; y++)
        for (int x = 0; x < ink->width; x++)
            if (ink->pixels[(size_t)y * ink->width + x]) pixSetPixel(pix, x, y, 1);
    return pix;
}

/* A gray image as an 8-bpp PIX. */
static inline PIX *tu_pix_from_gray(const lt_image *gray)
{
    PIX *pix = pixCreate(gray->width, gray->height, 8);
    if (!pix) tu_die("pixCreate failed");
    l_uint32 *data = pixGetData(pix);
    const int wpl = pixGetWpl(pix);
    for (int y = 0; y < gray->height; y++)
        for (int x = 0; x < gray->width; x++)
            SET_DATA_BYTE(data + (size_t)y * wpl, x, gray->pixels[(size_t)y * gray->width + x]);
    return pix;
}

/* An 8-bpp PIX (no colormap) as a gray lt_image. */
static inline lt_image *tu_gray_from_pix(PIX *pix)
{
    if (pixGetDepth(pix) != 8 || pixGetColormap(pix)) tu_die("tu_gray_from_pix: not 8 bpp gray");
    lt_image *img = tu_image(pixGetWidth(pix), pixGetHeight(pix), LT_IMAGE_GRAY, 0);
    const l_uint32 *data = pixGetData(pix);
    const int wpl = pixGetWpl(pix);
    for (int y = 0; y < img->height; y++)
        for (int x = 0; x < img->width; x++)
            img->pixels[(size_t)y * img->width + x] =
                (uint8_t)GET_DATA_BYTE(data + (size_t)y * wpl, x);
    return img;
}

/* A 1-bpp PIX as an ink image. */
static inline lt_image *tu_ink_from_pix(PIX *pix)
{
    if (pixGetDepth(pix) != 1) tu_die("tu_ink_from_pix: not 1 bpp");
    lt_image *img = tu_image(pixGetWidth(pix), pixGetHeight(pix), LT_IMAGE_INK, 0);
    const l_uint32 *data = pixGetData(pix);
    const int wpl = pixGetWpl(pix);
    for (int y = 0; y < img->height; y++)
        for (int x = 0; x < img->width; x++)
            img->pixels[(size_t)y * img->width + x] =
                (uint8_t)GET_DATA_BIT(data + (size_t)y * wpl, x);
    return img;
}

/* ---- files --------------------------------------------------------------------------------- */
/* Folder of the source tree: $top_srcdir (set by `make check`) or the current folder. */
static inline const char *tu_srcdir(void)
{
    const char *d = getenv("top_srcdir");
    return d && *d ? d : ".";
}

/* Reads page 0 of testdata/NAME from the source tree (fails the test when it cannot). */
static inline lt_image *tu_load_testdata(const char *name)
{
    char path[4096];
    snprintf(path, sizeof path, "%s/testdata/%s", tu_srcdir(), name);
    lt_error err = {0};
    lt_source *src = NULL;
    lt_image *img = NULL;
    if (lt_source_open(path, 1, &src, &err) ||
        lt_source_read_page(src, 0, LT_DEFAULT_MAX_PIXELS, &img, &err))
        tu_die("cannot load %s: %s (run from the build folder or set top_srcdir)", name,
               err.message);
    lt_source_free(src);
    return img;
}

/* Creates a fresh temp folder (under $TMPDIR or /tmp) and writes its path to dir. */
static inline void tu_mkdtemp(char *dir, size_t size)
{
    const char *base = getenv("TMPDIR");
    snprintf(dir, size, "%s/lineate-test-XXXXXX", base && *base ? base : "/tmp");
    if (!mkdtemp(dir)) tu_die("mkdtemp %s failed", dir);
}

/* dir/name into path. */
static inline const char *tu_path(char *path, size_t size, const char *dir, const char *name)
{
    snprintf(path, size, "%s/%s", dir, name);
    return path;
}

/* Removes a flat temp folder made by tu_mkdtemp and the files in it. */
static inline void tu_rmtree(const char *dir)
{
    DIR *d = opendir(dir);
    if (d) {
        struct dirent *e;
        char path[4096];
        while ((e = readdir(d)) != NULL) {
            if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
            unlink(tu_path(path, sizeof path, dir, e->d_name));
        }
        closedir(d);
    }
    rmdir(dir);
}

/* Writes size bytes to path (fails the test when it cannot). */
static inline void tu_write_file(const char *path, const void *data, size_t size)
{
    FILE *fp = fopen(path, "wb");
    if (!fp || fwrite(data, 1, size, fp) != size || fclose(fp) != 0)
        tu_die("cannot write %s", path);
}

/* Reads all of path into a new buffer (NULL when it cannot). */
static inline uint8_t *tu_read_file(const char *path, size_t *size)
{
    FILE *fp = fopen(path, "rb");
    if (!fp) return NULL;
    fseek(fp, 0, SEEK_END);
    long n = ftell(fp);
    fseek(fp, 0, SEEK_SET);
    uint8_t *buf = malloc(n > 0 ? (size_t)n : 1);
    if (buf && n > 0 && fread(buf, 1, (size_t)n, fp) != (size_t)n) {
        free(buf);
        buf = NULL;
    }
    fclose(fp);
    *size = n > 0 ? (size_t)n : 0;
    return buf;
}

#endif

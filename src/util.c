/* util.c — the version, error recording, image allocation and the default parameters: the
 * small shared pieces every stage uses. */
#include "internal.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const char *lt_version(void)
{
    return LT_VERSION_STRING;
}

int lt_version_number(void)
{
    return LT_VERSION_NUMBER;
}

void lt_shorten_middle(char *dst, size_t size, const char *text)
{
    const size_t n = strlen(text), mark = 3; /* "..." */
    if (n < size) {
        memcpy(dst, text, n + 1);
        return;
    }
    if (size <= 2 * mark) { /* no room to cut: the end, which holds the reason */
        if (size) snprintf(dst, size, "%s", text + n - (size - 1));
        return;
    }
    size_t head = (size - 1 - mark) / 5, tail = size - 1 - mark - head;
    while (head > 0 && ((unsigned char)text[head] & 0xc0) == 0x80) /* whole UTF-8 characters */
        head--;
    size_t from = n - tail;
    while (from < n && ((unsigned char)text[from] & 0xc0) == 0x80)
        from++;
    memcpy(dst, text, head);
    memcpy(dst + head, "...", mark);
    memcpy(dst + head + mark, text + from, n - from + 1);
}

int lt_error_set(lt_error *err, int code, const char *fmt, ...)
{
    if (err && err->code == 0) {
        va_list ap, again;
        va_start(ap, fmt);
        va_copy(again, ap);
        /* A message that does not fit (a long file name) loses the middle of its name, never
         * the end of the name nor the reason after it. */
        const int n = vsnprintf(err->message, sizeof err->message, fmt, ap);
        char *full = n >= (int)sizeof err->message ? malloc((size_t)n + 1) : NULL;
        if (full) {
            vsnprintf(full, (size_t)n + 1, fmt, again);
            lt_shorten_middle(err->message, sizeof err->message, full);
            free(full);
        }
        va_end(again);
        va_end(ap);
        /* One line whatever the input put in it (file names, strings from a JSON file). */
        for (char *c = err->message; *c; c++)
            if ((unsigned char)*c < 0x20 || *c == 0x7f) *c = '?';
        err->code = code;
    }
    return code;
}

lt_image *lt_image_alloc(int width, int height, int kind, int zeroed)
{
    if (width <= 0 || height <= 0) return NULL;
    size_t n;
    if (lt_mul_overflows((size_t)width, (size_t)height, &n)) return NULL;
    lt_image *img = calloc(1, sizeof *img);
    if (!img) return NULL;
    img->pixels = zeroed ? calloc(n, 1) : malloc(n);
    if (!img->pixels) {
        free(img);
        return NULL;
    }
    img->width = width;
    img->height = height;
    img->kind = kind;
    return img;
}

lt_image *lt_image_new(int width, int height, int kind)
{
    return lt_image_alloc(width, height, kind, 1);
}

void lt_image_free(lt_image *img)
{
    if (!img) return;
    free(img->pixels);
    free(img);
}

int lt_dpi_plausible(double dpi)
{
    return dpi >= LT_MIN_DPI && dpi <= LT_MAX_DPI;
}

void lt_image_set_file_dpi(lt_image *img, double dpi)
{
    const int plausible = lt_dpi_plausible(dpi);
    img->dpi = plausible ? dpi : 0;
    img->dpi_rejected = dpi != 0 && !plausible;
}

void lt_params_default(lt_params *p)
{
    memset(p, 0, sizeof *p);
    p->dpi = 300;
    p->sauvola_window_px = 0;
    p->sauvola_k = 0.34;
    p->sauvola_r = 128;
    p->skew_range_deg = 15;
    p->skew_min_confidence = 0.05;
    p->deskew_min_deg = 0.05;
    p->speckle_max = 0.2;
    p->rule_min_aspect = 12;
    p->picture_min_height = 6;
    p->link_max_gap = 5;
    p->column_min_gap = 1.5;
    p->block_min_gap = 1.2;
    p->right_to_left = 0;
    p->orientation_deg = LT_ORIENTATION_AUTO;
    p->max_pixels = LT_DEFAULT_MAX_PIXELS;
    p->max_components = LT_DEFAULT_MAX_COMPONENTS;
}

const char *lt_role_name(int role)
{
    static const char *const names[LT_ROLE_COUNT] = {
        "none",        "body",      "heading", "page-header", "page-footer",
        "page-number", "list-item", "caption", "footnote",    "margin-note"};
    return role >= 0 && role < LT_ROLE_COUNT ? names[role] : "none";
}

const char *lt_doubt_text(int bit)
{
    switch (bit) {
    case LT_DOUBT_CYCLE: return "the precedence between blocks contradicts itself";
    case LT_DOUBT_UNORDERED: return "blocks of text side by side with nothing to order them";
    case LT_DOUBT_DISAGREE: return "the cut tree and the precedence give different orders";
    case LT_DOUBT_NARROW_GAP: return "rows of similar text line up across a narrow gutter";
    case LT_DOUBT_BRIDGED: return "a few lines run across what looks like a gutter";
    default: return NULL;
    }
}

int lt_mul_overflows(size_t a, size_t b, size_t *out)
{
    if (a != 0 && b > SIZE_MAX / a) return 1;
    *out = a * b;
    return 0;
}

void *lt_alloc_array(size_t count, size_t size)
{
    size_t n;
    if (lt_mul_overflows(count, size, &n)) return NULL;
    return malloc(n ? n : 1);
}

int lt_cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

int lt_cmp_int(const void *pa, const void *pb)
{
    const int a = *(const int *)pa, b = *(const int *)pb;
    return (a > b) - (a < b);
}

int lt_cmp_keyed(const void *pa, const void *pb)
{
    const lt_keyed *a = pa, *b = pb;
    if (a->key != b->key) return (a->key > b->key) - (a->key < b->key);
    return (a->index > b->index) - (a->index < b->index);
}

int lt_keyed_first_from(const lt_keyed *v, int n, int key)
{
    int lo = 0, hi = n;
    while (lo < hi) {
        const int mid = lo + (hi - lo) / 2;
        if (v[mid].key < key)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

int lt_largest_cluster(int *v, int n, double width)
{
    if (n <= 0) return 0;
    qsort(v, (size_t)n, sizeof *v, lt_cmp_int);
    int most = 0;
    for (int lo = 0, hi = 0; hi < n; hi++) {
        while (v[hi] - v[lo] > width)
            lo++;
        if (hi - lo + 1 > most) most = hi - lo + 1;
    }
    return most;
}

double lt_median(double *v, int n)
{
    if (n <= 0) return 0;
    qsort(v, (size_t)n, sizeof *v, lt_cmp_double);
    return (n & 1) ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* components.c — 8-connected components of an ink image by run-length labelling: runs of
 * each row are united with the touching runs of the row above (union-find with path
 * halving), in the spirit of the run-based two-pass algorithms (Rosenfeld & Pfaltz 1966;
 * He, Chao & Suzuki 2008). One pass over the pixels, memory proportional to the runs. */
#include "internal.h"

#include <stdlib.h>
#include <string.h>

typedef struct run {
    int x0, x1; /* pixels [x0, x1) of its row */
} run;

static const uint64_t EVERY_BYTE_ONE = 0x0101010101010101u;

#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__ && defined(__GNUC__)
/* Index of the first nonzero byte of the nonzero word v, as the bytes stand in memory. */
static inline int first_set_byte(uint64_t v)
{
    return __builtin_ctzll(v) / 8;
}
#define LT_WORD_SCAN 1
#endif

/* The first index from x on in row[0, w) holding ink, or w. Most of a page is long
 * stretches of paper: 32 bytes are tested at a time while they all are paper, then the run's
 * first byte is found within a 64-bit word. */
static inline int next_ink(const uint8_t *row, int x, int w)
{
#ifdef LT_WORD_SCAN
    for (; x + 32 <= w; x += 32) {
        uint64_t v[4];
        memcpy(v, row + x, sizeof v);
        if (v[0] | v[1] | v[2] | v[3]) break;
    }
    for (; x + 8 <= w; x += 8) {
        uint64_t v;
        memcpy(&v, row + x, 8);
        if (v) return x + first_set_byte(v);
    }
#endif
    while (x < w && !row[x])
        x++;
    return x;
}

/* The first index from x on in row[0, w) holding paper, or w (pixels are 0 or 1). */
static inline int next_paper(const uint8_t *row, int x, int w)
{
#ifdef LT_WORD_SCAN
    for (; x + 8 <= w; x += 8) {
        uint64_t v;
        memcpy(&v, row + x, 8);
        if (v != EVERY_BYTE_ONE) return x + first_set_byte(v ^ EVERY_BYTE_ONE);
    }
#endif
    while (x < w && row[x])
        x++;
    return x;
}

/* Appends the runs of every row; row_start[y] is the index of row y's first run. */
static int collect_runs(const lt_image *ink, run **runs_out, int *nruns, int *row_start)
{
    size_t cap = 4096, n = 0;
    run *runs = malloc(cap * sizeof *runs);
    if (!runs) return LT_ENOMEM;
    const int w = ink->width;
    for (int y = 0; y < ink->height; y++) {
        row_start[y] = (int)n;
        const uint8_t *row = ink->pixels + (size_t)y * w;
        int x = 0;
        while (x < w) {
            x = next_ink(row, x, w);
            if (x == w) break;
            const int x0 = x;
            x = next_paper(row, x, w);
            if (n == cap) {
                if (cap > (size_t)1 << 30) {
                    free(runs);
                    return LT_ELIMIT;
                }
                run *bigger = realloc(runs, 2 * cap * sizeof *runs);
                if (!bigger) {
                    free(runs);
                    return LT_ENOMEM;
                }
                runs = bigger;
                cap *= 2;
            }
            runs[n++] = (run){x0, x};
        }
    }
    row_start[ink->height] = (int)n;
    *runs_out = runs;
    *nruns = (int)n;
    return 0;
}

int lt_find_components(const lt_image *ink, long max_components, lt_components **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK)
        return lt_error_set(err, LT_EINVAL, "components: bad arguments");
    int *row_start = malloc(((size_t)ink->height + 1) * sizeof *row_start);
    run *runs = NULL;
    int nruns = 0, *parent = NULL;
    lt_components *res = calloc(1, sizeof *res);
    int rc = (!row_start || !res) ? LT_ENOMEM : collect_runs(ink, &runs, &nruns, row_start);
    if (rc) goto fail;
    parent = malloc(((size_t)nruns + 1) * sizeof *parent);
    if (!parent) {
        rc = LT_ENOMEM;
        goto fail;
    }
    for (int i = 0; i < nruns; i++)
        parent[i] = i;
    /* Runs of consecutive rows touch (8-connected) when [x0-1, x1] ranges overlap. */
    for (int y = 1; y < ink->height; y++) {
        int j = row_start[y - 1], jend = row_start[y];
        for (int i = row_start[y]; i < row_start[y + 1]; i++) {
            while (j < jend && runs[j].x1 < runs[i].x0)
                j++;
            for (int k = j; k < jend && runs[k].x0 <= runs[i].x1; k++)
                lt_uf_unite(parent, i, k);
        }
    }
    /* Number components by their first run in raster order. */
    int count = 0;
    int *root_label = malloc(((size_t)nruns + 1) * sizeof *root_label);
    if (!root_label) {
        rc = LT_ENOMEM;
        goto fail;
    }
    for (int i = 0; i < nruns; i++) {
        int r = lt_uf_find(parent, i);
        if (r == i) root_label[i] = count++;
        root_label[i] = root_label[r];
    }
    if (count > max_components) {
        free(root_label);
        rc = LT_ELIMIT;
        goto fail;
    }
    res->items = calloc((size_t)count + 1, sizeof *res->items);
    double *sx = calloc((size_t)count + 1, sizeof *sx), *sy = calloc((size_t)count + 1, sizeof *sy);
    if (!res->items || !sx || !sy) {
        free(sx);
        free(sy);
        free(root_label);
        rc = LT_ENOMEM;
        goto fail;
    }
    res->count = count;
    for (int c = 0; c < count; c++) {
        lt_box *b = &res->items[c].box;
        b->left = b->top = 1 << 30;
        b->right = b->bottom = -1;
    }
    for (int y = 0; y < ink->height; y++)
        for (int i = row_start[y]; i < row_start[y + 1]; i++) {
            const int label = root_label[i];
            lt_component *c = &res->items[label];
            const run *r = &runs[i];
            const int len = r->x1 - r->x0;
            if (r->x0 < c->box.left) c->box.left = r->x0;
            if (r->x1 > c->box.right) c->box.right = r->x1;
            if (y < c->box.top) c->box.top = y;
            if (y + 1 > c->box.bottom) c->box.bottom = y + 1;
            c->pixels += len;
            /* Sum of pixel centres x + 0.5 over the run, and y + 0.5 per pixel. */
            sx[label] += len * (0.5 * (r->x0 + r->x1));
            sy[label] += len * (y + 0.5);
        }
    for (int c = 0; c < count; c++) {
        res->items[c].cx = sx[c] / res->items[c].pixels;
        res->items[c].cy = sy[c] / res->items[c].pixels;
    }
    free(sx);
    free(sy);
    free(root_label);
    free(parent);
    free(runs);
    free(row_start);
    *out = res;
    return 0;
fail:
    free(parent);
    free(runs);
    free(row_start);
    lt_components_free(res);
    if (rc == LT_ELIMIT)
        return lt_error_set(err, LT_ELIMIT, "more than %ld connected components (noise page?)",
                            max_components);
    return lt_error_set(err, LT_ENOMEM, "components: out of memory");
}

void lt_components_free(lt_components *c)
{
    if (!c) return;
    free(c->items);
    free(c);
}

/* components.c — 8-connected components of an ink image by run-length labelling: runs of
 * each row are united with the touching runs of the row above (union-find with path
 * halving), in the spirit of the run-based two-pass algorithms (Rosenfeld & Pfaltz 1966;
 * He, Chao & Suzuki 2008). One pass over the pixels, memory proportional to the runs. */
#include "internal.h"

#include <stdlib.h>
#include <string.h>

/* A component's core height leaves out CORE_INK_TRIM of its ink at the top and at the bottom:
 * the teeth that a deskewed page's letters carry on their top and bottom edges (each edge was
 * binarized at an angle, a staircase, and turned level again) hold a little of the ink and
 * add up to a pixel to the box's height, the core's by a fraction of that; a letter's round
 * top or serif holds more. */
static const double CORE_INK_TRIM = 0.03;

typedef struct run {
    int x0, x1; /* pixels [x0, x1) of its row */
} run;

#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__ && defined(__GNUC__)
#define LT_WORD_SCAN 1
/* The pixels (bytes 0 or 1) of a little-endian word as 8 bits, bit i for byte i: the product
 * gathers each byte's low bit into the top byte, without carries between them. */
static inline uint64_t pack_pixels(uint64_t v)
{
    return (v * 0x0102040810204080u) >> 56;
}
#endif

/* Writes the runs of ink of row[0, w) (pixels 0 or 1) to out, which has room for (w + 1) / 2
 * runs, and returns their number. 64 pixels at a time (the last block padded with paper):
 * blocks of paper, most of a page, are passed over with one test; in the others the ink
 * becomes the bits of a word whose changes from paper to ink and back, the runs' ends, are
 * found by counting trailing zeros (no branch per pixel). */
static int row_runs(const uint8_t *row, int w, run *out)
{
    int n = 0, inside = 0, start = 0;
#ifdef LT_WORD_SCAN
    for (int x = 0; x < w; x += 64) {
        uint64_t v[8];
        if (x + 64 <= w) {
            memcpy(v, row + x, sizeof v);
        } else {
            memset(v, 0, sizeof v);
            memcpy(v, row + x, (size_t)(w - x));
        }
        if (!inside && !(v[0] | v[1] | v[2] | v[3] | v[4] | v[5] | v[6] | v[7])) continue;
        uint64_t ink = 0;
        for (int k = 0; k < 8; k++)
            ink |= pack_pixels(v[k]) << (8 * k);
        for (uint64_t changes = ink ^ ((ink << 1) | (uint64_t)inside); changes;
             changes &= changes - 1) {
            const int at = x + __builtin_ctzll(changes);
            if (inside)
                out[n++] = (run){start, at};
            else
                start = at;
            inside = !inside;
        }
    }
#else
    for (int x = 0; x < w; x++) {
        if (row[x] == inside) continue;
        if (inside)
            out[n++] = (run){start, x};
        else
            start = x;
        inside = !inside;
    }
#endif
    if (inside) out[n++] = (run){start, w};
    return n;
}

/* Appends the runs of every row; row_start[y] is the index of row y's first run. */
static int collect_runs(const lt_image *ink, run **runs_out, int *nruns, int *row_start)
{
    const int w = ink->width;
    const size_t row_most = ((size_t)w + 1) / 2; /* runs of one row at most */
    size_t cap = 4096, n = 0;
    while (cap < row_most)
        cap *= 2;
    run *runs = malloc(cap * sizeof *runs);
    if (!runs) return LT_ENOMEM;
    for (int y = 0; y < ink->height; y++) {
        row_start[y] = (int)n;
        if (cap - n < row_most) {
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
        n += (size_t)row_runs(ink->pixels + (size_t)y * w, w, runs + n);
    }
    row_start[ink->height] = (int)n;
    *runs_out = runs;
    *nruns = (int)n;
    return 0;
}

/* Sets the core_height (see CORE_INK_TRIM) of the components of res from the runs (run i of
 * component label[i]; row y's runs from row_start[y], rows 0 .. height - 1), with their
 * pixels counted. Returns 0 or LT_ENOMEM. */
static int core_heights(const run *runs, const int *row_start, int height, const int *label,
                        lt_components *res)
{
    const int n = res->count;
    long *before = calloc((size_t)n + 1, sizeof *before); /* ink in the rows above */
    long *in_row = calloc((size_t)n + 1, sizeof *in_row); /* ink in the current row */
    double *top = malloc(((size_t)n + 1) * sizeof *top);
    if (!before || !in_row || !top) {
        free(before);
        free(in_row);
        free(top);
        return LT_ENOMEM;
    }
    for (int y = 0; y < height; y++) {
        for (int i = row_start[y]; i < row_start[y + 1]; i++)
            in_row[label[i]] += runs[i].x1 - runs[i].x0;
        for (int i = row_start[y]; i < row_start[y + 1]; i++) {
            const int id = label[i];
            const long row = in_row[id], above = before[id];
            if (row == 0) continue; /* this row of the component is done */
            const double total = (double)res->items[id].pixels, lo = CORE_INK_TRIM * total,
                         hi = total - lo;
            if (above < lo && above + row >= lo) top[id] = y + (lo - above) / row;
            if (above < hi && above + row >= hi)
                res->items[id].core_height = (float)(y + (hi - above) / row - top[id]);
            before[id] = above + row;
            in_row[id] = 0;
        }
    }
    free(before);
    free(in_row);
    free(top);
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
    /* Number components by their first run in raster order, in place: a run's parent is an
     * earlier run of its component (or itself, for the first), whose number is known by then,
     * so parent[i] becomes the number of run i's component. */
    int count = 0;
    int *label = parent;
    for (int i = 0; i < nruns; i++)
        label[i] = parent[i] == i ? count++ : label[parent[i]];
    if (count > max_components) {
        rc = LT_ELIMIT;
        goto fail;
    }
    res->items = calloc((size_t)count + 1, sizeof *res->items);
    double *sx = calloc((size_t)count + 1, sizeof *sx), *sy = calloc((size_t)count + 1, sizeof *sy);
    if (!res->items || !sx || !sy) {
        free(sx);
        free(sy);
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
            const int id = label[i];
            lt_component *c = &res->items[id];
            const run *r = &runs[i];
            const int len = r->x1 - r->x0;
            if (r->x0 < c->box.left) c->box.left = r->x0;
            if (r->x1 > c->box.right) c->box.right = r->x1;
            if (y < c->box.top) c->box.top = y;
            if (y + 1 > c->box.bottom) c->box.bottom = y + 1;
            c->pixels += len;
            /* Sum of pixel centres x + 0.5 over the run, and y + 0.5 per pixel. */
            sx[id] += len * (0.5 * (r->x0 + r->x1));
            sy[id] += len * (y + 0.5);
        }
    for (int c = 0; c < count; c++) {
        res->items[c].cx = sx[c] / res->items[c].pixels;
        res->items[c].cy = sy[c] / res->items[c].pixels;
    }
    free(sx);
    free(sy);
    if ((rc = core_heights(runs, row_start, ink->height, label, res))) goto fail;
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

/* polygon.c — an outline of each text line that follows its ink: the envelope of the boxes
 * of the line's components over vertical strips a text height wide (a staircase, upper edge
 * left to right, lower edge right to left), each strip holding at least the line's x-height
 * band, neighbouring strips of nearly the same extent merged. Built in the deskewed frame and
 * mapped to the image as given, so a curved or slanted line keeps its shape. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Named constants of the stage, in text heights (th) unless stated. */
static const double STRIP_TH = 1.0;     /* width of a strip: a character or two */
static const double MERGE_TOL_TH = 0.5; /* strips whose tops and bottoms differ less merge */
static const double STEP_TH = 0.1;      /* runs whose tops and bottoms differ less merge */
#define MAX_STRIPS 1024 /* per line (4 points each at most); a longer line gets wider strips */

typedef struct line_ref {
    int top, index;
} line_ref;

static int cmp_line_ref(const void *a, const void *b)
{
    const line_ref *x = a, *y = b;
    if (x->top != y->top) return x->top < y->top ? -1 : 1;
    return (x->index > y->index) - (x->index < y->index);
}

/* The line (index into `raw`) whose box holds the centre of component c, the one whose
 * vertical centre is nearest when several do; -1 when none. `sorted` holds the lines by top,
 * `max_h` is the tallest line's height. */
static int owner_line(const lt_component *c, const lt_raw_lines *raw, const line_ref *sorted,
                      int max_h)
{
    const double cx = 0.5 * (c->box.left + c->box.right), cy = 0.5 * (c->box.top + c->box.bottom);
    int lo = 0, hi = raw->count; /* first line with top >= cy - max_h */
    while (lo < hi) {
        int mid = lo + (hi - lo) / 2;
        if (sorted[mid].top < cy - max_h)
            lo = mid + 1;
        else
            hi = mid;
    }
    int best = -1;
    double best_d = INFINITY;
    for (int k = lo; k < raw->count && sorted[k].top <= cy; k++) {
        const lt_box *b = &raw->items[sorted[k].index].box;
        if (cx < b->left || cx >= b->right || cy < b->top || cy >= b->bottom) continue;
        const double d = fabs(0.5 * (b->top + b->bottom) - cy);
        if (d < best_d) {
            best_d = d;
            best = sorted[k].index;
        }
    }
    return best;
}

/* Scratch of one line's strips: per strip its top and bottom, then per run of merged strips
 * its top, bottom and right end (runs overwrite strips in place: run k <= strip s). */
typedef struct strips {
    int *top, *bottom, *end;
    lt_point *pts; /* room for 4 points per strip */
} strips;

/* The staircase outline of line `r` from the components members[0..n) (indices into c), in
 * the deskewed frame, into st->pts; returns the number of points (>= 4 unless the line is
 * empty). Strips are `strip_px` wide, nstrips of them cover the line's box. */
static int outline(const lt_raw_line *r, const lt_components *c, const int *members, int n,
                   double th, int strip_px, int nstrips, strips *st)
{
    const lt_box *b = &r->box;
    int *top = st->top, *bottom = st->bottom, *end = st->end;
    for (int s = 0; s < nstrips; s++) {
        top[s] = INT32_MAX;
        bottom[s] = INT32_MIN;
    }
    for (int i = 0; i < n; i++) {
        const lt_box *cb = &c->items[members[i]].box;
        int s0 = (cb->left - b->left) / strip_px, s1 = (cb->right - 1 - b->left) / strip_px;
        if (s0 < 0) s0 = 0;
        if (s1 >= nstrips) s1 = nstrips - 1;
        for (int s = s0; s <= s1; s++) {
            if (cb->top < top[s]) top[s] = cb->top;
            if (cb->bottom > bottom[s]) bottom[s] = cb->bottom;
        }
    }
    /* every strip holds at least the x-height band (clipped to the box): a word space, or a
     * strip with only a comma in it, does not pinch the outline */
    int band_top = (int)floor(r->baseline_y - r->xheight_px);
    int band_bottom = (int)ceil(r->baseline_y);
    if (band_top < b->top) band_top = b->top;
    if (band_bottom > b->bottom) band_bottom = b->bottom;
    if (band_bottom <= band_top) {
        band_top = b->top;
        band_bottom = b->bottom;
    }
    for (int s = 0; s < nstrips; s++) {
        if (band_top < top[s]) top[s] = band_top;
        if (band_bottom > bottom[s]) bottom[s] = band_bottom;
        if (top[s] < b->top) top[s] = b->top;
        if (bottom[s] > b->bottom) bottom[s] = b->bottom;
    }
    /* runs of strips whose tops, and whose bottoms, lie within `tol` of each other; a run
     * takes the highest top and the lowest bottom of its strips, so it holds their ink */
    const int tol = (int)fmax(1.0, MERGE_TOL_TH * th);
    int nruns = 0;
    for (int s = 0; s < nstrips;) {
        int t_lo = top[s], t_hi = top[s], b_lo = bottom[s], b_hi = bottom[s], e = s + 1;
        for (; e < nstrips; e++) {
            const int nt_lo = top[e] < t_lo ? top[e] : t_lo, nt_hi = top[e] > t_hi ? top[e] : t_hi;
            const int nb_lo = bottom[e] < b_lo ? bottom[e] : b_lo;
            const int nb_hi = bottom[e] > b_hi ? bottom[e] : b_hi;
            if (nt_hi - nt_lo > tol || nb_hi - nb_lo > tol) break;
            t_lo = nt_lo, t_hi = nt_hi, b_lo = nb_lo, b_hi = nb_hi;
        }
        top[nruns] = t_lo;
        bottom[nruns] = b_hi;
        end[nruns] = b->left + e * strip_px < b->right ? b->left + e * strip_px : b->right;
        nruns++;
        s = e;
    }
    /* neighbouring runs a step of at most STEP_TH apart at top and bottom become one */
    const int step = (int)fmax(2.0, STEP_TH * th);
    int kept = 0;
    for (int k = 0; k < nruns; k++) {
        if (kept > 0 && abs(top[k] - top[kept - 1]) <= step &&
            abs(bottom[k] - bottom[kept - 1]) <= step) {
            if (top[k] < top[kept - 1]) top[kept - 1] = top[k];
            if (bottom[k] > bottom[kept - 1]) bottom[kept - 1] = bottom[k];
            end[kept - 1] = end[k];
            continue;
        }
        top[kept] = top[k];
        bottom[kept] = bottom[k];
        end[kept] = end[k];
        kept++;
    }
    nruns = kept;
    lt_point *pts = st->pts;
    int np = 0;
    for (int k = 0; k < nruns; k++) { /* upper edge, left to right */
        const double x0 = k > 0 ? end[k - 1] : b->left;
        pts[np++] = (lt_point){x0, top[k]};
        pts[np++] = (lt_point){end[k], top[k]};
    }
    for (int k = nruns - 1; k >= 0; k--) { /* lower edge, right to left */
        const double x0 = k > 0 ? end[k - 1] : b->left;
        pts[np++] = (lt_point){end[k], bottom[k]};
        pts[np++] = (lt_point){x0, bottom[k]};
    }
    /* drop repeated points and the middle one of three on a straight horizontal or vertical
     * run, the closing corner included */
    int m = 0;
    for (int i = 0; i < np; i++) {
        const lt_point p = pts[i];
        if (m > 0 && pts[m - 1].x == p.x && pts[m - 1].y == p.y) continue;
        if (m >= 2) {
            const lt_point a = pts[m - 2], q = pts[m - 1];
            if ((a.x == q.x && q.x == p.x) || (a.y == q.y && q.y == p.y)) m--;
        }
        pts[m++] = p;
    }
    while (m >= 3 && ((pts[m - 1].x == pts[0].x && pts[0].x == pts[1].x) ||
                      (pts[m - 1].y == pts[0].y && pts[0].y == pts[1].y))) {
        memmove(pts, pts + 1, (size_t)(m - 1) * sizeof *pts);
        m--;
    }
    return m;
}

int lt_line_polygons(const lt_raw_lines *raw, const int *order, int nlines, const lt_components *c,
                     double th, const lt_frame *frame, lt_layout *out, lt_error *err)
{
    if (nlines == 0 || !c || th <= 0) return 0;
    const int strip_px = (int)fmax(1.0, round(STRIP_TH * th));
    const size_t nc = (size_t)(c->count > 0 ? c->count : 1);
    line_ref *sorted = malloc((size_t)raw->count * sizeof *sorted);
    int *first = calloc((size_t)raw->count + 1, sizeof *first);
    int *fill = malloc((size_t)raw->count * sizeof *fill);
    int *owner = malloc(nc * sizeof *owner), *members = malloc(nc * sizeof *members);
    int *offset = malloc(((size_t)nlines + 1) * sizeof *offset);
    strips st = {malloc(MAX_STRIPS * sizeof(int)), malloc(MAX_STRIPS * sizeof(int)),
                 malloc(MAX_STRIPS * sizeof(int)), malloc((4 * MAX_STRIPS + 4) * sizeof(lt_point))};
    lt_point *pool = NULL;
    size_t used = 0, cap = 0;
    int max_h = 0, rc = 0;
    if (!sorted || !first || !fill || !owner || !members || !offset || !st.top || !st.bottom ||
        !st.end || !st.pts)
        goto oom;
    for (int i = 0; i < raw->count; i++) {
        const lt_box *b = &raw->items[i].box;
        sorted[i] = (line_ref){b->top, i};
        if (b->bottom - b->top > max_h) max_h = b->bottom - b->top;
    }
    qsort(sorted, (size_t)raw->count, sizeof *sorted, cmp_line_ref);
    /* the components of each line, grouped by line (a counting sort) */
    for (int i = 0; i < c->count; i++) {
        const int kind = c->items[i].kind;
        owner[i] = kind == LT_COMP_TEXT || kind == LT_COMP_SPECKLE
                       ? owner_line(&c->items[i], raw, sorted, max_h)
                       : -1;
        if (owner[i] >= 0) first[owner[i] + 1]++;
    }
    for (int i = 0; i < raw->count; i++) {
        first[i + 1] += first[i];
        fill[i] = first[i];
    }
    for (int i = 0; i < c->count; i++)
        if (owner[i] >= 0) members[fill[owner[i]]++] = i;
    for (int i = 0; i < nlines; i++) {
        const int k = order[i];
        const lt_raw_line *r = &raw->items[k];
        const int w = r->box.right - r->box.left;
        int strip = strip_px;
        if ((w + strip - 1) / strip > MAX_STRIPS) strip = (w + MAX_STRIPS - 1) / MAX_STRIPS;
        const int nstrips = (w + strip - 1) / strip;
        offset[i] = (int)used;
        if (nstrips <= 0 || r->box.bottom <= r->box.top) continue;
        const int n =
            outline(r, c, members + first[k], first[k + 1] - first[k], th, strip, nstrips, &st);
        if (used + (size_t)n > cap) {
            size_t ncap = cap ? 2 * cap : 1024;
            while (ncap < used + (size_t)n)
                ncap *= 2;
            lt_point *grown = realloc(pool, ncap * sizeof *pool);
            if (!grown) goto oom;
            pool = grown;
            cap = ncap;
        }
        for (int p = 0; p < n; p++)
            pool[used + (size_t)p] = lt_frame_to_original(frame, st.pts[p].x, st.pts[p].y);
        used += (size_t)n;
    }
    offset[nlines] = (int)used;
    out->polygon_points = pool;
    pool = NULL;
    for (int i = 0; i < nlines; i++) {
        const int n = offset[i + 1] - offset[i];
        out->lines[i].npolygon = n >= 3 ? n : 0;
        out->lines[i].polygon = n >= 3 ? out->polygon_points + offset[i] : NULL;
    }
    goto done;
oom:
    rc = lt_error_set(err, LT_ENOMEM, "out of memory");
done:
    free(sorted);
    free(first);
    free(fill);
    free(owner);
    free(members);
    free(offset);
    free(st.top);
    free(st.bottom);
    free(st.end);
    free(st.pts);
    free(pool);
    return rc;
}

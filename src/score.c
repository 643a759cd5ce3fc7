/* score.c — text-line scoring: box IoU, greedy one-to-one matching at IoU >= 0.5 found by a
 * sweep over boxes sorted by top, precision / recall / F1, splits and merges by area
 * containment, Kendall's tau-a (Kendall 1938) of the reading order by merge-sort inversion
 * counting (Knight 1966), and the order of every truth line placed by cover, measured by the
 * longest increasing subsequence (patience sorting; Schensted 1961, Fredman 1975). Pure
 * functions: no I/O. */
#include "score.h"

#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

int64_t lt_box_area(const lt_box *b)
{
    int64_t w = (int64_t)b->right - b->left, h = (int64_t)b->bottom - b->top;
    return (w > 0 && h > 0) ? w * h : 0;
}

int64_t lt_box_intersection(const lt_box *a, const lt_box *b)
{
    int64_t l = a->left > b->left ? a->left : b->left;
    int64_t r = a->right < b->right ? a->right : b->right;
    int64_t t = a->top > b->top ? a->top : b->top;
    int64_t bo = a->bottom < b->bottom ? a->bottom : b->bottom;
    return (r > l && bo > t) ? (r - l) * (bo - t) : 0;
}

double lt_box_iou(const lt_box *a, const lt_box *b)
{
    int64_t aa = lt_box_area(a), ab = lt_box_area(b);
    if (aa == 0 || ab == 0) return 0.0;
    int64_t inter = lt_box_intersection(a, b);
    return (double)inter / (double)(aa + ab - inter);
}

/* ---- exact comparison of IoU fractions ------------------------------------------------- */

/* 128-bit product of two non-negative 64-bit values as (hi, lo). */
static void mul_u64(uint64_t a, uint64_t b, uint64_t *hi, uint64_t *lo)
{
    uint64_t a0 = a & 0xffffffffu, a1 = a >> 32, b0 = b & 0xffffffffu, b1 = b >> 32;
    uint64_t p00 = a0 * b0, p01 = a0 * b1, p10 = a1 * b0, p11 = a1 * b1;
    uint64_t mid = (p00 >> 32) + (p01 & 0xffffffffu) + (p10 & 0xffffffffu);
    *lo = (p00 & 0xffffffffu) | (mid << 32);
    *hi = p11 + (p01 >> 32) + (p10 >> 32) + (mid >> 32);
}

/* Sign of n1/d1 - n2/d2 for non-negative numerators and positive denominators. */
static int cmp_fraction(int64_t n1, int64_t d1, int64_t n2, int64_t d2)
{
    uint64_t h1, l1, h2, l2;
    mul_u64((uint64_t)n1, (uint64_t)d2, &h1, &l1);
    mul_u64((uint64_t)n2, (uint64_t)d1, &h2, &l2);
    if (h1 != h2) return h1 < h2 ? -1 : 1;
    if (l1 != l2) return l1 < l2 ? -1 : 1;
    return 0;
}

/* ---- sweep support ------------------------------------------------------------------- */

typedef struct sorted_ref {
    int top; /* box top, the sort key */
    int index;
} sorted_ref;

static int cmp_ref(const void *a, const void *b)
{
    const sorted_ref *x = a, *y = b;
    if (x->top != y->top) return x->top < y->top ? -1 : 1;
    return (x->index > y->index) - (x->index < y->index);
}

/* Indices of lines sorted by box top (ties by index); NULL on allocation failure. */
static sorted_ref *sort_by_top(const lt_scored_line *lines, int n)
{
    sorted_ref *r = malloc((size_t)(n > 0 ? n : 1) * sizeof *r);
    if (!r) return NULL;
    for (int i = 0; i < n; i++) {
        r[i].top = lines[i].box.top;
        r[i].index = i;
    }
    qsort(r, (size_t)n, sizeof *r, cmp_ref);
    return r;
}

/* First position in r[0..n) whose top is >= top_px. */
static int lower_bound(const sorted_ref *r, int n, long top_px)
{
    int lo = 0, hi = n;
    while (lo < hi) {
        int mid = lo + (hi - lo) / 2;
        if ((long)r[mid].top < top_px)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

/* Start of the sweep window of `outer` in boxes sorted by top. If at least half of the area
 * of box B lies inside box A (which IoU(A, B) >= 0.5 implies too, since 2 * inter >= union
 * >= area_B), the overlap height ih obeys ih >= h_B / 2 (inter <= w_B * ih) and ih <= h_A,
 * and B.bottom >= A.top + ih, so B.top = B.bottom - h_B >= A.top + ih - 2 * ih >= A.top - h_A;
 * and B.top < A.bottom as they overlap. Every such B thus has A.top - h_A <= B.top < A.bottom:
 * the sweep examines only boxes whose tops fall there. */
static int window_start(const sorted_ref *r, int n, const lt_box *outer)
{
    long h = (long)outer->bottom - outer->top;
    return lower_bound(r, n, (long)outer->top - h);
}

/* ---- matching ------------------------------------------------------------------------ */

typedef struct candidate {
    int truth, pred;
    int64_t inter, uni; /* IoU = inter / uni, exactly */
} candidate;

static int cmp_candidate(const void *a, const void *b)
{
    const candidate *x = a, *y = b;
    int c = cmp_fraction(y->inter, y->uni, x->inter, x->uni); /* decreasing IoU */
    if (c) return c;
    if (x->truth != y->truth) return x->truth < y->truth ? -1 : 1;
    return (x->pred > y->pred) - (x->pred < y->pred);
}

static int cmp_match_truth(const void *a, const void *b)
{
    const lt_line_match *x = a, *y = b;
    return (x->truth > y->truth) - (x->truth < y->truth);
}

/* Below this |skew| a page is scored as it is, not turned level. */
#define LEVEL_MIN_SKEW_DEG 0.01

/* ---- ink ------------------------------------------------------------------------------- */

int lt_ink_table_new(const lt_image *ink, double skew_deg, lt_ink_table **out, lt_error *err)
{
    *out = NULL;
    if (!ink || ink->kind != LT_IMAGE_INK || ink->width <= 0 || ink->height <= 0)
        return lt_error_set(err, LT_EINVAL, "ink table: no ink image");
    lt_image *level = NULL;
    int dx = 0, dy = 0;
    if (fabs(skew_deg) >= LEVEL_MIN_SKEW_DEG) {
        int rc = lt_rotate_ink(ink, skew_deg, &level, err);
        if (rc) return rc;
        lt_frame f;
        lt_frame_init(&f, ink->width, ink->height, skew_deg);
        dx = (int)lround(f.desk_cx - f.orig_cx);
        dy = (int)lround(f.desk_cy - f.orig_cy);
        ink = level;
    } else {
        skew_deg = 0;
    }
    const size_t w1 = (size_t)ink->width + 1, h1 = (size_t)ink->height + 1;
    lt_ink_table *t = calloc(1, sizeof *t);
    uint32_t *sum = t ? lt_alloc_array(w1 * h1, sizeof *sum) : NULL;
    if (!sum) {
        free(t);
        lt_image_free(level);
        return lt_error_set(err, LT_ENOMEM, "ink table: out of memory");
    }
    memset(sum, 0, w1 * sizeof *sum);
    for (size_t y = 1; y < h1; y++) {
        const uint8_t *row = ink->pixels + (y - 1) * (size_t)ink->width;
        uint32_t run = 0;
        sum[y * w1] = 0;
        for (size_t x = 1; x < w1; x++) {
            run += row[x - 1] != 0;
            sum[y * w1 + x] = sum[(y - 1) * w1 + x] + run;
        }
    }
    *t = (lt_ink_table){ink->width, ink->height, sum, skew_deg, dx, dy};
    lt_image_free(level);
    *out = t;
    return 0;
}

void lt_ink_table_free(lt_ink_table *t)
{
    if (!t) return;
    free(t->sum);
    free(t);
}

/* v clipped to [0, hi]. */
static long clip(long v, long hi)
{
    return v < 0 ? 0 : v > hi ? hi : v;
}

int64_t lt_ink_in_box(const lt_ink_table *t, const lt_box *b)
{
    const long l = clip((long)b->left + t->dx, t->width), r = clip((long)b->right + t->dx, t->width);
    const long top = clip((long)b->top + t->dy, t->height);
    const long bot = clip((long)b->bottom + t->dy, t->height);
    if (r <= l || bot <= top) return 0;
    const size_t w1 = (size_t)t->width + 1;
    return (int64_t)t->sum[(size_t)bot * w1 + r] - t->sum[(size_t)top * w1 + r] -
           t->sum[(size_t)bot * w1 + l] + t->sum[(size_t)top * w1 + l];
}

/* The measure matching compares: a box's area, or the ink it holds when `ink` is given. */
static int64_t measure(const lt_ink_table *ink, const lt_box *b)
{
    return ink ? lt_ink_in_box(ink, b) : lt_box_area(b);
}

/* The pairs (truth, pred) with IoU >= 0.5, in truth order, into out[] (NULL: only counted),
 * found in each truth box's window of the preds sorted by top (window_start). With `ink`
 * the IoU is that of the ink the boxes hold, and as that says nothing about their areas, the
 * window takes every prediction whose top lies within the tallest prediction's height above
 * the truth box. Returns their number, or a negative LT_E* code past LT_SCORE_MAX_PAIR_TESTS
 * pairs examined or LT_SCORE_MAX_CANDIDATES found. */
static long find_candidates(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                            const sorted_ref *ps, int npred, const lt_ink_table *ink,
                            candidate *out, lt_error *err)
{
    long ncand = 0, tests = 0;
    int tallest = 0;
    for (int p = 0; ink && p < npred; p++)
        if (pred[p].box.bottom - pred[p].box.top > tallest)
            tallest = pred[p].box.bottom - pred[p].box.top;
    for (int t = 0; t < ntruth; t++) {
        const lt_box *tb = &truth[t].box;
        int64_t at = measure(ink, tb);
        if (at == 0) continue;
        int start = ink ? lower_bound(ps, npred, (long)tb->top - tallest)
                        : window_start(ps, npred, tb);
        for (int k = start; k < npred && ps[k].top < tb->bottom; k++) {
            if (++tests > LT_SCORE_MAX_PAIR_TESTS)
                return lt_error_set(err, LT_ELIMIT, "match: more than %ld overlapping box pairs",
                                    LT_SCORE_MAX_PAIR_TESTS);
            int p = ps[k].index;
            int64_t ap = measure(ink, &pred[p].box);
            if (ap == 0) continue;
            int64_t inter = lt_box_intersection(tb, &pred[p].box);
            if (ink && inter > 0) {
                const lt_box *pb = &pred[p].box;
                const lt_box both = {tb->left > pb->left ? tb->left : pb->left,
                                     tb->top > pb->top ? tb->top : pb->top,
                                     tb->right < pb->right ? tb->right : pb->right,
                                     tb->bottom < pb->bottom ? tb->bottom : pb->bottom};
                inter = lt_ink_in_box(ink, &both);
            }
            int64_t uni = at + ap - inter;
            if (inter == 0 || 2 * inter < uni) continue;
            if (ncand == LT_SCORE_MAX_CANDIDATES)
                return lt_error_set(err, LT_ELIMIT,
                                    "match: more than %d box pairs with IoU >= 0.5, the limit of "
                                    "one page",
                                    LT_SCORE_MAX_CANDIDATES);
            if (out) out[ncand] = (candidate){t, p, inter, uni};
            ncand++;
        }
    }
    return ncand;
}

/* Matching by area (ink NULL) or by the ink the boxes hold. */
static int match_lines(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                       int npred, const lt_ink_table *ink, lt_line_match **matches, int *nmatches,
                       lt_error *err)
{
    *matches = NULL;
    *nmatches = 0;
    if (ntruth < 0 || npred < 0 || (ntruth > 0 && !truth) || (npred > 0 && !pred))
        return lt_error_set(err, LT_EINVAL, "match: bad line arrays");
    if (ntruth == 0 || npred == 0) return 0;
    sorted_ref *ps = sort_by_top(pred, npred);
    candidate *cand = NULL;
    char *used_t = calloc((size_t)ntruth, 1), *used_p = calloc((size_t)npred, 1);
    lt_line_match *out = NULL;
    int rc = 0;
    if (!ps || !used_t || !used_p) {
        rc = lt_error_set(err, LT_ENOMEM, "match: out of memory");
        goto done;
    }
    /* Counted first, so that the limits are checked before anything is stored, and the
     * candidates then take exactly the memory they need. */
    long ncand = find_candidates(truth, ntruth, pred, ps, npred, ink, NULL, err);
    if (ncand < 0) {
        rc = (int)ncand;
        goto done;
    }
    if (ncand == 0) goto done;
    cand = malloc((size_t)ncand * sizeof *cand);
    if (!cand) {
        rc = lt_error_set(err, LT_ENOMEM, "match: out of memory");
        goto done;
    }
    find_candidates(truth, ntruth, pred, ps, npred, ink, cand, err);
    qsort(cand, (size_t)ncand, sizeof *cand, cmp_candidate);
    int cap = ntruth < npred ? ntruth : npred;
    out = malloc((size_t)cap * sizeof *out);
    if (!out) {
        rc = lt_error_set(err, LT_ENOMEM, "match: out of memory");
        goto done;
    }
    int n = 0;
    for (long c = 0; c < ncand && n < cap; c++) {
        const candidate *x = &cand[c];
        if (used_t[x->truth] || used_p[x->pred]) continue;
        used_t[x->truth] = used_p[x->pred] = 1;
        out[n].truth = x->truth;
        out[n].pred = x->pred;
        out[n].iou = (double)x->inter / (double)x->uni;
        out[n].strict = 4 * x->inter >= 3 * x->uni; /* IoU >= 0.75 */
        n++;
    }
    qsort(out, (size_t)n, sizeof *out, cmp_match_truth);
    *matches = out;
    *nmatches = n;
    out = NULL;
done:
    free(out);
    free(cand);
    free(ps);
    free(used_t);
    free(used_p);
    return rc;
}

int lt_match_lines(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred, int npred,
                   lt_line_match **matches, int *nmatches, lt_error *err)
{
    return match_lines(truth, ntruth, pred, npred, NULL, matches, nmatches, err);
}

int lt_match_lines_ink(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                       int npred, const lt_ink_table *ink, lt_line_match **matches, int *nmatches,
                       lt_error *err)
{
    return match_lines(truth, ntruth, pred, npred, ink, matches, nmatches, err);
}

void lt_prf(long matched, long ntruth, long npred, double *precision, double *recall, double *f1)
{
    double p, r, f;
    if (ntruth == 0 && npred == 0) {
        p = r = f = 1.0;
    } else if (ntruth == 0 || npred == 0) {
        p = r = f = 0.0;
    } else {
        p = (double)matched / (double)npred;
        r = (double)matched / (double)ntruth;
        f = (p + r > 0) ? 2.0 * p * r / (p + r) : 0.0;
    }
    if (precision) *precision = p;
    if (recall) *recall = r;
    if (f1) *f1 = f;
}

/* ---- Kendall's tau-a ------------------------------------------------------------------ */

/* Sorts v[0..n) ascending with tmp as scratch; returns the number of inversions. */
static int64_t count_inversions(int *v, int *tmp, int n)
{
    if (n < 2) return 0;
    int h = n / 2;
    int64_t inv = count_inversions(v, tmp, h) + count_inversions(v + h, tmp, n - h);
    int i = 0, j = h, k = 0;
    while (i < h && j < n) {
        if (v[i] <= v[j]) {
            tmp[k++] = v[i++];
        } else {
            inv += h - i; /* v[j] is smaller than every remaining left element */
            tmp[k++] = v[j++];
        }
    }
    while (i < h)
        tmp[k++] = v[i++];
    while (j < n)
        tmp[k++] = v[j++];
    memcpy(v, tmp, (size_t)n * sizeof *v);
    return inv;
}

int lt_kendall_tau_a(const int *seq, int n, double *tau)
{
    *tau = 0.0;
    if (n < 2 || !seq) return 1;
    int *v = malloc((size_t)n * sizeof *v), *tmp = malloc((size_t)n * sizeof *tmp);
    if (!v || !tmp) {
        free(v);
        free(tmp);
        return LT_ENOMEM;
    }
    memcpy(v, seq, (size_t)n * sizeof *v);
    int64_t discordant = count_inversions(v, tmp, n);
    free(v);
    free(tmp);
    int64_t pairs = (int64_t)n * (n - 1) / 2;
    *tau = (double)(pairs - 2 * discordant) / (double)pairs; /* (C - D) / pairs, C = pairs-D */
    return 0;
}

/* ---- reading order by cover ----------------------------------------------------------- */

int lt_longest_increasing(const int *seq, int n, int *length)
{
    *length = 0;
    if (n <= 0 || !seq) return 0;
    /* tails[k]: the smallest last value of a strictly increasing subsequence of length k + 1
     * among those seen so far; tails increases with k, so bisection finds where a value goes */
    int *tails = malloc((size_t)n * sizeof *tails);
    if (!tails) return LT_ENOMEM;
    int len = 0;
    for (int i = 0; i < n; i++) {
        int lo = 0, hi = len; /* the first k with tails[k] >= seq[i] */
        while (lo < hi) {
            int mid = lo + (hi - lo) / 2;
            if (tails[mid] < seq[i])
                lo = mid + 1;
            else
                hi = mid;
        }
        tails[lo] = seq[i];
        if (lo == len) len++;
    }
    free(tails);
    *length = len;
    return 0;
}

/* Where a covered truth line falls in the predicted reading: its prediction, then its left
 * edge among the lines sharing that prediction; `pos` is its place among the covered lines
 * in truth order (the last tie-break, as the truth index would be). */
typedef struct cover_key {
    int pred, left_px, pos;
} cover_key;

static int cmp_cover_key(const void *a, const void *b)
{
    const cover_key *x = a, *y = b;
    if (x->pred != y->pred) return x->pred < y->pred ? -1 : 1;
    if (x->left_px != y->left_px) return x->left_px < y->left_px ? -1 : 1;
    return (x->pos > y->pos) - (x->pos < y->pos);
}

/* The sweep window of a predicted box over truth boxes sorted by top: every truth box T that
 * the box P covers by a share c of T's area lies in it. The overlap height ih obeys
 * c * h_T <= ih (the intersection is at most w_T * ih) and ih <= h_P, and T.bottom >=
 * P.top + ih, so T.top >= P.top + ih - ih / c >= P.top - h_P (1 / c - 1); and T.top <
 * P.bottom. Sets [*begin, *end). */
static void cover_window(const sorted_ref *r, int n, const lt_box *p, int *begin, int *end)
{
    const long pct = LT_SCORE_MIN_COVER_PERCENT;
    const long h = (long)p->bottom - p->top;
    const long reach = (h * (100 - pct) + pct - 1) / pct;
    *begin = lower_bound(r, n, (long)p->top - reach);
    *end = lower_bound(r, n, p->bottom);
}

int lt_cover_order_count(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                         int npred, lt_cover_order *out, lt_error *err)
{
    memset(out, 0, sizeof *out);
    if (ntruth < 0 || npred < 0 || (ntruth > 0 && !truth) || (npred > 0 && !pred))
        return lt_error_set(err, LT_EINVAL, "score: bad line arrays");
    if (ntruth > LT_SCORE_MAX_LINES || npred > LT_SCORE_MAX_LINES)
        return lt_error_set(err, LT_ELIMIT, "score: more than %d lines on a page",
                            LT_SCORE_MAX_LINES);
    const size_t nt = (size_t)(ntruth > 0 ? ntruth : 1);
    sorted_ref *ts = malloc(nt * sizeof *ts);
    int64_t *best_inter = malloc(nt * sizeof *best_inter);
    int *best_pred = malloc(nt * sizeof *best_pred);
    int *rank = calloc(nt, sizeof *rank); /* zeroed for -Wmaybe-uninitialized: the ranks fill it */
    cover_key *keys = malloc(nt * sizeof *keys);
    int rc = 0;
    if (!ts || !best_inter || !best_pred || !rank || !keys) {
        rc = lt_error_set(err, LT_ENOMEM, "score: out of memory");
        goto done;
    }
    int nts = 0; /* the in-order truth lines that can be covered, by top */
    for (int t = 0; t < ntruth; t++) {
        best_pred[t] = -1;
        best_inter[t] = 0;
        if (truth[t].in_order && lt_box_area(&truth[t].box) > 0)
            ts[nts++] = (sorted_ref){truth[t].box.top, t};
    }
    qsort(ts, (size_t)nts, sizeof *ts, cmp_ref);
    long pairs = 0; /* counted before any pair is examined */
    for (int p = 0; p < npred; p++) {
        if (lt_box_area(&pred[p].box) == 0) continue;
        int begin, end;
        cover_window(ts, nts, &pred[p].box, &begin, &end);
        pairs += end - begin;
        if (pairs > LT_SCORE_MAX_PAIR_TESTS) {
            rc = lt_error_set(err, LT_ELIMIT, "score: more than %ld overlapping box pairs",
                              LT_SCORE_MAX_PAIR_TESTS);
            goto done;
        }
    }
    for (int p = 0; p < npred; p++) { /* in predicted order: a tie keeps the earlier one */
        const lt_box *pb = &pred[p].box;
        if (lt_box_area(pb) == 0) continue;
        int begin, end;
        cover_window(ts, nts, pb, &begin, &end);
        for (int k = begin; k < end; k++) {
            const int t = ts[k].index;
            const int64_t inter = lt_box_intersection(pb, &truth[t].box);
            if (100 * inter >= LT_SCORE_MIN_COVER_PERCENT * lt_box_area(&truth[t].box) &&
                inter > best_inter[t]) {
                best_inter[t] = inter;
                best_pred[t] = p;
            }
        }
    }
    int n = 0;
    for (int t = 0; t < ntruth; t++) {
        if (!truth[t].in_order) continue;
        if (best_pred[t] < 0) {
            out->uncovered++;
            continue;
        }
        keys[n] = (cover_key){best_pred[t], truth[t].box.left, n};
        n++;
    }
    /* the keys replaced by their ranks: a sequence of distinct ints in truth order */
    qsort(keys, (size_t)n, sizeof *keys, cmp_cover_key);
    for (int i = 0; i < n; i++)
        rank[keys[i].pos] = i;
    int longest_forward;
    if (lt_longest_increasing(rank, n, &longest_forward)) {
        rc = lt_error_set(err, LT_ENOMEM, "score: out of memory");
        goto done;
    }
    out->covered = n;
    out->out_of_place = n - longest_forward;
    for (int i = 1; i < n; i++)
        out->backward_steps += rank[i] < rank[i - 1];
done:
    free(ts);
    free(best_inter);
    free(best_pred);
    free(rank);
    free(keys);
    return rc;
}

/* ---- splits and merges ----------------------------------------------------------------- */

/* Merge kinds of an outer box, bits of kinds[a]. */
enum { SIDE_BY_SIDE = 1, ACROSS_COLUMNS = 2 };

/* Whether inner boxes i and j lie side by side (they overlap vertically by at least half the
 * smaller height) and, when they do, whether the inner boxes between them in inner's order
 * (the truth's reading order) include one wholly above or below both: the reader leaves their
 * row between them, down a column, so they stand in different columns. Returns the bits. */
static int pair_kind(const lt_scored_line *inner, int i, int j, long *tests)
{
    const lt_box *bi = &inner[i].box, *bj = &inner[j].box;
    const long top = bi->top > bj->top ? bi->top : bj->top;
    const long bottom = bi->bottom < bj->bottom ? bi->bottom : bj->bottom;
    const long hi = (long)bi->bottom - bi->top, hj = (long)bj->bottom - bj->top;
    if (bottom <= top || 2 * (bottom - top) < (hi < hj ? hi : hj)) return 0;
    const long row_top = bi->top < bj->top ? bi->top : bj->top;
    const long row_bottom = bi->bottom > bj->bottom ? bi->bottom : bj->bottom;
    const int lo = i < j ? i : j, up = i < j ? j : i;
    for (int k = lo + 1; k < up; k++) {
        ++*tests;
        const lt_box *bk = &inner[k].box;
        if (lt_box_area(bk) > 0 && (bk->bottom <= row_top || bk->top >= row_bottom))
            return SIDE_BY_SIDE | ACROSS_COLUMNS;
    }
    return SIDE_BY_SIDE;
}

/* For every `outer` box, counts the `inner` boxes with at least half of their own area
 * inside it, sweeping the inner boxes sorted by top over the window of window_start.
 * counts[a] receives min(count, 2) for each outer a; when `kinds` is not NULL, kinds[a]
 * receives the bits of pair_kind over the pairs of its inner boxes. When `partner` is not
 * NULL, inner box b with partner[b] >= 0 (matched one-to-one to that outer box) is not counted
 * inside any other outer box. *tests accumulates the pairs examined (LT_ELIMIT past
 * LT_SCORE_MAX_PAIR_TESTS). */
static int count_inside(const lt_scored_line *outer, int nouter, const lt_scored_line *inner,
                        int ninner, const int *partner, unsigned char *counts, unsigned char *kinds,
                        long *tests, lt_error *err)
{
    memset(counts, 0, (size_t)nouter);
    if (kinds) memset(kinds, 0, (size_t)nouter);
    if (ninner == 0 || nouter == 0) return 0;
    sorted_ref *is = sort_by_top(inner, ninner);
    int *inside = kinds ? malloc((size_t)ninner * sizeof *inside) : NULL;
    int rc = 0;
    if (!is || (kinds && !inside)) {
        rc = lt_error_set(err, LT_ENOMEM, "score: out of memory");
        goto done;
    }
    for (int a = 0; a < nouter; a++) {
        const lt_box *ab = &outer[a].box;
        if (lt_box_area(ab) == 0) continue;
        int found = 0;
        for (int k = window_start(is, ninner, ab); k < ninner && is[k].top < ab->bottom; k++) {
            if (++*tests > LT_SCORE_MAX_PAIR_TESTS) goto too_many;
            int b = is[k].index;
            if (partner && partner[b] >= 0 && partner[b] != a) continue;
            const lt_box *bb = &inner[b].box;
            int64_t area_b = lt_box_area(bb);
            if (area_b == 0 || 2 * lt_box_intersection(ab, bb) < area_b) continue;
            if (inside) inside[found] = b;
            found++;
            if (!kinds && found >= 2) break;
        }
        counts[a] = (unsigned char)(found >= 2 ? 2 : found);
        if (!kinds || found < 2) continue;
        /* inside[] is in order of top; a pair overlaps vertically only while top_j < bottom_i */
        for (int i = 0; i < found && !(kinds[a] & ACROSS_COLUMNS); i++) {
            const lt_box *bi = &inner[inside[i]].box;
            for (int j = i + 1; j < found && inner[inside[j]].box.top < bi->bottom; j++) {
                kinds[a] |= (unsigned char)pair_kind(inner, inside[i], inside[j], tests);
                if (++*tests > LT_SCORE_MAX_PAIR_TESTS) goto too_many;
                if (kinds[a] & ACROSS_COLUMNS) break;
            }
        }
    }
    goto done;
too_many:
    rc = lt_error_set(err, LT_ELIMIT, "score: more than %ld overlapping box pairs",
                      LT_SCORE_MAX_PAIR_TESTS);
done:
    free(is);
    free(inside);
    return rc;
}

int lt_count_splits_merges(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                           int npred, const lt_line_match *matches, int nmatches, int *splits,
                           int *merges, int *side_merges, int *column_merges, lt_error *err)
{
    *splits = *merges = *side_merges = *column_merges = 0;
    if (ntruth < 0 || npred < 0 || (ntruth > 0 && !truth) || (npred > 0 && !pred))
        return lt_error_set(err, LT_EINVAL, "score: bad line arrays");
    if (ntruth == 0 || npred == 0) return 0;
    unsigned char *tc = malloc((size_t)ntruth), *pc = malloc((size_t)npred);
    unsigned char *kind = malloc((size_t)npred);
    int *truth_partner = NULL, *pred_partner = NULL;
    long tests = 0;
    int rc = 0;
    if (matches) {
        truth_partner = malloc((size_t)ntruth * sizeof *truth_partner);
        pred_partner = malloc((size_t)npred * sizeof *pred_partner);
    }
    if (!tc || !pc || !kind || (matches && (!truth_partner || !pred_partner))) {
        rc = lt_error_set(err, LT_ENOMEM, "score: out of memory");
        goto done;
    }
    if (matches) {
        for (int t = 0; t < ntruth; t++)
            truth_partner[t] = -1;
        for (int p = 0; p < npred; p++)
            pred_partner[p] = -1;
        for (int i = 0; i < nmatches; i++) {
            int t = matches[i].truth, p = matches[i].pred;
            if (t < 0 || t >= ntruth || p < 0 || p >= npred) {
                rc = lt_error_set(err, LT_EINVAL, "score: match %d is out of range", i);
                goto done;
            }
            truth_partner[t] = p;
            pred_partner[p] = t;
        }
    }
    rc = count_inside(truth, ntruth, pred, npred, pred_partner, tc, NULL, &tests, err);
    if (!rc) rc = count_inside(pred, npred, truth, ntruth, truth_partner, pc, kind, &tests, err);
    if (rc) goto done;
    for (int t = 0; t < ntruth; t++)
        *splits += tc[t] >= 2;
    for (int p = 0; p < npred; p++) {
        *merges += pc[p] >= 2;
        *side_merges += pc[p] >= 2 && (kind[p] & SIDE_BY_SIDE);
        *column_merges += pc[p] >= 2 && (kind[p] & ACROSS_COLUMNS);
    }
done:
    free(tc);
    free(pc);
    free(kind);
    free(truth_partner);
    free(pred_partner);
    return rc;
}

/* ---- one page --------------------------------------------------------------------------- */

/* Copies of lines with boxes in the frame of a page turned level: the quad's corners (the
 * box's when the line has no quad) rotated by skew_deg about (cx, cy), clockwise as displayed
 * for a positive skew (lines rising to the right), and boxed. NULL when out of memory. */
static lt_scored_line *level_lines(const lt_scored_line *lines, int n, double skew_deg, double cx,
                                   double cy)
{
    lt_scored_line *out = malloc((size_t)(n > 0 ? n : 1) * sizeof *out);
    if (!out) return NULL;
    const double a = skew_deg * 3.14159265358979323846 / 180.0, c = cos(a), s = sin(a);
    for (int i = 0; i < n; i++) {
        const lt_box *b = &lines[i].box;
        const lt_point corners[4] = {
            {b->left, b->top}, {b->right, b->top}, {b->right, b->bottom}, {b->left, b->bottom}};
        const lt_point *q = lines[i].has_quad ? lines[i].quad : corners;
        double x0 = INFINITY, y0 = INFINITY, x1 = -INFINITY, y1 = -INFINITY;
        for (int k = 0; k < 4; k++) {
            const double dx = q[k].x - cx, dy = q[k].y - cy;
            const double x = cx + dx * c - dy * s, y = cy + dx * s + dy * c;
            x0 = fmin(x0, x);
            y0 = fmin(y0, y);
            x1 = fmax(x1, x);
            y1 = fmax(y1, y);
        }
        out[i] = lines[i];
        out[i].box = (lt_box){(int)floor(x0), (int)floor(y0), (int)ceil(x1), (int)ceil(y1)};
    }
    return out;
}

typedef struct order_pair {
    int truth, pred;
} order_pair;

int lt_score_page(const lt_scored_page *truth, const lt_scored_page *pred, lt_page_score *out,
                  lt_error *err)
{
    return lt_score_page_ink(truth, pred, NULL, out, err);
}

int lt_score_page_ink(const lt_scored_page *truth, const lt_scored_page *pred,
                      const lt_ink_table *ink, lt_page_score *out, lt_error *err)
{
    memset(out, 0, sizeof *out);
    int nt = truth->failed ? 0 : truth->nlines;
    int np = pred->failed ? 0 : pred->nlines;
    out->truth_lines = nt;
    out->pred_lines = np;
    /* Splits, merges and the order by cover are judged on the page turned level by its true
     * skew: the boxes of the lines of a tilted page, taken as they are, overlap their
     * neighbours above and below and would pass for lines side by side. */
    const int level = truth->has_skew && fabs(truth->skew_deg) >= LEVEL_MIN_SKEW_DEG;
    if (ink && ink->skew_deg != (level ? truth->skew_deg : 0))
        return lt_error_set(err, LT_EINVAL, "score: the ink was levelled by %g deg, the truth by %g",
                            ink->skew_deg, level ? truth->skew_deg : 0);
    const lt_scored_line *tl = truth->lines, *pl = pred->lines;
    lt_scored_line *tl_level = NULL, *pl_level = NULL;
    if (level) {
        const double cx = 0.5 * truth->width, cy = 0.5 * truth->height;
        tl = tl_level = level_lines(truth->lines, nt, truth->skew_deg, cx, cy);
        pl = pl_level = level_lines(pred->lines, np, truth->skew_deg, cx, cy);
        if (!tl_level || !pl_level) {
            free(tl_level);
            free(pl_level);
            return lt_error_set(err, LT_ENOMEM, "score: out of memory");
        }
    }
    /* Matching: on the lines as they are, or, on ink, on the lines turned level like the ink. */
    lt_line_match *m = NULL;
    int nm = 0;
    int rc = ink ? match_lines(tl, nt, pl, np, ink, &m, &nm, err)
                 : match_lines(truth->lines, nt, pred->lines, np, NULL, &m, &nm, err);
    if (!rc) {
        out->matched_50 = nm;
        for (int i = 0; i < nm; i++)
            out->matched_75 += m[i].strict;
        lt_prf(out->matched_50, nt, np, &out->precision_50, &out->recall_50, &out->f1_50);
        lt_prf(out->matched_75, nt, np, &out->precision_75, &out->recall_75, &out->f1_75);
    }
    if (!rc)
        rc = lt_count_splits_merges(tl, nt, pl, np, m, nm, &out->splits, &out->merges,
                                    &out->side_merges, &out->column_merges, err);
    if (!rc) rc = lt_cover_order_count(tl, nt, pl, np, &out->cover, err);
    if (!rc && out->cover.covered > 0) {
        out->has_out_of_place = 1;
        out->out_of_place_share = (double)out->cover.out_of_place / out->cover.covered;
    }
    free(tl_level);
    free(pl_level);
    if (rc) {
        free(m);
        return rc;
    }
    /* m is sorted by truth index: the predicted indices of the in-order pairs, read in truth
     * order, are the sequence whose agreement with 0, 1, 2, ... tau measures. */
    int *seq = malloc((size_t)(nm > 0 ? nm : 1) * sizeof *seq);
    if (!seq) {
        free(m);
        return lt_error_set(err, LT_ENOMEM, "score: out of memory");
    }
    int k = 0;
    for (int i = 0; i < nm; i++)
        if (truth->lines[m[i].truth].in_order) seq[k++] = m[i].pred;
    out->order_pairs = k;
    rc = lt_kendall_tau_a(seq, k, &out->tau);
    free(seq);
    free(m);
    if (rc < 0) return lt_error_set(err, rc, "score: out of memory");
    out->has_tau = rc == 0;
    if (truth->has_skew && pred->has_skew && !truth->failed && !pred->failed) {
        out->has_skew_error = 1;
        out->skew_error_deg = fabs(pred->skew_deg - truth->skew_deg);
    }
    return 0;
}

/* test_score.c — checks of the scorer (score.c) and the page reader (jsonread.c) on inputs
 * built here: IoU of known boxes, matching, precision / recall / F1, splits and merges,
 * Kendall's tau-a (a worked example of Kendall 1938), skew error and reader errors.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "score.h"

#include <cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <errno.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

static int failures;
static char tmpdir[64];

static void fail(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fputs("FAIL: ", stderr);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    failures++;
}

#define CHECK(cond, ...)                                                                           \
    do {                                                                                           \
        if (!(cond)) fail(__VA_ARGS__);                                                            \
    } while (0)
#define CHECK_NEAR(got, want, tol, what)                                                           \
    do {                                                                                           \
        double g_ = (got), w_ = (want);                                                            \
        if (!(fabs(g_ - w_) <= (tol))) fail("%s: got %.9g, want %.9g", what, g_, w_);              \
    } while (0)
#define CHECK_INT(got, want, what)                                                                 \
    do {                                                                                           \
        long g_ = (long)(got), w_ = (long)(want);                                                  \
        if (g_ != w_) fail("%s: got %ld, want %ld", what, g_, w_);                                 \
    } while (0)

/* A fixed-seed linear congruential generator (Knuth's MMIX constants): 0 .. n-1. */
static unsigned long rng_state = 12345;
static int rnd(int n)
{
    rng_state = rng_state * 6364136223846793005UL + 1442695040888963407UL;
    return (int)((rng_state >> 33) % (unsigned long)n);
}

static lt_box B(int l, int t, int r, int b)
{
    lt_box x = {l, t, r, b};
    return x;
}

/* A page of n lines with the given boxes, all in order, with a skew. */
static lt_scored_page make_page(lt_scored_line *lines, int n, double skew_deg)
{
    lt_scored_page p;
    memset(&p, 0, sizeof p);
    p.lines = lines;
    p.nlines = n;
    p.width = 1000;
    p.height = 1000;
    p.skew_deg = skew_deg;
    p.has_skew = 1;
    return p;
}

static void set_lines(lt_scored_line *dst, const lt_box *boxes, int n)
{
    for (int i = 0; i < n; i++) {
        memset(&dst[i], 0, sizeof dst[i]); /* no quad */
        dst[i].box = boxes[i];
        dst[i].in_order = 1;
    }
}

static int score(const lt_scored_page *t, const lt_scored_page *p, lt_page_score *s,
                 const char *what)
{
    lt_error err = {0};
    int rc = lt_score_page(t, p, s, &err);
    if (rc) fail("%s: lt_score_page failed (%d): %s", what, rc, err.message);
    return rc;
}

/* ---- IoU: exact fractions worked out by hand from the definition |A n B| / |A u B| ------- */
static void test_iou(void)
{
    lt_box a = B(0, 0, 10, 10), b = B(5, 0, 15, 10);
    CHECK_NEAR(lt_box_iou(&a, &b), 50.0 / 150.0, 1e-15, "IoU half-shifted squares");
    CHECK_NEAR(lt_box_iou(&a, &a), 1.0, 0, "IoU of a box with itself");
    lt_box c = B(10, 0, 20, 10); /* touches a at x = 10: right edge exclusive */
    CHECK_NEAR(lt_box_iou(&a, &c), 0.0, 0, "IoU of boxes sharing only an edge");
    lt_box d = B(2, 3, 2, 9); /* zero width */
    CHECK_NEAR(lt_box_iou(&a, &d), 0.0, 0, "IoU with a zero-area box");
    CHECK_NEAR(lt_box_iou(&d, &d), 0.0, 0, "IoU of a zero-area box with itself");
    lt_box e = B(0, 0, 20, 10); /* a is half of e */
    CHECK_NEAR(lt_box_iou(&a, &e), 0.5, 0, "IoU of a box and its double");
    lt_box f = B(3, 4, 8, 6), g = B(5, 1, 12, 5); /* inter [5,4,8,5]: 3; union 10+28-3 */
    CHECK_NEAR(lt_box_iou(&f, &g), 3.0 / 35.0, 1e-15, "IoU of crossing boxes");
    CHECK_INT(lt_box_area(&f), 10, "area of [3,4,8,6]");
    CHECK_INT(lt_box_intersection(&f, &g), 3, "intersection of crossing boxes");
    lt_box h = B(-5, -5, 5, 5);
    CHECK_NEAR(lt_box_iou(&a, &h), 25.0 / 175.0, 1e-15, "IoU with negative coordinates");
}

/* ---- precision / recall / F1, with the 0/0 conventions -------------------------------- */
static void test_prf(void)
{
    double p, r, f;
    lt_prf(0, 0, 0, &p, &r, &f);
    CHECK(p == 1 && r == 1 && f == 1, "both empty: P R F1 = %g %g %g, want 1 1 1", p, r, f);
    lt_prf(0, 5, 0, &p, &r, &f);
    CHECK(p == 0 && r == 0 && f == 0, "no prediction: P R F1 = %g %g %g, want 0", p, r, f);
    lt_prf(0, 0, 3, &p, &r, &f);
    CHECK(p == 0 && r == 0 && f == 0, "no truth: P R F1 = %g %g %g, want 0", p, r, f);
    lt_prf(0, 4, 4, &p, &r, &f);
    CHECK(p == 0 && r == 0 && f == 0, "no match: P R F1 = %g %g %g, want 0", p, r, f);
    lt_prf(3, 4, 6, &p, &r, &f); /* P = 1/2, R = 3/4, F1 = 2PR/(P+R) = 0.6 */
    CHECK_NEAR(p, 0.5, 1e-15, "P 3/6");
    CHECK_NEAR(r, 0.75, 1e-15, "R 3/4");
    CHECK_NEAR(f, 0.6, 1e-15, "F1 of P 1/2, R 3/4");
}

/* Five text lines stacked like a paragraph. */
static const lt_box para[5] = {{100, 100, 900, 130},
                               {100, 140, 880, 170},
                               {100, 180, 900, 210},
                               {100, 220, 900, 250},
                               {100, 260, 500, 290}};

static void test_identical(void)
{
    lt_scored_line t[5], p[5];
    set_lines(t, para, 5);
    set_lines(p, para, 5);
    lt_scored_page tp = make_page(t, 5, 0.4), pp = make_page(p, 5, 0.4);
    lt_page_score s;
    if (score(&tp, &pp, &s, "identical")) return;
    CHECK_INT(s.matched_50, 5, "identical: matched@0.5");
    CHECK_INT(s.matched_75, 5, "identical: matched@0.75");
    CHECK_NEAR(s.f1_50, 1, 0, "identical: F1@0.5");
    CHECK_NEAR(s.f1_75, 1, 0, "identical: F1@0.75");
    CHECK(s.has_tau, "identical: tau undefined");
    CHECK_NEAR(s.tau, 1, 0, "identical: tau");
    CHECK_INT(s.splits + s.merges + s.side_merges + s.column_merges, 0, "identical: splits+merges");
    CHECK(s.has_skew_error, "identical: no skew error");
    CHECK_NEAR(s.skew_error_deg, 0, 0, "identical: skew error");

    /* both pages empty: everything 1, tau undefined */
    lt_scored_page e1 = make_page(NULL, 0, 0), e2 = make_page(NULL, 0, 0);
    if (score(&e1, &e2, &s, "empty")) return;
    CHECK(s.f1_50 == 1 && s.f1_75 == 1 && s.precision_50 == 1 && s.recall_50 == 1,
          "empty pages: F1 %g %g, want 1", s.f1_50, s.f1_75);
    CHECK(!s.has_tau, "empty pages: tau should be undefined");
}

static void test_missing_line(void)
{
    lt_scored_line t[5], p[4];
    set_lines(t, para, 5);
    const lt_box pb[4] = {para[0], para[1], para[3], para[4]}; /* third line not found */
    set_lines(p, pb, 4);
    lt_scored_page tp = make_page(t, 5, 0), pp = make_page(p, 4, 0);
    lt_page_score s;
    if (score(&tp, &pp, &s, "missing line")) return;
    CHECK_INT(s.matched_50, 4, "missing line: matched");
    CHECK_NEAR(s.precision_50, 1, 0, "missing line: precision");
    CHECK_NEAR(s.recall_50, 0.8, 1e-15, "missing line: recall");
    CHECK_NEAR(s.f1_50, 2 * 0.8 / 1.8, 1e-15, "missing line: F1");
    CHECK_NEAR(s.tau, 1, 0, "missing line: tau");
    CHECK_INT(s.order_pairs, 4, "missing line: order pairs");
}

static void test_split(void)
{
    /* one truth line cut at 60% of its width: IoUs 0.6 and 0.4 */
    lt_scored_line t[1], p[2];
    const lt_box tb[1] = {B(0, 0, 100, 10)};
    const lt_box pb[2] = {B(0, 0, 60, 10), B(60, 0, 100, 10)};
    set_lines(t, tb, 1);
    set_lines(p, pb, 2);
    lt_scored_page tp = make_page(t, 1, 0), pp = make_page(p, 2, 0);
    lt_page_score s;
    if (score(&tp, &pp, &s, "split")) return;
    CHECK_INT(s.matched_50, 1, "split: matched@0.5");
    CHECK_INT(s.matched_75, 0, "split: matched@0.75 (IoU 0.6)");
    CHECK_NEAR(s.f1_50, 2.0 / 3.0, 1e-15, "split: F1@0.5 (P 1/2, R 1)");
    CHECK_INT(s.splits, 1, "split: splits");
    CHECK_INT(s.merges, 0, "split: merges");
    CHECK(!s.has_tau, "split: tau needs two pairs");
}

static void test_merges(void)
{
    lt_page_score s;
    /* two stacked lines joined: each IoU 1000/2200 < 0.5, no match; a merge, not side by
     * side (no vertical overlap) */
    lt_scored_line t[2], p[1];
    const lt_box tb[2] = {B(0, 0, 100, 10), B(0, 12, 100, 22)};
    const lt_box pb[1] = {B(0, 0, 100, 22)};
    set_lines(t, tb, 2);
    set_lines(p, pb, 1);
    lt_scored_page tp = make_page(t, 2, 0), pp = make_page(p, 1, 0);
    if (score(&tp, &pp, &s, "stacked merge")) return;
    CHECK_INT(s.matched_50, 0, "stacked merge: matched");
    CHECK_INT(s.merges, 1, "stacked merge: merges");
    CHECK_INT(s.side_merges, 0, "stacked merge: side-by-side merges");
    CHECK_INT(s.column_merges, 0, "stacked merge: cross-column merges");
    CHECK_INT(s.splits, 0, "stacked merge: splits");
    CHECK_NEAR(s.f1_50, 0, 0, "stacked merge: F1");

    /* an entry and its page number (the next line in the reading order) on one row joined:
     * side by side, but along the row, not across columns */
    const lt_box cb[2] = {B(0, 0, 100, 10), B(120, 1, 220, 11)};
    const lt_box qb[1] = {B(0, 0, 220, 11)};
    set_lines(t, cb, 2);
    set_lines(p, qb, 1);
    if (score(&tp, &pp, &s, "entry and number")) return;
    CHECK_INT(s.merges, 1, "entry and number: merges");
    CHECK_INT(s.side_merges, 1, "entry and number: side by side");
    CHECK_INT(s.column_merges, 0, "entry and number: not across columns");

    /* two columns of two lines, read down the first, then the second; the top row joined
     * across the gutter: the reader goes down the first column between the two pieces */
    lt_scored_line t4[4];
    const lt_box col[4] = {B(0, 0, 100, 10), B(0, 14, 100, 24), B(120, 1, 220, 11),
                           B(120, 15, 220, 25)};
    set_lines(t4, col, 4);
    tp = make_page(t4, 4, 0);
    if (score(&tp, &pp, &s, "cross-column merge")) return;
    CHECK_INT(s.merges, 1, "cross-column merge: merges");
    CHECK_INT(s.side_merges, 1, "cross-column merge: side by side");
    CHECK_INT(s.column_merges, 1, "cross-column merge: across columns");
    /* the same boxes read row by row (a table): the pieces of a row are read one after the
     * other, so joining them is no cross-column merge */
    const lt_box rows[4] = {col[0], col[2], col[1], col[3]};
    set_lines(t4, rows, 4);
    if (score(&tp, &pp, &s, "table row merge")) return;
    CHECK_INT(s.side_merges, 1, "table row merge: side by side");
    CHECK_INT(s.column_merges, 0, "table row merge: not across columns");
    tp = make_page(t, 2, 0);

    /* a tall prediction swallowing three lines (its top far above theirs) */
    lt_scored_line t3[3], p3[1];
    const lt_box t3b[3] = {B(10, 300, 90, 310), B(10, 320, 90, 330), B(10, 340, 90, 350)};
    const lt_box p3b[1] = {B(0, 0, 100, 400)};
    set_lines(t3, t3b, 3);
    set_lines(p3, p3b, 1);
    tp = make_page(t3, 3, 0);
    pp = make_page(p3, 1, 0);
    if (score(&tp, &pp, &s, "tall merge")) return;
    CHECK_INT(s.merges, 1, "tall merge: merges");
    CHECK_INT(s.side_merges, 0, "tall merge: side-by-side merges");

    /* a line half inside: exactly 50% of its area inside counts, 40% does not */
    const lt_box hb[2] = {B(0, 0, 100, 10), B(50, 0, 150, 10)}; /* second: 50% inside */
    const lt_box hp[1] = {B(0, 0, 100, 10)};
    set_lines(t, hb, 2);
    set_lines(p, hp, 1);
    tp = make_page(t, 2, 0);
    pp = make_page(p, 1, 0);
    int sp, me, cr, cc;
    lt_error err = {0};
    lt_count_splits_merges(t, 2, p, 1, NULL, 0, &sp, &me, &cr, &cc, &err);
    CHECK_INT(me, 1, "half-inside merge (plain definition)");
    CHECK_INT(cr, 1, "half-inside merge is side by side");
    const lt_box hb2[2] = {B(0, 0, 100, 10), B(60, 0, 160, 10)}; /* 40% inside */
    set_lines(t, hb2, 2);
    lt_count_splits_merges(t, 2, p, 1, NULL, 0, &sp, &me, &cr, &cc, &err);
    CHECK_INT(me, 0, "40%-inside is no merge");
}

/* Axis-aligned hulls of neighbouring lines of a page turned by 10 degrees overlap: with the
 * plain definition a perfect prediction has splits and merges, with the match refinement it
 * has none (both checked). */
static void test_skewed_hulls(void)
{
    lt_scored_line t[3], p[3];
    /* hulls of 800 px lines 40 px apart turned by ~10 deg: about 140 px tall each */
    const lt_box hb[3] = {B(100, 100, 900, 240), B(100, 140, 900, 280), B(100, 180, 900, 320)};
    set_lines(t, hb, 3);
    set_lines(p, hb, 3);
    int sp, me, cr, cc;
    lt_error err = {0};
    lt_count_splits_merges(t, 3, p, 3, NULL, 0, &sp, &me, &cr, &cc, &err);
    CHECK(sp == 3 && me == 3, "skewed hulls, plain definition: splits %d merges %d, want 3 3", sp,
          me);
    lt_scored_page tp = make_page(t, 3, 10), pp = make_page(p, 3, 10);
    lt_page_score s;
    if (score(&tp, &pp, &s, "skewed hulls")) return;
    CHECK_INT(s.matched_50, 3, "skewed hulls: matched");
    CHECK_INT(s.splits, 0, "skewed hulls: splits with matches");
    CHECK_INT(s.merges, 0, "skewed hulls: merges with matches");
}

/* A line tilted with its page by `deg` (positive: rising to the right), from its level box:
 * the quad turned counter-clockwise as displayed about (500, 500), the box its hull. */
static lt_scored_line tilted_line(lt_box level, double deg)
{
    lt_scored_line l;
    memset(&l, 0, sizeof l);
    const double a = deg * 3.14159265358979323846 / 180.0, c = cos(a), s = sin(a);
    const double xs[4] = {level.left, level.right, level.right, level.left};
    const double ys[4] = {level.top, level.top, level.bottom, level.bottom};
    double x0 = 1e9, y0 = 1e9, x1 = -1e9, y1 = -1e9;
    for (int k = 0; k < 4; k++) {
        const double dx = xs[k] - 500, dy = ys[k] - 500;
        l.quad[k].x = 500 + dx * c + dy * s;
        l.quad[k].y = 500 - dx * s + dy * c;
        x0 = fmin(x0, l.quad[k].x);
        y0 = fmin(y0, l.quad[k].y);
        x1 = fmax(x1, l.quad[k].x);
        y1 = fmax(y1, l.quad[k].y);
    }
    l.has_quad = 1;
    l.in_order = 1;
    l.box = B((int)floor(x0), (int)floor(y0), (int)ceil(x1), (int)ceil(y1));
    return l;
}

/* Splits and merges on a tilted page are judged with the page turned level by its true skew.
 * Two 900 px lines 40 px apart on a page turned by 10 degrees, of which only the first is
 * predicted: taken as they are, the second line's hull lies mostly inside the first one's and
 * overlaps it vertically, so the prediction would count as a merge of two lines side by side;
 * on the level page it is one line and no merge. With the skew unknown (0) the hulls are used
 * as they are. */
static void test_level_frame(void)
{
    lt_scored_line t[2] = {tilted_line(B(50, 400, 950, 430), 10),
                           tilted_line(B(50, 440, 950, 470), 10)};
    lt_scored_line p[1] = {t[0]};
    lt_scored_page tp = make_page(t, 2, 10), pp = make_page(p, 1, 10);
    lt_page_score s;
    if (score(&tp, &pp, &s, "tilted page")) return;
    CHECK_INT(s.matched_50, 1, "tilted page: matched");
    CHECK_INT(s.merges, 0, "tilted page: merges on the level page");
    CHECK_INT(s.side_merges, 0, "tilted page: side-by-side merges on the level page");
    CHECK_INT(s.splits, 0, "tilted page: splits on the level page");
    tp.skew_deg = pp.skew_deg = 0;
    if (score(&tp, &pp, &s, "tilted page, skew 0")) return;
    CHECK_INT(s.merges, 1, "tilted page taken as level: the hulls make a merge");
    CHECK_INT(s.side_merges, 1, "tilted page taken as level: side by side");
    /* the order by cover too: the hull of the first line covers most of the second's */
    CHECK_INT(s.cover.covered, 2, "tilted page taken as level: covered");
    CHECK_INT(s.cover.uncovered, 0, "tilted page taken as level: uncovered");
    tp.skew_deg = pp.skew_deg = 10;
    if (score(&tp, &pp, &s, "tilted page, cover")) return;
    CHECK_INT(s.cover.covered, 1, "tilted page: covered on the level page");
    CHECK_INT(s.cover.uncovered, 1, "tilted page: uncovered on the level page");
}

static void test_order(void)
{
    lt_scored_line t[5], p[5];
    set_lines(t, para, 5);
    const lt_box rb[5] = {para[4], para[3], para[2], para[1], para[0]};
    set_lines(p, rb, 5);
    lt_scored_page tp = make_page(t, 5, 0), pp = make_page(p, 5, 0);
    lt_page_score s;
    if (score(&tp, &pp, &s, "reversed")) return;
    CHECK_INT(s.matched_50, 5, "reversed: matched");
    CHECK_NEAR(s.tau, -1, 0, "reversed: tau");

    /* truth line 1 is a margin number (in_order false): left out of tau. Pred order
     * 0 2 1 3 4 in truth terms, with truth 1 excluded the order is perfect. */
    set_lines(t, para, 5);
    t[1].in_order = 0;
    const lt_box ob[5] = {para[0], para[2], para[1], para[3], para[4]};
    set_lines(p, ob, 5);
    if (score(&tp, &pp, &s, "in_order")) return;
    CHECK_INT(s.order_pairs, 4, "in_order false: pairs");
    CHECK_NEAR(s.tau, 1, 0, "in_order false: tau");
    t[1].in_order = 1; /* now one discordant pair among 10: (9 - 1) / 10 */
    if (score(&tp, &pp, &s, "one swap")) return;
    CHECK_NEAR(s.tau, 0.8, 1e-15, "one adjacent swap in 5: tau");
}

static void test_kendall(void)
{
    double tau;
    /* Worked example, from memory: Kendall (1938), "A new measure of rank correlation",
     * Biometrika 30, 81-93 (also opening chapter of Kendall's "Rank Correlation Methods"):
     * ten objects ranked 1..10 by one observer and 4 7 2 10 3 6 8 1 5 9 by another;
     * 25 concordant and 20 discordant pairs, tau = 5/45 = 0.111. The same value is given by
     * scipy.stats.kendalltau 1.10 (Debian python3-scipy; equal to tau-a without ties):
     * 0.1111111111111111. */
    const int k1938[10] = {3, 6, 1, 9, 2, 5, 7, 0, 4, 8}; /* the ranks minus 1 */
    CHECK(lt_kendall_tau_a(k1938, 10, &tau) == 0, "Kendall 1938 example: undefined");
    CHECK_NEAR(tau, 5.0 / 45.0, 1e-15, "Kendall 1938 example tau");
    /* More values of scipy.stats.kendalltau 1.10 (Debian python3-scipy), against 1..n:
     * [3 1 4 2] -> 0.0, [2 1 4 3 6 5] -> 0.6, [1 3 2 5 4 7 6 9 8 10] -> 0.8222222222222221 */
    const int s1[4] = {2, 0, 3, 1}, s2[6] = {1, 0, 3, 2, 5, 4};
    const int s3[10] = {0, 2, 1, 4, 3, 6, 5, 8, 7, 9};
    lt_kendall_tau_a(s1, 4, &tau);
    CHECK_NEAR(tau, 0.0, 1e-15, "tau [3 1 4 2] (scipy 0.0)");
    lt_kendall_tau_a(s2, 6, &tau);
    CHECK_NEAR(tau, 0.6, 1e-15, "tau [2 1 4 3 6 5] (scipy 0.6)");
    lt_kendall_tau_a(s3, 10, &tau);
    CHECK_NEAR(tau, 0.8222222222222221, 1e-15, "tau [1 3 2 5 ...] (scipy 0.8222)");
    /* values need only be distinct, not 0..n-1: ranks of matched lines are arbitrary */
    const int gaps[4] = {10, 40, 20, 90}; /* one inversion of 6: (5 - 1) / 6 */
    lt_kendall_tau_a(gaps, 4, &tau);
    CHECK_NEAR(tau, 4.0 / 6.0, 1e-15, "tau of sparse ranks");
    CHECK(lt_kendall_tau_a(gaps, 1, &tau) == 1, "tau of one pair should be undefined");
    CHECK(lt_kendall_tau_a(gaps, 0, &tau) == 1, "tau of no pair should be undefined");
    /* a long reversed sequence: every pair discordant, tau = -1 (counts need 64 bits) */
    int n = 100000;
    int *rev = malloc((size_t)n * sizeof *rev);
    if (!rev) {
        fail("out of memory");
        return;
    }
    for (int i = 0; i < n; i++)
        rev[i] = n - i;
    lt_kendall_tau_a(rev, n, &tau);
    CHECK_NEAR(tau, -1.0, 0, "tau of 100000 reversed");
    free(rev);
}

/* ---- reading order by cover: worked examples, values derived by hand ------------------- */

static int cover(const lt_scored_line *t, int nt, const lt_scored_line *p, int np,
                 lt_cover_order *c, const char *what)
{
    lt_error err = {0};
    int rc = lt_cover_order_count(t, nt, p, np, c, &err);
    if (rc) fail("%s: lt_cover_order_count failed (%d): %s", what, rc, err.message);
    return rc;
}

static void expect_cover(const lt_cover_order *c, int covered, int uncovered, int out_of_place,
                         int backward, const char *what)
{
    CHECK(c->covered == covered && c->uncovered == uncovered && c->out_of_place == out_of_place &&
              c->backward_steps == backward,
          "%s: covered %d, uncovered %d, out of place %d, backward %d; want %d %d %d %d", what,
          c->covered, c->uncovered, c->out_of_place, c->backward_steps, covered, uncovered,
          out_of_place, backward);
}

/* A contents page of four entries whose truth lists title, page number, title, page number:
 * the prediction reads the four titles (each exactly the truth box, matched) and then the
 * four numbers (boxes 70 x 30 around the truth's 30 x 20: IoU 600 / 2100 < 0.5, unmatched,
 * but covering all of them). Tau over the matched lines, the titles alone, is 1. Keys in
 * truth order: 0 4 1 5 2 6 3 7; a longest increasing subsequence is 0 1 2 3 7 (length 5),
 * so 3 of 8 lines are out of place (share 3/8), and 4 > 1, 5 > 2, 6 > 3 are 3 backward
 * steps. */
static void test_cover_contents(void)
{
    lt_scored_line t[8], p[8];
    memset(t, 0, sizeof t);
    memset(p, 0, sizeof p);
    for (int i = 0; i < 4; i++) {
        const int y = 100 + 40 * i;
        t[2 * i].box = B(100, y, 500, y + 20);
        t[2 * i + 1].box = B(800, y, 830, y + 20);
        p[i].box = t[2 * i].box;
        p[4 + i].box = B(780, y - 5, 850, y + 25);
    }
    for (int i = 0; i < 8; i++)
        t[i].in_order = p[i].in_order = 1;
    lt_scored_page tp = make_page(t, 8, 0), pp = make_page(p, 8, 0);
    lt_page_score s;
    if (score(&tp, &pp, &s, "contents page")) return;
    CHECK_INT(s.matched_50, 4, "contents page: only the titles match");
    CHECK(s.has_tau, "contents page: tau undefined");
    CHECK_NEAR(s.tau, 1, 0, "contents page: tau over the matched titles");
    expect_cover(&s.cover, 8, 0, 3, 3, "contents page");
    CHECK(s.has_out_of_place, "contents page: share undefined");
    CHECK_NEAR(s.out_of_place_share, 3.0 / 8.0, 0, "contents page: out-of-place share");

    /* read as the truth reads it, entry by entry: nothing out of place */
    lt_scored_line q[8];
    for (int i = 0; i < 4; i++) {
        q[2 * i] = p[i];
        q[2 * i + 1] = p[4 + i];
    }
    pp.lines = q;
    if (score(&tp, &pp, &s, "contents page in order")) return;
    expect_cover(&s.cover, 8, 0, 0, 0, "contents page in order");
    CHECK_NEAR(s.out_of_place_share, 0, 0, "contents page in order: share");
}

static void test_cover_order(void)
{
    lt_cover_order c;
    lt_scored_line t[5], p[5];
    set_lines(t, para, 5);
    set_lines(p, para, 5);
    if (cover(t, 5, p, 5, &c, "perfect")) return;
    expect_cover(&c, 5, 0, 0, 0, "perfect order");

    /* the prediction reads the lines as 1 0 3 2 4 (in truth terms): the keys in truth order
     * are 1 0 3 2 4, whose longest increasing subsequences (1 3 4, 0 2 4, ...) have 3
     * elements: 2 lines out of place; 1 > 0 and 3 > 2 are 2 backward steps (tau-a for
     * comparison: 2 discordant pairs of 10, 0.6) */
    const lt_box perm[5] = {para[1], para[0], para[3], para[2], para[4]};
    set_lines(p, perm, 5);
    if (cover(t, 5, p, 5, &c, "two swaps")) return;
    expect_cover(&c, 5, 0, 2, 2, "two adjacent swaps");
    /* reversed: the longest increasing subsequence has one element */
    const lt_box rev[5] = {para[4], para[3], para[2], para[1], para[0]};
    set_lines(p, rev, 5);
    if (cover(t, 5, p, 5, &c, "reversed")) return;
    expect_cover(&c, 5, 0, 4, 4, "reversed");
    /* a truth line out of the order counts nowhere; the third line not predicted is
     * uncovered, and the walk steps over it */
    t[0].in_order = 0;
    const lt_box gap[4] = {para[0], para[1], para[3], para[4]};
    set_lines(p, gap, 4);
    if (cover(t, 5, p, 4, &c, "in_order and uncovered")) return;
    expect_cover(&c, 3, 1, 0, 0, "in_order false, one line not predicted");
    /* no prediction at all: every in-order line uncovered */
    if (cover(t, 5, NULL, 0, &c, "no prediction")) return;
    expect_cover(&c, 0, 4, 0, 0, "no prediction");
}

/* Two truth lines side by side merged into one prediction, read left to right: no line out
 * of place. If the truth reads the right one first (a right-to-left page), the merged line's
 * left-to-right reading puts them backwards: the documented limit. */
static void test_cover_merged(void)
{
    lt_cover_order c;
    lt_scored_line t[3], p[2];
    const lt_box tb[3] = {B(100, 100, 400, 120), B(500, 100, 800, 120), B(100, 200, 800, 220)};
    const lt_box pb[2] = {B(100, 100, 800, 120), B(100, 200, 800, 220)};
    set_lines(t, tb, 3);
    set_lines(p, pb, 2);
    if (cover(t, 3, p, 2, &c, "merged")) return;
    expect_cover(&c, 3, 0, 0, 0, "two lines merged, read left to right");
    const lt_box rtl[3] = {tb[1], tb[0], tb[2]};
    set_lines(t, rtl, 3);
    if (cover(t, 3, p, 2, &c, "merged, right to left")) return;
    expect_cover(&c, 3, 0, 1, 1, "two lines merged, truth right to left");
}

/* The 25 % threshold, exact in integers: a truth line 100 x 10 (area 1000) under a
 * prediction covering 240 (24 %), 250 (25 %) and 260 (26 %) of it. And ties: a truth line
 * covered half by the first prediction and half by the third is placed at the first (the
 * earlier in predicted order), so the second truth line, at the second prediction, follows
 * it; with the third covering 51 % it is placed there and reads after the second. */
static void test_cover_threshold(void)
{
    lt_cover_order c;
    lt_scored_line t[2], p[3];
    set_lines(t, (const lt_box[]){B(0, 0, 100, 10)}, 1);
    const int widths[3] = {24, 25, 26};
    const int covered[3] = {0, 1, 1};
    for (int i = 0; i < 3; i++) {
        set_lines(p, (const lt_box[]){B(0, 0, widths[i], 10)}, 1);
        if (cover(t, 1, p, 1, &c, "threshold")) return;
        CHECK(c.covered == covered[i] && c.uncovered == 1 - covered[i],
              "prediction covering %d %% of a line: covered %d, uncovered %d", widths[i],
              c.covered, c.uncovered);
    }
    lt_scored_page tp = make_page(t, 1, 0), pp = make_page(p, 1, 0);
    lt_page_score s;
    set_lines(p, (const lt_box[]){B(0, 0, 24, 10)}, 1);
    if (score(&tp, &pp, &s, "24 %")) return;
    CHECK(!s.has_out_of_place, "nothing covered: the share should be undefined");

    const lt_box tb[2] = {B(0, 0, 100, 10), B(0, 20, 100, 30)};
    const lt_box half[3] = {B(0, 0, 50, 10), B(0, 20, 100, 30), B(50, 0, 100, 10)};
    set_lines(t, tb, 2);
    set_lines(p, half, 3);
    if (cover(t, 2, p, 3, &c, "tie")) return;
    expect_cover(&c, 2, 0, 0, 0, "tie: the earlier prediction");
    p[2].box = B(49, 0, 100, 10);
    if (cover(t, 2, p, 3, &c, "no tie")) return;
    expect_cover(&c, 2, 0, 1, 1, "51 %: the later prediction");
}

/* The longest strictly increasing subsequence against the O(n^2) dynamic programme (longest
 * run ending at i = 1 + the longest ending at an earlier, smaller value), from memory, on
 * random sequences with repeated values; and a worked example: 3 1 4 1 5 9 2 6 5 3 5 has
 * 1 4 5 6 and 1 2 3 5 of length 4 and none longer. */
static void test_longest_increasing(void)
{
    int len;
    const int digits[11] = {3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5};
    CHECK(lt_longest_increasing(digits, 11, &len) == 0 && len == 4,
          "longest increasing of the digits of pi: %d, want 4", len);
    CHECK(lt_longest_increasing(digits, 0, &len) == 0 && len == 0, "empty: %d", len);
    const int flat[4] = {7, 7, 7, 7};
    CHECK(lt_longest_increasing(flat, 4, &len) == 0 && len == 1, "equal values: %d", len);
    enum { MAXN = 300 };
    int seq[MAXN], best[MAXN];
    for (int trial = 0; trial < 500; trial++) {
        const int n = rnd(MAXN) + 1, range = rnd(2) ? n : 1 + rnd(8);
        for (int i = 0; i < n; i++)
            seq[i] = rnd(range) - range / 2;
        int want = 0;
        for (int i = 0; i < n; i++) {
            best[i] = 1;
            for (int j = 0; j < i; j++)
                if (seq[j] < seq[i] && best[j] + 1 > best[i]) best[i] = best[j] + 1;
            if (best[i] > want) want = best[i];
        }
        if (lt_longest_increasing(seq, n, &len) != 0 || len != want) {
            fail("longest increasing, trial %d (n %d): got %d, dynamic programme %d", trial, n,
                 len, want);
            return;
        }
    }
}

/* lt_cover_order_count against all pairs and the O(n^2) programme on random pages with tall
 * predictions (spanning many lines), zero-area boxes, lines out of the order and ties. */
static int key_less(const int *pred, const lt_scored_line *t, int a, int b)
{
    if (pred[a] != pred[b]) return pred[a] < pred[b];
    if (t[a].box.left != t[b].box.left) return t[a].box.left < t[b].box.left;
    return a < b;
}

static void test_cover_brute_force(void)
{
    enum { MAXN = 80 };
    lt_scored_line t[MAXN], p[MAXN];
    int best[MAXN], placed[MAXN], run[MAXN];
    for (int trial = 0; trial < 300; trial++) {
        const int nt = 1 + rnd(MAXN), np = rnd(MAXN + 1);
        memset(t, 0, sizeof t);
        memset(p, 0, sizeof p);
        for (int i = 0; i < nt; i++) {
            const int l = rnd(20) * 10, top = rnd(40) * 8;
            t[i].box = B(l, top, l + rnd(12) * 10, top + rnd(4) * 8);
            t[i].in_order = rnd(8) != 0;
        }
        for (int i = 0; i < np; i++) {
            const int l = rnd(20) * 10, top = rnd(40) * 8;
            p[i].box = B(l, top, l + rnd(15) * 10, top + (rnd(4) ? rnd(5) * 8 : rnd(200)));
        }
        int want_uncovered = 0, n = 0;
        for (int i = 0; i < nt; i++) {
            if (!t[i].in_order) continue;
            const int64_t area = lt_box_area(&t[i].box);
            int64_t top_inter = 0;
            best[i] = -1;
            for (int j = 0; j < np; j++) {
                const int64_t in = lt_box_intersection(&t[i].box, &p[j].box);
                if (area > 0 && 4 * in >= area && in > top_inter) {
                    top_inter = in;
                    best[i] = j;
                }
            }
            if (best[i] < 0)
                want_uncovered++;
            else
                placed[n++] = i;
        }
        int want_run = 0, want_back = 0;
        for (int a = 0; a < n; a++) {
            run[a] = 1;
            for (int b = 0; b < a; b++)
                if (key_less(best, t, placed[b], placed[a]) && run[b] + 1 > run[a])
                    run[a] = run[b] + 1;
            if (run[a] > want_run) want_run = run[a];
            if (a > 0) want_back += key_less(best, t, placed[a], placed[a - 1]);
        }
        lt_cover_order c;
        if (cover(t, nt, p, np, &c, "random page")) return;
        if (c.covered != n || c.uncovered != want_uncovered || c.out_of_place != n - want_run ||
            c.backward_steps != want_back) {
            fail("cover order, trial %d: got %d %d %d %d, all pairs give %d %d %d %d", trial,
                 c.covered, c.uncovered, c.out_of_place, c.backward_steps, n, want_uncovered,
                 n - want_run, want_back);
            return;
        }
    }
}

/* The bound is checked before any pair is examined: 15000 truth lines piled on one box under
 * 15000 predictions of the same box are 225 million candidate pairs. */
static void test_cover_limit(void)
{
    const int n = 15000;
    lt_scored_line *lines = calloc((size_t)n, sizeof *lines);
    if (!lines) {
        fail("out of memory");
        return;
    }
    for (int i = 0; i < n; i++) {
        lines[i].box = B(0, 0, 100, 10);
        lines[i].in_order = 1;
    }
    lt_cover_order c;
    lt_error err = {0};
    CHECK_INT(lt_cover_order_count(lines, n, lines, n, &c, &err), LT_ELIMIT,
              "225 million pairs: LT_ELIMIT");
    free(lines);
}

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec + ts.tv_nsec * 1e-9;
}

/* The candidate bound is checked before the candidates are stored: 1,000,000 truth lines on
 * one box under as many predictions of the same box (10^12 candidate pairs) are refused with
 * LT_ELIMIT, quickly, within 64 MB more than the inputs take (the 4 million candidates that
 * the limit allows would take 96 MB). The memory bound is checked in a child process under
 * RLIMIT_AS, which the sanitizers' shadow memory rules out. */
static void test_match_limit(void)
{
    const int n = 1000000;
    lt_scored_line *lines = calloc((size_t)n, sizeof *lines);
    if (!lines) {
        fail("out of memory");
        return;
    }
    for (int i = 0; i < n; i++)
        lines[i].box = B(0, 0, 100, 10);
    const int sanitized = getenv("LT_SANITIZED") != NULL;
    const double t0 = now_s();
    pid_t child = sanitized ? 0 : fork();
    if (child == 0) {
        long pages = 0;
        FILE *statm = fopen("/proc/self/statm", "r");
        if (!sanitized && statm && fscanf(statm, "%ld", &pages) == 1) {
            const rlim_t bytes = (rlim_t)pages * (rlim_t)sysconf(_SC_PAGESIZE) + (64u << 20);
            setrlimit(RLIMIT_AS, &(struct rlimit){bytes, bytes});
        }
        if (statm) fclose(statm);
        lt_line_match *m = NULL;
        int nm = 0;
        lt_error err = {0};
        int rc = lt_match_lines(lines, n, lines, n, &m, &nm, &err);
        int ok = rc == LT_ELIMIT && strstr(err.message, "IoU >= 0.5") && !m && nm == 0;
        if (!ok) fprintf(stderr, "FAIL: 10^12 candidates: rc %d, '%s'\n", rc, err.message);
        free(m);
        if (!sanitized) _exit(ok ? 0 : 1);
        if (!ok) failures++;
    } else if (child > 0) {
        int status = 0;
        waitpid(child, &status, 0);
        CHECK(WIFEXITED(status) && WEXITSTATUS(status) == 0,
              "10^12 candidates: refused with LT_ELIMIT within 64 MB (status %d)", status);
    } else {
        fail("fork: %s", strerror(errno));
    }
    CHECK(now_s() - t0 < 5, "10^12 candidates: refused in %.1f s", now_s() - t0);
    free(lines);
}

static void test_skew(void)
{
    lt_scored_line t[1], p[1];
    set_lines(t, para, 1);
    set_lines(p, para, 1);
    lt_scored_page tp = make_page(t, 1, 1.5), pp = make_page(p, 1, -0.5);
    lt_page_score s;
    if (score(&tp, &pp, &s, "skew")) return;
    CHECK(s.has_skew_error, "skew error undefined");
    CHECK_NEAR(s.skew_error_deg, 2.0, 1e-12, "skew error |-0.5 - 1.5|");
    pp.has_skew = 0;
    if (score(&tp, &pp, &s, "no skew")) return;
    CHECK(!s.has_skew_error, "skew error defined though the prediction has no skew");
}

/* Greedy by decreasing IoU: t0 and t1 tie for p0 (equal IoU: the lower truth index wins), so
 * t0 takes p0, t0's other candidate p1 is then left over, and t1 stays unmatched although a
 * matching of size 2 (t0-p1, t1-p0) exists: the specified, deterministic behaviour. */
static void test_greedy(void)
{
    lt_scored_line t[2], p[2];
    const lt_box tb[2] = {B(0, 0, 100, 10), B(10, 0, 110, 10)};
    const lt_box pb[2] = {B(5, 0, 105, 10), B(0, 0, 60, 10)};
    /* IoU(t0,p0) = 95/105, IoU(t1,p0) = 95/105 (tie), IoU(t0,p1) = 0.6, IoU(t1,p1) = 50/110 */
    set_lines(t, tb, 2);
    set_lines(p, pb, 2);
    lt_line_match *m;
    int nm;
    lt_error err = {0};
    if (lt_match_lines(t, 2, p, 2, &m, &nm, &err)) {
        fail("greedy: %s", err.message);
        return;
    }
    CHECK_INT(nm, 1, "greedy: matches");
    if (nm == 1) CHECK(m[0].truth == 0 && m[0].pred == 0, "greedy: tie should give t0-p0");
    free(m);
    /* the same with the truth lines listed the other way round: now t0 is the old t1 */
    lt_scored_line t2[2] = {t[1], t[0]};
    if (lt_match_lines(t2, 2, p, 2, &m, &nm, &err)) {
        fail("greedy: %s", err.message);
        return;
    }
    CHECK_INT(nm, 2, "greedy, swapped: matches");
    if (nm == 2) CHECK(m[0].pred == 0 && m[1].pred == 1, "greedy, swapped: t0-p0 then t1-p1");
    free(m);
}

/* ---- the sweep against a brute-force all-pairs version on random pages ------------------ */
typedef struct bf_pair {
    int t, p;
    int64_t inter, uni;
} bf_pair;

static int cmp_bf(const void *a, const void *b)
{
    const bf_pair *x = a, *y = b;
    /* decreasing IoU, exact in long double (products below 2^64 for these small boxes) */
    long double l = (long double)x->inter * y->uni, r = (long double)y->inter * x->uni;
    if (l != r) return l > r ? -1 : 1;
    if (x->t != y->t) return x->t < y->t ? -1 : 1;
    return (x->p > y->p) - (x->p < y->p);
}

static void test_against_brute_force(void)
{
    for (int trial = 0; trial < 200; trial++) {
        int nt = 1 + rnd(60), np = 1 + rnd(60);
        lt_scored_line *t = calloc((size_t)nt, sizeof *t), *p = calloc((size_t)np, sizeof *p);
        bf_pair *pairs = malloc((size_t)nt * (size_t)np * sizeof *pairs);
        int *used_t = calloc((size_t)nt, sizeof *used_t), *used_p = calloc((size_t)np, 4);
        if (!t || !p || !pairs || !used_t || !used_p) {
            fail("out of memory");
            return;
        }
        /* lines on a coarse grid so that overlaps, ties and containment are common */
        for (int i = 0; i < nt; i++) {
            int l = rnd(20) * 10, tp = rnd(30) * 8;
            t[i].box = B(l, tp, l + 5 + rnd(12) * 10, tp + rnd(4) * 8 + rnd(3));
            t[i].in_order = 1;
        }
        for (int i = 0; i < np; i++) {
            if (rnd(2)) { /* a perturbed truth line */
                lt_box b = t[rnd(nt)].box;
                p[i].box = B(b.left + rnd(7) - 3, b.top + rnd(5) - 2, b.right + rnd(7) - 3,
                             b.bottom + rnd(5));
            } else {
                int l = rnd(20) * 10, tp = rnd(30) * 8;
                p[i].box = B(l, tp, l + 5 + rnd(12) * 10, tp + 1 + rnd(40));
            }
            if (p[i].box.right < p[i].box.left) p[i].box.right = p[i].box.left;
            if (p[i].box.bottom < p[i].box.top) p[i].box.bottom = p[i].box.top;
            p[i].in_order = 1;
        }
        int n = 0;
        for (int i = 0; i < nt; i++)
            for (int j = 0; j < np; j++) {
                int64_t at = lt_box_area(&t[i].box), ap = lt_box_area(&p[j].box);
                int64_t in = lt_box_intersection(&t[i].box, &p[j].box);
                if (at && ap && in && 2 * in >= at + ap - in)
                    pairs[n++] = (bf_pair){i, j, in, at + ap - in};
            }
        qsort(pairs, (size_t)n, sizeof *pairs, cmp_bf);
        int want = 0, want75 = 0;
        int *want_pred = malloc((size_t)nt * sizeof *want_pred);
        for (int i = 0; i < nt; i++)
            want_pred[i] = -1;
        for (int k = 0; k < n; k++) {
            if (used_t[pairs[k].t] || used_p[pairs[k].p]) continue;
            used_t[pairs[k].t] = used_p[pairs[k].p] = 1;
            want_pred[pairs[k].t] = pairs[k].p;
            want++;
            want75 += 4 * pairs[k].inter >= 3 * pairs[k].uni;
        }
        /* splits and merges by all pairs, plain definition */
        int want_splits = 0, want_merges = 0, want_side = 0, want_column = 0;
        for (int i = 0; i < nt; i++) {
            int c = 0;
            for (int j = 0; j < np; j++) {
                int64_t ap = lt_box_area(&p[j].box);
                c += ap > 0 && 2 * lt_box_intersection(&t[i].box, &p[j].box) >= ap &&
                     lt_box_area(&t[i].box) > 0;
            }
            want_splits += c >= 2;
        }
        for (int j = 0; j < np; j++) {
            int c = 0, side = 0, column = 0;
            for (int i = 0; i < nt; i++) {
                int64_t at = lt_box_area(&t[i].box);
                if (!(at > 0 && lt_box_area(&p[j].box) > 0 &&
                      2 * lt_box_intersection(&t[i].box, &p[j].box) >= at))
                    continue;
                c++;
                for (int k = 0; k < i; k++) {
                    int64_t ak = lt_box_area(&t[k].box);
                    if (!(ak > 0 && 2 * lt_box_intersection(&t[k].box, &p[j].box) >= ak)) continue;
                    const lt_box *a = &t[i].box, *b = &t[k].box;
                    int ov = (a->bottom < b->bottom ? a->bottom : b->bottom) -
                             (a->top > b->top ? a->top : b->top);
                    int ha = a->bottom - a->top, hb = b->bottom - b->top;
                    if (!(ov > 0 && 2 * ov >= (ha < hb ? ha : hb))) continue;
                    side = 1;
                    /* across columns: a truth line between k and i wholly above or below */
                    int top = a->top < b->top ? a->top : b->top;
                    int bottom = a->bottom > b->bottom ? a->bottom : b->bottom;
                    for (int q = k + 1; q < i; q++)
                        if (lt_box_area(&t[q].box) > 0 &&
                            (t[q].box.bottom <= top || t[q].box.top >= bottom))
                            column = 1;
                }
            }
            want_merges += c >= 2;
            want_side += c >= 2 && side;
            want_column += c >= 2 && column;
        }
        lt_line_match *m;
        int nm, sp, me, cr, cc;
        lt_error err = {0};
        if (lt_match_lines(t, nt, p, np, &m, &nm, &err) ||
            lt_count_splits_merges(t, nt, p, np, NULL, 0, &sp, &me, &cr, &cc, &err)) {
            fail("brute force trial %d: %s", trial, err.message);
            return;
        }
        int got75 = 0, same = nm == want;
        for (int k = 0; k < nm; k++) {
            got75 += m[k].strict;
            if (want_pred[m[k].truth] != m[k].pred) same = 0;
        }
        CHECK(same, "trial %d: sweep matching differs from brute force (%d vs %d)", trial, nm,
              want);
        CHECK_INT(got75, want75, "brute force: matches at 0.75");
        CHECK(sp == want_splits && me == want_merges && cr == want_side && cc == want_column,
              "trial %d: splits/merges/side/column %d %d %d %d, brute force %d %d %d %d", trial, sp,
              me, cr, cc, want_splits, want_merges, want_side, want_column);
        free(m);
        free(want_pred);
        free(t);
        free(p);
        free(pairs);
        free(used_t);
        free(used_p);
    }
}

/* ---- reader ------------------------------------------------------------------------------ */
static char *write_tmp(const char *name, const char *text)
{
    static char path[128];
    snprintf(path, sizeof path, "%s/%s", tmpdir, name);
    FILE *f = fopen(path, "wb");
    if (!f) {
        fail("cannot write %s", path);
        return path;
    }
    fputs(text, f);
    fclose(f);
    return path;
}

#define LAYOUT_HEAD "{\"format\":\"lineate-layout-1\",\"source\":\"scan.tif\","
#define GT_HEAD "{\"format\":\"lineseg-gt-1\",\"image\":\"leaf.png\",\"variant\":\"clean\","

/* Expects `text` to be rejected with `code`, the file name and `why` in the message. */
static void expect_reject(const char *name, const char *text, int code, const char *why)
{
    char *path = write_tmp(name, text);
    lt_scored_page *pages = (lt_scored_page *)1;
    int n = -1;
    lt_error err = {0};
    int rc = lt_scored_pages_read(path, &pages, &n, &err);
    CHECK(rc == code, "%s: rc %d, want %d (%s)", name, rc, code, err.message);
    CHECK(pages == NULL && n == 0, "%s: output not cleared on failure", name);
    CHECK(strstr(err.message, path) != NULL, "%s: message lacks the file name: %s", name,
          err.message);
    CHECK(strstr(err.message, why) != NULL, "%s: message '%s' lacks '%s'", name, err.message, why);
    CHECK(strchr(err.message, '\n') == NULL, "%s: message has a newline", name);
    lt_scored_pages_free(pages, n);
}

static void test_reader(void)
{
    const char *page1 = LAYOUT_HEAD "\"page\":1,\"width\":2000,\"height\":3000,"
                                    "\"skew_deg\":-1.25,\"lines\":[{\"box\":[1,2,30,40]},"
                                    "{\"box\":[5,50,60,70],\"block\":0}],\"blocks\":[]}";
    const char *page2 = LAYOUT_HEAD "\"page\":2,\"width\":2000,\"height\":3000,"
                                    "\"skew_deg\":0.5,\"lines\":[]}";
    char text[2048];
    snprintf(text, sizeof text, "%s\n%s\n", page1, page2); /* JSON Lines */
    char *path = write_tmp("two.jsonl", text);
    lt_scored_page *pg;
    int n;
    lt_error err = {0};
    if (lt_scored_pages_read(path, &pg, &n, &err)) {
        fail("JSON Lines: %s", err.message);
    } else {
        CHECK_INT(n, 2, "JSON Lines: pages");
        if (n == 2) {
            CHECK(pg[0].source && strcmp(pg[0].source, "scan.tif") == 0, "JSON Lines: source");
            CHECK(pg[0].page == 1 && pg[1].page == 2, "JSON Lines: page numbers");
            CHECK(pg[0].width == 2000 && pg[0].height == 3000, "JSON Lines: size");
            CHECK(pg[0].has_skew && pg[0].skew_deg == -1.25, "JSON Lines: skew");
            CHECK_INT(pg[0].nlines, 2, "JSON Lines: lines of page 1");
            CHECK_INT(pg[1].nlines, 0, "JSON Lines: lines of page 2");
            CHECK(pg[0].lines[1].box.left == 5 && pg[0].lines[1].box.top == 50 &&
                      pg[0].lines[1].box.right == 60 && pg[0].lines[1].box.bottom == 70,
                  "JSON Lines: second box");
            CHECK(pg[0].lines[0].in_order == 1, "layout lines are in order by default");
            CHECK(pg[0].variant == NULL && pg[0].format == LT_SCORED_LAYOUT, "layout: no variant");
        }
        lt_scored_pages_free(pg, n);
    }

    /* concatenated without a newline, pretty-printed ground truth, and an error record */
    snprintf(text, sizeof text,
             "%s%s\n{\n  \"format\": \"lineate-layout-1\", \"source\": \"scan.tif\",\n"
             "  \"page\": 3, \"error\": \"cannot decode page 3\"\n}\n",
             page1, page2);
    path = write_tmp("three.json", text);
    if (lt_scored_pages_read(path, &pg, &n, &err)) {
        fail("concatenated: %s", err.message);
    } else {
        CHECK_INT(n, 3, "concatenated: pages");
        if (n == 3) {
            CHECK(pg[2].failed && pg[2].nlines == 0 && pg[2].page == 3,
                  "error record: failed page 3 with no lines");
            CHECK(pg[2].error && strstr(pg[2].error, "cannot decode"), "error record: text");
            CHECK(!pg[0].failed && !pg[1].failed, "ordinary pages marked failed");
        }
        lt_scored_pages_free(pg, n);
    }

    path = write_tmp("leaf.gt.json",
                     "\xEF\xBB\xBF{\n  \"format\": \"lineseg-gt-1\",\n  \"image\": \"leaf.png\",\n"
                     "  \"variant\": \"degraded\", \"width\": 800, \"height\": 600,\n"
                     "  \"skew_deg\": 2.5,\n  \"lines\": [\n"
                     "    {\"id\": 0, \"box\": [10, 20, 300, 45], \"in_order\": true},\n"
                     "    {\"id\": 1, \"box\": [760, 20, 780, 45], \"in_order\": false}\n"
                     "  ],\n  \"blocks\": []\n}\n");
    if (lt_scored_pages_read(path, &pg, &n, &err)) {
        fail("ground truth: %s", err.message);
    } else {
        CHECK(n == 1 && pg[0].format == LT_SCORED_TRUTH, "ground truth: one truth page");
        CHECK(pg[0].variant && strcmp(pg[0].variant, "degraded") == 0, "ground truth: variant");
        CHECK(pg[0].source && strcmp(pg[0].source, "leaf.png") == 0, "ground truth: image");
        CHECK(pg[0].nlines == 2 && pg[0].lines[0].in_order == 1 && pg[0].lines[1].in_order == 0,
              "ground truth: in_order flags");
        CHECK(pg[0].has_skew && pg[0].skew_deg == 2.5, "ground truth: skew");
        lt_scored_pages_free(pg, n);
    }
    lt_scored_pages_free(NULL, 0); /* NULL-safe */

    const char *size = "\"width\":100,\"height\":100,";
    char bad[512];
    expect_reject("empty.json", "", LT_EPARSE, "no JSON object");
    expect_reject("blank.json", " \n\t\n", LT_EPARSE, "no JSON object");
    expect_reject("text.json", "lines of text\n", LT_EPARSE, "not valid JSON");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,3", GT_HEAD, size);
    expect_reject("truncated.json", bad, LT_EPARSE, "truncated");
    snprintf(bad, sizeof bad, "%s\n%s%s\"lines\":[{\"box\":[1,2,3,4]}]} x", page1, GT_HEAD, size);
    expect_reject("trailing.json", bad, LT_EPARSE, "line 2");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[9,2,3,4]}]}", GT_HEAD, size);
    expect_reject("leftright.json", bad, LT_EPARSE, "right < left");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,9,3,4]}]}", GT_HEAD, size);
    expect_reject("topbottom.json", bad, LT_EPARSE, "bottom < top");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,3]}]}", GT_HEAD, size);
    expect_reject("three.gt.json", bad, LT_EPARSE, "4 numbers");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2.5,3,4]}]}", GT_HEAD, size);
    expect_reject("float.gt.json", bad, LT_EPARSE, "not whole");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,\"3\",4]}]}", GT_HEAD, size);
    expect_reject("string.gt.json", bad, LT_EPARSE, "not a number");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,1e30,4]}]}", GT_HEAD, size);
    expect_reject("huge.gt.json", bad, LT_EPARSE, "out of range");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"quad\":[]}]}", GT_HEAD, size);
    expect_reject("nobox.gt.json", bad, LT_EPARSE, "missing \"box\"");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,3,4],\"quad\":[[1,2],[3,2],[3,4]]}]}",
             GT_HEAD, size);
    expect_reject("quad3.gt.json", bad, LT_EPARSE, "array of 4 points");
    snprintf(bad, sizeof bad,
             "%s%s\"lines\":[{\"box\":[1,2,3,4],\"quad\":[[1,2],[3,2],[3,\"4\"],[1,4]]}]}", GT_HEAD,
             size);
    expect_reject("quadstr.gt.json", bad, LT_EPARSE, "not 2 numbers");
    snprintf(bad, sizeof bad, "%s%s\"blocks\":[]}", GT_HEAD, size);
    expect_reject("nolines.gt.json", bad, LT_EPARSE, "missing \"lines\"");
    snprintf(bad, sizeof bad, "%s\"width\":100,\"lines\":[]}", GT_HEAD);
    expect_reject("noheight.gt.json", bad, LT_EPARSE, "missing \"height\"");
    snprintf(bad, sizeof bad, "%s\"width\":100,\"height\":0,\"lines\":[]}", GT_HEAD);
    expect_reject("zeroheight.gt.json", bad, LT_EPARSE, "\"height\"");
    snprintf(bad, sizeof bad, "%s\"width\":100,\"height\":99999999999,\"lines\":[]}", GT_HEAD);
    expect_reject("absurd.gt.json", bad, LT_EPARSE, "\"height\"");
    expect_reject("noformat.json", "{\"width\":10,\"height\":10,\"lines\":[]}", LT_EPARSE,
                  "missing \"format\"");
    expect_reject("otherformat.json", "{\"format\":\"other-9\",\"lines\":[]}", LT_EPARSE,
                  "unknown format");
    expect_reject("array.json", "[1,2,3]", LT_EPARSE, "not a JSON object");
    snprintf(bad, sizeof bad, "%s%s\"lines\":{}}", GT_HEAD, size);
    expect_reject("linesobj.gt.json", bad, LT_EPARSE, "not an array");
    snprintf(bad, sizeof bad, "%s%s\"lines\":[{\"box\":[1,2,3,4],\"in_order\":1}]}", GT_HEAD, size);
    expect_reject("inorder.gt.json", bad, LT_EPARSE, "in_order");
    snprintf(bad, sizeof bad, "%s%s\"skew_deg\":\"x\",\"lines\":[]}", GT_HEAD, size);
    expect_reject("skew.gt.json", bad, LT_EPARSE, "skew_deg");
    snprintf(bad, sizeof bad, "%s\"page\":0,%s\"lines\":[]}", LAYOUT_HEAD, size);
    expect_reject("page0.json", bad, LT_EPARSE, "\"page\"");
    /* the second page is broken: the message says which */
    snprintf(bad, sizeof bad, "%s\n%s%s\"lines\":[{\"box\":[1,2,3,-4]}]}\n", page1, GT_HEAD, size);
    expect_reject("second.jsonl", bad, LT_EPARSE, "page 2: lines[0]");

    /* files that cannot be read */
    err = (lt_error){0};
    char missing[128];
    snprintf(missing, sizeof missing, "%s/none.json", tmpdir);
    CHECK(lt_scored_pages_read(missing, &pg, &n, &err) == LT_EIO, "absent file: not LT_EIO");
    CHECK(strstr(err.message, missing) != NULL, "absent file: message %s", err.message);
    err = (lt_error){0};
    CHECK(lt_scored_pages_read(tmpdir, &pg, &n, &err) == LT_EIO, "folder read as a file");
    char *data;
    size_t sz;
    err = (lt_error){0};
    path = write_tmp("big.json", "0123456789");
    CHECK(lt_read_whole_file(path, 9, &data, &sz, &err) == LT_ELIMIT, "size cap: not LT_ELIMIT");
    err = (lt_error){0};
    if (lt_read_whole_file(path, 10, &data, &sz, &err) == 0) {
        CHECK(sz == 10 && data[10] == '\0' && memcmp(data, "0123456789", 10) == 0,
              "whole file: content");
        free(data);
    } else {
        fail("whole file at the cap: %s", err.message);
    }
}

/* lt_scored_pages_parse on `text`: its return code, with *pg / *n set (the caller frees). */
static int parse_text(const char *text, lt_scored_page **pg, int *n, lt_error *err)
{
    *err = (lt_error){0};
    return lt_scored_pages_parse(text, strlen(text), "mem.json", pg, n, err);
}

/* `depth` arrays one inside another, as a member "deep" of a layout page. */
static char *nested_page(int depth)
{
    const char *head = LAYOUT_HEAD "\"page\":1,\"width\":9,\"height\":9,\"lines\":[],\"deep\":";
    char *text = malloc(strlen(head) + 2 * (size_t)depth + 2);
    if (!text) return NULL;
    char *p = stpcpy(text, head);
    memset(p, '[', (size_t)depth);
    memset(p + depth, ']', (size_t)depth);
    strcpy(p + 2 * depth, "}");
    return text;
}

/* The reader walks the text without a tree: the line limit is counted before a line is read,
 * the members it reads are the first of their name, those it does not read may hold anything
 * well-formed, and what is well-formed is what cJSON itself parses (nesting, surrogates). */
static void test_reader_walk(void)
{
    lt_scored_page *pg;
    int n;
    lt_error err;
    /* the limit: 1,000,000 lines are read; one more is refused before it is looked at (the
     * lines are empty objects, which reading would refuse for want of a box) */
    const char *head = LAYOUT_HEAD "\"page\":1,\"width\":9,\"height\":9,\"lines\":[";
    const char *good = "{\"box\":[0,0,1,1]},", *empty = "{},";
    const size_t lines = LT_SCORE_MAX_LINES;
    char *text = malloc(strlen(head) + (lines + 1) * strlen(good) + 4);
    if (!text) {
        fail("out of memory");
        return;
    }
    char *p = stpcpy(text, head);
    for (size_t i = 0; i < lines; i++)
        p = stpcpy(p, good);
    strcpy(p - 1, "]}");
    if (parse_text(text, &pg, &n, &err) == 0) {
        CHECK(n == 1 && pg[0].nlines == LT_SCORE_MAX_LINES, "a page at the line limit: %d lines",
              n == 1 ? pg[0].nlines : -1);
        lt_scored_pages_free(pg, n);
    } else {
        fail("a page at the line limit: %s", err.message);
    }
    p = stpcpy(text, head);
    for (size_t i = 0; i <= lines; i++)
        p = stpcpy(p, empty);
    strcpy(p - 1, "]}");
    CHECK(parse_text(text, &pg, &n, &err) == LT_ELIMIT && strstr(err.message, "mem.json: page 1") &&
              strstr(err.message, "more than 1000000 lines"),
          "a line over the limit: %s", err.message);
    free(text);

    /* pages of one file: 100,000 error records are read, one more is refused; so is an ALTO
     * document of one page more */
    const char *record = "{\"error\":\"x\"}\n";
    const char *alto_head = "<?xml version=\"1.0\"?>\n<alto><Description><MeasurementUnit>pixel"
                            "</MeasurementUnit></Description><Layout>";
    const char *alto_page = "<Page WIDTH=\"9\" HEIGHT=\"9\"/>";
    text = malloc(strlen(alto_head) + (LT_SCORE_MAX_PAGES + 1) * strlen(alto_page) + 32);
    if (!text) {
        fail("out of memory");
        return;
    }
    for (int extra = 0; extra <= 1; extra++) {
        p = text;
        for (int i = 0; i < LT_SCORE_MAX_PAGES + extra; i++)
            p = stpcpy(p, record);
        int rc = parse_text(text, &pg, &n, &err);
        CHECK(extra ? rc == LT_ELIMIT && strstr(err.message, "more than 100000 pages")
                    : rc == 0 && n == LT_SCORE_MAX_PAGES,
              "%d error records: %d pages (%s)", LT_SCORE_MAX_PAGES + extra, n, err.message);
        lt_scored_pages_free(pg, n);
        p = stpcpy(text, alto_head);
        for (int i = 0; i < LT_SCORE_MAX_PAGES + extra; i++)
            p = stpcpy(p, alto_page);
        strcpy(p, "</Layout></alto>\n");
        err = (lt_error){0};
        rc = lt_scored_pages_parse_xml(text, strlen(text), "mem.xml", &pg, &n, &err);
        CHECK(extra ? rc == LT_ELIMIT && strstr(err.message, "more than 100000 pages")
                    : rc == 0 && n == LT_SCORE_MAX_PAGES,
              "ALTO of %d pages: %d pages (%s)", LT_SCORE_MAX_PAGES + extra, n, err.message);
        lt_scored_pages_free(pg, n);
    }
    free(text);

    /* the first member of a name counts, as cJSON_GetObjectItem finds it */
    if (parse_text(LAYOUT_HEAD "\"page\":1,\"width\":9,\"height\":7,\"width\":\"x\",\"lines\":["
                   "{\"box\":[1,2,3,4],\"in_order\":false,\"box\":\"x\",\"in_order\":1}],"
                   "\"lines\":7}",
                   &pg, &n, &err) == 0) {
        CHECK(pg[0].width == 9 && pg[0].nlines == 1 && pg[0].lines[0].box.right == 3 &&
                  pg[0].lines[0].in_order == 0,
              "repeated members: the first counts");
        lt_scored_pages_free(pg, n);
    } else {
        fail("repeated members: %s", err.message);
    }

    /* members not read hold anything well-formed, at any size */
    const size_t big = 1 << 20;
    text = malloc(big + 256);
    if (text) {
        p = stpcpy(text, LAYOUT_HEAD "\"page\":1,\"width\":9,\"height\":9,\"lines\":[{\"box\":"
                                     "[1,2,3,4],\"text\":\"");
        memset(p, 'x', big);
        strcpy(p + big, "\",\"polygon\":[[1e400,-0.5E-3],{\"a\":[true,null]}]}]}");
        CHECK(parse_text(text, &pg, &n, &err) == 0, "a line with a 1 MB text: %s", err.message);
        lt_scored_pages_free(pg, n);
        /* a member the reader parses is refused past 64 KiB */
        p = stpcpy(text, "{\"format\":\"lineate-layout-1\",\"page\":1,\"width\":9,\"height\":9,"
                         "\"lines\":[],\"source\":\"");
        memset(p, 'x', big);
        strcpy(p + big, "\"}");
        CHECK(parse_text(text, &pg, &n, &err) == LT_EPARSE &&
                  strstr(err.message, "\"source\" is longer than 65536 bytes"),
              "a 1 MB source: %s", err.message);
        free(text);
    }

    /* nesting and surrogates: refused exactly when cJSON_Parse (cJSON 1.7) refuses them */
    for (int depth = 998; depth <= 1000; depth++) {
        text = nested_page(depth);
        if (!text) continue;
        cJSON *tree = cJSON_Parse(text);
        const int rc = parse_text(text, &pg, &n, &err);
        CHECK((rc == 0) == (tree != NULL), "%d arrays deep: cJSON %s, the reader %d (%s)", depth,
              tree ? "parses it" : "refuses it", rc, err.message);
        CHECK(rc == 0 || strstr(err.message, "not valid JSON"), "%d deep: %s", depth, err.message);
        cJSON_Delete(tree);
        lt_scored_pages_free(pg, n);
        free(text);
    }
    static const char *const strings[] = {"\\ud83d\\ude00", "\\ud800", "\\udc00x",
                                          "\\ud800\\u0041", "\\u00e9\\n\\/"};
    for (size_t i = 0; i < sizeof strings / sizeof *strings; i++) {
        char page[256];
        snprintf(page, sizeof page,
                 LAYOUT_HEAD "\"page\":1,\"width\":9,\"height\":9,\"lines\":[],\"note\":\"%s\"}",
                 strings[i]);
        cJSON *tree = cJSON_Parse(page);
        const int rc = parse_text(page, &pg, &n, &err);
        CHECK((rc == 0) == (tree != NULL), "the string \"%s\": cJSON %s, the reader %d (%s)",
              strings[i], tree ? "parses it" : "refuses it", rc, err.message);
        cJSON_Delete(tree);
        lt_scored_pages_free(pg, n);
    }

    /* a syntax error is placed at the first byte that no JSON text can continue with */
    CHECK(parse_text(LAYOUT_HEAD "\"page\":1 x}", &pg, &n, &err) == LT_EPARSE &&
              strstr(err.message, "line 1, column 59: not valid JSON"),
          "syntax error: %s", err.message);
    CHECK(parse_text(LAYOUT_HEAD "\n\"page\":01}", &pg, &n, &err) == LT_EPARSE &&
              strstr(err.message, "line 2, column 9: not valid JSON"),
          "leading zero: %s", err.message);
}

/* Reader and scorer together on a ground-truth page and a prediction of it. */
static void test_end_to_end(void)
{
    char *tpath = write_tmp("e2e.gt.json",
                            GT_HEAD "\"width\":1000,\"height\":1000,\"skew_deg\":1.0,\"lines\":["
                                    "{\"box\":[100,100,900,130],\"in_order\":true},"
                                    "{\"box\":[100,140,900,170],\"in_order\":true},"
                                    "{\"box\":[950,140,980,170],\"in_order\":false},"
                                    "{\"box\":[100,180,900,210],\"in_order\":true}]}");
    char tcopy[128];
    snprintf(tcopy, sizeof tcopy, "%s", tpath);
    char *ppath =
        write_tmp("e2e.json", LAYOUT_HEAD "\"page\":1,\"width\":1000,\"height\":1000,"
                                          "\"skew_deg\":0.75,\"lines\":["
                                          "{\"box\":[101,139,899,171]},{\"box\":[100,100,900,131]},"
                                          "{\"box\":[100,180,500,210]},{\"box\":[500,180,900,210]},"
                                          "{\"box\":[951,141,979,169]}]}");
    lt_scored_page *tp, *pp;
    int nt, np;
    lt_error err = {0};
    if (lt_scored_pages_read(tcopy, &tp, &nt, &err) ||
        lt_scored_pages_read(ppath, &pp, &np, &err)) {
        fail("end to end: %s", err.message);
        return;
    }
    lt_page_score s;
    if (!score(&tp[0], &pp[0], &s, "end to end")) {
        /* lines 0, 1 and the margin number match; line 3 is split in halves (IoU 0.5 each:
         * the lower pred index wins) */
        CHECK_INT(s.matched_50, 4, "end to end: matched@0.5");
        CHECK_INT(s.matched_75, 3, "end to end: matched@0.75");
        CHECK_NEAR(s.precision_50, 4.0 / 5.0, 1e-15, "end to end: precision");
        CHECK_NEAR(s.recall_50, 1.0, 0, "end to end: recall");
        CHECK_INT(s.splits, 1, "end to end: splits");
        CHECK_INT(s.order_pairs, 3, "end to end: order pairs (margin number left out)");
        /* truth order 0 1 3 has pred ranks 1 0 2: one discordant pair of 3 */
        CHECK_NEAR(s.tau, 1.0 / 3.0, 1e-15, "end to end: tau");
        CHECK_NEAR(s.skew_error_deg, 0.25, 1e-12, "end to end: skew error");
    }
    lt_scored_pages_free(tp, nt);
    lt_scored_pages_free(pp, np);
}

static void cleanup(void)
{
    static const char *const files[] = {
        "two.jsonl",        "three.json",         "leaf.gt.json",     "empty.json",
        "blank.json",       "text.json",          "truncated.json",   "trailing.json",
        "leftright.json",   "topbottom.json",     "three.gt.json",    "float.gt.json",
        "string.gt.json",   "huge.gt.json",       "nobox.gt.json",    "nolines.gt.json",
        "noheight.gt.json", "zeroheight.gt.json", "absurd.gt.json",   "noformat.json",
        "otherformat.json", "array.json",         "linesobj.gt.json", "inorder.gt.json",
        "skew.gt.json",     "page0.json",         "second.jsonl",     "big.json",
        "e2e.gt.json",      "e2e.json",           "quad3.gt.json",    "quadstr.gt.json"};
    char path[128];
    for (size_t i = 0; i < sizeof files / sizeof *files; i++) {
        snprintf(path, sizeof path, "%s/%s", tmpdir, files[i]);
        unlink(path);
    }
    if (rmdir(tmpdir) != 0) fail("could not remove %s (a file left behind?)", tmpdir);
}

int main(void)
{
    const char *base = getenv("TMPDIR");
    if (!base || !*base || strlen(base) > 40) base = "/tmp";
    snprintf(tmpdir, sizeof tmpdir, "%s/lt_score_XXXXXX", base);
    if (!mkdtemp(tmpdir)) {
        fprintf(stderr, "SKIP: cannot make a temporary folder\n");
        return 77;
    }
    test_iou();
    test_prf();
    test_identical();
    test_missing_line();
    test_split();
    test_merges();
    test_skewed_hulls();
    test_level_frame();
    test_order();
    test_kendall();
    test_cover_contents();
    test_cover_order();
    test_cover_merged();
    test_cover_threshold();
    test_cover_limit();
    test_match_limit();
    test_skew();
    test_greedy();
    test_against_brute_force();
    test_longest_increasing();
    test_cover_brute_force();
    test_reader();
    test_reader_walk();
    test_end_to_end();
    cleanup();
    if (failures) {
        fprintf(stderr, "test_score: %d check%s failed\n", failures, failures == 1 ? "" : "s");
        return 1;
    }
    printf("test_score: all checks passed\n");
    return 0;
}

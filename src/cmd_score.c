/* cmd_score.c — `lineate score [--json] [--per-page] TRUTH PRED`: compares predicted text
 * lines with ground truth (two files paired page by page, or two folders paired by name) and
 * prints per-page rows and summaries; the measures are those of score.c (IoU matching,
 * precision / recall / F1, splits / merges, Kendall's tau-a, the order by cover, skew error).
 *
 * Pairing
 *   TRUTH and PRED files: the k-th page object of PRED is scored against the k-th of TRUTH;
 *   the page counts must agree. Either may be "-" (standard input), not both.
 *   Either file may hold lineate JSON, corpus ground truth, PAGE XML or ALTO (xmlread.c).
 *   TRUTH and PRED folders: each TRUTH/NAME.gt.json (or, when the folder has none, each
 *   TRUTH/NAME.json, .jsonl, .page.xml, .alto.xml and .xml), in subfolders too, is paired
 *   with the first of PRED/NAME.json, .jsonl, .gt.json, .page.xml, .alto.xml, .xml that
 *   exists, NAME being the path below the folder without the suffix ("vol2/0001"), in byte
 *   order of NAME.
 *   A missing prediction is scored as a page with no lines and listed as missing; a
 *   prediction file that cannot be read is reported on stderr, scored as no lines, listed as
 *   unreadable, and makes the exit status 1. A page whose analysis failed (an error record
 *   in PRED) is scored as no lines and listed as failed; a page whose TRUTH is an error
 *   record is left out of all scores and listed as skipped.
 *
 * Text output (stdout): with --per-page one row per page with the columns
 *   page, truth (lines), pred (lines), F1@.50, F1@.75, splits, merges, tau, misplaced (the
 *   out-of-place share of the order by cover), back (its backward steps), uncov (in-order
 *   truth lines no prediction covers), skew err (degrees), and a note (missing / failed /
 *   unreadable / skipped); "-" marks an undefined value. Then
 *   "summary: all pages" and, when the truth pages carry a variant, "summary: variant NAME"
 *   for each variant in byte order, followed by "summary: variant NAME, C columns" for each
 *   column count C the truth pages of that variant give ("columns"), each with the lines
 *   pages, truth lines, predicted lines, IoU >= 0.50, IoU >= 0.75 (precision, recall, F1 from
 *   match counts summed over the pages, and the match count), mean page F1 (mean of the
 *   pages' F1 at IoU >= 0.50), splits, merges (with side-by-side and cross-column merges),
 *   reading order (median and minimum tau over the pages where tau is defined), order by
 *   cover (out-of-place lines summed over the pages / covered lines summed, with both counts,
 *   backward steps and uncovered lines summed), skew error (median and maximum in degrees
 *   over the pages where both skews are known). Lists of missing, failed, unreadable and
 *   skipped pages follow.
 *
 * JSON output (--json): one object on one line:
 *   "format": "lineate-score-1", "truth": TRUTH, "pred": PRED,
 *   "pages": [ ... ]                      only with --per-page, one object per page:
 *       "name", "variant" (string or null), "status" ("scored", "missing", "failed",
 *       "unreadable", "skipped"), "truth_lines", "pred_lines", "matched_50", "matched_75",
 *       "precision_50", "recall_50", "f1_50", "precision_75", "recall_75", "f1_75",
 *       "splits", "merges", "side_by_side_merges", "cross_column_merges", "order_pairs"
 *       (matched in-order pairs tau is computed over), "tau" (number or null),
 *       "covered_lines", "uncovered_lines" (in-order truth lines that a prediction covers /
 *       does not cover), "out_of_place_lines", "out_of_place_share" (out-of-place / covered,
 *       null when none is covered), "backward_steps" (see lt_cover_order_count),
 *       "skew_error_deg" (number or null); a skipped page has only name, variant and status,
 *   "summary": { "pages", "missing", "failed", "unreadable", "truth_lines", "pred_lines",
 *       "matched_50", "matched_75", "precision_50", "recall_50", "f1_50", "precision_75",
 *       "recall_75", "f1_75", "mean_page_f1_50", "splits", "merges", "side_by_side_merges",
 *       "cross_column_merges", "covered_lines", "uncovered_lines", "out_of_place_lines",
 *       "out_of_place_share", "backward_steps" (counts summed over the pages, the share
 *       their ratio, null over no covered line), "tau_pages", "tau_median", "tau_min",
 *       "skew_pages", "skew_error_median_deg", "skew_error_max_deg" }   (the tau and skew
 *       statistics are null over no pages),
 *   "variants": { NAME: {same fields as "summary", "by_columns": { "C": {same fields as
 *       "summary"}, ... }}, ... }   only when the truth has variants,
 *   "missing", "failed", "unreadable", "skipped": arrays of page names.
 *   Fractions are rounded to 6 decimals.
 *
 * Exit status: 0 when scoring ran (whatever the scores), 1 when a file could not be read
 * (message "lineate score: FILE: reason" on stderr), 2 on a bad command line, 3 when the output
 * could not be written. */
#include "cli.h"
#include "score.h"

#include <cJSON.h>
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#define PREFIX "lineate score: "

enum { ST_SCORED = 0, ST_MISSING, ST_FAILED, ST_UNREADABLE, ST_SKIPPED };
static const char *const status_names[] = {"scored", "missing", "failed", "unreadable", "skipped"};

typedef struct result {
    char *name;
    char *variant; /* NULL when the truth page has none */
    int columns;   /* of the truth page, 0 when it gives none */
    int status;
    lt_page_score s;
} result;

typedef struct results {
    result *items;
    int count, cap;
    int read_failures;      /* files that could not be read (exit status 1) */
    int match_ink;          /* --match ink: lines matched on the ink of the truth's image */
    const char *images_dir; /* --images DIR, or NULL */
    const char *truth_path; /* the truth file being scored (its folder holds its images) */
} results;

typedef struct summary {
    int pages, missing, failed, unreadable;
    long truth_lines, pred_lines, matched_50, matched_75;
    double precision_50, recall_50, f1_50, precision_75, recall_75, f1_75;
    double mean_page_f1_50;
    long splits, merges, side_merges, column_merges;
    long covered, uncovered, out_of_place, backward_steps; /* order by cover, summed */
    double out_of_place_share;                              /* defined when covered > 0 */
    int tau_pages, skew_pages;
    double tau_median, tau_min, skew_median_deg, skew_max_deg;
} summary;

static char *xstrdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d) memcpy(d, s, n);
    return d;
}

/* "DIR/NAME" without doubling a trailing slash; NULL when out of memory. */
static char *join_path(const char *dir, const char *name)
{
    size_t nd = strlen(dir), nn = strlen(name);
    int slash = nd > 0 && dir[nd - 1] == '/';
    char *p = malloc(nd + nn + 2);
    if (!p) return NULL;
    memcpy(p, dir, nd);
    if (!slash) p[nd++] = '/';
    memcpy(p + nd, name, nn + 1);
    return p;
}

static int ends_with(const char *s, const char *suffix)
{
    size_t ns = strlen(s), nx = strlen(suffix);
    return ns > nx && memcmp(s + ns - nx, suffix, nx) == 0;
}

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

/* ---- results ------------------------------------------------------------------------- */

/* Appends a result; `name` is copied, with ":PAGE" appended when `page` > 0. Returns the new
 * entry or NULL when out of memory. */
static result *add_result(results *r, const char *name, int page, const char *variant, int status)
{
    if (r->count == r->cap) {
        int ncap = r->cap ? r->cap * 2 : 64;
        result *n = realloc(r->items, (size_t)ncap * sizeof *n);
        if (!n) return NULL;
        r->items = n;
        r->cap = ncap;
    }
    result *e = &r->items[r->count];
    memset(e, 0, sizeof *e);
    size_t len = strlen(name) + 16;
    e->name = malloc(len);
    if (!e->name) return NULL;
    if (page > 0)
        snprintf(e->name, len, "%s:%d", name, page);
    else
        snprintf(e->name, len, "%s", name);
    if (variant && !(e->variant = xstrdup(variant))) {
        free(e->name);
        return NULL;
    }
    e->status = status;
    r->count++;
    return e;
}

static void results_free(results *r)
{
    for (int i = 0; i < r->count; i++) {
        free(r->items[i].name);
        free(r->items[i].variant);
    }
    free(r->items);
}

/* Scores truth[0..ntruth) against pred[0..ntruth) (pred NULL: each scored as a page with no
 * lines, with status `absent_status`). Results are named `name`, or "name:PAGE" when
 * `numbered`. Returns 0 or a negative code with a message in err. */
/* The page image of truth page t for --match ink: with --images DIR, DIR/BASE (BASE the
 * base name of the page's image or source); else the name as the truth gives it when
 * absolute, else beside the truth file (as given, then its base name), else as given from the
 * working folder. Returns a new string, or NULL when none is a file (*oom set when out of
 * memory). */
static char *find_page_image(const results *r, const lt_scored_page *t, int *oom)
{
    *oom = 0;
    const char *src = t->source && *t->source ? t->source : NULL;
    if (!src) return NULL;
    char *dir = NULL;
    if (!r->images_dir && strcmp(r->truth_path, "-") != 0) {
        const char *slash = strrchr(r->truth_path, '/');
        dir = slash ? strndup(r->truth_path, (size_t)(slash - r->truth_path) + 1) : xstrdup(".");
        if (!dir) {
            *oom = 1;
            return NULL;
        }
    }
    char *cand[4] = {NULL, NULL, NULL, NULL};
    int n = 0;
    if (r->images_dir) {
        cand[n++] = join_path(r->images_dir, base_name(src));
    } else if (src[0] == '/') {
        cand[n++] = xstrdup(src);
    } else {
        if (dir) {
            cand[n++] = join_path(dir, src);
            cand[n++] = join_path(dir, base_name(src));
        }
        cand[n++] = xstrdup(src);
    }
    free(dir);
    char *found = NULL;
    for (int i = 0; i < n; i++) {
        struct stat st;
        if (!cand[i]) *oom = 1;
        if (!found && cand[i] && stat(cand[i], &st) == 0 && S_ISREG(st.st_mode)) {
            found = cand[i];
            cand[i] = NULL;
        }
        free(cand[i]);
    }
    return found;
}

/* The ink table of truth page t's image for --match ink: the page (t->page of the file)
 * decoded and binarized as the analysis does (Sauvola with lineate's default window, k and
 * R, at the file's resolution or 300 dpi); its size must be the truth page's. */
static int load_page_ink(const results *r, const char *name, const lt_scored_page *t,
                         lt_ink_table **out, lt_error *err)
{
    *out = NULL;
    int oom;
    char *path = find_page_image(r, t, &oom);
    if (!path)
        return oom ? lt_error_set(err, LT_ENOMEM, "out of memory")
                   : lt_error_set(err, LT_EIO,
                                  "%s: --match ink: cannot find the page image \"%.120s\" (give "
                                  "its folder with --images DIR)",
                                  name, t->source ? t->source : "");
    lt_params params;
    lt_params_default(&params);
    lt_source *src = NULL;
    lt_image *img = NULL, *ink = NULL;
    int rc = lt_source_open(path, LT_DEFAULT_MAX_PAGES, &src, err);
    if (!rc && (t->page < 1 || t->page > lt_source_pages(src)))
        rc = lt_error_set(err, LT_EFORMAT, "%s: has no page %d", path, t->page);
    if (!rc) rc = lt_source_read_page(src, t->page - 1, params.max_pixels, &img, err);
    if (!rc && (img->width != t->width || img->height != t->height))
        rc = lt_error_set(err, LT_EFORMAT, "%s: the image is %dx%d, the truth page of %s %dx%d",
                          path, img->width, img->height, name, t->width, t->height);
    if (!rc && img->kind == LT_IMAGE_GRAY) {
        const double dpi = img->dpi > 0 ? img->dpi : params.dpi;
        rc = lt_binarize_normalized(img, lt_sauvola_window_px(&params, dpi), params.sauvola_k,
                                    params.sauvola_r, LT_GRAY_POINT_AUTO, LT_GRAY_POINT_AUTO, 1,
                                    &ink, err);
    }
    if (!rc) rc = lt_ink_table_new(ink ? ink : img, t->has_skew ? t->skew_deg : 0, out, err);
    lt_image_free(ink);
    lt_image_free(img);
    lt_source_free(src);
    free(path);
    return rc;
}

static int score_pages(results *r, const char *name, const lt_scored_page *truth, int ntruth,
                       const lt_scored_page *pred, int absent_status, int numbered, lt_error *err)
{
    static const lt_scored_page empty; /* a page with no lines and no skew */
    for (int i = 0; i < ntruth; i++) {
        const lt_scored_page *t = &truth[i];
        const lt_scored_page *p = pred ? &pred[i] : &empty;
        int status = !pred ? absent_status : p->failed ? ST_FAILED : ST_SCORED;
        if (t->failed) status = ST_SKIPPED;
        result *e = add_result(r, name, numbered ? t->page : 0, t->variant, status);
        if (!e) return lt_error_set(err, LT_ENOMEM, "out of memory");
        e->columns = t->columns;
        if (status == ST_SKIPPED) continue;
        if (pred && !p->failed && (p->width != t->width || p->height != t->height))
            fprintf(stderr, PREFIX "warning: %s: predicted page is %dx%d, truth %dx%d\n", e->name,
                    p->width, p->height, t->width, t->height);
        lt_error why = {0};
        lt_ink_table *ink = NULL;
        const int need_ink = r->match_ink && !p->failed && p->nlines > 0 && t->nlines > 0;
        int rc = need_ink ? load_page_ink(r, e->name, t, &ink, &why) : 0;
        if (rc) return lt_error_set(err, rc, "%s", why.message);
        rc = lt_score_page_ink(t, p, ink, &e->s, &why);
        lt_ink_table_free(ink);
        if (rc) return lt_error_set(err, rc, "%s: %s", e->name, why.message);
    }
    return 0;
}

/* ---- summaries ------------------------------------------------------------------------- */

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median_sorted(const double *v, int n)
{
    return (n & 1) ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* Whether result e belongs to the group of pages of `variant` (any when NULL) with `columns`
 * columns (any when 0). Skipped pages belong to no group. */
static int in_group(const result *e, const char *variant, int columns)
{
    if (e->status == ST_SKIPPED) return 0;
    if (variant && (!e->variant || strcmp(e->variant, variant) != 0)) return 0;
    return columns == 0 || e->columns == columns;
}

/* Summary over the results of a group (see in_group). `scratch` holds at least r->count
 * doubles. */
static void summarize(const results *r, const char *variant, int columns, double *scratch,
                      summary *s)
{
    memset(s, 0, sizeof *s);
    double f1_sum = 0;
    for (int i = 0; i < r->count; i++) {
        const result *e = &r->items[i];
        if (!in_group(e, variant, columns)) continue;
        s->pages++;
        s->missing += e->status == ST_MISSING;
        s->failed += e->status == ST_FAILED;
        s->unreadable += e->status == ST_UNREADABLE;
        s->truth_lines += e->s.truth_lines;
        s->pred_lines += e->s.pred_lines;
        s->matched_50 += e->s.matched_50;
        s->matched_75 += e->s.matched_75;
        s->splits += e->s.splits;
        s->merges += e->s.merges;
        s->side_merges += e->s.side_merges;
        s->column_merges += e->s.column_merges;
        s->covered += e->s.cover.covered;
        s->uncovered += e->s.cover.uncovered;
        s->out_of_place += e->s.cover.out_of_place;
        s->backward_steps += e->s.cover.backward_steps;
        f1_sum += e->s.f1_50;
    }
    lt_prf(s->matched_50, s->truth_lines, s->pred_lines, &s->precision_50, &s->recall_50,
           &s->f1_50);
    lt_prf(s->matched_75, s->truth_lines, s->pred_lines, &s->precision_75, &s->recall_75,
           &s->f1_75);
    s->mean_page_f1_50 = s->pages ? f1_sum / s->pages : 0;
    s->out_of_place_share = s->covered ? (double)s->out_of_place / (double)s->covered : 0;
    for (int pass = 0; pass < 2; pass++) {
        int n = 0;
        for (int i = 0; i < r->count; i++) {
            const result *e = &r->items[i];
            if (!in_group(e, variant, columns)) continue;
            if (pass == 0 && e->s.has_tau) scratch[n++] = e->s.tau;
            if (pass == 1 && e->s.has_skew_error) scratch[n++] = e->s.skew_error_deg;
        }
        if (n == 0) continue;
        qsort(scratch, (size_t)n, sizeof *scratch, cmp_dbl);
        if (pass == 0) {
            s->tau_pages = n;
            s->tau_median = median_sorted(scratch, n);
            s->tau_min = scratch[0];
        } else {
            s->skew_pages = n;
            s->skew_median_deg = median_sorted(scratch, n);
            s->skew_max_deg = scratch[n - 1];
        }
    }
}

/* Distinct variants of the results in byte order (pointers into the results); the caller
 * frees the array. Returns the count, or -1 when out of memory. */
static int collect_variants(const results *r, const char ***out)
{
    const char **v = malloc((size_t)(r->count > 0 ? r->count : 1) * sizeof *v);
    *out = v;
    if (!v) return -1;
    int n = 0;
    for (int i = 0; i < r->count; i++) {
        const char *x = r->items[i].variant;
        if (!x || r->items[i].status == ST_SKIPPED) continue;
        int seen = 0;
        for (int j = 0; j < n && !seen; j++)
            seen = strcmp(v[j], x) == 0;
        if (!seen) {
            int k = n++;
            while (k > 0 && strcmp(v[k - 1], x) > 0) {
                v[k] = v[k - 1];
                k--;
            }
            v[k] = x;
        }
    }
    return n;
}

/* ---- text output ----------------------------------------------------------------------- */

static void print_row(const result *e, int name_w)
{
    static const char *const notes[] = {"", "missing", "failed", "unreadable", "skipped"};
    if (e->status == ST_SKIPPED) {
        printf("%-*s %6s %6s %7s %7s %6s %6s %7s %9s %5s %6s %9s  %s\n", name_w, e->name, "-",
               "-", "-", "-", "-", "-", "-", "-", "-", "-", "-", notes[e->status]);
        return;
    }
    char tau[32] = "-", misplaced[32] = "-", skew[32] = "-";
    if (e->s.has_tau) snprintf(tau, sizeof tau, "%.3f", e->s.tau);
    if (e->s.has_out_of_place)
        snprintf(misplaced, sizeof misplaced, "%.3f", e->s.out_of_place_share);
    if (e->s.has_skew_error) snprintf(skew, sizeof skew, "%.3f", e->s.skew_error_deg);
    printf("%-*s %6d %6d %7.3f %7.3f %6d %6d %7s %9s %5d %6d %9s%s%s\n", name_w, e->name,
           e->s.truth_lines, e->s.pred_lines, e->s.f1_50, e->s.f1_75, e->s.splits, e->s.merges,
           tau, misplaced, e->s.cover.backward_steps, e->s.cover.uncovered, skew,
           e->status ? "  " : "", notes[e->status]);
}

static void print_summary(const char *title, const summary *s)
{
    printf("summary: %s\n", title);
    printf("  pages             %d (missing %d, failed %d, unreadable %d)\n", s->pages, s->missing,
           s->failed, s->unreadable);
    printf("  truth lines       %ld\n", s->truth_lines);
    printf("  predicted lines   %ld\n", s->pred_lines);
    printf("  IoU >= 0.50       precision %.4f  recall %.4f  F1 %.4f  (%ld matched)\n",
           s->precision_50, s->recall_50, s->f1_50, s->matched_50);
    printf("  IoU >= 0.75       precision %.4f  recall %.4f  F1 %.4f  (%ld matched)\n",
           s->precision_75, s->recall_75, s->f1_75, s->matched_75);
    printf("  mean page F1      %.4f (IoU >= 0.50)\n", s->mean_page_f1_50);
    printf("  splits            %ld\n", s->splits);
    printf("  merges            %ld (side by side %ld, across columns %ld)\n", s->merges,
           s->side_merges, s->column_merges);
    if (s->tau_pages)
        printf("  reading order     tau median %.4f, min %.4f (%d page%s)\n", s->tau_median,
               s->tau_min, s->tau_pages, s->tau_pages == 1 ? "" : "s");
    else
        printf("  reading order     - (no page with 2 matched lines in order)\n");
    if (s->covered)
        printf("  order by cover    %.4f out of place (%ld of %ld lines), %ld backward step%s, "
               "%ld uncovered\n",
               s->out_of_place_share, s->out_of_place, s->covered, s->backward_steps,
               s->backward_steps == 1 ? "" : "s", s->uncovered);
    else
        printf("  order by cover    - (no truth line in order covered), %ld uncovered\n",
               s->uncovered);
    if (s->skew_pages)
        printf("  skew error        median %.3f deg, max %.3f deg (%d page%s)\n",
               s->skew_median_deg, s->skew_max_deg, s->skew_pages, s->skew_pages == 1 ? "" : "s");
    else
        printf("  skew error        - (no page with both skews)\n");
}

static void print_list(const results *r, int status, const char *title)
{
    int any = 0;
    for (int i = 0; i < r->count; i++) {
        if (r->items[i].status != status) continue;
        if (!any) printf("%s\n", title);
        any = 1;
        printf("  %s\n", r->items[i].name);
    }
}

static int print_text(const results *r, int per_page, double *scratch)
{
    if (per_page) {
        int name_w = 4;
        for (int i = 0; i < r->count; i++) {
            int w = (int)strlen(r->items[i].name);
            if (w > name_w) name_w = w > 80 ? 80 : w;
        }
        printf("%-*s %6s %6s %7s %7s %6s %6s %7s %9s %5s %6s %9s\n", name_w, "page", "truth",
               "pred", "F1@.50", "F1@.75", "splits", "merges", "tau", "misplaced", "back", "uncov",
               "skew err");
        for (int i = 0; i < r->count; i++)
            print_row(&r->items[i], name_w);
        printf("\n");
    }
    summary s;
    summarize(r, NULL, 0, scratch, &s);
    print_summary("all pages", &s);
    const char **variants;
    int nv = collect_variants(r, &variants);
    if (nv < 0) return LT_ENOMEM;
    for (int v = 0; v < nv; v++) {
        char title[160];
        snprintf(title, sizeof title, "variant %.140s", variants[v]);
        summarize(r, variants[v], 0, scratch, &s);
        print_summary(title, &s);
        for (int c = 1; c <= LT_SCORE_MAX_COLUMNS; c++) {
            summarize(r, variants[v], c, scratch, &s);
            if (s.pages == 0) continue;
            snprintf(title, sizeof title, "variant %.120s, %d column%s", variants[v], c,
                     c == 1 ? "" : "s");
            print_summary(title, &s);
        }
    }
    free(variants);
    print_list(r, ST_MISSING, "missing predictions (scored as pages with no lines):");
    print_list(r, ST_FAILED, "failed pages (error records, scored as pages with no lines):");
    print_list(r, ST_UNREADABLE, "unreadable predictions (scored as pages with no lines):");
    print_list(r, ST_SKIPPED, "skipped pages (the truth is an error record):");
    return 0;
}

/* ---- JSON output ----------------------------------------------------------------------- */

static double round6(double x)
{
    return round(x * 1e6) / 1e6;
}

/* Adds key: number, or key: null when !defined. Returns 0 or -1 when out of memory. */
static int add_num(cJSON *o, const char *key, double value, int defined)
{
    cJSON *v = defined ? cJSON_CreateNumber(value) : cJSON_CreateNull();
    if (!v) return -1;
    cJSON_AddItemToObject(o, key, v);
    return 0;
}

static cJSON *summary_json(const summary *s)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    int bad = 0;
    bad |= add_num(o, "pages", s->pages, 1);
    bad |= add_num(o, "missing", s->missing, 1);
    bad |= add_num(o, "failed", s->failed, 1);
    bad |= add_num(o, "unreadable", s->unreadable, 1);
    bad |= add_num(o, "truth_lines", (double)s->truth_lines, 1);
    bad |= add_num(o, "pred_lines", (double)s->pred_lines, 1);
    bad |= add_num(o, "matched_50", (double)s->matched_50, 1);
    bad |= add_num(o, "matched_75", (double)s->matched_75, 1);
    bad |= add_num(o, "precision_50", round6(s->precision_50), 1);
    bad |= add_num(o, "recall_50", round6(s->recall_50), 1);
    bad |= add_num(o, "f1_50", round6(s->f1_50), 1);
    bad |= add_num(o, "precision_75", round6(s->precision_75), 1);
    bad |= add_num(o, "recall_75", round6(s->recall_75), 1);
    bad |= add_num(o, "f1_75", round6(s->f1_75), 1);
    bad |= add_num(o, "mean_page_f1_50", round6(s->mean_page_f1_50), 1);
    bad |= add_num(o, "splits", (double)s->splits, 1);
    bad |= add_num(o, "merges", (double)s->merges, 1);
    bad |= add_num(o, "side_by_side_merges", (double)s->side_merges, 1);
    bad |= add_num(o, "cross_column_merges", (double)s->column_merges, 1);
    bad |= add_num(o, "covered_lines", (double)s->covered, 1);
    bad |= add_num(o, "uncovered_lines", (double)s->uncovered, 1);
    bad |= add_num(o, "out_of_place_lines", (double)s->out_of_place, 1);
    bad |= add_num(o, "out_of_place_share", round6(s->out_of_place_share), s->covered > 0);
    bad |= add_num(o, "backward_steps", (double)s->backward_steps, 1);
    bad |= add_num(o, "tau_pages", s->tau_pages, 1);
    bad |= add_num(o, "tau_median", round6(s->tau_median), s->tau_pages > 0);
    bad |= add_num(o, "tau_min", round6(s->tau_min), s->tau_pages > 0);
    bad |= add_num(o, "skew_pages", s->skew_pages, 1);
    bad |= add_num(o, "skew_error_median_deg", round6(s->skew_median_deg), s->skew_pages > 0);
    bad |= add_num(o, "skew_error_max_deg", round6(s->skew_max_deg), s->skew_pages > 0);
    if (bad) {
        cJSON_Delete(o);
        return NULL;
    }
    return o;
}

static cJSON *page_json(const result *e)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    int bad = !cJSON_AddStringToObject(o, "name", e->name);
    bad |= !(e->variant ? cJSON_AddStringToObject(o, "variant", e->variant)
                        : cJSON_AddNullToObject(o, "variant"));
    bad |= !cJSON_AddStringToObject(o, "status", status_names[e->status]);
    if (e->status != ST_SKIPPED) {
        const lt_page_score *s = &e->s;
        bad |= add_num(o, "truth_lines", s->truth_lines, 1);
        bad |= add_num(o, "pred_lines", s->pred_lines, 1);
        bad |= add_num(o, "matched_50", s->matched_50, 1);
        bad |= add_num(o, "matched_75", s->matched_75, 1);
        bad |= add_num(o, "precision_50", round6(s->precision_50), 1);
        bad |= add_num(o, "recall_50", round6(s->recall_50), 1);
        bad |= add_num(o, "f1_50", round6(s->f1_50), 1);
        bad |= add_num(o, "precision_75", round6(s->precision_75), 1);
        bad |= add_num(o, "recall_75", round6(s->recall_75), 1);
        bad |= add_num(o, "f1_75", round6(s->f1_75), 1);
        bad |= add_num(o, "splits", s->splits, 1);
        bad |= add_num(o, "merges", s->merges, 1);
        bad |= add_num(o, "side_by_side_merges", s->side_merges, 1);
        bad |= add_num(o, "cross_column_merges", s->column_merges, 1);
        bad |= add_num(o, "order_pairs", s->order_pairs, 1);
        bad |= add_num(o, "tau", round6(s->tau), s->has_tau);
        bad |= add_num(o, "covered_lines", s->cover.covered, 1);
        bad |= add_num(o, "uncovered_lines", s->cover.uncovered, 1);
        bad |= add_num(o, "out_of_place_lines", s->cover.out_of_place, 1);
        bad |= add_num(o, "out_of_place_share", round6(s->out_of_place_share),
                       s->has_out_of_place);
        bad |= add_num(o, "backward_steps", s->cover.backward_steps, 1);
        bad |= add_num(o, "skew_error_deg", round6(s->skew_error_deg), s->has_skew_error);
    }
    if (bad) {
        cJSON_Delete(o);
        return NULL;
    }
    return o;
}

/* Builds the whole JSON document and prints it in one piece. */
static int print_json(const results *r, int per_page, const char *truth, const char *pred,
                      double *scratch)
{
    cJSON *doc = cJSON_CreateObject();
    int bad = !doc;
    const char **variants = NULL;
    if (!bad) {
        bad |= !cJSON_AddStringToObject(doc, "format", "lineate-score-1");
        bad |= !cJSON_AddStringToObject(doc, "truth", truth);
        bad |= !cJSON_AddStringToObject(doc, "pred", pred);
    }
    if (!bad && per_page) {
        cJSON *arr = cJSON_AddArrayToObject(doc, "pages");
        bad |= !arr;
        for (int i = 0; i < r->count && !bad; i++) {
            cJSON *p = page_json(&r->items[i]);
            bad |= !p;
            if (p) cJSON_AddItemToArray(arr, p);
        }
    }
    summary s;
    if (!bad) {
        summarize(r, NULL, 0, scratch, &s);
        cJSON *so = summary_json(&s);
        bad |= !so;
        if (so) cJSON_AddItemToObject(doc, "summary", so);
    }
    int nv = bad ? 0 : collect_variants(r, &variants);
    bad |= nv < 0;
    if (!bad && nv > 0) {
        cJSON *vo = cJSON_AddObjectToObject(doc, "variants");
        bad |= !vo;
        for (int v = 0; v < nv && !bad; v++) {
            summarize(r, variants[v], 0, scratch, &s);
            cJSON *so = summary_json(&s);
            bad |= !so;
            if (so) cJSON_AddItemToObject(vo, variants[v], so);
            cJSON *by_columns = so ? cJSON_AddObjectToObject(so, "by_columns") : NULL;
            bad |= !by_columns;
            for (int c = 1; c <= LT_SCORE_MAX_COLUMNS && !bad; c++) {
                summarize(r, variants[v], c, scratch, &s);
                if (s.pages == 0) continue;
                char key[16];
                snprintf(key, sizeof key, "%d", c);
                cJSON *co = summary_json(&s);
                bad |= !co;
                if (co) cJSON_AddItemToObject(by_columns, key, co);
            }
        }
    }
    static const int lists[] = {ST_MISSING, ST_FAILED, ST_UNREADABLE, ST_SKIPPED};
    for (int l = 0; l < 4 && !bad; l++) {
        cJSON *arr = cJSON_AddArrayToObject(doc, status_names[lists[l]]);
        bad |= !arr;
        for (int i = 0; i < r->count && !bad; i++) {
            if (r->items[i].status != lists[l]) continue;
            cJSON *str = cJSON_CreateString(r->items[i].name);
            bad |= !str;
            if (str) cJSON_AddItemToArray(arr, str);
        }
    }
    char *text = bad ? NULL : cJSON_PrintUnformatted(doc);
    free(variants);
    cJSON_Delete(doc);
    if (!text) return LT_ENOMEM;
    fputs(text, stdout);
    fputc('\n', stdout);
    free(text);
    return 0;
}

/* ---- the two pairing modes --------------------------------------------------------------- */

/* File mode: both files read completely before anything is scored. */
static int run_files(const char *truth_path, const char *pred_path, results *r)
{
    lt_error err = {0};
    lt_scored_page *tp = NULL, *pp = NULL;
    int nt = 0, np = 0;
    r->truth_path = truth_path;
    int rc = lt_scored_pages_read(truth_path, &tp, &nt, &err);
    if (!rc) rc = lt_scored_pages_read(pred_path, &pp, &np, &err);
    if (!rc && nt != np)
        rc = lt_error_set(&err, LT_EPARSE, "%s: %d page%s, but %s has %d",
                          strcmp(pred_path, "-") ? pred_path : "stdin", np, np == 1 ? "" : "s",
                          strcmp(truth_path, "-") ? truth_path : "stdin", nt);
    for (int i = 0; !rc && i < nt; i++) {
        const char *src = tp[i].source ? base_name(tp[i].source) : "page";
        lt_error why = {0};
        rc = score_pages(r, src, &tp[i], 1, &pp[i], ST_SCORED, nt > 1, &why);
        if (rc) /* the message names the page; the files are named here */
            lt_error_set(&err, rc, "%s against %s: %s", strcmp(pred_path, "-") ? pred_path : "stdin",
                         strcmp(truth_path, "-") ? truth_path : "stdin", why.message);
    }
    lt_scored_pages_free(tp, nt);
    lt_scored_pages_free(pp, np);
    if (rc) {
        fprintf(stderr, PREFIX "%s\n", err.message);
        r->read_failures++;
        return rc;
    }
    return 0;
}

typedef struct name_list {
    char **items; /* each "STEM\0FILE": the page name, then the file name in the folder */
    int count, cap;
} name_list;

static const char *item_file(const char *item)
{
    return item + strlen(item) + 1;
}

/* By stem, then by file name: "a" before "a-d" (the file names would sort the other way,
 * as '-' < '.'). */
static int cmp_item(const void *a, const void *b)
{
    const char *x = *(char *const *)a, *y = *(char *const *)b;
    int c = strcmp(x, y);
    return c ? c : strcmp(item_file(x), item_file(y));
}

static void names_free(name_list *l)
{
    for (int i = 0; i < l->count; i++)
        free(l->items[i]);
    free(l->items);
    memset(l, 0, sizeof *l);
}

#define MAX_FOLDER_DEPTH 64 /* deeper trees are refused: a link loop, not an archive */

/* Adds the matching files of folder `rel` below `top` ("" for `top` itself) and of its
 * subfolders; see list_dir. */
static int list_tree(const char *top, const char *rel, int depth, const char *const *suffixes,
                     int nsuffixes, name_list *out)
{
    char *dir = *rel ? join_path(top, rel) : strdup(top);
    if (!dir) goto oom_nodir;
    if (depth > MAX_FOLDER_DEPTH) {
        fprintf(stderr, PREFIX "%s: folders nested too deep\n", dir);
        free(dir);
        return -1;
    }
    DIR *d = opendir(dir);
    if (!d) {
        fprintf(stderr, PREFIX "%s: cannot open the folder: %s\n", dir, strerror(errno));
        free(dir);
        return -1;
    }
    struct dirent *de;
    int rc = 0;
    while (rc == 0 && (de = readdir(d)) != NULL) {
        const char *n = de->d_name;
        if (n[0] == '.') continue;
        char *full = join_path(dir, n);
        char *sub = *rel ? join_path(rel, n) : strdup(n);
        if (!full || !sub) {
            free(full);
            free(sub);
            goto oom;
        }
        struct stat st;
        int kind = stat(full, &st) != 0 ? 0 : S_ISDIR(st.st_mode) ? 'd' : S_ISREG(st.st_mode) ? 'f' : 0;
        free(full);
        int sfx = -1;
        for (int s = 0; kind == 'f' && s < nsuffixes && sfx < 0; s++)
            if (ends_with(n, suffixes[s])) sfx = s;
        if (kind == 'd') {
            rc = list_tree(top, sub, depth + 1, suffixes, nsuffixes, out);
        } else if (sfx >= 0) {
            if (out->count == out->cap) {
                int ncap = out->cap ? out->cap * 2 : 64;
                char **ni = realloc(out->items, (size_t)ncap * sizeof *ni);
                if (!ni) {
                    free(sub);
                    goto oom;
                }
                out->items = ni;
                out->cap = ncap;
            }
            size_t len = strlen(sub), stem_len = len - strlen(suffixes[sfx]);
            char *item = malloc(stem_len + 1 + len + 1);
            if (!item) {
                free(sub);
                goto oom;
            }
            memcpy(item, sub, stem_len);
            item[stem_len] = '\0';
            memcpy(item + stem_len + 1, sub, len + 1);
            out->items[out->count++] = item;
        }
        free(sub);
    }
    closedir(d);
    free(dir);
    return rc;
oom:
    closedir(d);
    free(dir);
oom_nodir:
    fprintf(stderr, PREFIX "out of memory\n");
    return -1;
}

/* Regular files (or links to them) of `dir` and of its subfolders at any depth whose names
 * end in one of the suffixes and do not start with '.' (nor lie in a folder that does), as
 * "STEM\0FILE" items sorted bytewise by stem, both relative to `dir` ("vol2/0001" and
 * "vol2/0001.gt.json"). Returns 0, or prints the reason and returns -1. */
static int list_dir(const char *dir, const char *const *suffixes, int nsuffixes, name_list *out)
{
    memset(out, 0, sizeof *out);
    if (list_tree(dir, "", 0, suffixes, nsuffixes, out)) {
        names_free(out);
        return -1;
    }
    if (out->count > 1) qsort(out->items, (size_t)out->count, sizeof *out->items, cmp_item);
    return 0;
}

/* First of DIR/NAME.json, .jsonl, .gt.json, .page.xml, .alto.xml, .xml that is a regular
 * file, as a new string; NULL when none is (or out of memory: *oom set). */
static char *find_prediction(const char *dir, const char *stem, int *oom)
{
    static const char *const exts[] = {".json",     ".jsonl",    ".gt.json",
                                       ".page.xml", ".alto.xml", ".xml"};
    const int nexts = (int)(sizeof exts / sizeof exts[0]);
    *oom = 0;
    for (int i = 0; i < nexts; i++) {
        size_t len = strlen(stem) + strlen(exts[i]) + 1;
        char *file = malloc(len);
        if (!file) break;
        snprintf(file, len, "%s%s", stem, exts[i]);
        char *full = join_path(dir, file);
        free(file);
        if (!full) break;
        struct stat st;
        if (stat(full, &st) == 0 && S_ISREG(st.st_mode)) return full;
        free(full);
        if (i == nexts - 1) return NULL;
    }
    *oom = 1;
    return NULL;
}

/* Folder mode. Returns 0 when every truth file was read (prediction failures are recorded
 * as unreadable pages), or a negative code after a fatal problem. */
static int run_dirs(const char *truth_dir, const char *pred_dir, results *r)
{
    static const char *const gt_suffix[] = {".gt.json"};
    /* the longer suffixes first: NAME.page.xml is NAME, not NAME.page */
    static const char *const own_suffix[] = {".json", ".jsonl", ".page.xml", ".alto.xml", ".xml"};
    name_list names;
    if (list_dir(truth_dir, gt_suffix, 1, &names)) return LT_EIO;
    if (names.count == 0) { /* no corpus truth: lineate's own files, PAGE or ALTO */
        names_free(&names);
        if (list_dir(truth_dir, own_suffix, 5, &names)) return LT_EIO;
    }
    if (names.count == 0) {
        fprintf(stderr, PREFIX "%s: no *.gt.json, *.json or *.xml files in the folder\n",
                truth_dir);
        names_free(&names);
        return LT_EIO;
    }
    int rc = 0;
    for (int i = 0; i < names.count && rc == 0; i++) {
        const char *stem = names.items[i];
        char *tpath = join_path(truth_dir, item_file(stem));
        if (!tpath) {
            fprintf(stderr, PREFIX "out of memory\n");
            rc = LT_ENOMEM;
            break;
        }
        if (i > 0 && strcmp(names.items[i - 1], stem) == 0) {
            fprintf(stderr, PREFIX "%s: another truth file has the same name, ignored\n", tpath);
            r->read_failures++;
            free(tpath);
            continue;
        }
        lt_error err = {0};
        lt_scored_page *tp = NULL, *pp = NULL;
        int nt = 0, np = 0;
        r->truth_path = tpath;
        if (lt_scored_pages_read(tpath, &tp, &nt, &err)) {
            fprintf(stderr, PREFIX "%s\n", err.message);
            r->read_failures++;
            free(tpath);
            continue;
        }
        int oom;
        char *ppath = find_prediction(pred_dir, stem, &oom);
        if (oom) {
            rc = lt_error_set(&err, LT_ENOMEM, "out of memory");
        } else if (!ppath) {
            rc = score_pages(r, stem, tp, nt, NULL, ST_MISSING, nt > 1, &err);
        } else {
            int prc = lt_scored_pages_read(ppath, &pp, &np, &err);
            if (!prc && np != nt)
                prc = lt_error_set(&err, LT_EPARSE, "%s: %d page%s, but %s has %d", ppath, np,
                                   np == 1 ? "" : "s", tpath, nt);
            if (prc) {
                fprintf(stderr, PREFIX "%s\n", err.message);
                r->read_failures++;
                memset(&err, 0, sizeof err);
                rc = score_pages(r, stem, tp, nt, NULL, ST_UNREADABLE, nt > 1, &err);
            } else {
                rc = score_pages(r, stem, tp, nt, pp, ST_SCORED, nt > 1, &err);
            }
        }
        if (rc && err.code) fprintf(stderr, PREFIX "%s\n", err.message);
        lt_scored_pages_free(tp, nt);
        lt_scored_pages_free(pp, np);
        free(ppath);
        r->truth_path = NULL;
        free(tpath);
    }
    names_free(&names);
    return rc;
}

/* ---- entry point ------------------------------------------------------------------------- */

/* clang-format off */
static const char usage_text[] =
    "Usage: lineate score [OPTIONS] TRUTH PRED\n"
    "Compare predicted text lines with ground truth.\n"
    "\n"
    "TRUTH and PRED are two files (pages paired in order; '-' reads standard input)\n"
    "or two folders (TRUTH/NAME.gt.json paired with PRED/NAME.json, .jsonl,\n"
    ".gt.json, .page.xml, .alto.xml or .xml; without *.gt.json files, TRUTH/NAME\n"
    "in lineate's JSON, PAGE XML or ALTO). Files hold lineate JSON, corpus ground\n"
    "truth, PAGE XML or ALTO (lines from polygons or positions, order from\n"
    "ReadingOrder where present, else document order).\n"
    "Lines match one to one by intersection over union (IoU >= 0.5, greedy by\n"
    "decreasing IoU); reading order is Kendall's tau-a over matched lines, and\n"
    "the order of every truth line placed at the prediction covering most of it\n"
    "(at least 25%): the share of lines out of place (1 - longest increasing\n"
    "subsequence / lines covered), backward steps, and lines no prediction covers.\n"
    "\n"
    "Options:\n"
    "      --per-page        also print one row per page\n"
    "      --match MODE      box (the default): match lines on the areas of their boxes;\n"
    "                        ink: on the ink their boxes hold in the truth's page image\n"
    "                        (IoU of ink pixels), for truth drawn loosely around the text\n"
    "      --images DIR      with --match ink: the page images are DIR/NAME (NAME the\n"
    "                        truth's image file name); default: beside the truth file\n"
    "      --json            print the results as one JSON object\n"
    LT_CLI_HELP_VERSION_HELP
    "\n"
    "Exit status: 0 scored, 1 a file could not be read, 2 bad command line,\n"
    "3 the output could not be written.\n";
/* clang-format on */

enum { OPT_JSON = 256, OPT_PER_PAGE, OPT_MATCH, OPT_IMAGES };

static const lt_cli_option score_options[] = {{"json", OPT_JSON, 0},
                                              {"per-page", OPT_PER_PAGE, 0},
                                              {"match", OPT_MATCH, 1},
                                              {"images", OPT_IMAGES, 1},
                                              {NULL, 0, 0}};
static const lt_cli_command score_command = {"lineate score", usage_text, score_options};

int lt_cmd_score(int argc, char **argv)
{
    int json = 0, per_page = 0, match_ink = 0, c;
    const char *images = NULL, *arg;
    lt_cli_parser p;
    lt_cli_begin(&p, &score_command, NULL, argc, argv);
    while ((c = lt_cli_next(&p, &arg)) > 0) {
        switch (c) {
        case OPT_JSON: json = 1; break;
        case OPT_PER_PAGE: per_page = 1; break;
        case OPT_IMAGES: images = arg; break;
        case OPT_MATCH:
            if (strcmp(arg, "box") != 0 && strcmp(arg, "ink") != 0)
                return lt_cli_usage_error(&score_command, "--match: '%s' is not box or ink", arg);
            match_ink = arg[0] == 'i';
            break;
        }
    }
    if (c < 0) return p.status;
    const int npos = argc - p.operands;
    if (npos != 2)
        return lt_cli_usage_error(&score_command, "%s",
                                  npos == 0   ? "missing TRUTH and PRED"
                                  : npos == 1 ? "missing PRED"
                                              : "more than TRUTH and PRED given");
    const char *pos[2] = {argv[p.operands], argv[p.operands + 1]};
    if (images && !match_ink)
        return lt_cli_usage_error(&score_command, "--images goes with --match ink");
    if (strcmp(pos[0], "-") == 0 && strcmp(pos[1], "-") == 0)
        return lt_cli_usage_error(&score_command, "TRUTH and PRED cannot both be standard input");
    int is_dir[2];
    for (int k = 0; k < 2; k++) {
        struct stat st;
        if (strcmp(pos[k], "-") == 0) {
            is_dir[k] = 0;
            continue;
        }
        if (stat(pos[k], &st) != 0) {
            fprintf(stderr, PREFIX "%s: cannot open: %s\n", pos[k], strerror(errno));
            return LT_EXIT_FAILED;
        }
        is_dir[k] = S_ISDIR(st.st_mode) ? 1 : 0;
    }
    if (is_dir[0] != is_dir[1])
        return lt_cli_usage_error(&score_command,
                                  "TRUTH and PRED must both be files or both be folders");

    results r = {0};
    r.match_ink = match_ink;
    r.images_dir = images;
    int rc = is_dir[0] ? run_dirs(pos[0], pos[1], &r) : run_files(pos[0], pos[1], &r);
    if (rc) {
        results_free(&r);
        return LT_EXIT_FAILED;
    }
    double *scratch = malloc((size_t)(r.count > 0 ? r.count : 1) * sizeof *scratch);
    if (!scratch) {
        fprintf(stderr, PREFIX "out of memory\n");
        results_free(&r);
        return LT_EXIT_FAILED;
    }
    rc = json ? print_json(&r, per_page, pos[0], pos[1], scratch)
              : print_text(&r, per_page, scratch);
    free(scratch);
    int failures = r.read_failures;
    results_free(&r);
    if (rc) {
        fprintf(stderr, PREFIX "out of memory\n");
        return LT_EXIT_FAILED;
    }
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fprintf(stderr, PREFIX "cannot write the output: %s\n", strerror(errno));
        return LT_EXIT_OUTPUT;
    }
    return failures ? LT_EXIT_FAILED : LT_EXIT_OK;
}

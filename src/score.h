/* score.h — reading layout / ground-truth JSON files and scoring predicted text lines against
 * ground truth: box IoU, greedy one-to-one matching, precision / recall / F1, splits and
 * merges, Kendall's tau-a (Kendall 1938) for reading order, the reading order of every truth
 * line by the prediction that covers it (longest increasing subsequence), and skew error. */
#ifndef LINEATE_SCORE_H
#define LINEATE_SCORE_H

#include "lineate.h"

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* ---- limits ----------------------------------------------------------------------------- */
#define LT_SCORE_MAX_FILE_BYTES (256L * 1024 * 1024) /* one layout or ground-truth file */
#define LT_SCORE_MAX_LINES 1000000                   /* lines of one page */
#define LT_SCORE_MAX_PAGES 100000 /* pages of one file (a folder holds any number of files) */
#define LT_SCORE_MAX_COORD 16777216                  /* |coordinate| and page side, pixels */
#define LT_SCORE_MAX_COLUMNS 9                       /* "columns" of a truth page */
#define LT_SCORE_MAX_SKEW_DEG 180.0                  /* |skew_deg| accepted by the reader */
/* Work bound of one page: box pairs examined by the matching and split / merge sweeps.
 * Ordinary pages need a few per line; only degenerate input (thousands of boxes piled on
 * one row) comes near it, and it then fails with LT_ELIMIT instead of running for hours. */
#define LT_SCORE_MAX_PAIR_TESTS 200000000L
#define LT_SCORE_MAX_CANDIDATES 4000000 /* pairs with IoU >= 0.5 kept for the matching */
/* A prediction covers a truth line when their intersection is at least this share of the
 * truth line's box area, in percent: a quarter still places a line whose prediction was
 * cut short or merged with its neighbours, while a neighbour that only grazes it does not. */
#define LT_SCORE_MIN_COVER_PERCENT 25

/* ---- pages as read from a file ---------------------------------------------------------- */
enum { LT_SCORED_LAYOUT = 0, LT_SCORED_TRUTH = 1 }; /* "lineate-layout-1", "lineseg-gt-1" */

typedef struct lt_scored_line {
    lt_box box;
    int in_order;     /* 0 when the line's place in the reading order is not meaningful */
    lt_point quad[4]; /* the line's "quad" when has_quad (corners in any order) */
    int has_quad;
} lt_scored_line;

typedef struct lt_scored_page {
    char *source;          /* "source" (layout) or "image" (ground truth); NULL if absent */
    int page;              /* page number within its file, from 1 (1 for ground truth) */
    int width, height;     /* pixels; 0 in an error record that gives none */
    double skew_deg;       /* 0 when has_skew is 0 */
    int has_skew;          /* the object has a numeric "skew_deg" */
    char *variant;         /* "clean" / "degraded" from ground truth, NULL otherwise */
    int columns;           /* "columns" of ground truth (1..LT_SCORE_MAX_COLUMNS), else 0 */
    int format;            /* LT_SCORED_LAYOUT or LT_SCORED_TRUTH */
    int failed;            /* an error record: the page could not be analysed; no lines */
    char *error;           /* its "error" text when failed, else NULL */
    lt_scored_line *lines; /* in the file's (reading) order */
    int nlines;
} lt_scored_page;

/* Reads all of `path` ("-" is standard input, called "stdin" in messages) into a new buffer
 * with one NUL byte appended (not counted in *size); the caller frees *data with free().
 * Fails with LT_EIO (cannot open or read; a directory), LT_ELIMIT (more than max_bytes) or
 * LT_ENOMEM; the message is "PATH: reason". */
int lt_read_whole_file(const char *path, size_t max_bytes, char **data, size_t *size,
                       lt_error *err);

/* Parses `size` bytes holding one or more JSON objects (one document, JSON Lines, or objects
 * simply concatenated, separated by white space) into *pages / *npages, in file order. Each
 * object is a lineate layout page or a ground-truth page (told apart by "format"), or an
 * error record (an object with a string "error", kept as a failed page with no lines).
 * The text must follow RFC 8259; it is checked and read in place, without a tree of the page,
 * so memory beyond `data` is the pages' lines; the first of repeated members counts. Malformed
 * input fails with LT_EPARSE and the one-line message "NAME: reason" (a syntax error placed
 * at the first byte no JSON text continues with), a page of more than LT_SCORE_MAX_LINES
 * lines with LT_ELIMIT before the next line is read; on failure *pages is NULL and *npages
 * 0. */
int lt_scored_pages_parse(const char *data, size_t size, const char *name, lt_scored_page **pages,
                          int *npages, lt_error *err);

/* 1 when the text data[0..n) ends inside a string or an unclosed array or object, i.e. a
 * JSON file cut short; 0 otherwise (a plain syntax error). */
int lt_json_cut_short(const char *data, size_t n);

/* Parses PAGE XML (root PcGts, any version of the PAGE content schema) or ALTO (root alto,
 * pixel units) documents, one or more one after the other (each new one starting with an XML
 * declaration at the start of a line), into pages as above: PAGE gives one page per document
 * (Page/@imageFilename, @imageWidth, @imageHeight, @orientation as the skew), ALTO one per
 * Layout/Page (@WIDTH, @HEIGHT, @ROTATION as the skew, @PHYSICAL_IMG_NR, the fileName of
 * sourceImageInformation). A line's box is the hull of its Coords points (PAGE) or its
 * HPOS, VPOS, WIDTH, HEIGHT (ALTO; the hull of Shape/Polygon when those are missing); a
 * polygon of four points is also its quad, and a longer one on a skewed page gives the
 * rectangle at the page's angle that holds it. Lines are in the order of the ReadingOrder
 * element when the document has one: the members of ordered groups by @index (PAGE) or in
 * document order (ALTO), each reference placing the lines of the element it names (a
 * region, a block, a line) that are not placed yet; lines reached only through an unordered
 * group, or not at all, are not in_order (the latter follow in document order). Without
 * ReadingOrder, document order, every line in_order. The lines are read as the document is
 * parsed, without keeping its tree, and a document of more than LT_SCORE_MAX_LINES lines is
 * refused when the next one ends. Fails with LT_EPARSE ("NAME: document D[, line L]:
 * reason"), LT_ELIMIT or LT_ENOMEM. */
int lt_scored_pages_parse_xml(const char *data, size_t size, const char *name,
                              lt_scored_page **pages, int *npages, lt_error *err);

/* lt_read_whole_file (capped at LT_SCORE_MAX_FILE_BYTES) followed by lt_scored_pages_parse, or
 * lt_scored_pages_parse_xml when the first character that is not white space is '<';
 * messages name `path` ("stdin" for "-"). */
int lt_scored_pages_read(const char *path, lt_scored_page **pages, int *npages, lt_error *err);

/* Frees an array returned by the two functions above (NULL-safe). */
void lt_scored_pages_free(lt_scored_page *pages, int npages);

/* ---- scoring (pure: no I/O, inputs unchanged) -------------------------------------------- */
/* Area of a box [l, t, r, b): (r - l) * (b - t), 0 when either side is not positive. */
int64_t lt_box_area(const lt_box *b);
/* Area of the intersection of two boxes (0 when they do not overlap). */
int64_t lt_box_intersection(const lt_box *a, const lt_box *b);
/* Intersection over union; 0 when either box has zero area. */
double lt_box_iou(const lt_box *a, const lt_box *b);

typedef struct lt_line_match {
    int truth, pred; /* indices into the truth and predicted lines */
    double iou;      /* >= 0.5 */
    int strict;      /* 1 when IoU >= 0.75 (decided exactly, in integers) */
} lt_line_match;

/* One-to-one matching: every (truth, pred) pair with IoU >= 0.5 is a candidate; candidates
 * are taken greedily by decreasing IoU (ties: lower truth index, then lower pred index; all
 * comparisons exact), each line used at most once. *matches (sorted by truth index, caller
 * frees; may be NULL when *nmatches is 0) and *nmatches receive the result. Candidates are
 * found by a sweep over boxes sorted by top, not by testing all pairs. Fails with LT_ENOMEM,
 * or LT_ELIMIT past LT_SCORE_MAX_PAIR_TESTS / LT_SCORE_MAX_CANDIDATES. */
int lt_match_lines(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred, int npred,
                   lt_line_match **matches, int *nmatches, lt_error *err);

/* ---- matching on ink ----------------------------------------------------------------------
 * Annotation tools often draw a line's polygon around its baseline, 1.5 to 2 times as tall as
 * the ink and shifted, so that an ink-tight line meets it at an IoU under 0.5. Matching on ink
 * compares what the boxes hold instead of their areas: the IoU of two boxes is then the ink
 * pixels inside both over the ink pixels inside either, on the page's own ink. */
typedef struct lt_ink_table {
    int width, height; /* of the (levelled) ink */
    uint32_t *sum;     /* summed-area table (Crow 1984): ink pixels of [0, x) x [0, y) at
                          sum[y * (width + 1) + x] */
    double skew_deg;   /* the page was turned level by this angle (0: as it is) */
    int dx, dy;        /* a box of the levelled page (lt_score_page's frame, turned about
                          the page centre) lies at box + (dx, dy) in the levelled ink */
} lt_ink_table;

/* The summed-area table of an ink image (LT_IMAGE_INK, nonzero = ink), turned level first by
 * skew_deg when |skew_deg| >= 0.01 (the page's true skew: lt_rotate_ink), as lt_score_page
 * turns the lines of a skewed page. Fails with LT_EINVAL or LT_ENOMEM; free it with
 * lt_ink_table_free (NULL-safe). */
int lt_ink_table_new(const lt_image *ink, double skew_deg, lt_ink_table **out, lt_error *err);
void lt_ink_table_free(lt_ink_table *t);
/* Ink pixels inside box b (offset by dx, dy), clipped to the ink; 0 for an empty box. O(1). */
int64_t lt_ink_in_box(const lt_ink_table *t, const lt_box *b);
/* As lt_match_lines, with the IoU of the ink the boxes hold: ink(A and B) / ink(A or B); a box
 * without ink matches nothing. Candidates are every pair of boxes that meet. */
int lt_match_lines_ink(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                       int npred, const lt_ink_table *ink, lt_line_match **matches, int *nmatches,
                       lt_error *err);

/* Precision matched/npred, recall matched/ntruth, F1 = 2PR/(P+R). Both empty: all 1; only
 * one empty: all 0; F1 is 0 when P + R is 0. */
void lt_prf(long matched, long ntruth, long npred, double *precision, double *recall, double *f1);

/* Kendall's tau-a of `seq[0..n)` against the order 0, 1, ..., n-1: (concordant - discordant)
 * / (n(n-1)/2), counting discordant pairs as inversions by merge sort, O(n log n). The
 * values must be distinct (one-to-one matches are). Returns 0 and sets *tau, or returns 1
 * (tau undefined, *tau set to 0) when n < 2, or LT_ENOMEM. */
int lt_kendall_tau_a(const int *seq, int n, double *tau);

/* Length of the longest strictly increasing subsequence of seq[0..n) (0 when n is 0), by
 * patience sorting: the smallest possible last value of an increasing run of each length,
 * kept sorted and searched by bisection, O(n log n) time and O(n) memory (Schensted 1961;
 * Fredman 1975 for the n log n bound). Returns 0 and sets *length, or LT_ENOMEM. */
int lt_longest_increasing(const int *seq, int n, int *length);

/* Reading order by cover, counted over the truth lines with in_order set. */
typedef struct lt_cover_order {
    int covered;        /* lines placed at the prediction that covers most of them */
    int uncovered;      /* lines no prediction covers by LT_SCORE_MIN_COVER_PERCENT */
    int out_of_place;   /* covered - their longest subsequence in predicted order */
    int backward_steps; /* consecutive covered lines (in truth order) placed backwards */
} lt_cover_order;

/* Places every in-order truth line at the predicted line that covers most of its box
 * (intersection / truth area >= LT_SCORE_MIN_COVER_PERCENT; ties: the earlier prediction in
 * the order of `pred`, the predicted reading order). A line with a zero-area box is uncovered.
 * The key of a placed line is (its prediction's index, the left edge of its own box, its
 * truth index): lines sharing one prediction are read left to right, as a reader of that
 * predicted line meets them; on a right-to-left page this counts a correctly read merged
 * row as a backward step (a known limit: the truth files give no direction). Read in truth
 * order, the keys should increase; out_of_place = covered - the longest increasing
 * subsequence of the keys (the fewest lines whose removal leaves the rest in order), and
 * backward_steps counts the neighbours (uncovered lines skipped) whose key decreases.
 * Candidate pairs are found by a sweep over truth boxes sorted by top; their number is
 * counted, in O(npred log ntruth), before any is examined, and more than
 * LT_SCORE_MAX_PAIR_TESTS fail with LT_ELIMIT, as do more than LT_SCORE_MAX_LINES lines on
 * either side. Fails with LT_EINVAL on bad arrays or LT_ENOMEM. */
int lt_cover_order_count(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                         int npred, lt_cover_order *out, lt_error *err);

/* Splits and merges. A predicted line lies inside a truth line when at least half of its own
 * area lies inside it; a truth line is split when two or more predicted lines lie inside it.
 * A truth line lies inside a predicted line when at least half of the truth line's area lies
 * inside it; a predicted line is a merge when two or more truth lines lie inside it; a
 * side-by-side merge when two of them overlap vertically by at least half the smaller height;
 * and a cross-column merge when two such lines side by side have, between them in the truth's
 * reading order (the order of `truth`), a truth line wholly above or below both: the reader
 * goes down a column between the two, as from the foot of one column's line to the next
 * column, and not along one row (a leader and its page number, a section number and its
 * heading, the cells of a table row). Zero-area boxes lie inside nothing.
 * `matches` (from lt_match_lines; NULL for the plain definition above) refines it: a line
 * matched one-to-one to a line of the other side lies inside no other line of that side. On
 * skewed pages the axis-aligned boxes of neighbouring lines overlap so much that a perfect
 * prediction would otherwise count as full of splits and merges; a matched neighbour is a
 * line of its own, not a piece of this one.
 * Fails with LT_ENOMEM, LT_EINVAL (a match out of range) or LT_ELIMIT
 * (LT_SCORE_MAX_PAIR_TESTS). */
int lt_count_splits_merges(const lt_scored_line *truth, int ntruth, const lt_scored_line *pred,
                           int npred, const lt_line_match *matches, int nmatches, int *splits,
                           int *merges, int *side_merges, int *column_merges, lt_error *err);

typedef struct lt_page_score {
    int truth_lines, pred_lines;
    int matched_50, matched_75; /* one-to-one matches with IoU >= 0.5, of them >= 0.75 */
    double precision_50, recall_50, f1_50;
    double precision_75, recall_75, f1_75;
    int splits, merges, side_merges, column_merges;
    int order_pairs;       /* matches at 0.5 whose truth line is in_order */
    int has_tau;           /* 0 when order_pairs < 2 */
    double tau;            /* Kendall tau-a of the predicted order over those pairs */
    lt_cover_order cover;  /* the order of all in-order truth lines, by cover */
    int has_out_of_place;  /* 0 when no truth line is covered */
    double out_of_place_share; /* cover.out_of_place / cover.covered */
    int has_skew_error;    /* both pages have a skew */
    double skew_error_deg; /* |pred skew - truth skew| */
} lt_page_score;

/* Scores one predicted page against its truth page (all of the above; splits and merges
 * refined by the page's matches, and they and the order by cover judged on the page turned
 * level by the truth's skew: the corners of each line's quad, or of its box, rotated about
 * the page centre, then boxed). A
 * failed page is scored as a page with no lines and no skew. Fails with LT_ENOMEM or
 * LT_ELIMIT. */
int lt_score_page(const lt_scored_page *truth, const lt_scored_page *pred, lt_page_score *out,
                  lt_error *err);
/* As lt_score_page, matching on ink when `ink` (the truth page's ink, levelled by the truth's
 * skew) is not NULL: on a skewed page the lines are turned level first, like the ink, and
 * boxed; the match counts, precision, recall, F1, tau and the splits and merges refined by
 * the matches follow the ink matching; the splits, merges and the order by cover themselves
 * are judged on areas as always. Fails with LT_EINVAL when the table was levelled by another
 * angle than the truth's skew. */
int lt_score_page_ink(const lt_scored_page *truth, const lt_scored_page *pred,
                      const lt_ink_table *ink, lt_page_score *out, lt_error *err);

#ifdef __cplusplus
}
#endif
#endif

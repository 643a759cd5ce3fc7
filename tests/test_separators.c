/* test_separators.c — checks the separators stage (lt_find_separators: column gutters as tall
 * white strips of the text's occupancy with evidence from both sides; lt_separator_between,
 * lt_gutter_between, lt_link_blocked) and what the line stage (lt_build_lines), and for one
 * page lt_xy_cut with lt_arrange, make of it, on pages drawn in memory (tests/textpage.h: text
 * height 20 px, so cells of 5 px). Every expectation is truth by construction: where the
 * columns, the white, the labels and the leaders were drawn, counted in the stage's cells.
 * Each geometric threshold of the stage is tried just below and just above: the gutter width
 * (1.2 text heights: a window of 5 cells), the rows of words beside it (8 text heights: 32
 * cell rows), the alignment of its edges (half a text height: 2 cells), the reach of a narrow
 * column (5 text heights: 20 cells), the white through a pinched gutter (three quarters of a
 * text height: 3 cells) and the rows of words on both sides of it (16 text heights), the gap
 * a river of white lets through (a stretched word space, 2 text heights: 40 px); and with
 * components set by hand, thresholds in whole cells at a text height whose quotients in
 * floating point fall a hair off, and the width of a white strip above a wide gap (7 cells).
 * A short table's column gap: its rows (4), its white (2 text heights: 8 cells, measured to
 * the pixel, the same wherever the grid falls) and its edges lined up on both sides (in more
 * than three quarters of the rows), and labels before items that have all three.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "textpage.h"

#define CELL 5         /* px: a quarter of the text height (CELL_TH of the stage) */
#define WINDOW 5       /* cells: the narrowest gutter, 1.2 text heights rounded up to cells */
#define ALIGNED 2      /* cells: edges this close line up (half a text height) */
#define MAX_GAP 240    /* px: words this close border a gutter (12 text heights) */
#define COL_X0 150     /* left edge of the left column */
#define COL_WIDTH 620  /* width of a column */
#define FIRST_BASE 150 /* baseline of a page's first line */
#define NPINCHED 4     /* pinched lines that a gutter of 24 lines goes on through */

/* Gutters of res whose box overlaps the columns [x0, x1) horizontally. */
static int gutters_in(const result *res, int x0, int x1)
{
    int n = 0;
    for (int k = 0; res->seps && k < res->seps->ngutters; k++)
        n += res->seps->gutters[k].left < x1 && res->seps->gutters[k].right > x0;
    return n;
}

/* The first gutter of res overlapping [x0, x1) horizontally (an empty box when none). */
static lt_box gutter_in(const result *res, int x0, int x1)
{
    for (int k = 0; res->seps && k < res->seps->ngutters; k++)
        if (res->seps->gutters[k].left < x1 && res->seps->gutters[k].right > x0)
            return res->seps->gutters[k];
    return tu_box(0, 0, 0, 0);
}

/* The hull of the drawn lines [from, to) of p. */
static lt_box hull_of(const page *p, int from, int to)
{
    lt_box h = tu_box(0, 0, 0, 0);
    for (int i = from; i < to; i++)
        tu_box_union(&h, p->line_box[i]);
    return h;
}

/* Joins drawn line b of p (the last one) into line a: one line of the truth. */
static void join_truth(page *p, int a, int b)
{
    if (b != p->nlines - 1) tu_die("join_truth: only the last line can be joined");
    tu_box_union(&p->line_box[a], p->line_box[b]);
    p->ncomp[a] += p->ncomp[b];
    for (int m = 0; m < p->nmarks; m++)
        if (p->mark_line[m] == b) p->mark_line[m] = a;
    p->nlines--;
}

/* A column of `rows` lines from (x0, FIRST_BASE), COL_WIDTH wide: justified lines reaching
 * the right edge alternate with lines ending 5.5 to 7.5 text heights short (ragged right, so
 * that no white strip runs down the column's right side over two lines, and wider than the 5
 * text heights of lt_params' link_max_gap, so that a short line is never linked across). */
static void draw_ragged_column(page *p, tu_rng *r, int x0, int rows)
{
    for (int i = 0; i < rows; i++) {
        const int shorter = i % 2 ? tu_range(r, 110, 150) : 0;
        draw_line(p, r, x0, x0 + COL_WIDTH - shorter, FIRST_BASE + i * PITCH, !shorter,
                  i == rows - 1);
    }
}

/* The right end of the ink of the drawn lines [from, to). */
static int ink_right(const page *p, int from, int to)
{
    return hull_of(p, from, to).right;
}

/* Grows *rows (top, bottom) to the pixel rows of p holding ink in the columns [x0, x1). */
static void ink_rows(const page *p, int x0, int x1, int *top, int *bottom)
{
    for (int y = 0; y < p->img->height; y++)
        for (int x = x0 < 0 ? 0 : x0; x < x1 && x < p->img->width; x++)
            if (p->img->pixels[(size_t)y * p->img->width + x]) {
                if (y < *top) *top = y;
                if (y + 1 > *bottom) *bottom = y + 1;
                break;
            }
}

/* The first cell column (px) wholly white right of ink ending at x (exclusive). */
static int white_after(int x)
{
    return ((x - 1) / CELL + 1) * CELL;
}

/* Checks the gutter of res between a left column whose ink ends at `left_ink` and a right
 * column starting at x2, beside rows with baselines first_base to last_base: from `left`
 * (the first white cell column when the left edge is aligned) to the cell of x2; from the first to
 * the last cell row holding words within 12 text heights of the white, that is at least the
 * x-height band of the first line and down to the last baseline, at most the ink within that reach
 * (an i-dot or a comma alone beside the white is no word). */
static void check_gutter(const result *res, const page *p, int left_ink, int x2, int left,
                         int first_base, int last_base, const char *what)
{
    int top = p->img->height, bottom = 0;
    ink_rows(p, left_ink - MAX_GAP, left_ink, &top, &bottom);
    ink_rows(p, x2, x2 + MAX_GAP, &top, &bottom);
    const lt_box g = gutter_in(res, left_ink, x2);
    CHECK_INT(g.left, left, "%s: gutter left", what);
    CHECK_INT(g.right, x2 / CELL * CELL, "%s: gutter right", what);
    CHECK(g.top >= top / CELL * CELL && g.top <= (first_base - XH) / CELL * CELL,
          "%s: gutter top %d outside [%d, %d]", what, g.top, top / CELL * CELL,
          (first_base - XH) / CELL * CELL);
    CHECK(g.bottom <= ((bottom - 1) / CELL + 1) * CELL &&
              g.bottom >= ((last_base - 1) / CELL + 1) * CELL,
          "%s: gutter bottom %d outside [%d, %d]", what, g.bottom,
          ((last_base - 1) / CELL + 1) * CELL, ((bottom - 1) / CELL + 1) * CELL);
}

/* 1. Two columns of ragged-right text, 14 lines each. The gutter is measured from the left
 * column's widest line to the right column's edge: 40 px (2 text heights) and 30 px (1.5:
 * at least 5 white cells whatever the phase of the cell grid) give one gutter over the
 * columns' rows (exactly the white cells across, see check_gutter down) and no line across it; 23
 * px (just under the 1.2 text heights of the narrowest gutter, 4 white cells at most) gives none,
 * and then the rows where the left line reaches the white are each read as one line (the gap is a
 * wide word space to the line stage), the others (gaps wider than link_max_gap) as two. */
static void test_two_columns(void)
{
    const int gaps[] = {40, 30, 23};
    for (int gi = 0; gi < 3; gi++)
        for (int seed = 1; seed <= 3; seed++) {
            char what[64];
            snprintf(what, sizeof what, "two columns, gap %d px, seed %d", gaps[gi], seed);
            tu_rng r = {(uint64_t)(10 * gi + seed)};
            page *p = page_new(1700, 1000);
            const int rows = 14;
            draw_ragged_column(p, &r, COL_X0, rows);
            const int left_ink = ink_right(p, 0, rows), x2 = left_ink + gaps[gi];
            draw_ragged_column(p, &r, x2, rows);
            const lt_box hull = hull_of(p, 0, 2 * rows);
            result res = run_stages(p, what);
            const int found = gaps[gi] >= 30;
            CHECK_INT(res.seps ? res.seps->ngutters : -1, found, "%s: gutters", what);
            if (found) {
                check_gutter(&res, p, left_ink, x2, white_after(left_ink), FIRST_BASE,
                             FIRST_BASE + (rows - 1) * PITCH, what);
                CHECK_INT(lt_separator_between(res.seps, left_ink, x2, hull.top, hull.bottom), 1,
                          "%s: separator between the columns", what);
                compare_lines(p, &res, what);
                CHECK_INT(lines_across(&res, left_ink, x2), 0, "%s: lines across", what);
            } else {
                CHECK_INT(lt_link_blocked(res.seps, left_ink, x2, FIRST_BASE - ASC,
                                          FIRST_BASE + DESC, ASC + DESC),
                          0, "%s: link over the gap of the first row blocked", what);
                CHECK_INT(res.lines ? res.lines->count : -1, 3 * rows / 2, "%s: lines", what);
                CHECK_INT(lines_across(&res, left_ink, x2), rows / 2, "%s: lines across", what);
            }
            result_free(&res);
            page_free(p);
        }
}

/* Ends line l of p exactly at x1 (its ink now ending at `from`): a word of x-height letters
 * 10 px wide and 3 px apart from a word space after `from`, its first letter wider to fill
 * the rest (to 22 px), when the room is at least a word space and a letter. */
static void finish_at(page *p, int l, int from, int x1, int baseline)
{
    int x = from + WORD_GAP;
    if (x1 - x < 10) return;
    const int first = 10 + (x1 - x - 10) % 13;
    draw_glyph(p, l, tu_box(x, baseline - XH, x + first, baseline), 0);
    for (x += first + LETTER_GAP; x + 10 <= x1; x += 10 + LETTER_GAP)
        draw_glyph(p, l, tu_box(x, baseline - XH, x + 10, baseline), 0);
}

/* 2. A justified paragraph, 1400 px wide, with a river: on `river_rows` rows from the
 * fourth, one word space is stretched to `width` px at the same place (the words before it end
 * at x = 700, or at most 21 px before, and those after it start at 700 + width), so that a
 * white strip runs down those rows. Two and three rows of it 32 px wide (1.6 text heights,
 * wider than the narrowest gutter) are too few to be a gutter (the words beside it count fewer
 * than 32 cell rows): none is found, no link over it is refused, and every row stays one line.
 * Five rows of it are a gutter region (just above the evidence threshold), but lines run
 * across its columns just above and below it: a river of white, which refuses no gap of a
 * stretched word space (2 text heights, 40 px): over a white 40 px wide, each row whose words
 * end at the river is one line; 41 px wide, its link is refused. Where the paragraph ends with
 * the river's last row (no line below it), the white ends at white, as columns do: a gutter,
 * and those links are refused (32 px). A row whose words end farther from the river than a
 * stretched space (2 text heights) is split at it either way. */
static void test_river(void)
{
    const struct {
        int rows, width, last; /* river rows, white (px), the river's rows end the paragraph */
    } cases[] = {{2, 32, 0}, {3, 32, 0}, {5, 32, 0}, {5, 40, 0}, {5, 41, 0}, {5, 32, 1}};
    for (size_t ci = 0; ci < sizeof cases / sizeof *cases; ci++)
        for (int seed = 1; seed <= 3; seed++) {
            char what[80];
            const int n = cases[ci].rows, width = cases[ci].width, last = cases[ci].last;
            snprintf(what, sizeof what, "river of %d rows %d px wide%s, seed %d", n, width,
                     last ? " ending the paragraph" : "", seed);
            tu_rng r = {(uint64_t)(100 + 10 * n + width + 7 * last + seed)};
            page *p = page_new(1700, 700);
            const int x0 = COL_X0, x1 = x0 + 1400, river = 700, river_right = river + width;
            const int rows = last ? 3 + n : 9;
            int river_left = 0, flush[9], nflush = 0, wide = 0;
            for (int i = 0; i < rows; i++) {
                const int y = FIRST_BASE + i * PITCH;
                if (i < 3 || i >= 3 + n) {
                    draw_line(p, &r, x0, x1, y, i < rows - 1, i == rows - 1);
                    continue;
                }
                const int a = draw_line(p, &r, x0, river, y, 1, 0);
                finish_at(p, a, p->line_box[a].right, river, y);
                if (p->line_box[a].right > river_left) river_left = p->line_box[a].right;
                if (p->line_box[a].right == river) flush[nflush++] = y;
                wide += river_right - p->line_box[a].right > 2 * XH;
                join_truth(p, a, draw_line(p, &r, river_right, x1, y, i < rows - 1, 0));
            }
            result res = run_stages(p, what);
            const int top = FIRST_BASE + 3 * PITCH - ASC,
                      bottom = FIRST_BASE + (2 + n) * PITCH + DESC;
            if (n < 5) {
                CHECK_INT(res.seps ? res.seps->ngutters : -1, 0, "%s: gutters", what);
                CHECK_INT(lt_link_blocked(res.seps, river_left, river_right, top, top + ASC + DESC,
                                          ASC + DESC),
                          0, "%s: link over the river blocked", what);
                compare_lines(p, &res, what);
            } else {
                CHECK_INT(res.seps ? res.seps->ngutters : -1, 1, "%s: gutters", what);
                CHECK_INT(lt_gutter_between(res.seps, river_left, river_right, top, bottom), 1,
                          "%s: gutter in the river", what);
                const int refused = last || width > 2 * XH;
                CHECK(nflush > 0, "%s: no row ends at the river", what);
                for (int f = 0; f < nflush; f++)
                    CHECK_INT(lt_link_blocked(res.seps, river, river_right, flush[f] - ASC,
                                              flush[f] + DESC, ASC + DESC),
                              refused, "%s: link over the river at baseline %d refused", what,
                              flush[f]);
                CHECK_INT(res.lines ? res.lines->count : -1, rows + (refused ? n : wide),
                          "%s: lines (river rows split: %s)", what, refused ? "all" : "wide gaps");
            }
            result_free(&res);
            page_free(p);
        }
}

/* A label like "[12]" at x on `baseline`, into line l: brackets (ascender to descender, 4 px)
 * around `digits` old-style figures (x-height, 11 px, 3 px apart). Returns its right end. */
static int draw_label(page *p, int l, int x, int baseline, int digits)
{
    draw_glyph(p, l, tu_box(x, baseline - ASC, x + 4, baseline + DESC), 0);
    x += 4 + LETTER_GAP;
    for (int k = 0; k < digits; k++, x += 11 + LETTER_GAP)
        draw_glyph(p, l, tu_box(x, baseline - XH, x + 11, baseline), 0);
    draw_glyph(p, l, tu_box(x, baseline - ASC, x + 4, baseline + DESC), 0);
    return x + 4;
}

/* 3. An index in two columns: each entry of the left column (x = 150 to 900) runs on in a
 * leader (dots 4 px square every 16 px, as leaders are set) that stops 2 text heights before
 * its page numbers (one to four old-style figures set flush right at 900); the right column
 * starts 2.5 text heights after 900 with short entries. The white between the leaders and
 * the numbers runs down the column like a gutter, and is found as a gutter region too, but
 * the numbers are a narrow column: no gutter white is left in the left column and no link
 * from a leader to its numbers is refused. The column gutter is found, every entry is one
 * line with its numbers, and no line crosses from one column to the other. Broken: the first
 * letter of each entry of the right column has lost its top to a separate piece (a mark 6 x 5
 * px, as blur and a threshold break a thin stroke), 2.65 text heights right of the numbers:
 * in the piece's own rows the numbers' white leads on to it as to a leader's dot and on along
 * the entry, but the letter below it stands first in the white (the reach is measured along
 * the line's ink projected onto one row): the numbers stay a narrow column. Far: the leaders
 * stop 52 px (2.6 text heights) before the numbers, wider than the space that parts a
 * listing's line numbers from their code (test_numbered_listing, 50 px), but the white
 * follows dots, not words: no link from a leader to its numbers is refused. */
static void test_index(void)
{
    for (int variant = 0; variant < 3; variant++)
        for (int seed = 1; seed <= 3; seed++) {
            const int broken = variant == 1, white = variant == 2 ? 52 : 2 * XH;
            const char *name[] = {"", " broken", " far"};
            char what[64];
            snprintf(what, sizeof what, "index%s, seed %d", name[variant], seed);
            tu_rng r = {(uint64_t)(300 + 10 * variant + seed)};
            page *p = page_new(1500, 1000);
            const int right = 900, x2 = right + 5 * XH / 2, rows = 16;
            int leader_end[16], numbers_left[16];
            for (int i = 0; i < rows; i++) {
                const int y = FIRST_BASE + i * PITCH, digits = tu_range(&r, 1, 4);
                const int number_left = right - 14 * digits + 3, dots_end = number_left - white;
                const int l = draw_line(p, &r, COL_X0, dots_end - tu_range(&r, 40, 100), y, 0, 0);
                for (int x = (p->line_box[l].right / 16 + 1) * 16; x + 4 <= dots_end; x += 16) {
                    draw_glyph(p, l, tu_box(x, y - 4, x + 4, y), 1);
                    leader_end[i] = x + 4;
                }
                numbers_left[i] = number_left;
                for (int k = 0; k < digits; k++)
                    draw_glyph(p, l,
                               tu_box(number_left + 14 * k, y - XH, number_left + 14 * k + 11, y),
                               0);
                if (!broken) {
                    draw_line(p, &r, x2, x2 + tu_range(&r, 120, 190), y, 0, 0);
                    continue;
                }
                const int entry = draw_line(p, &r, x2 + 42, x2 + tu_range(&r, 150, 220), y, 0, 0);
                draw_glyph(p, entry, tu_box(x2, y - XH + 8, x2 + 11, y), 0);
                draw_glyph(p, entry, tu_box(x2 + 3, y - XH, x2 + 9, y - XH + 5), 1);
                for (int k = 1; k < 3; k++) /* two more letters of the first word */
                    draw_glyph(p, entry, tu_box(x2 + 14 * k, y - XH, x2 + 14 * k + 11, y), 0);
            }
            result res = run_stages(p, what);
            const int last_base = FIRST_BASE + (rows - 1) * PITCH;
            CHECK_INT(gutters_in(&res, right, x2), 1, "%s: column gutters", what);
            check_gutter(&res, p, right, x2, white_after(right), FIRST_BASE, last_base, what);
            CHECK_INT(
                lt_gutter_between(res.seps, COL_X0, right, FIRST_BASE - ASC, last_base + DESC), 0,
                "%s: gutter white in the left column", what);
            int refused = 0;
            for (int i = 0; i < rows; i++) {
                const int y = FIRST_BASE + i * PITCH;
                refused += lt_link_blocked(res.seps, leader_end[i], numbers_left[i], y - XH, y, XH);
            }
            CHECK_INT(refused, 0, "%s: links from a leader to its numbers refused", what);
            compare_lines(p, &res, what);
            CHECK_INT(lines_across(&res, right, x2), 0, "%s: lines across the gutter", what);
            result_free(&res);
            page_free(p);
        }
}

/* 4. A list: labels "[12]"-like at x = 150, items of one to three lines indented to 260
 * (hanging indent), so that the white between the labels and the items runs down the whole
 * list beside the items' lines, 1.5 text heights wide. With labels of 6 figures (95 px, 19
 * cells: narrower than the 5 text heights, 20 cells, of a narrow column) the white is a
 * gutter region, but the labels are a column of short items: it separates no lines
 * (lt_gutter_between and lt_link_blocked 0 over it) and each label is read with its item's
 * first line. With labels of 7 figures (109 px, 22 cells: just wider than a narrow column)
 * the region stands between two columns and the labels are lines of their own. */
static void test_list_labels(void)
{
    const int digits[] = {6, 7};
    for (int di = 0; di < 2; di++)
        for (int seed = 1; seed <= 3; seed++) {
            char what[64];
            snprintf(what, sizeof what, "list labels of %d figures, seed %d", digits[di], seed);
            tu_rng r = {(uint64_t)(400 + 10 * di + seed)};
            page *p = page_new(1200, 1200);
            const int indent = COL_X0 + 11 + 14 * digits[di] + 30, x1 = 900, items = 8;
            int label_right = 0, row = 0;
            for (int k = 0; k < items; k++) {
                const int n = 1 + k % 3;
                for (int i = 0; i < n; i++, row++) {
                    const int y = FIRST_BASE + row * PITCH;
                    const int l = draw_line(p, &r, indent, x1, y, i < n - 1, i == n - 1);
                    if (i > 0) continue;
                    const int e = draw_label(p, l, COL_X0, y, digits[di]);
                    if (e > label_right) label_right = e;
                }
            }
            const int labels_alone = digits[di] == 7;
            const int label_lines = labels_alone ? items : 0;
            result res = run_stages(p, what);
            CHECK_INT(gutters_in(&res, label_right, indent), 1, "%s: gutter regions", what);
            CHECK_INT(lt_gutter_between(res.seps, label_right, indent, FIRST_BASE - ASC,
                                        FIRST_BASE + row * PITCH),
                      labels_alone, "%s: gutter between labels and items", what);
            CHECK_INT(lt_link_blocked(res.seps, label_right, indent, FIRST_BASE - ASC,
                                      FIRST_BASE + DESC, ASC + DESC),
                      labels_alone, "%s: link from the first label to its item blocked", what);
            CHECK_INT(res.lines ? res.lines->count : -1, row + label_lines, "%s: lines", what);
            CHECK_INT(lines_across(&res, label_right, indent), labels_alone ? 0 : items,
                      "%s: lines from a label into its item", what);
            if (!labels_alone) compare_lines(p, &res, what);
            result_free(&res);
            page_free(p);
        }
}

/* A new, empty line of the truth on `baseline`. */
static int new_line(page *p, int baseline)
{
    const int l = p->nlines++;
    if (l >= MAX_LINES) tu_die("too many lines");
    p->line_box[l] = tu_box(0, 0, 0, 0);
    p->baseline[l] = baseline;
    p->ncomp[l] = 0;
    return l;
}

/* Heights of a letter: x-height, ascender to descender, x-height with a descender. */
enum { LETTER_X, LETTER_FULL, LETTER_DESC };

/* A line of x-height letters (10 px, 3 px apart, in words of five, WORD_GAP apart) from x0
 * to exactly x1 (its last letter wider), its first letter of the height `first`, its last of
 * the height `last` (LETTER_*): a line whose rows beside the white at its ends are known to
 * the cell. Returns the line. */
static int draw_plain_line(page *p, int x0, int x1, int baseline, int first, int last)
{
    const int l = new_line(p, baseline);
    for (int k = 0, x = x0;; k++) {
        const int gap = k % 5 == 4 ? WORD_GAP : LETTER_GAP;
        const int w = x + 10 + gap + 10 > x1 ? x1 - x : 10, end = x + w >= x1;
        const int kind = end ? last : k == 0 ? first : LETTER_X;
        draw_glyph(p, l,
                   tu_box(x, baseline - (kind == LETTER_FULL ? ASC : XH), x + w,
                          baseline + (kind == LETTER_X ? 0 : DESC)),
                   0);
        if (end) break;
        x += w + gap;
    }
    return l;
}

/* 3b. An index column of 16 entries with page numbers of two old-style figures set flush
 * right at 900 (from 875). Leader rows: the entry's leader (dots 4 px square on a grid of 16
 * px) ends at one place, 2 text heights before the numbers. Long rows, one after the other:
 * the entry left no room for a leader and ends 62 to 86 px (3.1 to 4.3 text heights, wider
 * than LOCAL_STRIP_GAP) before its numbers, raggedly. The white before the numbers is a gutter
 * region beside a narrow column. With 9 long rows and 7 leader rows, 7 of the 16 lines end at
 * the white's edge (at most RAGGED_SHARE: ragged): page numbers after their entries, and no
 * link from an entry to its numbers is refused, though the white runs on through the long
 * rows above and below (every row one line). With 7 long rows and 9 leader rows, 9 of 16 end
 * at one place (more than RAGGED_SHARE), as the leaders of a contents list do before a column
 * of numbers of its own: the white through the long rows next to each other refuses their
 * links (the strip of LOCAL_STRIP_GAP). */
static void test_index_long_entries(void)
{
    for (int leaders = 7; leaders <= 9; leaders += 2) {
        char what[64];
        snprintf(what, sizeof what, "index, %d leader rows of 16", leaders);
        page *p = page_new(1200, 1000);
        const int rows = 16, number_left = 875, long_from = leaders / 2,
                  long_to = long_from + rows - leaders;
        int entry_end[16];
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH, in_long = i >= long_from && i < long_to;
            entry_end[i] = in_long ? number_left - 62 - 8 * (i % 4) : 500 + 10 * (i % 5);
            const int l = draw_plain_line(p, COL_X0, entry_end[i], y, LETTER_FULL, LETTER_X);
            for (int x = (entry_end[i] / 16 + 1) * 16; !in_long && x + 4 <= number_left - 2 * XH;
                 x += 16)
                draw_glyph(p, l, tu_box(x, y - 4, x + 4, y), 1);
            for (int k = 0; k < 2; k++)
                draw_glyph(p, l,
                           tu_box(number_left + 14 * k, y - XH, number_left + 14 * k + 11, y), 0);
        }
        result res = run_stages(p, what);
        int refused = 0;
        for (int i = long_from; i < long_to; i++) {
            const int y = FIRST_BASE + i * PITCH;
            refused += lt_link_blocked(res.seps, entry_end[i], number_left, y - XH, y, XH);
        }
        CHECK_INT(refused, leaders < 8 ? 0 : long_to - long_from,
                  "%s: links from a long entry to its numbers refused", what);
        if (leaders < 8) compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* 3c. An index column of 16 entries with page numbers too wide for a narrow column (eight
 * old-style figures, 109 px: 22 cells) set flush right at 900. Leader rows: the leader (dots 6
 * px square, marks rather than specks, on a grid of 16 px) stops 2 text heights before the
 * numbers; plain rows: the entry ends raggedly 2.2 to 2.8 text heights before them (under
 * LOCAL_STRIP_GAP). The white before the numbers has words on both sides and an aligned edge: a gutter region. With 9 leader rows of 16 (more than
 * LEADER_SHARE of the lines beside it end in a leader) it is the white after leaders and
 * separates no lines: no gutter white is left, no link from a leader to its numbers is
 * refused, every entry is one line with its numbers. With 7 of 16 it stays a gutter. */
static void test_index_wide_numbers(void)
{
    for (int leaders = 7; leaders <= 9; leaders += 2) {
        char what[64];
        snprintf(what, sizeof what, "index, wide numbers, %d leader rows of 16", leaders);
        page *p = page_new(1200, 1000);
        const int rows = 16, number_left = 900 - 8 * 14 + 3, dots_end = number_left - 2 * XH;
        int leader_end[16];
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH, with_leader = i % 2 == 0 || i < 2 * leaders - rows;
            const int entry_end = with_leader ? 560 + 10 * (i % 5) : number_left - 44 - 4 * (i % 4);
            const int l = draw_plain_line(p, COL_X0, entry_end, y, LETTER_FULL, LETTER_X);
            leader_end[i] = entry_end;
            for (int x = (entry_end / 16 + 1) * 16; with_leader && x + 6 <= dots_end; x += 16) {
                draw_glyph(p, l, tu_box(x, y - 6, x + 6, y), 1);
                leader_end[i] = x + 6;
            }
            for (int k = 0; k < 8; k++)
                draw_glyph(p, l,
                           tu_box(number_left + 14 * k, y - XH, number_left + 14 * k + 11, y), 0);
        }
        result res = run_stages(p, what);
        const int last_base = FIRST_BASE + (rows - 1) * PITCH, after = leaders > rows / 2;
        CHECK_INT(lt_gutter_between(res.seps, dots_end, number_left, FIRST_BASE - ASC,
                                    last_base + DESC),
                  !after, "%s: gutter white before the numbers", what);
        int refused = 0;
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH;
            refused += lt_link_blocked(res.seps, leader_end[i], number_left, y - XH, y, XH);
        }
        CHECK(after ? refused == 0 : refused > 0, "%s: %d links to the numbers refused", what,
              refused);
        if (after) compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* 3d. A contents list of 8 entries ending raggedly (400 to 480), each run on in a leader (dots
 * 4 px square on a grid of 16 px: specks, as at 300 dpi) whose last dot ends at one place,
 * before page numbers of two old-style figures set flush right at 900 (from 875). Between the
 * leaders' end and the numbers, white of 56 px (2.8 text heights, under LOCAL_STRIP_GAP): a
 * leader leads on to its number, no link is refused and every entry is one line with its
 * number. Of 64 px (3.2 text heights): no line above or below runs across it, the leader
 * ends before it and the numbers end flush below one another, a strip of white with lines on
 * both sides: every link from a leader to its number is refused and the numbers are lines
 * of their own. Of 64 px but the numbers set flush left, of one, three and five figures in
 * turn (ends 28 px apart, wider than ALIGN_TOLERANCE, no two alike within two rows), or
 * a single entry with no rows above or below: nothing ends flush with the number, no link is
 * refused, one line a row. */
static void test_contents_leaders(void)
{
    enum { NEAR, FLUSH, RAGGED, SINGLE };
    const char *name[] = {"56 px", "64 px", "64 px, ragged numbers", "64 px, one entry"};
    for (int variant = NEAR; variant <= SINGLE; variant++) {
        char what[96];
        snprintf(what, sizeof what, "contents list, %s", name[variant]);
        page *p = page_new(1200, 800);
        const int rows = variant == SINGLE ? 1 : 8, number_left = 875;
        const int dots_end = number_left - (variant == NEAR ? 56 : 64);
        const int apart = variant == FLUSH;
        int refused = 0;
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH;
            const int l = draw_plain_line(p, COL_X0, 400 + 20 * (i % 5), y, LETTER_FULL, LETTER_X);
            for (int x = dots_end - 16 * ((dots_end - p->line_box[l].right - 12) / 16);
                 x <= dots_end; x += 16)
                draw_glyph(p, l, tu_box(x - 4, y - 4, x, y), 1);
            const int figures = variant == RAGGED ? 1 + 2 * (i % 3) : 2;
            const int n = apart ? new_line(p, y) : l;
            for (int k = 0; k < figures; k++)
                draw_glyph(p, n, tu_box(number_left + 14 * k, y - XH, number_left + 14 * k + 11, y),
                           0);
        }
        result res = run_stages(p, what);
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH;
            refused += lt_link_blocked(res.seps, dots_end, number_left, y - XH, y, XH);
        }
        CHECK_INT(refused, apart ? rows : 0, "%s: links from a leader to its number refused", what);
        compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* 4b. A listing: line numbers of one or two figures set flush right at x = 200, each before
 * a line of code starting at one x. The white between them is a gutter region beside a
 * column of short items, which separates no lines, but a gap wider than a label's space (2.5
 * text heights: 50 px) that is white in the row, between words, parts the numbers from their
 * code: at 48 px each number is read with its line, at 52 px and at 70 px it is a line of its
 * own. lt_link_blocked over the 70 px white from a point 15 px right of the numbers' ink (16
 * px: words within a text height) and from one 20 px right of it (21 px: none, and a gap of
 * 50 px): refused, and not. Page numbers set after their entries, 52 px on, are read with
 * them: the rule parts only items standing before their rows. */
static void test_numbered_listing(void)
{
    const int gaps[] = {48, 52, 70}, numbers_right = 200, rows = 12;
    for (int gi = 0; gi < 3; gi++)
        for (int seed = 1; seed <= 3; seed++) {
            char what[64];
            snprintf(what, sizeof what, "listing, numbers %d px before the code, seed %d", gaps[gi],
                     seed);
            tu_rng r = {(uint64_t)(450 + 10 * gi + seed)};
            page *p = page_new(1000, 800);
            const int code = numbers_right + gaps[gi], apart = gaps[gi] > 50;
            for (int i = 0; i < rows; i++) {
                const int y = FIRST_BASE + i * PITCH, number = 8 + i;
                const int l = draw_line(p, &r, code, code + tu_range(&r, 150, 400), y, 0, 0);
                const int n = apart ? new_line(p, y) : l;
                for (int k = 0, x = numbers_right - 11; k < (number > 9 ? 2 : 1); k++, x -= 14)
                    draw_glyph(p, n, tu_box(x, y - XH, x + 11, y), 0);
            }
            result res = run_stages(p, what);
            CHECK_INT(gutters_in(&res, numbers_right, code), 1, "%s: gutter regions", what);
            CHECK_INT(lt_gutter_between(res.seps, numbers_right, code, FIRST_BASE - ASC,
                                        FIRST_BASE + rows * PITCH),
                      0, "%s: gutter white between numbers and code", what);
            compare_lines(p, &res, what);
            CHECK_INT(lines_across(&res, numbers_right, code), apart ? 0 : rows,
                      "%s: lines from a number into its code", what);
            if (gaps[gi] == 70) {
                const int y = FIRST_BASE + PITCH;
                CHECK_INT(lt_link_blocked(res.seps, numbers_right + 15, code, y - XH, y, XH), 1,
                          "%s: link with words 16 px left of its gap refused", what);
                CHECK_INT(lt_link_blocked(res.seps, numbers_right + 20, code, y - XH, y, XH), 0,
                          "%s: link with no words 21 px left of its gap refused", what);
            }
            result_free(&res);
            page_free(p);
        }
    /* Page numbers after their entries: the entries end flush at x = 600, the numbers stand
     * 52 px further on. Each entry is read with its number. */
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "entries, numbers 52 px after them, seed %d", seed);
        tu_rng r = {(uint64_t)(490 + seed)};
        page *p = page_new(1000, 800);
        const int entries_right = 600, numbers = entries_right + 52;
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH;
            const int l = draw_plain_line(p, COL_X0 + 13 * tu_range(&r, 0, 20), entries_right, y,
                                          LETTER_FULL, LETTER_X);
            for (int k = 0; k < 1 + i % 3; k++)
                draw_glyph(p, l, tu_box(numbers + 14 * k, y - XH, numbers + 14 * k + 11, y), 0);
        }
        result res = run_stages(p, what);
        CHECK_INT(gutters_in(&res, entries_right, numbers), 1, "%s: gutter regions", what);
        compare_lines(p, &res, what);
        CHECK_INT(lines_across(&res, entries_right, numbers), rows,
                  "%s: lines from an entry into its number", what);
        result_free(&res);
        page_free(p);
    }
}

/* 4c. Two listings of 6 lines (numbers flush right at x = 200, code from x = 270: parted, as in
 * 4b) with a line of prose between them from x = 150 to 900, run across the numbers' white. The
 * white beside a column of numbers parts no lines, so the prose line stands whole: no cut where
 * it interrupts that white (a line printed across a gutter between columns of text is cut
 * there, test_bridged_gutter). */
static void test_prose_across_listing(void)
{
    const int numbers_right = 200, code = 270, rows = 6;
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "prose between two listings, seed %d", seed);
        tu_rng r = {(uint64_t)(470 + seed)};
        page *p = page_new(1000, 900);
        for (int i = 0; i < 2 * rows + 1; i++) {
            const int y = FIRST_BASE + i * PITCH;
            if (i == rows) {
                draw_line(p, &r, COL_X0, 900, y, 1, 0);
                continue;
            }
            draw_line(p, &r, code, code + tu_range(&r, 150, 400), y, 0, 0);
            const int n = new_line(p, y);
            for (int k = 0, x = numbers_right - 11; k < 3; k++, x -= 14)
                draw_glyph(p, n, tu_box(x, y - XH, x + 11, y), 0);
        }
        result res = run_stages(p, what);
        CHECK_INT(gutters_in(&res, numbers_right, code), 2, "%s: gutter regions", what);
        compare_lines(p, &res, what);
        CHECK_INT(lines_across(&res, numbers_right, code), 1, "%s: lines across the white", what);
        result_free(&res);
        page_free(p);
    }
}

/* 5. Two columns (gutter of 2 text heights) of three paragraphs of 5 lines each, the
 * paragraphs of both columns set side by side, so that the white bands between them run
 * across the page: one gutter from the first line to the last (the white bands do not end
 * it), and lt_xy_cut with lt_arrange read the left column entirely before the right one (a
 * reader's order: the gutter is cut before the bands). */
static void test_aligned_breaks(void)
{
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "paragraph breaks across the page, seed %d", seed);
        tu_rng r = {(uint64_t)(500 + seed)};
        page *p = page_new(1700, 1200);
        const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 2 * XH;
        for (int x = COL_X0; x <= x2; x += x2 - COL_X0)
            for (int k = 0, y = FIRST_BASE; k < 3; k++)
                y = draw_paragraph(p, &r, x, x + COL_WIDTH, y, 5) + PITCH;
        const int left_ink = ink_right(p, 0, 15), last_base = FIRST_BASE + 16 * PITCH;
        result res = run_stages(p, what);
        CHECK_INT(res.seps ? res.seps->ngutters : -1, 1, "%s: gutters", what);
        check_gutter(&res, p, left_ink, x2, white_after(left_ink), FIRST_BASE, last_base, what);
        compare_lines(p, &res, what);
        lt_params prm;
        lt_params_default(&prm);
        lt_error err = {0};
        lt_cut_node *root = NULL;
        lt_arrangement *arr = NULL;
        if (!res.lines || lt_xy_cut(res.lines, res.comps, res.seps, res.th, &prm, &root, &err) ||
            lt_arrange(root, res.lines, res.comps, res.th, &prm, p->img->height, &arr, &err)) {
            tu_fail("%s: blocks and order: %s", what, err.message);
        } else {
            CHECK_INT(arr->nlines, p->nlines, "%s: lines in the order", what);
            int wrong = 0;
            for (int i = 0; i < arr->nlines && i < p->nlines; i++)
                wrong += tu_cmp_box(&res.lines->items[arr->order[i]].box, &p->line_box[i]) != 0;
            CHECK_INT(wrong, 0, "%s: lines out of the drawing order (left column first)", what);
            CHECK_INT(arr->nblocks, 6, "%s: blocks (one a paragraph)", what);
        }
        lt_arrangement_free(arr);
        lt_cut_node_free(root);
        result_free(&res);
        page_free(p);
    }
}

/* 6. A key/value table of 6 rows: keys of one word (2 to 5 text heights long) at x = 150,
 * values of one to three words aligned at x = 350, so the white between them is 5 to 8 text
 * heights wide. Both sides are narrow columns (the cells of a table): the white is a gutter
 * that separates lines, and each key and each value is a line of its own. Only the values'
 * edge is aligned (the keys end ragged), so the gutter is the white within reach of it: the
 * windows of 5 cells ending at most 2 cells before the values. */
static void test_key_value(void)
{
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "key/value table, seed %d", seed);
        tu_rng r = {(uint64_t)(600 + seed)};
        page *p = page_new(1000, 600);
        const int values = COL_X0 + 200, rows = 6;
        int key_right = 0;
        for (int i = 0; i < rows; i++) {
            const int y = FIRST_BASE + i * PITCH;
            const int k =
                draw_plain_line(p, COL_X0, COL_X0 + tu_range(&r, 40, 100), y, LETTER_X, LETTER_X);
            if (p->line_box[k].right > key_right) key_right = p->line_box[k].right;
            draw_line(p, &r, values, values + tu_range(&r, 80, 250), y, 0, 0);
        }
        result res = run_stages(p, what);
        CHECK_INT(res.seps ? res.seps->ngutters : -1, 1, "%s: gutters", what);
        check_gutter(&res, p, key_right, values, values - (WINDOW + ALIGNED) * CELL, FIRST_BASE,
                     FIRST_BASE + (rows - 1) * PITCH, what);
        CHECK_INT(lt_gutter_between(res.seps, key_right, values, FIRST_BASE - XH, FIRST_BASE), 1,
                  "%s: gutter between key and value", what);
        compare_lines(p, &res, what);
        CHECK_INT(lines_across(&res, key_right, values), 0, "%s: lines from a key to its value",
                  what);
        result_free(&res);
        page_free(p);
    }
}

/* 7. The evidence for a gutter: two columns of `rows` plain lines (x = 150 to 770 and 805 to
 * 1425, a white of 1.75 text heights: 7 cells, under the 8 of a short table's column gap, see
 * test_short_table), baselines 50 px apart with the top of the ascenders on
 * the cell grid, so that a line whose letters beside the white are of full height gives
 * exactly 8 cell rows of words beside it, one whose letters there have descenders but no
 * ascenders 7. Three lines (24 rows) are too few for the 32 rows of GUTTER_MIN_SIDED, four
 * (32) and five (40) enough, four with one of those without ascenders (31) too few. Without the
 * gutter every row is one line (the white is narrower than lt_params' link_max_gap and than the 3
 * text heights from which a white strip through a neighbouring line refuses a link). */
static void test_evidence(void)
{
    const struct {
        int rows, short_row, found;
    } cases[] = {{3, -1, 0}, {4, 2, 0}, {4, -1, 1}, {5, -1, 1}};
    for (int ci = 0; ci < 4; ci++) {
        char what[64];
        snprintf(what, sizeof what, "evidence of %d lines%s", cases[ci].rows,
                 cases[ci].short_row >= 0 ? ", one without ascenders" : "");
        page *p = page_new(1600, 600);
        const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 7 * CELL, first = 125 + ASC;
        for (int i = 0; i < cases[ci].rows; i++) {
            const int edge = i == cases[ci].short_row ? LETTER_DESC : LETTER_FULL;
            draw_plain_line(p, COL_X0, x1, first + 50 * i, LETTER_X, edge);
            draw_plain_line(p, x2, x2 + COL_WIDTH, first + 50 * i, edge, LETTER_X);
        }
        result res = run_stages(p, what);
        const int found = cases[ci].found, rows = cases[ci].rows;
        CHECK_INT(res.seps ? res.seps->ngutters : -1, found, "%s: gutters", what);
        CHECK_INT(lt_separator_between(res.seps, x1, x2, first - ASC, first + 50 * (rows - 1)),
                  found, "%s: separator between the columns", what);
        if (found) {
            CHECK_BOX(gutter_in(&res, x1, x2),
                      tu_box(x1, first - ASC, x2, first - ASC + 50 * (rows - 1) + 8 * CELL),
                      "%s: gutter box (8 cell rows a line)", what);
            compare_lines(p, &res, what);
        } else {
            CHECK_INT(res.lines ? res.lines->count : -1, rows, "%s: lines", what);
            CHECK_INT(lines_across(&res, x1, x2), rows, "%s: lines across", what);
        }
        result_free(&res);
        page_free(p);
    }
}

/* 8. Alignment: two columns of 6 plain lines (full-height letters beside the white) whose
 * edges at the white are both staggered: the left column's line i ends `step` * i px before
 * x = 770, the right column's starts `step` * (5 - i) px after 810. With steps of 10 px (2
 * cells, within ALIGN_TOLERANCE of half a text height) two lines line up on each edge of the
 * white (16 cell rows, the 4 text heights asked for): a gutter. With steps of 15 px (3
 * cells) no two do: none, though the white is as tall. The lines are the same either way
 * (gaps of 90 and 115 px: wider than the 3 text heights from which a white strip through the
 * line above refuses a link, or than link_max_gap). */
static void test_alignment(void)
{
    const int steps[] = {10, 15};
    for (int si = 0; si < 2; si++) {
        char what[64];
        snprintf(what, sizeof what, "staggered edges, step %d px", steps[si]);
        page *p = page_new(1600, 700);
        const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 2 * XH, first = 125 + ASC, rows = 6;
        for (int i = 0; i < rows; i++) {
            draw_plain_line(p, COL_X0, x1 - steps[si] * i, first + 50 * i, LETTER_X, LETTER_FULL);
            draw_plain_line(p, x2 + steps[si] * (rows - 1 - i), x2 + COL_WIDTH, first + 50 * i,
                            LETTER_FULL, LETTER_X);
        }
        result res = run_stages(p, what);
        const int found = steps[si] == 10;
        CHECK_INT(res.seps ? res.seps->ngutters : -1, found, "%s: gutters", what);
        CHECK_INT(lt_separator_between(res.seps, x1, x2, first - ASC, first + 50 * (rows - 1)),
                  found, "%s: separator between the columns", what);
        compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* 9. Two columns of 10 plain lines, a gutter of 2 text heights, and in the left column the
 * last letters of lines 4 and 5 touching (a descender run into the ascender below, as in
 * close-set old type): one piece of text two lines tall beside the gutter. Its gap to the
 * right column is judged by the smaller piece's height (a body line), so the gutter refuses
 * the link and no line runs across it; judged by the pair's joint height (about 3.4 text
 * heights, a scale of 1.7: a threshold of 41 px) the 40 px gap would be a large type's word
 * space. lt_link_blocked over that gap: refused for pieces of body height, let through for
 * a height of three lines. */
static void test_touching_lines(void)
{
    const char *what = "lines touching beside a gutter";
    page *p = page_new(1600, 800);
    const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 2 * XH, first = 125 + ASC, rows = 10;
    int left[10];
    for (int i = 0; i < rows; i++) {
        left[i] = draw_plain_line(p, COL_X0, x1, first + PITCH * i, LETTER_X, LETTER_FULL);
        draw_plain_line(p, x2, x2 + COL_WIDTH, first + PITCH * i, LETTER_FULL, LETTER_X);
    }
    const int touch = 4, base = first + PITCH * touch;
    draw_glyph(p, left[touch], tu_box(x1 - 8, base, x1, base + PITCH - ASC + 1), 0);
    result res = run_stages(p, what);
    CHECK_INT(res.seps ? res.seps->ngutters : -1, 1, "%s: gutters", what);
    CHECK_INT(lines_across(&res, x1, x2), 0, "%s: lines across", what);
    CHECK_INT(res.lines ? res.lines->count : -1, 2 * rows - 1, "%s: lines", what);
    const int top = base - ASC, bottom = base + PITCH + DESC;
    CHECK_INT(lt_link_blocked(res.seps, x1, x2, top, bottom, ASC + DESC), 1,
              "%s: link of body height refused", what);
    CHECK_INT(lt_link_blocked(res.seps, x1, x2, top, bottom, 3 * PITCH), 0,
              "%s: link of three lines' height let through", what);
    result_free(&res);
    page_free(p);
}

/* 10. A gap of 3.5 text heights (70 px, wider than LOCAL_STRIP_GAP) between two words of a
 * line, with a white strip through the same columns in the line above, of two lines only (no
 * gutter: too little evidence). With words on both sides of the strip above, the link over
 * the gap is refused (a short table, a margin note); with a row of marks 8 px tall (0.4 text
 * heights: two cell rows, like the tip of a descender or heavy leader dots) on its right side
 * instead, the strip has text on one side only and the link stands: such marks are not as
 * tall as a letter (STRIP_SIDE_LETTER, three cell rows). */
static void test_strip_sides(void)
{
    for (int dots = 0; dots <= 1; dots++) {
        char what[64];
        snprintf(what, sizeof what, "white strip above with %s on its right",
                 dots ? "leader dots" : "words");
        page *p = page_new(1400, 400);
        const int x1 = 500, x2 = x1 + 70, above = 150, base = above + PITCH;
        draw_plain_line(p, COL_X0, x1, above, LETTER_X, LETTER_X);
        if (dots) {
            const int l = new_line(p, above);
            for (int x = x2; x + 6 <= x2 + 200; x += 12)
                draw_glyph(p, l, tu_box(x, above - 8, x + 6, above), 1);
        } else {
            draw_plain_line(p, x2, x2 + 200, above, LETTER_X, LETTER_X);
        }
        draw_plain_line(p, COL_X0, x1, base, LETTER_X, LETTER_X);
        draw_plain_line(p, x2, x2 + 200, base, LETTER_X, LETTER_X);
        result res = run_stages(p, what);
        CHECK_INT(res.seps ? res.seps->ngutters : -1, 0, "%s: gutters", what);
        CHECK_INT(lt_link_blocked(res.seps, x1, x2, base - XH, base, XH), !dots,
                  "%s: link over the gap refused", what);
        result_free(&res);
        page_free(p);
    }
}

/* 11. Two columns of 16 plain lines with a gutter of 2 text heights, where lines of the left
 * column run on across the gutter into the right column's measure (their rows hold nothing
 * else). Rows 6 and 8 across, row 7 keeping to the columns between them: the gutter goes on
 * through rows 6 to 8 (BRIDGE_MAX_ROWS), so both lines across are cut at it and no line
 * crosses it: 32 lines (row 7's piece of the gutter, with lines across just above and below,
 * is no river: the pieces in line with it end at the white over and under the columns). Rows 6, 8 and 9 across (8 and 9 one after the other, as a paragraph
 * set across the columns): the gutter stops above row 6 and starts again at row 10, and the
 * four lines between stand whole (row 7's gap, beside no gutter, is a wide word space to the
 * line stage): 28 lines, 4 across. */
static void test_bridged_gutter(void)
{
    for (int in_a_row = 0; in_a_row <= 1; in_a_row++) {
        char what[64];
        snprintf(what, sizeof what, "lines across a gutter, %s",
                 in_a_row ? "two of them in a row" : "lines keeping between them");
        page *p = page_new(1600, 1000);
        const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 2 * XH, first = 125 + ASC, rows = 16;
        for (int i = 0; i < rows; i++) {
            const int across = i == 6 || i == 8 || (in_a_row && i == 9);
            const int base = first + PITCH * i;
            if (across) {
                draw_plain_line(p, COL_X0, x2 + COL_WIDTH, base, LETTER_X, LETTER_X);
                continue;
            }
            draw_plain_line(p, COL_X0, x1, base, LETTER_X, LETTER_FULL);
            draw_plain_line(p, x2, x2 + COL_WIDTH, base, LETTER_FULL, LETTER_X);
        }
        result res = run_stages(p, what);
        const int row7 = first + PITCH * 7;
        CHECK_INT(lt_gutter_between(res.seps, x1, x2, row7 - XH, row7), !in_a_row,
                  "%s: gutter beside row 7", what);
        CHECK_INT(lines_across(&res, x1, x2), in_a_row ? 4 : 0, "%s: lines across", what);
        CHECK_INT(res.lines ? res.lines->count : -1, in_a_row ? 28 : 32, "%s: lines", what);
        result_free(&res);
        page_free(p);
    }
}

/* 12. Two columns justified on both sides (a gutter of 2 text heights, 40 px), where one
 * line of the left column ends in a letter (an x-height tall) reaching into the gutter: white
 * of 24 px is left beside it (4 white cells, fewer than the window's 5, at least
 * PINCH_MIN_WHITE's 3: the gutter is pinched) or 12 px (2 cells at most: the line runs
 * across). Over 15 rows, with the pinch in the fourth line, the gutter goes on through that
 * line: one gutter from the first line down, and no line across it. Not so (no gutter reaches
 * above the pinched line; the lines above it are too few to be a gutter of their own, and
 * are read across) with white of 12 px; over 14 rows (just too few rows with words on both
 * sides for PINCH_MIN_BORDERED, 16 text heights); with the pinch in the third line (the two
 * lines above it give fewer rows with words on both sides than GUTTER_MIN_BORDERED, 3 text
 * heights: no gutter reaches down to it, as none reaches down to a line of a heading over the
 * columns); with the right column's lines starting at five places 15 px apart (its edge not
 * aligned: evidence from one side only); or with the letter reaching in 45 px tall (more than
 * a line's two text heights of pinched rows at a time; 35 px goes through). Over 24 rows,
 * every other line from the fourth pinched: four such lines are at most PINCH_SHARE (a
 * quarter) of the rows with words on both sides, five are more. */
static void test_pinched_gutter(void)
{
    const struct {
        int rows, white, pinched, npinched, ragged, height, through;
    } cases[] = {{15, 24, 3, 1, 0, XH, 1},        {15, 12, 3, 1, 0, XH, 0},
                 {14, 24, 3, 1, 0, XH, 0},        {15, 24, 2, 1, 0, XH, 0},
                 {24, 24, 3, NPINCHED, 0, XH, 1}, {24, 24, 3, NPINCHED + 1, 0, XH, 0},
                 {15, 24, 3, 1, 1, XH, 0},        {15, 24, 3, 1, 0, 35, 1},
                 {15, 24, 3, 1, 0, 45, 0}};
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        const int rows = cases[c].rows, white = cases[c].white, pinched = cases[c].pinched;
        char what[96];
        snprintf(what, sizeof what,
                 "a gutter pinched to %d px over %d px in %d line(s) from line %d of %d%s", white,
                 cases[c].height, cases[c].npinched, pinched + 1, rows,
                 cases[c].ragged ? ", ragged" : "");
        page *p = page_new(1600, FIRST_BASE + rows * PITCH + 100);
        const int x1 = COL_X0 + COL_WIDTH, x2 = x1 + 2 * XH;
        int left[24];
        for (int i = 0; i < rows; i++) {
            const int is_pinched =
                i >= pinched && (i - pinched) % 2 == 0 && (i - pinched) / 2 < cases[c].npinched;
            const int start = x2 + (cases[c].ragged && !is_pinched ? 15 * (1 + i % 5) : 0);
            left[i] = draw_plain_line(p, COL_X0, x1, FIRST_BASE + PITCH * i, LETTER_FULL, LETTER_X);
            draw_plain_line(p, start, x2 + COL_WIDTH, FIRST_BASE + PITCH * i, LETTER_FULL,
                            LETTER_X);
            const int base = FIRST_BASE + PITCH * i;
            if (is_pinched)
                draw_glyph(p, left[i], tu_box(x1 + 3, base - cases[c].height, x2 - white, base), 0);
        }
        const int base = FIRST_BASE + PITCH * pinched;
        result res = run_stages(p, what);
        const lt_box g = gutter_in(&res, x1, x2);
        if (cases[c].through)
            CHECK(g.bottom > g.top && g.top <= FIRST_BASE - XH, "%s: gutter from %d to %d", what,
                  g.top, g.bottom);
        else
            CHECK(g.bottom == 0 || g.top > base, "%s: gutter from %d, above the pinched line", what,
                  g.top);
        const int across = lines_across(&res, x1, x2);
        if (cases[c].through)
            CHECK_INT(across, 0, "%s: lines across", what);
        else if (!cases[c].ragged) /* the pinched line's wide gap may part it all the same */
            CHECK(across >= pinched, "%s: %d lines across, want %d or more", what, across, pinched);
        result_free(&res);
        page_free(p);
    }
}

/* 14. Thresholds in whole cells whatever the text height's last digits: boxes of text (set
 * by hand, not drawn) on both sides of a white 4 text heights wide, a tall word on the left
 * (48 cell rows of words beside the white, its right edge aligned) and on the right words in
 * exactly `right_rows` cell rows. Three text heights of rows with words on both sides (12
 * cells) make a gutter, 11 do not. The text heights 20 and 21.338 px both have cells of a
 * quarter of one; at 21.338 the quotient 3 * th / cell is 12.000000000000002 in double
 * precision (computed, not from memory), whose ceiling had asked for 13 rows. */
static void test_whole_cells(void)
{
    const double heights[] = {20.0, 21.338};
    for (int hi = 0; hi < 2; hi++)
        for (int right_rows = 11; right_rows <= 12; right_rows++) {
            char what[80];
            snprintf(what, sizeof what, "text height %.3f, %d rows bordered", heights[hi],
                     right_rows);
            const double th = heights[hi], cell = th / 4;
            /* a box covering the cell rows [r0, r1) and the px columns [x0, x1) */
            lt_component items[2];
            const int x_gap0 = (int)(40 * cell), x_gap1 = (int)(56 * cell);
            const struct { int x0, x1, r0, r1; } boxes[2] = {
                {(int)(10 * cell), x_gap0, 20, 68}, {x_gap1, (int)(90 * cell), 30, 30 + right_rows}};
            for (int k = 0; k < 2; k++) {
                const int top = (int)ceil(boxes[k].r0 * cell + 0.5),
                          bottom = (int)floor(boxes[k].r1 * cell - 0.5);
                items[k] = (lt_component){tu_box(boxes[k].x0, top, boxes[k].x1, bottom), 1000,
                                          0, 0, LT_COMP_TEXT, bottom - top};
            }
            lt_components comps = {items, 2};
            lt_separators *seps = NULL;
            lt_error err = {0};
            if (lt_find_separators(&comps, th, &seps, &err)) {
                tu_fail("%s: %s", what, err.message);
                continue;
            }
            CHECK_INT(seps->ngutters, right_rows == 12, "%s: gutters", what);
            lt_separators_free(seps);
        }
}

/* 15. The white strip that refuses a wide gap from the line above: text height 20 px (cells
 * of 5 px), a gap of 80 px (4 text heights, over the 3 from which strips count) between two
 * words of a row, and in the line above two words with `cells` white cells between them,
 * inside the gap. Seven cells (1.75 text heights) refuse the link, six do not. */
static void test_strip_width(void)
{
    for (int cells = 6; cells <= 7; cells++) {
        char what[64];
        snprintf(what, sizeof what, "a strip of %d cells above a wide gap", cells);
        const lt_box boxes[4] = {tu_box(100, 100, 250, 120), tu_box(250 + 5 * cells, 100, 500, 120),
                                 tu_box(100, 150, 240, 170), tu_box(320, 150, 500, 170)};
        lt_component items[4];
        for (int k = 0; k < 4; k++)
            items[k] = (lt_component){boxes[k], 1000, 0, 0, LT_COMP_TEXT, 20};
        lt_components comps = {items, 4};
        lt_separators *seps = NULL;
        lt_error err = {0};
        if (lt_find_separators(&comps, 20, &seps, &err)) {
            tu_fail("%s: %s", what, err.message);
            continue;
        }
        CHECK_INT(seps->ngutters, 0, "%s: gutters", what);
        CHECK_INT(lt_link_blocked(seps, 240, 320, 150, 170, 20), cells == 7, "%s: link refused",
                  what);
        lt_separators_free(seps);
    }
}

/* 16. A short table: `rows` rows of three cells of plain lines 100 px wide, of x-height letters
 * only (5 cell rows a line: the tops of the ascenders would be on the cell grid), baselines 50
 * px apart, the cells `white` px apart. Four rows are too few for the 32 cell rows of words
 * beside a long gutter (20), but the cells' ends line up on the left of each white and their
 * starts on its right in every row: a table's column gap when the white is at least 2 text
 * heights wide (8 cells: 40 px) in every row, and not at 7 cells (35 px: a typewriter's space
 * beside narrow letters is 1.25 to 1.5), and when the table has at least 4 rows (3 are not
 * enough). With the last row's middle cell starting 15 px (3 cells, beyond ALIGN_TOLERANCE)
 * late, the first white's right edge lines up in 15 of 20 cell rows, not more than three
 * quarters: that white is no gutter (its cells join), the second still is. Without a gutter
 * each row's cells join (their gaps are under link_max_gap and under the 3 text heights of a
 * white strip's refusal). */
static void test_short_table(void)
{
    const struct {
        int rows, white, late, gutters, lines_per_row;
    } cases[] = {{4, 40, 0, 2, 3}, {4, 35, 0, 0, 1}, {3, 40, 0, 0, 1}, {4, 40, 15, 1, 2}};
    for (int ci = 0; ci < 4; ci++) {
        char what[80];
        snprintf(what, sizeof what, "short table of %d rows, white %d px, late start %d px",
                 cases[ci].rows, cases[ci].white, cases[ci].late);
        page *p = page_new(1000, 400);
        const int first = 125 + ASC, w = cases[ci].white, rows = cases[ci].rows;
        for (int i = 0; i < rows; i++)
            for (int c = 0; c < 3; c++) {
                const int x0 = COL_X0 + c * (100 + w);
                const int late = c == 1 && i == rows - 1 ? cases[ci].late : 0;
                draw_plain_line(p, x0 + late, x0 + 100, first + 50 * i, LETTER_X, LETTER_X);
            }
        result res = run_stages(p, what);
        CHECK_INT(res.seps ? res.seps->ngutters : -1, cases[ci].gutters, "%s: gutters", what);
        CHECK_INT(res.lines ? res.lines->count : -1, rows * cases[ci].lines_per_row,
                  "%s: lines", what);
        CHECK_INT(lines_across(&res, COL_X0 + 2 * 100 + w, COL_X0 + 2 * (100 + w)),
                  cases[ci].gutters ? 0 : rows, "%s: lines across the second white", what);
        result_free(&res);
        page_free(p);
    }
}

/* 17. A column of short labels (30 px, 1.5 text heights: "1.1", "1.2", "1.3") before items
 * starting 55 px (2.75 text heights) after them, four rows of x-height letters: both edges of
 * the white line up and it is wide, as a short table's column gap, but the labels are a column
 * of short items beside lines of text, so the white is no gutter at all, and each label stays
 * in the line of its item. With 8 rows the white has the evidence of a long gutter: a gutter
 * region beside a column of items, whose white, wider than ITEM_GAP (2.5 text heights), parts
 * the labels from their items as a listing's numbers set in a column of their own. */
static void test_table_labels(void)
{
    const int nrows[] = {4, 8};
    for (int ni = 0; ni < 2; ni++) {
        char what[64];
        snprintf(what, sizeof what, "labels before %d items", nrows[ni]);
        page *p = page_new(1000, 600);
        const int first = 125 + ASC, label_right = COL_X0 + 30, items = label_right + 55;
        for (int i = 0; i < nrows[ni]; i++) {
            const int l =
                draw_plain_line(p, COL_X0, label_right, first + 50 * i, LETTER_X, LETTER_X);
            join_truth(p, l, draw_plain_line(p, items, 800, first + 50 * i, LETTER_X, LETTER_X));
        }
        result res = run_stages(p, what);
        const int parted = nrows[ni] > 4;
        CHECK_INT(gutters_in(&res, label_right, items), parted, "%s: gutter regions", what);
        CHECK_INT(lt_link_blocked(res.seps, label_right, items, first - ASC, first + DESC,
                                  ASC + DESC),
                  parted, "%s: link from the first label to its item blocked", what);
        CHECK_INT(res.lines ? res.lines->count : -1, nrows[ni] * (1 + parted), "%s: lines",
                  what);
        if (!parted) compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* 18. The short table's decision does not hang on where the cell grid falls: a table of
 * four rows of three cells set by hand (boxes 1.5 text heights tall, 5 wide, rows 2.5 text
 * heights apart, cells 2.25 text heights apart: 9 cells of white, 7 to 9 of them wholly white
 * as the grid falls), at text heights of 20 to 20.9 px (each cell a quarter of one) and moved
 * right and down by 0 to 4 px (a known transformation: a translation by a part of a cell):
 * two gutters every time, each between two cells of every row. The white is measured to the
 * pixel; counted in whole cells it fell under the 8 of TABLE_MIN_WHITE at 3 of these 50
 * placements. */
static void test_table_offsets(void)
{
    for (int ti = 0; ti < 10; ti++)
        for (int shift = 0; shift <= 4; shift++) {
            char what[64];
            const double th = 20.0 + 0.1 * ti;
            snprintf(what, sizeof what, "table at text height %.1f moved %d px", th, shift);
            lt_component items[12];
            for (int i = 0; i < 4; i++)
                for (int c = 0; c < 3; c++) {
                    const int x0 = shift + (int)lround((5 + c * 7.25) * th),
                              top = shift + (int)lround((5 + i * 2.5) * th);
                    const lt_box b = tu_box(x0, top, x0 + (int)lround(5 * th),
                                            top + (int)lround(1.5 * th));
                    items[3 * i + c] = (lt_component){b, 1000, 0, 0, LT_COMP_TEXT,
                                                      b.bottom - b.top};
                }
            lt_components comps = {items, 12};
            lt_separators *seps = NULL;
            lt_error err = {0};
            if (lt_find_separators(&comps, th, &seps, &err)) {
                tu_fail("%s: %s", what, err.message);
                continue;
            }
            CHECK_INT(seps->ngutters, 2, "%s: gutters", what);
            for (int c = 0; c < 2; c++)
                CHECK_INT(lt_link_blocked(seps, items[c].box.right, items[c + 1].box.left,
                                          items[c].box.top, items[c].box.bottom, th),
                          1, "%s: link over white %d blocked", what, c + 1);
            lt_separators_free(seps);
        }
}

int main(void)
{
    double t0 = tu_now_s();
    test_two_columns();
    test_river();
    test_index();
    test_index_long_entries();
    test_index_wide_numbers();
    test_contents_leaders();
    test_list_labels();
    test_numbered_listing();
    test_prose_across_listing();
    test_aligned_breaks();
    test_key_value();
    test_evidence();
    test_alignment();
    test_touching_lines();
    test_strip_sides();
    test_bridged_gutter();
    test_pinched_gutter();
    test_whole_cells();
    test_strip_width();
    test_short_table();
    test_table_labels();
    test_table_offsets();
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_separators");
}

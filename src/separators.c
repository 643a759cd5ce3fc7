/* separators.c — the obstacles that text lines, blocks and the reading order respect, found
 * once: ruling lines (rule components) and column gutters, tall strips of white in the text's
 * occupancy (after Breuel 2002, "Two geometric algorithms for layout analysis": whitespace
 * rectangles between columns, a few intruding components allowed), taken as gutters only on
 * evidence from both sides: words beside the white over a long stretch, lined up along one of
 * its edges. */
#include "internal.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Constants of the stage, in text heights (th) unless said otherwise. */
static const double CELL_TH = 0.25;          /* side of an occupancy cell: fine enough for gaps */
static const long MAX_CELLS = 1L << 24;      /* cells of the grid at most (the cell grows) */
static const double CELL_SLACK = 1e-6;       /* cells: rounding error of a length in cells */
static const double GUTTER_MIN_WIDTH = 1.2;  /* narrowest gutter: wider than a word space */
static const double GUTTER_MAX_WIDTH = 12.0; /* a wider white is a margin or an empty area */
/* A column of short items (page numbers set flush right after a column of text, list labels,
 * version numbers before their entries) belongs to the lines beside it: a gutter region with
 * text reaching less than NARROW_COLUMN from it (text closer than NARROW_GAP, wider than the
 * spacing of a leader's dots, counting as one) in all but NARROW_SHARE of its rows on one side
 * and farther on the other separates no lines (it still separates columns for the blocks,
 * as labels set apart in the white between two columns do). Two narrow columns side by side
 * are the cells of a table. A section number of three levels (10.5.5) or two page numbers
 * (42, 43) reach 4 to 5 text heights. */
static const double NARROW_COLUMN = 5.0;
static const double NARROW_GAP = 2.0;
static const double NARROW_SHARE = 0.25;
/* Right of such a column, a gap wider than ITEM_GAP (a label stands an en or em space, one
 * or two text heights, before its item), white in the pair's rows and with words within
 * ITEM_WORD_REACH on both sides, is the white after a listing's line numbers or a
 * bibliography's labels set in a column of their own: it parts the numbers from their rows.
 * Page numbers after their entries stay joined, reached by a leader (whose dots stand in the
 * gap or end it) or set off by white where the entry left no room for one. */
static const double ITEM_GAP = 2.5;
static const double ITEM_WORD_REACH = 1.0;
/* Page numbers set flush right after their entries: the white before them (a gutter region
 * beside a narrow column on its right) is no strip between cells (LOCAL_STRIP_GAP) where the
 * entries end raggedly (at most RAGGED_SHARE of the lines that leave the white open end at its
 * edge, within ALIGN_TOLERANCE), more than RAGGED_SHARE of the lines beside it leave it open,
 * and more than RAGGED_SHARE of the numbers end at one place: an entry too long for a leader
 * stays joined to its numbers beside entries as long above and below. The leaders of a
 * contents list all end at one place before a column of numbers of its own. */
static const double RAGGED_SHARE = 0.5;
/* The white between leaders and their page numbers separates no lines: more than LEADER_SHARE
 * of the lines left of it end in a leader's dot. */
static const double LEADER_SHARE = 0.5;
/* What stands beside a gutter region that separates no lines (lt_separators.items_side). */
enum { ITEMS_NONE, ITEMS_BEFORE, ITEMS_AFTER, ITEMS_AFTER_RAGGED };
/* Evidence for a gutter, in text heights of rows (a line of body text inks about two):
 * rows with words on both sides of the white, more than one line's worth (the pair that asks
 * may be one); rows with words beside it on either side, about four lines' worth: the white
 * between words of two or three lines of a paragraph (a river) is shorter, while the strip
 * after a column of list labels runs down beside every line of the items; and words aligned
 * on one of its edges (the starts of a column's lines, or the ends of justified ones) in two
 * lines' worth of rows: the white before page numbers set flush right has ragged ends on its
 * left and ragged starts on its right. */
static const double GUTTER_MIN_BORDERED = 3.0;
static const double GUTTER_MIN_SIDED = 8.0;
static const double GUTTER_MIN_ALIGNED = 4.0;
static const double ALIGN_TOLERANCE = 0.5; /* edges this close line up */
/* A table's column gap holds evidence enough however short the table: words on both sides in
 * at least TABLE_MIN_ROWS lines (rows of cells) and GUTTER_MIN_BORDERED of rows, lined up on
 * BOTH of its edges (the cells' ends on its left, their starts on its right, each within
 * ALIGN_TOLERANCE) in more than TABLE_ALIGNED_SHARE of the rows beside it, and white at least
 * TABLE_MIN_WHITE wide, measured to the pixel, in every row with words on both sides. A river
 * of white in prose has ragged edges; in typewritten or monospaced text every edge lines up,
 * but the white is one space wide (1.25 to 1.5 text heights beside narrow letters), while a
 * table's column gap is wider (12 pt in LaTeX: 2.7 text heights of 10 pt type). Two or three
 * rows with such white (an entry repeated in an index, two-column answers to a question) are
 * joined by the truth of the development sets; see keep_table_gaps for what stands beside. */
static const double TABLE_ALIGNED_SHARE = 0.75;
enum { TABLE_MIN_ROWS = 4 };
static const double TABLE_MIN_WHITE = 2.0;
/* Words beside the white: the nearest ink is a body, or a mark (final punctuation) this
 * close to a body. Leader dots alone do not border a gutter. */
static const double WORD_REACH = 0.6;
/* A gap this wide, wider than the widest stretched word space of a justified line, is refused
 * also where a white strip (STRIP_MIN_WIDTH wide) through it runs through the two lines above
 * or the two below (STRIP_REACH up or down) with text on both sides within STRIP_SIDE: the
 * cells of a short table, a margin note, a word set apart from its line by a wide white.
 * A gap this wide after a leader (its last dot with no letter within WORD_REACH before it,
 * another dot within NARROW_GAP before that) is the white before a page number where no line
 * within STRIP_REACH above or below runs across it (no white STRIP_MIN_WIDTH wide left in the
 * gap's columns of their rows) and the number ends flush with the text of those rows (within
 * ALIGN_TOLERANCE, no text beyond it within GUTTER_MIN_WIDTH): the leaders of a contents list
 * end at one place before a column of numbers set flush right, a strip of white with lines on
 * both sides, and a line is not joined across such a strip. Where the leaders end as far
 * apart as the numbers are wide (an index) the gap is narrower, and a leader leads on to its
 * number (LEADER_SHARE). */
static const double LOCAL_STRIP_GAP = 3.0;
/* A gap no wider than STRETCHED_SPACE (a word space stretched to twice its width in a
 * justified line, a space of monospaced type: 1.3 text heights) is refused by a gutter only
 * where the gutter is no river of white: the word spaces of a few lines of a paragraph, a
 * listing or an index entry's first line line up by chance into white that looks like a gutter,
 * with lines running across it just above and below; the white between columns begins or ends
 * at white (the top or foot of the columns, a paragraph break), above or below one of the
 * gutter's pieces one over the other where lines are printed across it. 1.9 and 2.0 scored
 * alike on the development sets; at 2.1 the cells of a table of words 2.5 text heights apart
 * (stretched by their capitals' height) were joined. */
static const double STRETCHED_SPACE = 2.0;
/* Height of a line of body text (ascenders to descenders), in text heights: gap thresholds
 * grow with a pair taller than that (the word spaces of large type are wide). */
static const double LINE_HEIGHT = 2.0;
/* Seven whole cells of white: 1.5 text heights had come out as 6 or 7 cells as the text
 * height's last digits fell; 7 on every page scored as well as or better than either on the
 * development sets. */
static const double STRIP_MIN_WIDTH = 1.75;
static const double STRIP_REACH = 5.0;
static const double STRIP_SIDE = 4.0;
/* Text on a side of the strip stands in rows as tall as a letter, not only in the few of a
 * descender's tip reaching into the rows looked at. */
static const double STRIP_SIDE_LETTER = 0.75;
static const double MIN_DOT_AREA = 0.02; /* text heights squared: the smallest dot of a leader */
/* A gutter interrupted by a few lines printed across it (overfull lines run on into the next
 * column) goes on below them: two stretches of gutter white one over the other, at most
 * BRIDGE_MAX_ROWS apart, are one gutter where a line that keeps to the columns (white as
 * wide as a gutter at that place in all its rows, text on both sides, at least
 * BRIDGE_MIN_OPEN tall: a letter's height) stands between any two lines across it. A heading
 * over both columns between two sections of them keeps to no columns; two listings whose
 * number columns line up, with a paragraph between, have no line keeping to both sides. */
static const double BRIDGE_MAX_ROWS = 16.0;
static const double BRIDGE_MIN_OPEN = 0.75;
/* BRIDGE_MAX_ROWS in cells at most: a cell is never smaller than CELL_TH text heights. */
enum { BRIDGE_MAX_CELLS = 64 };
/* Marks in a gutter: a speck of noise here and there, but not a dot in every line (a leader
 * runs through the white before its page numbers). */
static const double MAX_DOTS_PER_LINE = 0.3;
/* A gutter pinched by a line whose last or first letters reach into it (a hyphen, a swash, a
 * descender's tail) goes on through the line where white PINCH_MIN_WHITE wide (wider than a
 * word space of body type) still runs through the window, for at most a line's height (two
 * text heights of rows) at a time, below a stretch already bordered on both sides in
 * GUTTER_MIN_BORDERED of rows (not through a heading or page number over the columns, whose
 * own rows border no white), taken on evidence from both sides over a long stretch:
 * words aligned on its left edge and on its right edge, each in GUTTER_MIN_ALIGNED of rows,
 * words on both sides in PINCH_MIN_BORDERED of rows (eight lines' worth), and pinched rows
 * at most PINCH_SHARE of those. The white between words of a few lines (a river) narrows and
 * widens with every line and has ragged edges. Runs that end at any text are kept beside
 * these, so a pinch taken in vain loses no gutter. */
static const double PINCH_MIN_WHITE = 0.75;    /* text heights */
static const double PINCH_SHARE = 0.25;        /* pinched rows per row with words on both sides */
static const double PINCH_MIN_BORDERED = 16.0; /* text heights of rows */

static int imin(int a, int b)
{
    return a < b ? a : b;
}

static int imax(int a, int b)
{
    return a > b ? a : b;
}

/* A length of `length_th` text heights in whole cells of `cell` px, rounded up (`up`) or
 * down. A cell is a quarter text height, so most such lengths are whole numbers of cells,
 * and their quotient in floating point lies a hair to either side of it as the text
 * height's last digits fall (3 text heights were 12 cells at some heights and 13 at
 * others). A quotient within CELL_SLACK of a whole number is that number. */
static int th_cells(double length_th, double th, double cell, int up)
{
    const double q = length_th * th / cell;
    return up ? (int)ceil(q - CELL_SLACK) : (int)floor(q + CELL_SLACK);
}

/* Where the ink of a cell lies across it: from `left` to `right` in SPAN_UNITS of the cell's
 * width (the boxes of its components), so that a white between two cells is measured to the
 * pixel and not in whole cells, whose count a shift of the grid by a part of a cell changes. */
enum { SPAN_UNITS = 255 };
typedef struct ink_span {
    uint8_t left, right;
} ink_span;

/* Marks the cells of the page's text in occ (cols x rows, row-major): 3 for bodies (letters,
 * words), 2 for marks (punctuation, dots), 1 for specks the size of a small dot (a leader's
 * dots at low resolution, or noise: white may hold a few of them). Smaller specks, rules and
 * pictures are not text. Where the ink lies across each cell goes to span. */
static void fill_occupancy(const lt_components *c, double th, double cell, int cols, int rows,
                           uint8_t *occ, ink_span *span)
{
    for (int i = 0; i < c->count; i++) {
        const lt_component *k = &c->items[i];
        const lt_box *b = &k->box;
        uint8_t v;
        if (k->kind == LT_COMP_TEXT)
            v = lt_box_height(b) >= 0.5 * th || lt_box_width(b) >= th ? 3 : 2;
        else if (k->kind == LT_COMP_SPECKLE && k->pixels >= fmax(3, MIN_DOT_AREA * th * th))
            v = 1;
        else
            continue;
        int x0 = (int)(b->left / cell), x1 = (int)((b->right - 1) / cell);
        int y0 = (int)(b->top / cell), y1 = (int)((b->bottom - 1) / cell);
        if (x1 >= cols) x1 = cols - 1;
        if (y1 >= rows) y1 = rows - 1;
        /* where the box begins in its first cell and ends in its last */
        const int from = (int)floor((b->left / cell - x0) * SPAN_UNITS),
                  to = x1 == (int)((b->right - 1) / cell)
                           ? (int)ceil((b->right / cell - x1) * SPAN_UNITS)
                           : SPAN_UNITS;
        for (int y = y0; y <= y1; y++)
            for (int x = x0; x <= x1; x++) {
                uint8_t *o = occ + (size_t)y * cols + x;
                if (*o < v) *o = v;
                ink_span *sp = span + (size_t)y * cols + x;
                const int l = x > x0 ? 0 : imin(imax(from, 0), SPAN_UNITS),
                          r = x < x1 ? SPAN_UNITS : imin(imax(to, 0), SPAN_UNITS);
                if (l < sp->left) sp->left = (uint8_t)l;
                if (r > sp->right) sp->right = (uint8_t)r;
            }
    }
}

/* State of one window column while the rows are scanned top to bottom. */
typedef struct run {
    int first, last; /* first and last row with words beside the current white run, or -1 */
    int bordered;    /* rows in it with words on both sides */
    int sided;       /* rows in it with words on at least one side */
    int aligned[2];  /* rows in it with words ending at its left edge, starting at its right */
    int dots;        /* runs of rows with marks (dots, specks) in the window */
    int dotted;      /* the previous row had marks in the window */
    int pinched;     /* rows in it with text in the window, white narrowed by PINCH_MIN_WHITE */
    int pinch;       /* the pinched rows just before the current one */
    double narrowest; /* cells of white between the inks of its narrowest bordered row */
    int lines_bordered; /* runs of rows one after the other with words on both sides */
    int first_bordered, last_bordered; /* rows with words on both sides, or -2 */
    /* its rows with words on both sides by the cells of white between the window's left edge
       and the ink before it (edges[0, n)), and between its right edge and the ink after it
       (edges[n, 2n)), n = max_gap + 1: where the cells of a table end and start */
    int *edges;
} run;

static const run EMPTY_RUN = {-1, -1, 0, 0, {0, 0}, 0, 0, 0, 0, HUGE_VAL, 0, -2, -2, NULL};

typedef struct evidence {
    int width;           /* window, cells */
    int max_gap;         /* widest white, cells, between the words of a bordered row */
    int word_reach;      /* cells */
    double table_white;  /* cells */
    int min_bordered;    /* rows */
    int min_sided;       /* rows */
    int min_aligned;     /* rows */
    int line_rows;       /* rows a line of text inks */
    int align_tolerance; /* cells */
    int bridge_rows;     /* rows */
    int bridge_open;     /* rows */
    int pinch_white;     /* cells */
    int pinch_bordered;  /* rows */
} evidence;

/* Empties r, keeping its edge counts (n of each side) and zeroing them. */
static void reset_run(run *r, int n)
{
    int *edges = r->edges;
    if (r->bordered) memset(edges, 0, 2 * (size_t)n * sizeof *edges);
    *r = EMPTY_RUN;
    r->edges = edges;
}

/* Makes dst a copy of src, edge counts (n of each side) too. */
static void copy_run(run *dst, const run *src, int n)
{
    int *edges = dst->edges;
    memcpy(edges, src->edges, 2 * (size_t)n * sizeof *edges);
    *dst = *src;
    dst->edges = edges;
}

/* The most rows of count[0, n) (rows by an edge's distance from the window) within
 * `tolerance` + 1 neighbouring distances: the rows whose edges line up. */
static int aligned_most(const int *count, int n, int tolerance)
{
    int best = 0;
    for (int o = 0, in = 0; o < n; o++) {
        in += count[o] - (o > tolerance ? count[o - tolerance - 1] : 0);
        if (in > best) best = in;
    }
    return best;
}

/* Values of the gutter mask while it is built: a gutter's cell on the evidence of a long
 * stretch, or on that of a short table's column gap alone (TABLE_MIN_ROWS). */
enum { MASK_GUTTER = 1, MASK_TABLE = 2 };

/* Ends the white run of window cx: with enough evidence, its cells from the first to the last
 * row with words beside it, but for the text of pinched rows (occ, cols wide), join the gutter
 * mask (MASK_GUTTER, or MASK_TABLE where no other evidence marked them). */
static void close_run(run *r, int cx, const evidence *e, const uint8_t *occ, int cols,
                      uint8_t *mask)
{
    const int pinch_evidence =
        r->pinched == 0 ||
        (r->aligned[0] >= e->min_aligned && r->aligned[1] >= e->min_aligned &&
         r->bordered >= e->pinch_bordered && r->pinched <= PINCH_SHARE * r->bordered);
    const int n = e->max_gap + 1;
    const double aligned_rows = TABLE_ALIGNED_SHARE * r->sided;
    const int short_table = r->lines_bordered >= TABLE_MIN_ROWS && r->narrowest >= e->table_white &&
                            aligned_most(r->edges, n, e->align_tolerance) > aligned_rows &&
                            aligned_most(r->edges + n, n, e->align_tolerance) > aligned_rows;
    const int long_stretch = r->sided >= e->min_sided &&
                             (r->aligned[0] >= e->min_aligned || r->aligned[1] >= e->min_aligned);
    if (r->bordered >= e->min_bordered && (long_stretch || short_table) &&
        r->dots * e->line_rows <= MAX_DOTS_PER_LINE * r->sided && pinch_evidence)
        /* a table's gap reaches from its first row of cells to its last */
        for (int y = long_stretch ? r->first : r->first_bordered;
             y <= (long_stretch ? r->last : r->last_bordered); y++)
            for (int x = cx; x < cx + e->width; x++) {
                uint8_t *m = mask + (size_t)y * cols + x;
                if (occ[(size_t)y * cols + x] < 2 && *m != MASK_GUTTER)
                    *m = long_stretch ? MASK_GUTTER : MASK_TABLE;
            }
    reset_run(r, n);
}

/* Whether the text in the window of the n cells of row leaves white of at least `white` cells
 * through it (a pinch: letters reaching in from its edges). */
static int white_through(const uint8_t *row, int n, int white)
{
    for (int x = 0, run = 0; x < n; x++)
        if ((run = row[x] >= 2 ? 0 : run + 1) >= white) return 1;
    return 0;
}

/* What a row holds beside a window that is white of text: words near its left edge, its right
 * edge, on both sides (with white between them no wider than a gutter), and words aligned on
 * its left and right edges. */
typedef struct beside {
    int left, right, both;
    double white_exact; /* white between the inks on its left and right, to the pixel (see
                           ink_span), in cells */
    int offset[2]; /* cells of white between the window and the ink on its left, on its right */
    int aligned[2];
} beside;

/* Counts a row of the white run r: marks in the window (dotted), else the words beside it
 * (n: the edge counts of a side, see run). */
static void note_row(run *r, int y, int dotted, const beside *b, int n)
{
    r->dots += dotted && !r->dotted;
    r->dotted = dotted;
    if (dotted || (!b->left && !b->right)) return;
    if (r->first < 0) r->first = y;
    r->last = y;
    r->sided++;
    r->bordered += b->both;
    if (b->both) {
        r->lines_bordered += r->last_bordered != y - 1;
        if (r->first_bordered < 0) r->first_bordered = y;
        r->last_bordered = y;
        if (b->white_exact < r->narrowest) r->narrowest = b->white_exact;
        r->edges[b->offset[0]]++;
        r->edges[n + b->offset[1]]++;
    }
    r->aligned[0] += b->aligned[0];
    r->aligned[1] += b->aligned[1];
}

/* Whether the n cells of row are all white. */
static int row_blank(const uint8_t *row, int n)
{
    for (int x = 0; x < n; x++)
        if (row[x]) return 0;
    return 1;
}

/* The gutter mask: the cells of every window e->width cells wide and white run of rows with
 * enough evidence (see GUTTER_MIN_BORDERED). Rows with no words beside the window may lie in
 * the run (the white between lines and paragraphs) but do not count. */
static int find_gutter_cells(const uint8_t *occ, const ink_span *span, int cols, int rows,
                             const evidence *e, uint8_t *mask)
{
    const size_t slots = (size_t)cols + 1;
    int *sum = malloc(2 * slots * sizeof *sum);   /* words, then marks, in cells left of x */
    int *prev = malloc(4 * slots * sizeof *prev); /* last ink cell at or left of x */
    run *runs = malloc(2 * slots * sizeof *runs); /* ending at text, going on through pinches */
    const int n = e->max_gap + 1;                 /* edge counts of a side, see run */
    int *edges = lt_alloc_array(2 * slots * 2 * (size_t)n, sizeof *edges);
    if (!sum || !prev || !runs || !edges) {
        free(sum);
        free(prev);
        free(runs);
        free(edges);
        return LT_ENOMEM;
    }
    memset(edges, 0, 2 * slots * 2 * (size_t)n * sizeof *edges);
    int *marks = sum + slots;
    int *next = prev + slots;      /* first ink cell at or right of x */
    int *prev_word = next + slots; /* the same for body cells */
    int *next_word = prev_word + slots;
    for (size_t k = 0; k < 2 * slots; k++) {
        runs[k] = EMPTY_RUN;
        runs[k].edges = edges + k * 2 * (size_t)n;
    }
    for (int y = 0; y < rows; y++) {
        const uint8_t *row = occ + (size_t)y * cols;
        if (row_blank(row, cols)) { /* changes no run, but ends any rows of marks (dotted) */
            for (size_t k = 0; k < 2 * slots; k++)
                runs[k].dotted = 0;
            continue;
        }
        sum[0] = marks[0] = 0;
        for (int x = 0; x < cols; x++) {
            sum[x + 1] = sum[x] + (row[x] >= 2);
            marks[x + 1] = marks[x] + (row[x] == 1);
        }
        for (int x = 0, last = -1, word = -1; x < cols; x++) {
            prev[x] = last = row[x] ? x : last;
            prev_word[x] = word = row[x] == 3 ? x : word;
        }
        for (int x = cols - 1, first = -1, word = -1; x >= 0; x--) {
            next[x] = first = row[x] ? x : first;
            next_word[x] = word = row[x] == 3 ? x : word;
        }
        for (int x = 0; x + e->width <= cols; x++) {
            /* r ends at any text; p, once r has met a pinch, goes on through pinches */
            run *r = &runs[x], *p = &runs[slots + x];
            if (sum[x + e->width] - sum[x] > 0) { /* text in the window */
                if (p->pinched) {
                    if (p->pinch < e->line_rows &&
                        white_through(row + x, e->width, e->pinch_white)) {
                        p->pinched++;
                        p->pinch++;
                    } else
                        close_run(p, x, e, occ, cols, mask);
                } else if (r->bordered >= e->min_bordered &&
                           white_through(row + x, e->width, e->pinch_white)) {
                    copy_run(p, r, n);
                    p->pinched = p->pinch = 1;
                }
                close_run(r, x, e, occ, cols, mask);
                continue;
            }
            const int dotted = marks[x + e->width] - marks[x] > 0; /* leader dots, or noise */
            beside b = {0, 0, 0, 0, {0, 0}, {0, 0}};
            if (!dotted) {
                const int left = x > 0 ? prev[x - 1] : -1;
                const int right = x + e->width < cols ? next[x + e->width] : -1;
                const int word_left = left >= 0 && prev_word[left] >= left - e->word_reach;
                const int word_right = right >= 0 && next_word[right] >= 0 &&
                                       next_word[right] <= right + e->word_reach;
                b.left = word_left && x - left <= e->max_gap;
                b.right = word_right && right - x - e->width <= e->max_gap;
                b.offset[0] = x - left - 1;
                b.offset[1] = right - x - e->width;
                b.both = b.left && b.right && right - left - 1 <= e->max_gap;
                if (b.both) {
                    const ink_span *row_span = span + (size_t)y * cols;
                    b.white_exact = right + (double)row_span[right].left / SPAN_UNITS -
                                    (left + (double)row_span[left].right / SPAN_UNITS);
                }
                b.aligned[0] = b.left && x - left - 1 <= e->align_tolerance;
                b.aligned[1] = b.right && right - x - e->width <= e->align_tolerance;
            }
            note_row(r, y, dotted, &b, n);
            if (p->pinched) {
                p->pinch = 0;
                note_row(p, y, dotted, &b, n);
            }
        }
    }
    for (int x = 0; x + e->width <= cols; x++) {
        close_run(&runs[x], x, e, occ, cols, mask);
        if (runs[slots + x].pinched) close_run(&runs[slots + x], x, e, occ, cols, mask);
    }
    free(sum);
    free(prev);
    free(runs);
    free(edges);
    return 0;
}

/* What row y of occ holds around cell column cx, within `reach` cells: bits ROW_TEXT (any
 * text), ROW_ACROSS (the white at cx is narrower than `width` cells, or there is none: a line
 * runs across), ROW_LEFT and ROW_RIGHT (text at the end of that white on the left, right). */
enum { ROW_TEXT = 1, ROW_ACROSS = 2, ROW_LEFT = 4, ROW_RIGHT = 8 };

static int row_at(const uint8_t *occ, int cols, int y, int cx, int width, int reach)
{
    const uint8_t *row = occ + (size_t)y * cols;
    if (row[cx] != 0) return ROW_TEXT | ROW_ACROSS;
    int l = cx, r = cx;
    while (l > 0 && row[l - 1] == 0 && cx - l < reach)
        l--;
    while (r + 1 < cols && row[r + 1] == 0 && r - cx < reach)
        r++;
    const int left = l > 0 && row[l - 1] != 0, right = r + 1 < cols && row[r + 1] != 0;
    return (left || right ? ROW_TEXT : 0) | (r - l + 1 < width ? ROW_ACROSS : 0) |
           (left ? ROW_LEFT : 0) | (right ? ROW_RIGHT : 0);
}

/* Joins the stretches of gutter white of every cell column of the mask that lie at most
 * e->bridge_rows apart, where the lines between them (bands of rows with text near the
 * column) alternate: a line keeping to the columns (white as wide as a gutter in all its
 * rows, text on both sides, e->bridge_open rows tall at least) stands between the stretches
 * and between any two lines across. The cells between, in white as wide as a gutter, become
 * gutter (not a word space of a line across; see BRIDGE_MAX_ROWS). */
static int bridge_gutters(const uint8_t *occ, int cols, int rows, const evidence *e, uint8_t *mask)
{
    int *last_row = malloc(((size_t)cols + 1) * sizeof *last_row); /* of a column's gutter */
    if (!last_row) return LT_ENOMEM;
    for (int cx = 0; cx < cols; cx++)
        last_row[cx] = -1;
    /* Row by row (the mask in memory order); a column's bridge changes only its own cells
     * above the current row. */
    for (int y = 0; y < rows; y++)
        for (int cx = 0; cx < cols; cx++) {
            if (!mask[(size_t)y * cols + cx]) continue;
            const int last = last_row[cx];
            if (last >= 0 && y - last > 1 && y - last <= e->bridge_rows) {
                uint8_t bits_of[BRIDGE_MAX_CELLS]; /* row_at of the rows between, in order */
                for (int k = last + 1; k < y; k++)
                    bits_of[k - last - 1] = (uint8_t)row_at(occ, cols, k, cx, e->width, e->max_gap);
                int keeping = 0, after_keeping = 1, alternate = 1, band = 0, seen = 0;
                for (int k = last + 1; k <= y && alternate; k++) {
                    const int bits = k < y ? bits_of[k - last - 1] : 0;
                    if (bits & ROW_TEXT) { /* the band goes on */
                        band++;
                        seen |= bits;
                        continue;
                    }
                    if (band == 0) continue;
                    if (seen & ROW_ACROSS) {
                        alternate = after_keeping;
                        after_keeping = 0;
                    } else if ((seen & ROW_LEFT) && (seen & ROW_RIGHT) && band >= e->bridge_open) {
                        keeping++;
                        after_keeping = 1;
                    }
                    band = seen = 0;
                }
                for (int k = last + 1; keeping && alternate && k < y; k++)
                    if (!(bits_of[k - last - 1] & ROW_ACROSS)) mask[(size_t)k * cols + cx] = 1;
            }
            last_row[cx] = y;
        }
    free(last_row);
    return 0;
}

/* How far (cells) the text of a row of cells (cols wide) reaches going `dir` (+1 right, -1
 * left) from the cell column `from` (the first outside a gutter region): from the first text
 * within `skip` cells to the first white of `gap` cells after it, unless dots (marks or
 * specks) follow that white within `far` cells: a leader leads on to its entry. 0 for no
 * text. */
static int reach_in_row(const uint8_t *row, int cols, int from, int dir, int skip, int gap, int far)
{
    int x = from;
    while (x >= 0 && x < cols && row[x] < 2 && dir * (x - from) < skip)
        x += dir;
    if (x < 0 || x >= cols || row[x] < 2) return 0;
    const int start = x;
    int end = x;
    for (int white = 0; x >= 0 && x < cols; x += dir) {
        if (row[x] != 0) {
            end = x;
            white = 0;
            continue;
        }
        if (++white < gap) continue;
        int k = x; /* white enough: go on only to dots (marks or specks) */
        while (k >= 0 && k < cols && row[k] == 0 && dir * (k - x) < far)
            k += dir;
        if (k < 0 || k >= cols || row[k] == 0 || row[k] == 3) break;
        x = k - dir;
        white = 0;
    }
    return dir * (end - start) + 1;
}

/* The next line on one side (dir) of a gutter region (box in cells) at or below row *y: a
 * band of rows with text within `skip` cells of the region (see reach_in_row), its ink
 * projected onto one row (`line_ink`, cols cells of room), so that white in some of its rows
 * is bridged by ink in others: the rule of an underscore between two words, the accents and
 * the dots of i's above a gap, a descender below it. A word's white between letters in the
 * rows of a blurred page's broken stroke, or a speck of noise, then no longer decides. 0 when
 * there is none; *y goes on below the band. */
static int next_line(const uint8_t *occ, int cols, const lt_box *cellbox, int dir, int skip,
                     int gap, int far, int *y, uint8_t *line_ink)
{
    const int from = dir > 0 ? cellbox->right : cellbox->left - 1;
    for (int band_top = -1; *y <= cellbox->bottom; ++*y) {
        const uint8_t *row = occ + (size_t)*y * cols;
        const int text = *y < cellbox->bottom && reach_in_row(row, cols, from, dir, skip, gap, far);
        if (text && band_top < 0) band_top = *y;
        if (text || band_top < 0) continue;
        memcpy(line_ink, occ + (size_t)band_top * cols, (size_t)cols);
        for (int k = band_top + 1; k < *y; k++)
            for (int x = 0; x < cols; x++)
                if (line_ink[x] < occ[(size_t)k * cols + x])
                    line_ink[x] = occ[(size_t)k * cols + x];
        return 1;
    }
    return 0;
}

/* Whether the text on one side of a gutter region (box in cells) is a column of short items,
 * reaching less than `narrow` cells from it in most lines beside it (next_line): page numbers
 * set flush right after a column of text, list labels, version numbers before their
 * entries. */
static int narrow_side(const uint8_t *occ, int cols, const lt_box *cellbox, int dir, int skip,
                       int gap, int far, int narrow, uint8_t *line_ink)
{
    const int from = dir > 0 ? cellbox->right : cellbox->left - 1;
    int lines = 0, wide = 0;
    for (int y = cellbox->top; next_line(occ, cols, cellbox, dir, skip, gap, far, &y, line_ink);) {
        lines++;
        wide += reach_in_row(line_ink, cols, from, dir, skip, gap, far) >= narrow;
    }
    return wide < NARROW_SHARE * lines;
}

/* The cell of a line's projected ink (line_ink, cols cells) where its text begins going
 * `dir` (+1 right, -1 left) from a gutter region (box in cells); -1 where it has no text
 * there, or text in the region's columns (a line across the white). */
static int open_line_text(const uint8_t *line_ink, int cols, const lt_box *cellbox, int dir)
{
    for (int x = cellbox->left; x < cellbox->right; x++)
        if (line_ink[x] >= 2) return -1;
    int x = dir > 0 ? cellbox->right : cellbox->left - 1;
    while (x >= 0 && x < cols && line_ink[x] < 2)
        x += dir;
    return x < cols ? x : -1;
}

/* The lines on one side (dir) of a gutter region (box in cells), with their reach as in
 * reach_in_row (`skip`, `gap`, `far`): how many, how many leave its white open (no text of
 * theirs in its columns), and the most of those that end within `tolerance` cells of one
 * place, at their near ends (`far_end` 0: where they face the white) or their far ends (1).
 * `ends` has room for a value per row of the region. */
typedef struct side_ends {
    int lines, open, aligned, at_edge;
} side_ends;

static side_ends line_ends(const uint8_t *occ, int cols, const lt_box *cellbox, int dir, int skip,
                           int gap, int far, int far_end, int tolerance, uint8_t *line_ink,
                           int *ends)
{
    const int from = dir > 0 ? cellbox->right : cellbox->left - 1;
    side_ends n = {0, 0, 0, 0};
    for (int y = cellbox->top; next_line(occ, cols, cellbox, dir, skip, gap, far, &y, line_ink);) {
        n.lines++;
        const int start = open_line_text(line_ink, cols, cellbox, dir);
        if (start >= 0)
            ends[n.open++] = dir * (start - from) +
                             (far_end ? reach_in_row(line_ink, cols, start, dir, 1, gap, far) : 0);
    }
    int nearest = INT_MAX;
    for (int i = 0; i < n.open; i++) {
        int near = 0;
        for (int j = 0; j < n.open; j++)
            near += abs(ends[j] - ends[i]) <= tolerance;
        if (near > n.aligned) n.aligned = near;
        if (ends[i] < nearest) nearest = ends[i];
    }
    for (int i = 0; i < n.open; i++)
        n.at_edge += ends[i] <= nearest + tolerance;
    return n;
}

/* Whether most lines left of a gutter region (box in cells) that leave its white open end in
 * a leader: their text nearest the white is a dot (a mark) with no letter within
 * `word_reach` cells before it (a period or a hyphen stands on its word), and the text before
 * it, within `gap` cells, another dot. */
static int after_leaders(const uint8_t *occ, int cols, const lt_box *cellbox, int skip, int gap,
                         int far, int word_reach, uint8_t *line_ink)
{
    int open = 0, led = 0;
    for (int y = cellbox->top; next_line(occ, cols, cellbox, -1, skip, gap, far, &y, line_ink);) {
        const int end = open_line_text(line_ink, cols, cellbox, -1);
        if (end < 0) continue;
        open++;
        int word = 0, x = end;
        for (; x >= 0 && x >= end - word_reach && !word; x--)
            word = line_ink[x] == 3;
        while (x >= 0 && line_ink[x] >= 2) /* the rest of the dot */
            x--;
        int before = x; /* the text before the dot: another dot of the leader */
        while (before >= 0 && before > x - gap && line_ink[before] < 2)
            before--;
        led += !word && before >= 0 && before > x - gap && line_ink[before] == 2;
    }
    return led > LEADER_SHARE * open;
}

/* The connected regions of the nonzero cells of grid (cols x rows), found by the components
 * stage run on the grid as an ink image (boxes in cells). Returns 0 or LT_ENOMEM. */
static int cell_regions(uint8_t *grid, int cols, int rows, lt_components **regions)
{
    const lt_image image = {cols, rows, LT_IMAGE_INK, 0, 0, grid};
    lt_error ignored;
    return lt_find_components(&image, (long)cols * rows, regions, &ignored);
}

/* Makes the cells that a short table's column gap alone put in the mask (MASK_TABLE) gutter
 * cells (MASK_GUTTER), region by region, where the text on both sides of the region is alike:
 * narrow columns on both sides or on neither (see NARROW_COLUMN; `narrow` and `gap` in cells),
 * and no gutter of a long stretch runs beside it or within e->bridge_rows above or below it.
 * Elsewhere they become white again: labels aligned before their items (1.1, 1.2 before
 * headings: a column of short items beside text), and a column gutter's white widened, or
 * continued below a line across it, by the aligned edges of a few rows (the bridge across
 * such lines is bridge_gutters' to judge). line_ink: scratch of cols cells. */
static int keep_table_gaps(const uint8_t *occ, int cols, int rows, const evidence *e, int narrow,
                           int gap, uint8_t *mask, uint8_t *line_ink)
{
    const size_t ncell = (size_t)cols * rows;
    size_t k = 0;
    while (k < ncell && mask[k] != MASK_TABLE)
        k++;
    if (k == ncell) return 0;
    uint8_t *table = malloc(ncell);
    if (!table) return LT_ENOMEM;
    for (k = 0; k < ncell; k++)
        table[k] = mask[k] == MASK_TABLE;
    lt_components *regions = NULL;
    const int rc = cell_regions(table, cols, rows, &regions);
    free(table);
    if (rc) return rc;
    for (int i = 0; i < regions->count; i++) {
        const lt_box *b = &regions->items[i].box; /* cells */
        int keep = narrow_side(occ, cols, b, -1, e->width, gap, e->max_gap, narrow, line_ink) ==
                   narrow_side(occ, cols, b, +1, e->width, gap, e->max_gap, narrow, line_ink);
        for (int y = imax(b->top - e->bridge_rows, 0);
             keep && y < imin(b->bottom + e->bridge_rows, rows); y++)
            for (int x = imax(b->left - 1, 0); x < imin(b->right + 1, cols); x++)
                if (mask[(size_t)y * cols + x] == MASK_GUTTER) {
                    keep = 0;
                    break;
                }
        for (int y = b->top; y < b->bottom; y++)
            for (int x = b->left; x < b->right; x++) {
                uint8_t *m = mask + (size_t)y * cols + x;
                if (*m == MASK_TABLE) *m = keep ? MASK_GUTTER : 0;
            }
    }
    lt_components_free(regions);
    return 0;
}

/* Bounding boxes (pixels) of the connected regions of the mask (cols x rows cells of `cell`
 * px), found by the components stage run on the mask as an ink image. */
static int mask_regions(uint8_t *mask, int cols, int rows, double cell, lt_box **boxes, int *count)
{
    *boxes = NULL;
    *count = 0;
    lt_components *regions = NULL;
    const int rc = cell_regions(mask, cols, rows, &regions);
    if (rc) return rc;
    *boxes = malloc(((size_t)regions->count + 1) * sizeof **boxes);
    if (!*boxes) {
        lt_components_free(regions);
        return LT_ENOMEM;
    }
    for (int k = 0; k < regions->count; k++) {
        const lt_box *b = &regions->items[k].box;
        (*boxes)[k] = (lt_box){(int)(b->left * cell), (int)(b->top * cell),
                               (int)ceil(b->right * cell), (int)ceil(b->bottom * cell)};
    }
    *count = regions->count;
    lt_components_free(regions);
    return 0;
}

/* A summed-area table ((cols+1) x (rows+1)) of the cells of grid (cols x rows) holding at
 * least min_value; NULL when out of memory. Each row is the row above plus a running count
 * along the row. */
static int32_t *summed(const uint8_t *grid, int cols, int rows, int min_value)
{
    const size_t stride = (size_t)cols + 1;
    int32_t *sum = lt_alloc_array(stride * ((size_t)rows + 1), sizeof *sum);
    if (!sum) return NULL;
    memset(sum, 0, stride * sizeof *sum);
    for (int y = 0; y < rows; y++) {
        const uint8_t *cells = grid + (size_t)y * cols;
        const int32_t *above = sum + (size_t)y * stride;
        int32_t *row = sum + (size_t)(y + 1) * stride, along = 0;
        row[0] = 0;
        for (int x = 0; x < cols; x++) {
            along += cells[x] >= min_value;
            row[x + 1] = above[x + 1] + along;
        }
    }
    return sum;
}

/* Cells counted by the summed-area table `sum` of s's grid in the cell rectangle [cx0, cx1) x
 * [cy0, cy1), clipped to the grid. */
static int cells(const lt_separators *s, const int32_t *sum, int cx0, int cy0, int cx1, int cy1)
{
    if (cx0 < 0) cx0 = 0;
    if (cy0 < 0) cy0 = 0;
    if (cx1 > s->cols) cx1 = s->cols;
    if (cy1 > s->rows) cy1 = s->rows;
    if (cx1 <= cx0 || cy1 <= cy0) return 0;
    const size_t stride = (size_t)s->cols + 1;
    return sum[(size_t)cy1 * stride + cx1] - sum[(size_t)cy0 * stride + cx1] -
           sum[(size_t)cy1 * stride + cx0] + sum[(size_t)cy0 * stride + cx0];
}

/* Gutter region k of s in cells, within the grid (its pixel box was rounded outwards). */
static lt_box gutter_cells(const lt_separators *s, int k)
{
    const lt_box *g = &s->gutters[k];
    const double cell = s->cell_px;
    return (lt_box){(int)floor(g->left / cell + 0.5), (int)floor(g->top / cell + 0.5),
                    imin((int)floor(g->right / cell + 0.5), s->cols),
                    imin((int)floor(g->bottom / cell + 0.5), s->rows)};
}

/* Marks in s->river (allocated here) the gutter regions that are rivers of white (see
 * STRETCHED_SPACE): text lies across the columns of the region within a line's height
 * (LINE_HEIGHT) above and below it, and so it does for every other region overlapping it across
 * (one over the other: the pieces of a gutter cut by lines printed across it). Needs
 * s->text_sum. Returns 0 or LT_ENOMEM. */
static int mark_rivers(lt_separators *s)
{
    const int reach = th_cells(LINE_HEIGHT, s->th, s->cell_px, 1);
    uint8_t *crossed = malloc((size_t)s->ngutters + 1);
    s->river = calloc((size_t)s->ngutters + 1, 1);
    if (!crossed || !s->river) {
        free(crossed);
        return LT_ENOMEM;
    }
    for (int k = 0; k < s->ngutters; k++) {
        const lt_box g = gutter_cells(s, k);
        crossed[k] = cells(s, s->text_sum, g.left, g.top - reach, g.right, g.top) > 0 &&
                     cells(s, s->text_sum, g.left, g.bottom, g.right, g.bottom + reach) > 0;
    }
    for (int k = 0; k < s->ngutters; k++) {
        const lt_box *g = &s->gutters[k];
        s->river[k] = 1;
        for (int j = 0; j < s->ngutters && s->river[k]; j++) {
            const lt_box *o = &s->gutters[j];
            if (o->left < g->right && o->right > g->left && !crossed[j]) s->river[k] = 0;
        }
    }
    free(crossed);
    return 0;
}

int lt_find_separators(const lt_components *c, double text_height_px, lt_separators **out,
                       lt_error *err)
{
    *out = NULL;
    const double th = text_height_px > 0 ? text_height_px : 20;
    lt_separators *s = calloc(1, sizeof *s);
    if (!s) return lt_error_set(err, LT_ENOMEM, "separators: out of memory");
    int maxx = 1, maxy = 1, nrules = 0;
    for (int i = 0; i < c->count; i++) {
        if (c->items[i].box.right > maxx) maxx = c->items[i].box.right;
        if (c->items[i].box.bottom > maxy) maxy = c->items[i].box.bottom;
        nrules += c->items[i].kind == LT_COMP_RULE;
    }
    /* Rules, vertical and horizontal. */
    s->rules = malloc(((size_t)nrules + 1) * sizeof *s->rules);
    if (!s->rules) goto nomem;
    for (int i = 0; i < c->count; i++)
        if (c->items[i].kind == LT_COMP_RULE) s->rules[s->nrules++] = c->items[i].box;
    /* Gutters over a grid of cells a quarter text height wide (coarser on huge pages). */
    double cell = fmax(1.0, CELL_TH * th);
    while (((double)maxx / cell + 1) * ((double)maxy / cell + 1) > (double)MAX_CELLS)
        cell *= 1.5;
    s->cell_px = cell;
    s->th = th;
    s->cols = (int)(maxx / cell) + 1;
    s->rows = (int)(maxy / cell) + 1;
    const size_t ncell = (size_t)s->cols * s->rows;
    uint8_t *occ = s->occupancy = calloc(ncell, 1), *mask = calloc(ncell, 1),
            *line_ink = malloc(s->cols);
    int *ends = malloc(((size_t)s->rows + 1) * sizeof *ends);
    ink_span *span = lt_alloc_array(ncell, sizeof *span);
    if (!occ || !mask || !line_ink || !ends || !span) {
        free(span);
        free(mask);
        free(line_ink);
        free(ends);
        goto nomem;
    }
    for (size_t k = 0; k < ncell; k++)
        span[k] = (ink_span){SPAN_UNITS, 0};
    fill_occupancy(c, th, cell, s->cols, s->rows, occ, span);
    const evidence e = {th_cells(GUTTER_MIN_WIDTH, th, cell, 1),
                        th_cells(GUTTER_MAX_WIDTH, th, cell, 0),
                        th_cells(WORD_REACH, th, cell, 1),
                        TABLE_MIN_WHITE * th / cell,
                        th_cells(GUTTER_MIN_BORDERED, th, cell, 1),
                        th_cells(GUTTER_MIN_SIDED, th, cell, 1),
                        th_cells(GUTTER_MIN_ALIGNED, th, cell, 1),
                        th_cells(2, th, cell, 1),
                        th_cells(ALIGN_TOLERANCE, th, cell, 0),
                        imin(th_cells(BRIDGE_MAX_ROWS, th, cell, 0), BRIDGE_MAX_CELLS),
                        th_cells(BRIDGE_MIN_OPEN, th, cell, 1),
                        th_cells(PINCH_MIN_WHITE, th, cell, 1),
                        th_cells(PINCH_MIN_BORDERED, th, cell, 1)};
    int rc = find_gutter_cells(occ, span, s->cols, s->rows, &e, mask);
    free(span);
    if (!rc) rc = bridge_gutters(occ, s->cols, s->rows, &e, mask);
    const int narrow = th_cells(NARROW_COLUMN, th, cell, 1);
    const int gap = th_cells(NARROW_GAP, th, cell, 1);
    if (!rc) rc = keep_table_gaps(occ, s->cols, s->rows, &e, narrow, gap, mask, line_ink);
    if (!rc) rc = mask_regions(mask, s->cols, s->rows, cell, &s->gutters, &s->ngutters);
    if (!rc && !(s->items_side = calloc((size_t)s->ngutters + 1, 1))) rc = LT_ENOMEM;
    for (int k = 0; !rc && k < s->ngutters; k++) {
        const lt_box in_cells = gutter_cells(s, k);
        const int nl = narrow_side(occ, s->cols, &in_cells, -1, e.width, gap, e.max_gap, narrow,
                                   line_ink),
                  nr = narrow_side(occ, s->cols, &in_cells, +1, e.width, gap, e.max_gap, narrow,
                                   line_ink);
        if (nl == nr && !after_leaders(occ, s->cols, &in_cells, e.max_gap, gap, e.max_gap,
                                       e.word_reach, line_ink))
            continue;
        /* page numbers flush right after entries that end raggedly, most of them beside
           the white */
        const side_ends entries = line_ends(occ, s->cols, &in_cells, -1, e.max_gap, gap,
                                            e.max_gap, 0, e.align_tolerance, line_ink, ends),
                        numbers = line_ends(occ, s->cols, &in_cells, +1, e.width, gap, e.max_gap,
                                            1, e.align_tolerance, line_ink, ends);
        const int page_numbers = !nl && entries.open > RAGGED_SHARE * entries.lines &&
                                 entries.at_edge <= RAGGED_SHARE * entries.open &&
                                 numbers.aligned > RAGGED_SHARE * numbers.open;
        s->items_side[k] = nl ? ITEMS_BEFORE : page_numbers ? ITEMS_AFTER_RAGGED : ITEMS_AFTER;
        /* the lines run on across it; the columns of text beside it stay columns */
        for (int y = in_cells.top; y < in_cells.bottom; y++)
            memset(mask + (size_t)y * s->cols + in_cells.left, 0,
                   (size_t)(in_cells.right - in_cells.left));
    }
    if (!rc) {
        s->sum = summed(mask, s->cols, s->rows, 1);
        s->text_sum = summed(occ, s->cols, s->rows, 2);
        if (!s->sum || !s->text_sum) rc = LT_ENOMEM;
    }
    if (!rc) rc = mark_rivers(s);
    free(mask);
    free(line_ink);
    free(ends);
    if (rc) goto nomem;
    *out = s;
    return 0;
nomem:
    lt_separators_free(s);
    return lt_error_set(err, LT_ENOMEM, "separators: out of memory");
}

int lt_rule_between(const lt_separators *s, double x0, double x1, double y0, double y1)
{
    if (!s) return 0;
    for (int r = 0; r < s->nrules; r++) {
        const lt_box *b = &s->rules[r];
        if (lt_box_height(b) > lt_box_width(b) && b->left >= x0 - 1 && b->right <= x1 + 1 &&
            b->top < y1 && b->bottom > y0)
            return 1;
    }
    return 0;
}

int lt_gutter_between(const lt_separators *s, double x0, double x1, double y0, double y1)
{
    if (!s || !s->sum) return 0;
    const double cell = s->cell_px;
    return cells(s, s->sum, (int)ceil(x0 / cell), (int)ceil(y0 / cell), (int)floor(x1 / cell),
                 (int)floor(y1 / cell)) > 0;
}

/* Cell rows of [cy0, cy1) with text in the cell columns [cx0, cx1). */
static int rows_with_text(const lt_separators *s, int cx0, int cy0, int cx1, int cy1)
{
    int n = 0;
    for (int y = cy0; y < cy1; y++)
        n += cells(s, s->text_sum, cx0, y, cx1, y + 1) > 0;
    return n;
}

/* The widest run of whole cell columns of the gap [x0, x1) with no text in the cell rows
 * [cy0, cy1): its width in cells (0 for none), its first column in *lo. */
static int widest_white(const lt_separators *s, double x0, double x1, int cy0, int cy1, int *lo)
{
    const double cell = s->cell_px;
    int best = 0, run = 0;
    *lo = 0;
    for (int cx = (int)ceil(x0 / cell); (cx + 1) * cell <= x1; cx++) {
        run = cells(s, s->text_sum, cx, cy0, cx + 1, cy1) == 0 ? run + 1 : 0;
        if (run > best) {
            best = run;
            *lo = cx - run + 1;
        }
    }
    return best;
}

/* Whether text lines stand on both sides of a white strip through the gap [x0, x1) in the
 * rows [y0, y1): the widest run of cell columns of the gap with no text in those rows is at
 * least STRIP_MIN_WIDTH wide, and text lies within STRIP_SIDE of it on both sides. */
static int strip_in_rows(const lt_separators *s, double x0, double x1, double y0, double y1,
                         double th)
{
    const double cell = s->cell_px;
    const int cy0 = (int)floor(y0 / cell), cy1 = (int)ceil(y1 / cell);
    const int min_cells = th_cells(STRIP_MIN_WIDTH, th, cell, 1),
              side = th_cells(STRIP_SIDE, th, cell, 1);
    int best_lo;
    const int best = widest_white(s, x0, x1, cy0, cy1, &best_lo);
    if (best < min_cells) return 0;
    const int letter = th_cells(STRIP_SIDE_LETTER, th, cell, 1);
    return rows_with_text(s, best_lo - side, cy0, best_lo, cy1) >= letter &&
           rows_with_text(s, best_lo + best, cy0, best_lo + best + side, cy1) >= letter;
}

/* Whether text in the rows [y0, y1) runs across the gap [x0, x1): no white STRIP_MIN_WIDTH
 * wide is left in the gap's cell columns. */
static int across_in_rows(const lt_separators *s, double x0, double x1, double y0, double y1)
{
    const double cell = s->cell_px;
    int lo;
    return widest_white(s, x0, x1, (int)floor(y0 / cell), (int)ceil(y1 / cell), &lo) <
           th_cells(STRIP_MIN_WIDTH, s->th, cell, 1);
}

/* The most of the occupancy (0 white, 1 speck, 2 mark, 3 body) in cell column cx over the
 * cell rows [cy0, cy1). */
static int column_ink(const lt_separators *s, int cx, int cy0, int cy1)
{
    int most = 0;
    for (int y = cy0 < 0 ? 0 : cy0; y < cy1 && y < s->rows; y++)
        if (s->occupancy[(size_t)y * s->cols + cx] > most)
            most = s->occupancy[(size_t)y * s->cols + cx];
    return most;
}

/* Whether the text ending at x (px) in the cell rows [cy0, cy1) ends in a leader: its last
 * ink a dot (a mark or a speck the size of a dot; at 300 dpi a leader's dots are specks) with
 * no letter within WORD_REACH before it, and another dot within NARROW_GAP before that. */
static int ends_in_leader(const lt_separators *s, double x, int cy0, int cy1)
{
    const int reach = th_cells(WORD_REACH, s->th, s->cell_px, 1),
              gap = th_cells(NARROW_GAP, s->th, s->cell_px, 1);
    int end = imin((int)ceil(x / s->cell_px), s->cols) - 1;
    while (end >= 0 && column_ink(s, end, cy0, cy1) == 0)
        end--;
    if (end < 0) return 0;
    for (int cx = end; cx >= 0 && cx >= end - reach; cx--)
        if (column_ink(s, cx, cy0, cy1) == 3) return 0;
    int cx = end;
    while (cx >= 0 && column_ink(s, cx, cy0, cy1) > 0) /* the rest of the dot */
        cx--;
    int before = cx; /* the ink before the dot: another dot of the leader */
    while (before >= 0 && before > cx - gap && column_ink(s, before, cy0, cy1) == 0)
        before--;
    return before >= 0 && before > cx - gap && column_ink(s, before, cy0, cy1) < 3;
}

/* The last cell column of the text that begins at x (px) in the cell rows [cy0, cy1): where
 * white GUTTER_MIN_WIDTH wide follows it. */
static int text_end(const lt_separators *s, double x, int cy0, int cy1)
{
    const int white = th_cells(GUTTER_MIN_WIDTH, s->th, s->cell_px, 1);
    int end = (int)floor(x / s->cell_px);
    for (int cx = end, run = 0; cx < s->cols && run < white; cx++)
        if (cells(s, s->text_sum, cx, cy0, cx + 1, cy1) > 0) {
            end = cx;
            run = 0;
        } else
            run++;
    return end;
}

/* Whether text in the rows [y0, y1) ends at cell column `end`: their last text cell within
 * GUTTER_MIN_WIDTH right of it lies within ALIGN_TOLERANCE of it. */
static int ends_at(const lt_separators *s, int end, double y0, double y1)
{
    const double cell = s->cell_px;
    const int cy0 = (int)floor(y0 / cell), cy1 = (int)ceil(y1 / cell);
    const int tolerance = th_cells(ALIGN_TOLERANCE, s->th, cell, 0),
              width = th_cells(GUTTER_MIN_WIDTH, s->th, cell, 1);
    int last = -1;
    for (int cx = end - tolerance; cx <= end + width; cx++)
        if (cells(s, s->text_sum, cx, cy0, cx + 1, cy1) > 0) last = cx;
    return last >= end - tolerance && last <= end + tolerance;
}

/* Whether the gap [x0, x1) of a pair in the rows [top, bottom) is the white between a leader
 * and a page number set flush right (see LOCAL_STRIP_GAP): no text in the rows above[] or
 * below[] ([first, last) px) runs across it, the text before it ends in a leader, and the text
 * after it ends flush with the text of those rows above or below. */
static int leader_to_flush_number(const lt_separators *s, double x0, double x1, double top,
                                  double bottom, const double above[2], const double below[2])
{
    const double cell = s->cell_px;
    const int cy0 = (int)floor(top / cell), cy1 = (int)ceil(bottom / cell);
    if (across_in_rows(s, x0, x1, above[0], above[1]) ||
        across_in_rows(s, x0, x1, below[0], below[1]) || !ends_in_leader(s, x0, cy0, cy1))
        return 0;
    const int end = text_end(s, x1, cy0, cy1);
    return ends_at(s, end, above[0], above[1]) || ends_at(s, end, below[0], below[1]);
}

/* Whether bodies (letters) lie in the cell columns [cx0, cx1) of the cell rows [cy0, cy1). */
static int bodies_in(const lt_separators *s, int cx0, int cy0, int cx1, int cy1)
{
    for (int y = cy0 < 0 ? 0 : cy0; y < cy1 && y < s->rows; y++)
        for (int x = cx0 < 0 ? 0 : cx0; x < cx1 && x < s->cols; x++)
            if (s->occupancy[(size_t)y * s->cols + x] == 3) return 1;
    return 0;
}

/* Whether the gap of a pair, in the cells [cx0, cx1) x [cy0, cy1), runs through the white
 * of a gutter region with `items` (ITEMS_*) beside it. */
static int beside_items(const lt_separators *s, int items, int cx0, int cy0, int cx1, int cy1)
{
    const double cell = s->cell_px;
    for (int k = 0; k < s->ngutters; k++) {
        const lt_box *g = &s->gutters[k];
        if (s->items_side[k] == items && g->left < cx1 * cell && g->right > cx0 * cell &&
            g->top < cy1 * cell && g->bottom > cy0 * cell)
            return 1;
    }
    return 0;
}

/* The cells wholly inside the gap [x0, x1) of a pair in the rows [top, bottom): *g as
 * [left, right) x [top, bottom) in cells; 0 when there are none. */
static int gap_cells(const lt_separators *s, double x0, double x1, double top, double bottom,
                     lt_box *g)
{
    const double cell = s->cell_px;
    *g = (lt_box){(int)ceil(x0 / cell), (int)ceil(top / cell), (int)floor(x1 / cell),
                  (int)floor(bottom / cell)};
    return g->right > g->left && g->bottom > g->top;
}

/* Whether the gap [x0, x1) of a pair in the rows [top, bottom) parts a column of short items
 * from its rows (see ITEM_GAP): it runs through the white of a gutter region right of such a
 * column, holds no text in those rows (no leader), and words stand within ITEM_WORD_REACH of
 * it on both sides. */
static int across_item_column(const lt_separators *s, double x0, double x1, double top,
                              double bottom)
{
    lt_box g;
    if (!gap_cells(s, x0, x1, top, bottom, &g)) return 0;
    const int reach = th_cells(ITEM_WORD_REACH, s->th, s->cell_px, 1);
    return beside_items(s, ITEMS_BEFORE, g.left, g.top, g.right, g.bottom) &&
           cells(s, s->text_sum, g.left, g.top, g.right, g.bottom) == 0 &&
           bodies_in(s, g.left - reach, g.top, g.left, g.bottom) &&
           bodies_in(s, g.right, g.top, g.right + reach, g.bottom);
}

/* Whether the gap [x0, x1) of a pair in the rows [top, bottom) leads to page numbers set
 * after their entries: it runs through the white of a gutter region left of a column of such
 * numbers. That white runs down beside the lines above and below whose entries left no room
 * for a leader; it is no strip between cells. */
static int before_number_column(const lt_separators *s, double x0, double x1, double top,
                                double bottom)
{
    lt_box g;
    return gap_cells(s, x0, x1, top, bottom, &g) &&
           beside_items(s, ITEMS_AFTER_RAGGED, g.left, g.top, g.right, g.bottom);
}

/* Whether a gutter region that is no river (s->river) reaches into the rectangle
 * [x0, x1) x [y0, y1). */
static int column_gutter_between(const lt_separators *s, double x0, double x1, double y0,
                                 double y1)
{
    for (int k = 0; k < s->ngutters; k++) {
        const lt_box *g = &s->gutters[k];
        if (!s->river[k] && g->left < x1 && g->right > x0 && g->top < y1 && g->bottom > y0)
            return 1;
    }
    return 0;
}

int lt_link_blocked(const lt_separators *s, double x0, double x1, double top, double bottom,
                    double height)
{
    if (!s) return 0;
    if (lt_rule_between(s, x0, x1, top, bottom)) return 1;
    /* gaps judged against the pair's own size: the word spaces of a title are wide */
    const double scale = fmax(1.0, height / (LINE_HEIGHT * s->th));
    if (x1 - x0 < GUTTER_MIN_WIDTH * s->th * scale) return 0;
    if (lt_gutter_between(s, x0, x1, top, bottom) &&
        (x1 - x0 > STRETCHED_SPACE * s->th * scale ||
         column_gutter_between(s, x0, x1, top, bottom)))
        return 1;
    if (s->items_side && x1 - x0 >= ITEM_GAP * s->th * scale &&
        across_item_column(s, x0, x1, top, bottom))
        return 1;
    if (!s->text_sum || x1 - x0 < LOCAL_STRIP_GAP * s->th * scale ||
        (s->items_side && before_number_column(s, x0, x1, top, bottom)))
        return 0;
    /* the rows of the line above and of the line below, not the pair's own */
    const double reach = STRIP_REACH * s->th, cell = s->cell_px;
    const double above[2] = {top - reach, top - cell}, below[2] = {bottom + cell, bottom + reach};
    return strip_in_rows(s, x0, x1, above[0], above[1], s->th) ||
           strip_in_rows(s, x0, x1, below[0], below[1], s->th) ||
           leader_to_flush_number(s, x0, x1, top, bottom, above, below);
}

int lt_gutter_cuts_lines(const lt_separators *s, int k)
{
    return !s->items_side || s->items_side[k] != ITEMS_BEFORE;
}

int lt_separator_between(const lt_separators *s, double x0, double x1, double y0, double y1)
{
    return s && (lt_rule_between(s, x0, x1, y0, y1) || lt_gutter_between(s, x0, x1, y0, y1));
}

void lt_separators_free(lt_separators *s)
{
    if (!s) return;
    free(s->rules);
    free(s->gutters);
    free(s->sum);
    free(s->text_sum);
    free(s->items_side);
    free(s->river);
    free(s->occupancy);
    free(s);
}

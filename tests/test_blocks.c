/* test_blocks.c — checks lt_xy_cut (recursive XY-cut, Nagy & Seth 1984) and lt_arrange
 * on text lines built here: one column, two columns under a spanning title, a page header
 * and footer, three columns, and columns followed by a full-width paragraph. The expected
 * orders are the ones a reader of such a page follows (title, each column top to bottom, left
 * to right, then what spans below). Lines are handed over in a shuffled order (fixed seed), so
 * that no order can come out right by accident.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"

#define TH 20    /* text height (x-height) of the page, px */
#define ASC 29   /* line box top above the baseline */
#define DESC 8   /* line box bottom below the baseline */
#define PITCH 48 /* baseline to baseline: 2.4 text heights */
#define MAX_LINES 200

/* A page under construction: lines in reading order, each with the block it belongs to. */
typedef struct page {
    lt_raw_line lines[MAX_LINES];
    int block[MAX_LINES];
    int n, nblocks;
} page;

static void add_line(page *p, int left, int right, int baseline)
{
    if (p->n >= MAX_LINES) tu_die("too many lines");
    lt_raw_line *l = &p->lines[p->n];
    memset(l, 0, sizeof *l);
    l->box = tu_box(left, baseline - ASC, right, baseline + DESC);
    l->baseline_y = baseline;
    l->xheight_px = TH;
    l->ncomponents = (right - left) / 12;
    p->block[p->n++] = p->nblocks;
}

/* A block of `count` lines at left..right from baseline `first`, ragged right (fixed seed).
 * Returns the baseline after the block. */
static int add_block(page *p, tu_rng *r, int left, int right, int first, int count)
{
    for (int i = 0; i < count; i++) {
        int end = i == count - 1 ? right - tu_range(r, 100, (right - left) / 2)
                                 : right - tu_range(r, 0, 40);
        add_line(p, left, end, first + i * PITCH);
    }
    p->nblocks++;
    return first + count * PITCH;
}

/* Runs XY-cut and reading order on the page's lines in a shuffled order and checks the
 * reading order and the blocks against the page's. */
static void check_page(const page *p, uint64_t seed, const char *what)
{
    /* Shuffle (Fisher-Yates): raw[k] = p->lines[perm[k]]. */
    int perm[MAX_LINES];
    for (int i = 0; i < p->n; i++)
        perm[i] = i;
    tu_rng r = {seed};
    for (int i = p->n - 1; i > 0; i--) {
        int j = tu_range(&r, 0, i), t = perm[i];
        perm[i] = perm[j];
        perm[j] = t;
    }
    lt_raw_lines raw = {malloc((size_t)p->n * sizeof(lt_raw_line)), p->n};
    if (!raw.items) tu_die("out of memory");
    for (int k = 0; k < p->n; k++)
        raw.items[k] = p->lines[perm[k]];
    lt_params prm;
    lt_params_default(&prm);
    lt_error err = {0};
    /* The separators stage sees each line as one component of text (its box). */
    lt_component comp[MAX_LINES];
    for (int i = 0; i < p->n; i++) {
        const lt_box *b = &p->lines[i].box;
        comp[i] = (lt_component){*b,
                                 (long)(b->right - b->left) * (b->bottom - b->top),
                                 0.5 * (b->left + b->right),
                                 0.5 * (b->top + b->bottom),
                                 LT_COMP_TEXT,
                                 lt_box_height(b)};
    }
    const lt_components comps = {comp, p->n};
    lt_separators *seps = NULL;
    lt_cut_node *root = NULL;
    if (lt_find_separators(&comps, TH, &seps, &err) ||
        lt_xy_cut(&raw, NULL, seps, TH, &prm, &root, &err)) {
        tu_fail("%s: separators or lt_xy_cut: %s", what, err.message);
        lt_separators_free(seps);
        free(raw.items);
        return;
    }
    lt_separators_free(seps);
    int page_h = 0; /* the page: the lines' hull and a margin of 150 px */
    for (int i = 0; i < p->n; i++) {
        if (p->lines[i].box.bottom + 150 > page_h) page_h = p->lines[i].box.bottom + 150;
    }
    lt_arrangement *arr = NULL;
    if (lt_arrange(root, &raw, NULL, TH, &prm, page_h, &arr, &err)) {
        tu_fail("%s: lt_arrange: %s", what, err.message);
        lt_cut_node_free(root);
        free(raw.items);
        return;
    }
    CHECK_INT(arr->nblocks, p->nblocks, "%s: number of blocks", what);
    CHECK_INT(arr->nlines, p->n, "%s: number of lines in the order", what);
    int wrong = 0;
    char got[1024] = "", *g = got;
    for (int i = 0; i < p->n && i < arr->nlines; i++) {
        int line = perm[arr->order[i]]; /* page line shown at reading position i */
        if (g < got + sizeof got - 8) g += snprintf(g, (size_t)(got + sizeof got - g), " %d", line);
        wrong += line != i;
        CHECK_INT(arr->block_of[i], p->block[i], "%s: block of reading position %d", what, i);
    }
    CHECK(wrong == 0, "%s: %d lines out of reading order; got order%s", what, wrong, got);
    lt_arrangement_free(arr);
    lt_cut_node_free(root);
    free(raw.items);
}

/* One column: two paragraphs (a blank line between them: 59 px of white, more than the
 * 1.2 text heights of block_min_gap; inside a paragraph 11 px). Top to bottom. */
static void test_one_column(void)
{
    page p = {0};
    tu_rng r = {1};
    int y = add_block(&p, &r, 150, 1400, 200, 7);
    add_block(&p, &r, 150, 1400, y + PITCH, 9);
    check_page(&p, 11, "one column");
    /* A single line, and a page of one block. */
    page one = {0};
    add_block(&one, &r, 150, 1400, 200, 1);
    check_page(&one, 12, "single line");
    page block = {0};
    add_block(&block, &r, 150, 1400, 200, 20);
    check_page(&block, 13, "one block of 20 lines");
}

/* Two columns (gutter 3 text heights, more than column_min_gap 1.5) under a title that spans
 * both: title, column 1 top to bottom, column 2 top to bottom. Columns of unequal length. */
static void test_two_columns(void)
{
    page p = {0};
    tu_rng r = {2};
    add_line(&p, 400, 1300, 120);
    p.nblocks++;
    add_block(&p, &r, 150, 760, 250, 12);
    add_block(&p, &r, 820, 1430, 250, 8);
    check_page(&p, 21, "two columns and a title");
}

/* A running head above the body (short, over the right column) and a page number below it
 * (centred, over the gutter), around two columns: head, column 1, column 2, page number. */
static void test_header_footer(void)
{
    page p = {0};
    tu_rng r = {3};
    add_line(&p, 1100, 1430, 90); /* running head */
    p.nblocks++;
    add_block(&p, &r, 150, 760, 250, 14);
    add_block(&p, &r, 820, 1430, 250, 14);
    add_line(&p, 770, 810, 250 + 15 * PITCH); /* page number */
    p.nblocks++;
    check_page(&p, 31, "header and footer");
    /* The same with the page number at the outer margin (not over the gutter), so that a
     * vertical cut through the whole page exists too: the head and foot must still come
     * first and last. */
    page q = {0};
    add_line(&q, 1100, 1430, 90);
    q.nblocks++;
    add_block(&q, &r, 150, 760, 250, 14);
    add_block(&q, &r, 820, 1430, 250, 13);
    add_line(&q, 1380, 1430, 250 + 15 * PITCH);
    q.nblocks++;
    check_page(&q, 32, "header and footer at the margin");
}

/* Three columns under a title: title, column 1, column 2, column 3. */
static void test_three_columns(void)
{
    page p = {0};
    tu_rng r = {4};
    add_line(&p, 300, 1500, 110);
    p.nblocks++;
    add_block(&p, &r, 150, 600, 240, 12);
    add_block(&p, &r, 660, 1110, 240, 12);
    add_block(&p, &r, 1170, 1620, 240, 9);
    check_page(&p, 41, "three columns");
    /* The third column with two paragraphs: its blocks follow each other. */
    page q = {0};
    add_line(&q, 300, 1500, 110);
    q.nblocks++;
    add_block(&q, &r, 150, 600, 240, 12);
    add_block(&q, &r, 660, 1110, 240, 12);
    int y = add_block(&q, &r, 1170, 1620, 240, 5);
    add_block(&q, &r, 1170, 1620, y + PITCH, 6);
    check_page(&q, 42, "three columns, two paragraphs in the third");
}

/* Title, two columns, then a full-width paragraph below both: the paragraph comes after
 * column 2, not between the columns. */
static void test_columns_then_paragraph(void)
{
    page p = {0};
    tu_rng r = {5};
    add_line(&p, 400, 1300, 120);
    p.nblocks++;
    add_block(&p, &r, 150, 760, 250, 10);
    add_block(&p, &r, 820, 1430, 250, 10);
    add_block(&p, &r, 150, 1430, 250 + 11 * PITCH, 4);
    check_page(&p, 51, "columns then a full-width paragraph");
}

/* Two columns with a gutter of 2 text heights that one line of the left column, in the middle
 * of it, runs across (an index entry running on into the next column, whose line on that row
 * starts later): no white gap runs down the page, yet the reader reads the left column with
 * that line, then the right column. In the second case one more row holds the two pieces of
 * a line cut at the gutter (lines.c cut_bridges), meeting in its middle: they narrow no gap,
 * each going with the column its centre lies in. */
static void test_bridged_columns(void)
{
    for (int pieces = 0; pieces <= 1; pieces++) {
        page p = {0};
        tu_rng r = {7};
        const int cut_row = pieces ? 8 : -1;
        for (int i = 0; i < 12; i++) {
            add_line(&p, 150,
                     i == 5         ? 900
                     : i == cut_row ? 780
                                    : 760 - tu_range(&r, 0, 40),
                     200 + i * PITCH);
            p.lines[p.n - 1].bridged = i == cut_row;
        }
        p.nblocks++;
        for (int i = 0; i < 12; i++) {
            add_line(&p,
                     i == 5         ? 940
                     : i == cut_row ? 781
                                    : 800,
                     1410 - tu_range(&r, 0, 40), 200 + i * PITCH);
            p.lines[p.n - 1].bridged = i == cut_row;
        }
        p.nblocks++;
        check_page(&p, 71,
                   pieces ? "columns bridged by one line, one cut" : "columns bridged by one line");
    }
}

/* Two columns, the left one in two blocks (a blank row between them), where a line of the
 * lower block runs 20 px past the edge of the right column (whose line on that row starts
 * later): the two boxes overlap by a stray overhang (a thirtieth of a column), which does not
 * put the right column, standing higher, before the lower left block. */
static void test_overhanging_block(void)
{
    page p = {0};
    tu_rng r = {9};
    const int crossing = 7;
    for (int i = 0; i < 11; i++) {
        const int row = i < 5 ? i : i + 1;
        add_line(&p, 150, i == crossing ? 820 : 760 - tu_range(&r, 0, 40), 200 + row * PITCH);
        if (i == 4) p.nblocks++;
    }
    p.nblocks++;
    for (int i = 0; i < 12; i++)
        add_line(&p, i == crossing + 1 ? 860 : 800, 1410 - tu_range(&r, 0, 40), 200 + i * PITCH);
    p.nblocks++;
    check_page(&p, 73, "a block overhanging the next column");
}

/* Two columns, each in two blocks, where the third line of the left column's first block
 * runs on across the gutter (the right column leaves that row blank): the right column's
 * first block, two lines beside the top of that block, does not stand above it (they are as
 * much side by side as one over the other), so the left column is still read first. */
static void test_block_beside_a_run_on(void)
{
    page p = {0};
    tu_rng r = {13};
    for (int i = 0; i < 11; i++) {
        if (i == 4) continue; /* the white between the left column's blocks */
        add_line(&p, 150, i == 2 ? 1200 : 760 - tu_range(&r, 0, 40), 200 + i * PITCH);
        if (i == 3 || i == 10) p.nblocks++;
    }
    for (int i = 0; i < 11; i++) {
        if (i == 2) continue; /* the row the left line runs across */
        add_line(&p, 800, 1410 - tu_range(&r, 0, 40), 200 + i * PITCH);
        if (i == 1 || i == 10) p.nblocks++;
    }
    check_page(&p, 79, "a block beside a line run on across the gutter");
}

/* Two pieces of one row closer than a gutter (a short gap, 1 text height) stay one block,
 * read left to right; the next row follows. */
static void test_row_pieces(void)
{
    page p = {0};
    add_line(&p, 150, 500, 200);
    add_line(&p, 520, 900, 200);
    add_line(&p, 150, 880, 200 + PITCH);
    add_line(&p, 150, 300, 200 + 2 * PITCH);
    add_line(&p, 320, 890, 200 + 2 * PITCH);
    p.nblocks = 1;
    check_page(&p, 61, "row pieces");
}

/* Two columns whose gutter (2 text heights) the first and the third lines of the left column
 * run across, at the top of the page (index entries run on into the next column): the
 * crossings stand among the first lines of both columns, not all above them (which a heading
 * over the columns would), so the gutter is still cut; the crossing lines go with the left
 * column, where they start. */
static void test_crossed_at_top(void)
{
    page p = {0};
    tu_rng r = {17};
    for (int i = 0; i < 12; i++)
        add_line(&p, 150, i == 0 || i == 2 ? 1380 : 760 - tu_range(&r, 0, 40), 200 + i * PITCH);
    p.nblocks++;
    for (int i = 1; i < 12; i++) {
        if (i == 2) continue;
        add_line(&p, 800, 1410 - tu_range(&r, 0, 40), 200 + i * PITCH);
        if (i == 1 || i == 11) p.nblocks++; /* the white of row 2 parts the right column */
    }
    check_page(&p, 83, "a gutter crossed at the top");
}

/* A title over two columns of 12 lines that runs across their gutter (3 text heights), set
 * apart from them by a band of white narrower than block_min_gap (1.2 text heights, 24 px)
 * but BAND_OVER_LEADING (half a text height, 10 px) wider than the white between the columns'
 * lines (11 px): 22 px gives title, left column, right column. With 20 px the band sets
 * nothing apart and the title crosses the gutter above the columns: one block read row by
 * row. The same for a line under the columns (a foot), read after them. */
static void test_band_beside_columns(void)
{
    for (int foot = 0; foot <= 1; foot++)
        for (int band = 20; band <= 22; band += 2) {
            page p = {0};
            tu_rng r = {23};
            const int lines = 12, apart = band > 20;
            const int first = foot ? 250 : 250 + ASC + DESC + band; /* the columns' first */
            const int across = foot ? first + (lines - 1) * PITCH + ASC + DESC + band : 250;
            if (!foot) add_line(&p, 400, 1300, across);
            if (!foot && apart) p.nblocks++;
            for (int side = 0; side < (apart ? 2 : 1); side++) {
                for (int i = 0; i < lines; i++)
                    for (int col = 0; col < 2; col++)
                        if (!apart || col == side)
                            add_line(&p, col ? 820 : 150, (col ? 1430 : 760) - tu_range(&r, 0, 40),
                                     first + i * PITCH);
                p.nblocks++;
            }
            if (foot) add_line(&p, 400, 1300, across);
            if (foot && apart) p.nblocks++;
            if (!apart) /* one block */
                memset(p.block, 0, sizeof p.block);
            char what[80];
            snprintf(what, sizeof what, "a line %s two columns, a band of %d px",
                     foot ? "under" : "over", band);
            check_page(&p, 91 + band, what);
        }
}

/* Numbered lines of a listing: numbers (1.5 text heights wide) before their lines of code,
 * with a gap of 2 text heights, and of 12 (wider than column_min_width, 10 text heights: a
 * margin's white, as before the page numbers of a contents list set flush right). The
 * numbers share the rows of their lines: labels, however wide the gap, and the listing is one
 * block read row by row, number then code. Three rows for the wide gap: too few for the
 * separators to take the white for a gutter (fewer than 8 text heights of rows beside it),
 * so the gap alone decides. */
static void test_labels(void)
{
    for (int wide = 0; wide <= 1; wide++) {
        page p = {0};
        tu_rng r = {19};
        const int code = wide ? 420 : 220, rows = wide ? 3 : 8;
        for (int i = 0; i < rows; i++) {
            add_line(&p, 150, 180, 200 + i * PITCH);
            add_line(&p, code, 1200 - tu_range(&r, 0, 400), 200 + i * PITCH);
        }
        p.nblocks++;
        check_page(&p, 89, wide ? "numbers a margin away from their lines" : "numbered lines");
    }
}

/* A table of keys and values on one baseline grid: keys from x 150 ending at key_end[i],
 * values from 800 ending at value_end[i] (both wider than column_min_width in all, and apart
 * by more than column_min_gap); the value of a row in `off_row` (a bit mask) stands 12 px
 * (0.6 text heights, past the baseline tolerance of a half) below its key's baseline. As a
 * table (`as_rows`) one block read row by row, key then value; else two columns. */
static void add_key_values(page *p, int rows, const int *key_end, const int *value_end,
                           unsigned off_row, int as_rows)
{
    for (int i = 0; i < rows; i++) {
        add_line(p, 150, key_end[i], 200 + i * PITCH);
        if (as_rows) add_line(p, 800, value_end[i], 200 + i * PITCH + (off_row >> i & 1) * 12);
    }
    p->nblocks++;
    for (int i = 0; !as_rows && i < rows; i++)
        add_line(p, 800, value_end[i], 200 + i * PITCH + (off_row >> i & 1) * 12);
    p->nblocks += !as_rows;
}

/* The rows of a table (blocks.c table_rows), each threshold tried on both sides: keys and
 * values whose ends are ragged (at most two of eight within 2 text heights, none within half
 * a text height of another) are read row by row; so are three rows, but two rows are too few
 * to tell (two columns); two values of eight off their key's baseline (6 of 8 lines paired,
 * the least a table has) still make a table, three do not. Ends that cluster: three of eight
 * keys within 2 text heights (under half of them) still make a table, four (half: the lines
 * of a column of text filling its measure) two columns; two of eight ending flush (a quarter)
 * still a table, three (over a third: leaders to page numbers in an index, justified lines)
 * two columns. */
static void test_key_value_table(void)
{
    static const int ragged[8] = {420, 700, 560, 340, 760, 480, 620, 380};
    static const int values[8] = {1000, 1450, 1200, 900, 1350, 1100, 1550, 1280};
    static const int three_together[8] = {700, 720, 740, 380, 340, 480, 560, 420};
    static const int four_together[8] = {700, 710, 725, 740, 340, 480, 560, 420};
    static const int two_flush[8] = {760, 760, 340, 420, 500, 580, 660, 700};
    static const int three_flush[8] = {760, 760, 760, 340, 420, 500, 580, 660};
    static const struct {
        int rows;
        const int *keys;
        unsigned off_row;
        int as_rows;
        const char *what;
    } cases[] = {
        {8, ragged, 0, 1, "a key/value table"},
        {3, ragged, 0, 1, "a key/value table of three rows"},
        {2, ragged, 0, 0, "a key/value table of two rows"},
        {8, ragged, 0x12, 1, "a key/value table, two values off their rows"},
        {8, ragged, 0x92, 0, "a key/value table, three values off their rows"},
        {8, three_together, 0, 1, "a table, three keys ending together"},
        {8, four_together, 0, 0, "two columns, four lines of eight ending together"},
        {8, two_flush, 0, 1, "a table, two keys ending flush"},
        {8, three_flush, 0, 0, "an index in columns, three lines of eight ending flush"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        page p = {0};
        add_key_values(&p, cases[k].rows, cases[k].keys, values, cases[k].off_row,
                       cases[k].as_rows);
        check_page(&p, 101 + k, cases[k].what);
    }
}

/* A table of six columns of four rows, its cells short words (60 px, 3 text heights: ending
 * flush, as justified lines do), 40 px apart but for 60 px in the middle, where the widest
 * gap cuts it into halves of three columns (each wider than column_min_width): the lines on
 * both sides of that gap are mostly narrower than a column of text (cells), and the table is
 * read row by row; with three of the four cells right of the gap 220 px wide (11 text
 * heights: lines of text), the halves are columns. */
static void test_table_of_cells(void)
{
    for (int wide_cells = 2; wide_cells <= 3; wide_cells++) {
        page p = {0};
        const int left[6] = {150, 250, 350, 470, 570 + 160, 670 + 160};
        const int as_rows = wide_cells == 2;
        for (int col = 0; col < 6; col += as_rows ? 6 : 3)
            for (int row = 0; row < 4; row++)
                for (int c = col; c < (as_rows ? 6 : col + 3); c++)
                    add_line(&p, left[c], left[c] + (c == 3 && row < wide_cells ? 220 : 60),
                             200 + row * PITCH);
        p.nblocks = as_rows ? 1 : 2;
        for (int i = 0; !as_rows && i < p.n; i++)
            p.block[i] = i >= 12;
        check_page(&p, 113, as_rows ? "a table of short cells" : "two halves of wider lines");
    }
}

/* Two columns of text on one baseline grid (the lines of both filling their measure, ragged
 * by under 2 text heights): though every line shares a row with one across the gutter, the
 * columns are read one after the other. */
static void test_columns_on_one_grid(void)
{
    page p = {0};
    tu_rng r = {43};
    add_block(&p, &r, 150, 760, 200, 14);
    add_block(&p, &r, 800, 1410, 200, 14);
    check_page(&p, 47, "two columns on one grid");
}

/* Running text is no column of cells (blocks.c running_text), each threshold tried on both
 * sides, on two columns of 14 lines on one baseline grid, x 150..760 and 800..1410 (30 text
 * heights wide), their ends ragged enough to pass for the cells of a table (6 of 14 within 2
 * text heights of each other, 3 within half of one): prose broken where the next word did not
 * fit, 11 of 14 lines ending within 6 text heights (120 px) of the column's farthest end, is
 * read column by column; with 10 of 14 (under three quarters) it is a table. An index whose
 * entries run over, indented by 30 px (1.5 text heights) below a line ending within a word
 * of the farthest end: 2 run-overs of 14 lines (over a tenth) make columns, 1 a table. */
static void test_running_text(void)
{
    static const int short_by[14] = {0, 95, 30, 70, 10, 85, 50, 20, 110, 60, 5, 80, 40, 90};
    static const int run_over_rows[2][14] = {{0, 0, 0, 1}, {0, 0, 0, 1, 0, 0, 0, 0, 1}};
    for (int k = 0; k < 4; k++) {
        const int prose = k < 2, columns = k % 2 == 1;
        page p = {0};
        for (int col = 0; col < 2; col++) {
            const int left = col ? 800 : 150, right = col ? 1410 : 760;
            for (int i = 0; i < 14; i++) {
                int x0 = left, x1 = right - short_by[i];
                if (prose && i >= 10 + columns) x1 = right - 200 - short_by[i];
                if (!prose && i > 0 && run_over_rows[columns][i]) {
                    x0 = left + 30; /* the entry above ran over */
                    x1 = left + 200 + short_by[i];
                } else if (!prose && i + 1 < 14 && run_over_rows[columns][i + 1]) {
                    x1 = right - 20;
                } else if (!prose) {
                    x1 = left + 250 + 2 * short_by[i];
                }
                add_line(&p, x0, x1, 200 + i * PITCH);
                if (!columns) p.block[p.n - 1] = 0;
            }
            p.nblocks += columns;
        }
        if (!columns) { /* a table: read row by row */
            page rows = {0};
            for (int i = 0; i < 14; i++)
                for (int col = 0; col < 2; col++)
                    rows.lines[rows.n++] = p.lines[col * 14 + i];
            rows.nblocks = 1;
            p = rows;
        }
        static const char *what[4] = {"prose, 10 of 14 lines near its end: a table",
                                      "prose, 11 of 14 lines near its end: columns",
                                      "an index, one run-over: a table",
                                      "an index, two run-overs: columns"};
        check_page(&p, 131 + k, what[k]);
    }
}

/* Two columns of 12 rows whose first and third lines of the left column run across the
 * gutter (the right column leaves those rows blank, so no white runs down the page), with a
 * paragraph break side by side in both columns at row 6: the band of white across the page
 * there lies between columns (a gutter runs through it, with both columns above and below),
 * so it makes no cut; the gutter that lines run across does, and the columns are read one
 * after the other, not in bands. */
static void test_band_between_columns(void)
{
    page p = {0};
    tu_rng r = {53};
    for (int i = 0; i < 12; i++) {
        if (i == 6) continue;
        add_line(&p, 150, i == 0 || i == 2 ? 1380 : 760 - tu_range(&r, 0, 40), 200 + i * PITCH);
        if (i == 5 || i == 11) p.nblocks++;
    }
    for (int i = 1; i < 12; i++) {
        if (i == 2 || i == 6) continue;
        add_line(&p, 800, 1410 - tu_range(&r, 0, 40), 200 + i * PITCH);
        if (i == 1 || i == 5 || i == 11) p.nblocks++;
    }
    check_page(&p, 59, "a band of white between columns");
}

/* A paragraph of six lines with three margin notes beside it (2.5 text heights to its right,
 * 7 wide, a pitch of their own: 40 px against 48, their baselines 20 px, a text height, below
 * the paragraph's): the notes share no baseline with the paragraph's lines, so they are no
 * labels but a column of their own, read after the paragraph. */
static void test_margin_notes(void)
{
    page p = {0};
    tu_rng r = {23};
    add_block(&p, &r, 150, 900, 200, 6);
    for (int i = 0; i < 3; i++)
        add_line(&p, 950, 1090, 220 + 40 * i);
    p.nblocks++;
    check_page(&p, 97, "margin notes beside a paragraph");
}

/* A form: five labels (6 to 12 text heights wide, so wider than column_min_width) in a column
 * 2 text heights from their entries, each label on the baseline of its entry's first line,
 * entries of two to four lines (fixed sizes). The white between labels and entries is a
 * gutter to the separators (the entries start along it, all down the page), yet the labels
 * are sparse beside the entries (one to a group of lines) and half as wide: each label and
 * its entry make a block (half a line of white between them), read row by row. */
static void test_form(void)
{
    page p = {0};
    tu_rng r = {29};
    const int label_width[5] = {120, 240, 160, 200, 140}, entry_lines[5] = {3, 2, 4, 3, 2};
    int y = 200;
    for (int k = 0; k < 5; k++) {
        add_line(&p, 150, 150 + label_width[k], y);
        for (int i = 0; i < entry_lines[k]; i++, y += PITCH)
            add_line(&p, 430, 1200 - tu_range(&r, 0, 200), y);
        y += PITCH / 2;
        p.nblocks++;
    }
    check_page(&p, 31, "a form: labels before their entries");
}

/* Three columns of 16 lines whose first and third are set on one leading and the middle one
 * half a line lower (after a heading of its own above): the lines beside the first gutter
 * (the middle column's) share no rows with the first column's, though the third column's do;
 * the first column is no column of labels, and the page is read column by column. */
static void test_columns_out_of_phase(void)
{
    page p = {0};
    tu_rng r = {37};
    add_block(&p, &r, 150, 550, 200, 16);
    add_block(&p, &r, 600, 1000, 200 + PITCH / 2, 16);
    add_block(&p, &r, 1050, 1450, 200, 16);
    check_page(&p, 41, "three columns, the middle one out of phase");
}

/* Arranges the lines of p (in page order) with the components `comps` (rules) and stores the
 * role of the block holding line want[k] in role[k] (-1 when it failed). */
static void roles_of_lines(const page *p, lt_components *comps, const int *want, int *role,
                           int nwant, const char *what)
{
    for (int k = 0; k < nwant; k++)
        role[k] = -1;
    lt_raw_lines raw = {(lt_raw_line *)p->lines, p->n};
    lt_params prm;
    lt_params_default(&prm);
    lt_error err = {0};
    lt_cut_node *root = NULL;
    lt_arrangement *arr = NULL;
    lt_separators *seps = NULL; /* the rules among comps (none without them) */
    if ((comps && lt_find_separators(comps, TH, &seps, &err)) ||
        lt_xy_cut(&raw, comps, seps, TH, &prm, &root, &err) ||
        lt_arrange(root, &raw, comps, TH, &prm, p->lines[p->n - 1].box.bottom + 150, &arr, &err)) {
        tu_fail("%s: %s", what, err.message);
    } else {
        for (int i = 0; i < arr->nlines; i++)
            for (int k = 0; k < nwant; k++)
                if (arr->order[i] == want[k]) role[k] = arr->blocks[arr->block_of[i]].role;
    }
    lt_arrangement_free(arr);
    lt_cut_node_free(root);
    lt_separators_free(seps);
}

/* The rule that opens footnotes is short against the block under it: two columns, the left
 * one ending in two lines under a 200 px rule (footnotes), the right one in four lines under
 * a rule as wide as the column (a section rule: not footnotes), both in the lower half, and a
 * page number at the foot. */
static void test_footnote_rule(void)
{
    page p = {0};
    tu_rng r = {91};
    add_block(&p, &r, 100, 700, 200, 10);
    const int footnote = p.n;
    add_block(&p, &r, 100, 700, 1160, 2);
    add_block(&p, &r, 800, 1400, 200, 10);
    const int section = p.n;
    add_block(&p, &r, 800, 1400, 820, 4);
    add_line(&p, 740, 760, 1320); /* the page number, below everything */
    p.nblocks++;
    lt_component rules[2];
    memset(rules, 0, sizeof rules);
    rules[0].box = tu_box(100, 1100, 300, 1104);
    rules[1].box = tu_box(800, 760, 1400, 764);
    for (int k = 0; k < 2; k++) {
        rules[k].kind = LT_COMP_RULE;
        rules[k].pixels = (long)(rules[k].box.right - rules[k].box.left) * 4;
    }
    lt_components comps = {rules, 2};
    const int want[2] = {footnote, section};
    int role[2];
    roles_of_lines(&p, &comps, want, role, 2, "footnote rule");
    CHECK_INT(role[0], LT_ROLE_FOOTNOTE, "footnote rule: the lines under the short rule");
    CHECK(role[1] != LT_ROLE_FOOTNOTE,
          "footnote rule: the lines under the column-wide rule are not footnotes");
}

/* At the top of the page, two blocks of two lines set apart from the text under them by
 * white: a running head (two short lines, the title and the authors) and, on a second page,
 * a paragraph (a line across the text area, then its short last line). Only the first is a
 * page header. */
static void test_two_line_head(void)
{
    for (int paragraph = 0; paragraph <= 1; paragraph++) {
        page p = {0};
        tu_rng r = {17};
        add_line(&p, 150, paragraph ? 1430 : 600, 90);
        add_line(&p, 150, paragraph ? 700 : 480, 90 + PITCH);
        p.nblocks++;
        add_block(&p, &r, 150, 1430, 250, 12);
        add_block(&p, &r, 150, 1430, 250 + 13 * PITCH, 8);
        const int want[1] = {0};
        int role[1];
        const char *what = paragraph ? "a paragraph at the top" : "a running head of two lines";
        roles_of_lines(&p, NULL, want, role, 1, what);
        if (paragraph)
            CHECK(role[0] != LT_ROLE_PAGE_HEADER, "%s: not a page header", what);
        else
            CHECK_INT(role[0], LT_ROLE_PAGE_HEADER, "%s: its role", what);
    }
}

/* No lines: no tree, no blocks. */
static void test_empty(void)
{
    lt_raw_lines raw = {NULL, 0};
    lt_params prm;
    lt_params_default(&prm);
    lt_error err = {0};
    lt_cut_node *root = (lt_cut_node *)&err;
    CHECK_INT(lt_xy_cut(&raw, NULL, NULL, TH, &prm, &root, &err), 0, "empty page: lt_xy_cut");
    CHECK(root == NULL, "empty page: tree not NULL");
    lt_arrangement *arr = NULL;
    CHECK_INT(lt_arrange(NULL, &raw, NULL, TH, &prm, 1000, &arr, &err), 0,
              "empty page: lt_arrange");
    CHECK(arr && arr->nblocks == 0 && arr->nlines == 0, "empty page: blocks or lines");
    lt_arrangement_free(arr);
}

int main(void)
{
    double t0 = tu_now_s();
    test_one_column();
    test_two_columns();
    test_header_footer();
    test_three_columns();
    test_columns_then_paragraph();
    test_row_pieces();
    test_bridged_columns();
    test_overhanging_block();
    test_block_beside_a_run_on();
    test_crossed_at_top();
    test_band_beside_columns();
    test_labels();
    test_key_value_table();
    test_table_of_cells();
    test_running_text();
    test_columns_on_one_grid();
    test_band_between_columns();
    test_margin_notes();
    test_form();
    test_columns_out_of_phase();
    test_footnote_rule();
    test_two_line_head();
    test_empty();
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_blocks");
}

/* test_lines.c — checks text-line building (lt_find_components + lt_text_height +
 * lt_classify_components + lt_build_lines, and the whole lt_analyze) on pages drawn by
 * tests/textpage.h from glyph-like boxes whose true lines are known by construction: x-height
 * letters with ascenders, descenders, i-dots, commas and periods; word gaps of 0.6 and line
 * pitch of 2.4 text heights (common practice for book type: word space about a third of an em,
 * leading 120% of the body, from memory). Exact line count, boxes, baselines and x-heights.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "textpage.h"

/* One column: three paragraphs of justified lines with a blank line between them. */
static void test_one_column(void)
{
    tu_rng r = {2024};
    page *p = page_new(1700, 1400);
    int y = 150;
    y = draw_paragraph(p, &r, 150, 1550, y, 6) + PITCH;
    y = draw_paragraph(p, &r, 150, 1550, y, 4) + PITCH;
    draw_paragraph(p, &r, 150, 1550, y, 7);
    result res = run_stages(p, "one column");
    compare_lines(p, &res, "one column");
    result_free(&res);
    page_free(p);
}

/* Two columns: gutters of 3 text heights (the main case; wider than most word gaps) on
 * eight random pages, and of 2 text heights (narrower than lt_params' link_max_gap: lines must
 * be kept apart by the gutter the separators stage finds, the white strip that many rows share
 * with the column's lines starting along it) on three. The left column is justified, so the
 * gutter is straight, but lines may end up to a few pixels short of it, and each paragraph's
 * last line short. */
static void test_two_columns(void)
{
    const struct {
        int gutter_px, seeds;
    } cases[] = {{3 * XH, 8}, {2 * XH, 3}};
    for (int ci = 0; ci < 2; ci++)
        for (int seed = 1; seed <= cases[ci].seeds; seed++) {
            char what[64];
            snprintf(what, sizeof what, "two columns, gutter %d px, seed %d", cases[ci].gutter_px,
                     seed);
            tu_rng r = {(uint64_t)seed};
            page *p = page_new(1700, 1400);
            const int col = 620, x0 = 150, x1 = x0 + col, x2 = x1 + cases[ci].gutter_px;
            int y = draw_paragraph(p, &r, x0, x1, 150, 9) + PITCH;
            draw_paragraph(p, &r, x0, x1, y, 5);
            y = draw_paragraph(p, &r, x2, x2 + col, 150, 6) + PITCH;
            draw_paragraph(p, &r, x2, x2 + col, y, 8);
            result res = run_stages(p, what);
            compare_lines(p, &res, what);
            /* No line may cross the gutter. */
            CHECK_INT(lines_across(&res, x1, x2), 0, "%s: lines crossing the gutter", what);
            result_free(&res);
            page_free(p);
        }
}

/* Two narrow columns of an index (a gutter of 2.2 text heights) that a few lines cross: every
 * twelfth row (from the sixth) a line of the left column runs on 24 px into the gutter (the
 * right column leaves that row blank), and six rows further one of the right column starts
 * 24 px early (beside the short last line of a left paragraph), so no strip a text height
 * wide is white through all the rows; the five lines between two crossings are evidence
 * enough for the gutter, and the crossing lines are kept apart from the column beside them. */
static void test_crossed_gutter(void)
{
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "crossed gutter, seed %d", seed);
        tu_rng r = {(uint64_t)(100 + seed)};
        page *p = page_new(1700, 1750);
        const int col = 620, x0 = 150, x1 = x0 + col, x2 = x1 + 44, rows = 32;
        for (int i = 0; i < rows; i++) {
            const int y = 150 + i * PITCH, end = i == rows - 1;
            if (i % 12 == 5 && i < 24) {
                draw_line(p, &r, x0, x1 + 24, y, 1, 0);
            } else if (i % 12 == 11) {
                draw_line(p, &r, x0, x0 + col / 2, y, 0, 1);
                draw_line(p, &r, x2 - 24, x2 + col, y, 1, end);
            } else {
                draw_line(p, &r, x0, x1, y, 1, end);
                draw_line(p, &r, x2, x2 + col, y, 1, end);
            }
        }
        result res = run_stages(p, what);
        compare_lines(p, &res, what);
        CHECK_INT(lines_across(&res, x1, x2), 0, "%s: lines across the gutter", what);
        result_free(&res);
        page_free(p);
    }
}

/* Two columns with a gutter of 3 text heights, where one line of the left column runs on
 * into the gutter until its last letters touch the first letter of the line beside it (an
 * overfull line): one component runs across the gutter, yet the row must give one line in
 * each column. The right line's first letter, fused with the left line's last ones, goes
 * with the side its centre lies on, so the check is on which lines span the gutter, not on
 * exact boxes. As a plain page, and as an index whose right column runs on every third row
 * 5 text heights in from the column's edge (a leader to page numbers), one of them right
 * under the bridged row: there the gutter is known by the column's edge, where the other
 * rows start. */
static void test_bridged_gutter(void)
{
    for (int index = 0; index <= 1; index++)
        for (int seed = 1; seed <= 3; seed++) {
            char what[64];
            snprintf(what, sizeof what, "bridged gutter%s, seed %d", index ? " (index)" : "", seed);
            tu_rng r = {(uint64_t)(200 + 10 * index + seed)};
            page *p = page_new(1700, 1100);
            const int col = 620, x0 = 150, x1 = x0 + col, x2 = x1 + 3 * XH, rows = 16;
            const int bridged = 6;
            for (int i = 0; i < rows; i++) {
                const int y = 150 + i * PITCH, run_on = index && i % 3 == bridged % 3 + 1;
                draw_line(p, &r, x0, x1, y, 1, 0);
                draw_line(p, &r, run_on ? x2 + 5 * XH : x2, x2 + col, y, 1, 0);
                if (i == bridged) /* letters without a gap from the left line to the right one */
                    tu_fill(p->img, x1 - 2, y - XH, x2 + 3, y, 1);
            }
            result res = run_stages(p, what);
            int on_row = 0;
            for (int i = 0; res.lines && i < res.lines->count; i++) {
                const lt_box *b = &res.lines->items[i].box;
                on_row += b->top < 150 + bridged * PITCH && b->bottom > 150 + bridged * PITCH - XH;
            }
            CHECK_INT(lines_across(&res, x1 - 100, x2 + 100), 0, "%s: lines over both columns",
                      what);
            CHECK_INT(on_row, 2, "%s: lines on the bridged row", what);
            CHECK_INT(res.lines ? res.lines->count : 0, 2 * rows, "%s: lines", what);
            result_free(&res);
            page_free(p);
        }
}

/* An index in two columns with leaders: each entry of the left column runs on in a few dots
 * (on a grid of 16 px, as leaders are set) that stop 2 text heights before its page numbers,
 * one to four digits (old-style, x-height tall) set flush right, so that the white before the
 * numbers runs down the column like a gutter, with the entries close beside it; the leader
 * carries the line over it. Every fourth entry's leader runs on to the column's edge without
 * a number, 2.5 text heights from a short entry of the right column, which stays a line of
 * its own (as does one with a page number of one digit, a group as small as a mark); the next row
 * is the entry's run-on, a leader from 4 text heights in that stops a text height before its
 * numbers (the dots belong to that line). */
static void test_leaders(void)
{
    for (int seed = 1; seed <= 3; seed++) {
        char what[64];
        snprintf(what, sizeof what, "leaders, seed %d", seed);
        tu_rng r = {(uint64_t)(300 + seed)};
        page *p = page_new(1500, 1000);
        const int x0 = 150, right = 900, x2 = right + 5 * XH / 2, rows = 16;
        for (int i = 0; i < rows; i++) {
            const int y = 150 + i * PITCH, digits = i % 4 != 3 ? tu_range(&r, 1, 4) : 0;
            const int number_left = right - 14 * digits + 3;
            const int run_on = i % 4 == 0 && i > 0;
            const int dots_end = !digits ? right : number_left - (run_on ? XH : 2 * XH);
            int l, dots_from;
            if (run_on) { /* the entry above continued: a leader, numbers */
                l = p->nlines++;
                p->line_box[l] = tu_box(0, 0, 0, 0);
                p->baseline[l] = y;
                p->ncomp[l] = 0;
                dots_from = x0 + 4 * XH;
            } else {
                l = draw_line(p, &r, x0, dots_end - tu_range(&r, 40, 100), y, 0, 0);
                dots_from = (p->line_box[l].right / 16 + 1) * 16;
            }
            for (int x = dots_from; x + 4 <= dots_end; x += 16)
                draw_glyph(p, l, tu_box(x, y - 4, x + 4, y), 1);
            for (int k = 0; k < digits; k++)
                draw_glyph(p, l, tu_box(number_left + 14 * k, y - XH, number_left + 14 * k + 11, y),
                           0);
            draw_line(p, &r, x2, x2 + tu_range(&r, 120, 190), y, 0, 0);
        }
        result res = run_stages(p, what);
        compare_lines(p, &res, what);
        CHECK_INT(lines_across(&res, right, x2), 0, "%s: lines across the gutter", what);
        result_free(&res);
        page_free(p);
    }
}

/* Rules and a picture: a horizontal rule in the white between two lines, a vertical rule in
 * a column gutter, and a picture block (a filled 300 x 300 box, 15 text heights) standing
 * between text on its left and on its right, one text height from each. None of them joins
 * or extends any line. */
static void test_rules_and_picture(void)
{
    tu_rng r = {31337};
    page *p = page_new(1900, 1500);
    /* Paragraph, a rule 12 px below the last line's baseline (in the 11 px of white between
     * the descenders and the next line's ascenders), another paragraph. */
    draw_paragraph(p, &r, 150, 1000, 150, 4);
    int last = 150 + 3 * PITCH;
    tu_fill(p->img, 150, last + DESC + 2, 1000, last + DESC + 5, 1);
    draw_paragraph(p, &r, 150, 1000, last + PITCH, 4);
    /* Two columns with a vertical rule in the middle of a 3-text-height gutter. */
    const int top = 150 + 9 * PITCH;
    draw_paragraph(p, &r, 150, 550, top, 6);
    draw_paragraph(p, &r, 610, 1000, top, 6);
    tu_fill(p->img, 579, top - ASC, 582, top + 5 * PITCH + DESC, 1);
    /* Text, a picture, text. */
    const int px0 = 1320, px1 = 1620, ptop = 150;
    draw_paragraph(p, &r, 1060, px0 - XH, ptop + ASC, 6);
    tu_fill(p->img, px0, ptop, px1, ptop + 300, 1);
    draw_paragraph(p, &r, px1 + XH, 1850, ptop + ASC, 6);
    /* Text under the picture, one line pitch below it. */
    draw_paragraph(p, &r, 1060, 1850, ptop + 300 + PITCH, 3);

    result res = run_stages(p, "rules and picture");
    compare_lines(p, &res, "rules and picture");
    int rules = 0, pictures = 0;
    for (int i = 0; res.comps && i < res.comps->count; i++) {
        rules += res.comps->items[i].kind == LT_COMP_RULE;
        pictures += res.comps->items[i].kind == LT_COMP_PICTURE;
    }
    CHECK_INT(rules, 2, "rules and picture: components classified as rules");
    CHECK_INT(pictures, 1, "rules and picture: components classified as pictures");
    result_free(&res);
    page_free(p);
}

/* Marks at the ends of lines and of the page: a line that is a single word with a period,
 * a line of two words separated by a comma, a lone "i" (stem and dot). */
static void test_small_marks(void)
{
    page *p = page_new(800, 520);
    tu_rng r = {5};
    draw_line(p, &r, 100, 300, 100, 0, 1);
    draw_line(p, &r, 100, 700, 100 + PITCH, 1, 1);
    /* The lone i. */
    int b = 100 + 2 * PITCH, l = p->nlines++;
    tu_fill(p->img, 100, b - XH, 104, b, 1);
    tu_fill(p->img, 100, b - XH - 8, 104, b - XH - 4, 1);
    p->line_box[l] = tu_box(100, b - XH - 8, 104, b);
    p->baseline[l] = b;
    p->ncomp[l] = 2;
    p->mark_box[p->nmarks] = tu_box(100, b - XH - 8, 104, b - XH - 4);
    p->mark_line[p->nmarks++] = l;
    /* Enough ordinary text for the page's text height to be measured. */
    draw_paragraph(p, &r, 100, 700, 100 + 4 * PITCH, 4);
    result res = run_stages(p, "small marks");
    compare_lines(p, &res, "small marks");
    result_free(&res);
    page_free(p);
}

/* The whole pipeline on a drawn gray page (black on white): a title, two columns, a page
 * number. lt_analyze's lines (in reading order) must be the drawn ones, in the order
 * title, left column top to bottom, right column top to bottom, page number. */
/* The page of test_analyze on p (1600 x 1300): a title, then two columns (8 and 6 lines
 * beside 10). Returns the first column line's baseline. */
static int draw_two_columns(page *p, tu_rng *r)
{
    /* Title: one line of bigger type would change the text height measure; a line of the
     * body type, centred, set apart by two blank lines. */
    draw_line(p, r, 500, 1100, 120, 0, 0);
    const int top = 120 + 3 * PITCH, x0 = 120, col = 640, gutter = 3 * XH;
    int y = draw_paragraph(p, r, x0, x0 + col, top, 8) + PITCH;
    draw_paragraph(p, r, x0, x0 + col, y, 6);
    draw_paragraph(p, r, x0 + col + gutter, x0 + 2 * col + gutter, top, 10);
    return top;
}

static void test_analyze(void)
{
    tu_rng r = {4242};
    page *p = page_new(1600, 1300);
    const int top = draw_two_columns(p, &r);
    draw_line(p, &r, 780, 830, top + 18 * PITCH, 0, 0); /* page number, short */
    lt_image *gray = page_gray(p);
    lt_layout *lay = NULL;
    lt_error err = {0};
    lt_params prm;
    lt_params_default(&prm);
    if (lt_analyze(gray, &prm, &lay, &err)) {
        tu_fail("analyze: %s", err.message);
    } else {
        CHECK(fabs(lay->skew_deg) < prm.deskew_min_deg, "analyze: skew %.3f on a level page",
              lay->skew_deg);
        CHECK_NEAR(lay->text_height_px, XH, 0.5, "analyze: text height");
        CHECK_INT(lay->nlines, p->nlines, "analyze: number of lines");
        /* The drawing order is the reading order. */
        for (int i = 0; i < lay->nlines && i < p->nlines; i++)
            CHECK_BOX(lay->lines[i].box, p->line_box[i], "analyze: line %d in reading order", i);
        CHECK_INT(lay->nblocks >= 4, 1, "analyze: at least 4 blocks (got %d)", lay->nblocks);
    }
    /* lt_analyze_consume gives the same layout from a copy of the page, and frees the copy;
     * the 1-bit page too; and a missing page is refused. */
    const lt_image *sources[2] = {gray, p->img};
    for (int k = 0; k < 2 && lay; k++) {
        lt_image *copy = tu_image(1600, 1300, sources[k]->kind, 0);
        memcpy(copy->pixels, sources[k]->pixels, (size_t)1600 * 1300);
        lt_layout *lay2 = NULL;
        if (lt_analyze_consume(&copy, &prm, &lay2, &err)) {
            tu_fail("analyze_consume (%s): %s", k ? "1-bit" : "gray", err.message);
        } else {
            CHECK(copy == NULL, "analyze_consume: the image pointer is cleared");
            CHECK_INT(lay2->nlines, lay->nlines, "analyze_consume (%s): lines",
                      k ? "1-bit" : "gray");
            for (int i = 0; i < lay2->nlines && i < lay->nlines; i++)
                CHECK_BOX(lay2->lines[i].box, lay->lines[i].box, "analyze_consume: line %d", i);
        }
        lt_image_free(copy);
        lt_layout_free(lay2);
    }
    lt_image *none = NULL;
    lt_layout *lay3 = NULL;
    CHECK_INT(lt_analyze_consume(&none, &prm, &lay3, &err), LT_EINVAL, "analyze_consume: no image");
    lt_layout_free(lay);
    lt_image_free(gray);
    page_free(p);
}

/* Text height among texture: a paragraph of ten lines (x-height 20 px) on a page sprinkled
 * with 1,500 square specks 7 px wide at random places (fixed seed; the grain of a yellowed
 * paper after binarization). The specks' widths add up to more than the letters' (about
 * 10,500 px against 6,000), so a mode over every plausible character would be 7 px; most
 * specks have no speck of their size beside them, while letters stand in words: the text
 * height is the letters' (within a pixel of 20). */
static void test_text_height_among_specks(void)
{
    tu_rng r = {77};
    page *p = page_new(1700, 1000);
    draw_paragraph(p, &r, 150, 1550, 200, 10);
    long speck_width = 0;
    for (int k = 0; k < 1500; k++) {
        const int x = tu_range(&r, 0, 1690), y = tu_range(&r, 0, 990);
        tu_fill_box(p->img, tu_box(x, y, x + 7, y + 7), 1);
        speck_width += 7;
    }
    lt_params prm;
    lt_params_default(&prm);
    lt_error err = {0};
    lt_components *comps = NULL;
    if (lt_find_components(p->img, prm.max_components, &comps, &err)) {
        tu_fail("text height among specks: components: %s", err.message);
    } else {
        const double th = lt_text_height(comps, 300);
        printf("text height among %ld px of specks: %.2f px\n", speck_width, th);
        CHECK_NEAR(th, XH, 1.0, "text height among specks");
    }
    lt_components_free(comps);
    page_free(p);
}

/* Text height of a deskewed page: ten rows of thirty letters, 12 px wide and 22 tall, 6 px
 * apart, plain and with a tooth 2 px wide on the top and on the bottom row of each (the teeth
 * that a turned edge keeps; at a letter's own place along it). The boxes grow by two rows
 * (lt_text_height 22, then 24); the core heights (without 3 % of the ink at either end: 20.68
 * plain, 20.99 with the teeth, which hold under 1 % of it each) stay in the bin of 20 px,
 * which stands for 20.5 px: lt_text_height_deskewed gives 1.092 x 20.5 for both. */
static void test_text_height_deskewed(void)
{
    for (int teeth = 0; teeth < 2; teeth++) {
        const char *what = teeth ? "letters with teeth" : "plain letters";
        lt_image *img = tu_image(700, 600, LT_IMAGE_INK, 0);
        for (int row = 0; row < 10; row++)
            for (int k = 0; k < 30; k++) {
                const int x = 20 + 18 * k, y = 40 + 48 * row, at = x + (k * 5 + row) % 10;
                tu_fill_box(img, tu_box(x, y, x + 12, y + 22), 1);
                if (!teeth) continue;
                tu_fill_box(img, tu_box(at, y - 1, at + 2, y), 1);
                tu_fill_box(img, tu_box(at, y + 22, at + 2, y + 23), 1);
            }
        lt_error err = {0};
        lt_components *comps = NULL;
        if (lt_find_components(img, LT_DEFAULT_MAX_COMPONENTS, &comps, &err)) {
            tu_fail("%s: components: %s", what, err.message);
        } else {
            CHECK_NEAR(lt_text_height(comps, 300), teeth ? 24 : 22, 1e-9, "%s: by boxes", what);
            CHECK_NEAR(lt_text_height_deskewed(comps, 300), 1.092 * 20.5, 1e-9,
                       "%s: by core heights", what);
        }
        lt_components_free(comps);
        lt_image_free(img);
    }
}

/* A scan's border: a paragraph of five lines with, at the left edge of the image (x 10..15),
 * thin strokes 30 px tall one above the other (the dark border broken up), and more strokes
 * nearer the right edge: 5 px wide (a quarter of a text height) at 5 and 7.5 text heights
 * from it, 7 px (0.35) at 5: dropped; 5 px wide at 8.5 text heights, and 9 px (0.45, a
 * digit one) at 5: kept. lt_drop_edge_slivers keeps the paragraph, drops the strokes within
 * four text heights of the edge, which are narrower than a letter, and those within eight
 * narrower than 0.4 of a letter (the edge of a leaf or its shadow, inside the image). At the
 * top, words of x-height letters 12 px wide and 3 px apart: 7 letters (5.1 text heights)
 * touching the border or 9 px (0.45 text height) from it are dropped (the cut end of a line of
 * the facing page, with the few pixels of paper a crop leaves beside it), 9 letters (6.6)
 * touching it and 7 letters 11 px (0.55) from it are kept. */
static void test_edge_slivers(void)
{
    const char *what = "slivers at the image edge";
    tu_rng r = {78};
    page *p = page_new(1700, 1000);
    draw_paragraph(p, &r, 150, 1550, 200, 5);
    int strokes = 0;
    for (int y = 100; y + 30 <= 900; y += 60, strokes++)
        tu_fill_box(p->img, tu_box(10, y, 15, y + 30), 1);
    const struct {
        int width, from_edge, kept;
    } right[] = {
        {5, 5 * XH, 0}, {5, 15 * XH / 2, 0}, {7, 5 * XH, 0}, {5, 17 * XH / 2, 1}, {9, 5 * XH, 1}};
    int kept = 0;
    for (int k = 0; k < 5; k++) {
        const int x1 = 1700 - right[k].from_edge, y = 500 + 60 * k;
        tu_fill_box(p->img, tu_box(x1 - right[k].width, y, x1, y + 30), 1);
        kept += right[k].kept;
    }
    const struct {
        int letters, top, kept;
    } top[] = {{7, 0, 0}, {9, 0, 1}, {7, 9, 0}, {7, 11, 1}};
    for (int k = 0; k < 4; k++) {
        for (int i = 0; i < top[k].letters; i++)
            tu_fill_box(
                p->img,
                tu_box(300 + 400 * k + 15 * i, top[k].top, 312 + 400 * k + 15 * i, top[k].top + XH),
                1);
        kept += top[k].kept;
    }
    result res = run_stages(p, what);
    if (res.lines) {
        CHECK_INT(res.lines->count, 5 + strokes + 5 + 4, "%s: lines before", what);
        lt_frame f;
        lt_frame_init(&f, p->img->width, p->img->height, 0);
        lt_drop_edge_slivers(res.lines, &f, res.th);
        CHECK_INT(res.lines->count, 5 + kept, "%s: lines after", what);
        int inside = 0, wide = 0;
        for (int i = 0; i < res.lines->count; i++) {
            inside += res.lines->items[i].box.left >= 150;
            wide += lt_box_width(&res.lines->items[i].box) == 9;
        }
        CHECK_INT(inside, 5 + kept, "%s: the paragraph and the strokes kept", what);
        CHECK_INT(wide, 1, "%s: the stroke as wide as a digit one kept", what);
    }
    result_free(&res);
    page_free(p);
}

/* Lone bodies far from the text (a paragraph of six lines): one 0.75 text height tall (a speck
 * of a leaf's edge, a piece of a broken dash) makes no line, one 0.85 tall (a letter of the
 * text) does, and so do two 0.75 tall side by side (a line of small letters): a line holds a
 * letter, and the text height is that of the commonest letters. */
static void test_lone_small_body(void)
{
    const char *what = "lone small bodies";
    tu_rng r = {404};
    page *p = page_new(1700, 1000);
    draw_paragraph(p, &r, 150, 1000, 200, 6);
    const struct {
        int height, count, kept;
    } bodies[] = {{15, 1, 0}, {17, 1, 1}, {15, 2, 1}};
    int kept = 0;
    for (int k = 0; k < 3; k++) {
        const int y = 250 + 200 * k;
        for (int i = 0; i < bodies[k].count; i++)
            tu_fill_box(p->img, tu_box(1300 + 14 * i, y - bodies[k].height, 1310 + 14 * i, y), 1);
        kept += bodies[k].kept;
    }
    result res = run_stages(p, what);
    if (res.lines) {
        CHECK_INT(res.lines->count, 6 + kept, "%s: lines", what);
        int beside = 0, tall = 0, pair = 0;
        for (int i = 0; i < res.lines->count; i++) {
            const lt_box *b = &res.lines->items[i].box;
            if (b->left < 1300) continue;
            beside++;
            tall += lt_box_height(b) == 17 && lt_box_width(b) == 10;
            pair += lt_box_height(b) == 15 && lt_box_width(b) == 24;
        }
        CHECK_INT(beside, kept, "%s: lines beside the paragraph", what);
        CHECK_INT(tall, 1, "%s: the body of 0.85 text height kept", what);
        CHECK_INT(pair, 1, "%s: two bodies of 0.75 kept as one line", what);
    }
    result_free(&res);
    page_free(p);
}

/* Bodies one over another beside a paragraph: a stroke 12 px wide with two letters 10 px wide
 * at its right, 4 px from it, one high and one low, each linked to the stroke. A group of two or
 * more bodies at least 3 text heights tall and twice as tall as wide is a column of strokes (a
 * fore-edge, a border's ornament), no line: the stroke 80 px tall (4 text heights; the group
 * 26 px wide) makes none; 56 px tall (2.8) a line, and so does the stroke 80 px tall with the
 * letters 19 px from it (the group 41 px wide, more than half its height), and the stroke alone
 * (one body: a digit one, an initial). */
static void test_column_of_strokes(void)
{
    const struct {
        int height, gap, letters, lines;
    } cases[] = {{80, 4, 2, 0}, {56, 4, 2, 1}, {80, 19, 2, 1}, {80, 4, 0, 1}};
    for (int ci = 0; ci < 4; ci++) {
        char what[80];
        snprintf(what, sizeof what, "stroke %d px tall, %d letters %d px beside", cases[ci].height,
                 cases[ci].letters, cases[ci].gap);
        tu_rng r = {(uint64_t)(900 + ci)};
        page *p = page_new(1700, 700);
        draw_paragraph(p, &r, 150, 1000, 150, 8);
        const int x = 1300, top = 200, h = cases[ci].height;
        tu_fill_box(p->img, tu_box(x, top, x + 12, top + h), 1);
        const int x1 = x + 12 + cases[ci].gap;
        if (cases[ci].letters) {
            tu_fill_box(p->img, tu_box(x1, top, x1 + 10, top + 17), 1);
            tu_fill_box(p->img, tu_box(x1, top + h - 17, x1 + 10, top + h), 1);
        }
        result res = run_stages(p, what);
        int beside = 0;
        for (int i = 0; res.lines && i < res.lines->count; i++)
            beside += res.lines->items[i].box.left >= x;
        CHECK_INT(beside, cases[ci].lines, "%s: lines", what);
        result_free(&res);
        page_free(p);
    }
}

/* Two columns with a gutter of 1.3 text heights, where in one row both lines open with a
 * capital 1.9 x-heights tall and two wide (standing on the baseline), so each of the two
 * lines is 2.3 text heights tall. The letters facing each other across the gutter are body
 * type; the gap is judged by their size, not by the lines' (which would ask for a gap of
 * 1.15 times the gutter's least width, 1.2 text heights, before a gutter could part them). */
static void test_initials_beside_gutter(void)
{
    const char *what = "initials beside a gutter";
    tu_rng r = {79};
    page *p = page_new(1700, 1000);
    const int col = 620, x0 = 150, x1 = x0 + col, x2 = x1 + 13 * XH / 10, row = 5, cap = 38;
    for (int i = 0; i < 12; i++) {
        const int y = 150 + i * PITCH, indent = i == row ? 2 * XH + LETTER_GAP : 0;
        const int left = draw_line(p, &r, x0 + indent, x1, y, 1, 0);
        const int right = draw_line(p, &r, x2 + indent, x2 + col, y, 1, 0);
        if (i == row) {
            draw_glyph(p, left, tu_box(x0, y - cap, x0 + 2 * XH, y), 0);
            draw_glyph(p, right, tu_box(x2, y - cap, x2 + 2 * XH, y), 0);
        }
    }
    result res = run_stages(p, what);
    compare_lines(p, &res, what);
    CHECK_INT(lines_across(&res, x1, x2), 0, "%s: lines across the gutter", what);
    result_free(&res);
    page_free(p);
}

/* A scan's dark border: the two-column page of test_analyze inside a ring of ink 12 px wide
 * along the four edges of the image (one component, as a scanner's lid leaves round a
 * sheet). The ring frames every line but is neither a figure that parts them nor a table:
 * the lines come out in the order drawn (column by column), and no table or picture block. */
static void test_scan_border(void)
{
    const int w = 1600, h = 1300, band = 12;
    tu_rng r = {4242};
    page *p = page_new(w, h);
    draw_two_columns(p, &r);
    lt_image *gray = page_gray(p);
    for (int y = 0; y < h; y++)
        for (int x = 0; x < w; x++)
            if (x < band || y < band || x >= w - band || y >= h - band)
                gray->pixels[(size_t)y * w + x] = 0;
    lt_layout *lay = NULL;
    lt_error err = {0};
    lt_params prm;
    lt_params_default(&prm);
    if (lt_analyze(gray, &prm, &lay, &err)) {
        tu_fail("scan border: %s", err.message);
    } else {
        CHECK_INT(lay->nlines, p->nlines, "scan border: number of lines");
        for (int i = 0; i < lay->nlines && i < p->nlines; i++)
            CHECK_BOX(lay->lines[i].box, p->line_box[i], "scan border: line %d in reading order",
                      i);
        int framed = 0;
        for (int b = 0; b < lay->nblocks; b++)
            framed +=
                lay->blocks[b].kind == LT_BLOCK_TABLE || lay->blocks[b].kind == LT_BLOCK_PICTURE;
        CHECK_INT(framed, 0, "scan border: table or picture blocks");
    }
    lt_layout_free(lay);
    lt_image_free(gray);
    page_free(p);
}

/* Hairlines: strokes drawn in the white beside the ends of a paragraph's lines (within a line's
 * reach), leaning one pixel every 7 rows (no rule: 7 times as tall as wide), rows of ink
 * alternately `thin` and `thin + 1` px wide. Strokes 64 px long (3.2 text heights) of 1.5 px
 * mean thickness (0.075 text heights) are speckle and join no line; 56 px (2.8 text heights)
 * long, or 2.5 px (0.125) thick, they are text (classify.c: STROKE_MIN_LENGTH 3,
 * STROKE_MAX_THICKNESS 0.1), drawn here away from the lines. */
static void test_hairlines(void)
{
    const struct {
        int length, thin, speckle;
    } cases[] = {{64, 1, 1}, {56, 1, 0}, {64, 2, 0}};
    for (int ci = 0; ci < 3; ci++) {
        char what[80];
        snprintf(what, sizeof what, "hairline %d px long, %d.5 px thick", cases[ci].length,
                 cases[ci].thin);
        tu_rng r = {(uint64_t)(600 + ci)};
        page *p = page_new(1700, 700);
        draw_paragraph(p, &r, 150, 1300, 150, 8);
        const int x0 = cases[ci].speckle ? 1330 : 1600, y0 = 150 + 2 * PITCH - XH;
        lt_box stroke = tu_box(x0, y0, x0, y0 + cases[ci].length);
        for (int y = y0; y < y0 + cases[ci].length; y++) {
            const int x = x0 + (y - y0) / 7;
            tu_fill_box(p->img, tu_box(x, y, x + cases[ci].thin + (y % 2), y + 1), 1);
            if (x + cases[ci].thin + 1 > stroke.right) stroke.right = x + cases[ci].thin + 1;
        }
        result res = run_stages(p, what);
        int kind = -1;
        for (int i = 0; res.comps && i < res.comps->count; i++)
            if (res.comps->items[i].box.left == stroke.left &&
                res.comps->items[i].box.top == stroke.top)
                kind = res.comps->items[i].kind;
        CHECK_INT(kind, cases[ci].speckle ? LT_COMP_SPECKLE : LT_COMP_TEXT, "%s: kind", what);
        if (cases[ci].speckle) compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* Letters of large type run together: under a paragraph of body text (text height 20 px), a
 * heading of letters 60 px tall (3 text heights), one of them two letters joined into one
 * component 130 px wide (wider than lt_params' picture_min_height, 6 text heights, 120 px),
 * the other beside it `gap` px away, `mate` px tall, on one baseline. The joined pair is text
 * where the other letter is its row mate (classify.c: heights within ROW_MATE_HEIGHT 0.3 of
 * the taller, 42 px and more; at most ROW_MATE_GAP 1.5 heights, 63 px for the 42 px letter
 * and 90 px for a 60 px one, away), else a picture. Whole, the heading is one line. */
static void test_joined_letters(void)
{
    const struct {
        int gap, mate, text;
    } cases[] = {{8, 60, 1}, {88, 60, 1}, {92, 60, 0}, {8, 43, 1},
                 {8, 41, 0}, {62, 43, 1}, {65, 43, 0}};
    for (int ci = 0; ci < 7; ci++) {
        char what[80];
        snprintf(what, sizeof what, "joined letters, a letter %d px tall %d px beside",
                 cases[ci].mate, cases[ci].gap);
        tu_rng r = {(uint64_t)(700 + ci)};
        page *p = page_new(1700, 900);
        const int y = draw_paragraph(p, &r, 150, 1550, 150, 8) + 3 * PITCH;
        const int l = p->nlines++;
        p->line_box[l] = tu_box(0, 0, 0, 0);
        p->baseline[l] = y;
        p->ncomp[l] = 0;
        const lt_box pair = tu_box(300, y - 60, 430, y);
        draw_glyph(p, l, pair, 0);
        draw_glyph(p, l, tu_box(430 + cases[ci].gap, y - cases[ci].mate, 470 + cases[ci].gap, y),
                   0);
        result res = run_stages(p, what);
        int kind = -1;
        for (int i = 0; res.comps && i < res.comps->count; i++)
            if (res.comps->items[i].box.left == pair.left &&
                res.comps->items[i].box.top == pair.top)
                kind = res.comps->items[i].kind;
        CHECK_INT(kind, cases[ci].text ? LT_COMP_TEXT : LT_COMP_PICTURE, "%s: kind", what);
        int whole = 0; /* lines that are the heading, both letters */
        for (int i = 0; cases[ci].text && res.lines && i < res.lines->count; i++)
            whole += memcmp(&res.lines->items[i].box, &p->line_box[l], sizeof(lt_box)) == 0;
        if (ci == 0) CHECK_INT(whole, 1, "%s: the heading as one line", what);
        result_free(&res);
        page_free(p);
    }
}

/* A vertical rule broken into pieces: beside a paragraph (text height 20 px), `pieces` strokes
 * `width` px wide and 17 px tall, one under the next `gap` px apart. They form a rule and no
 * line (classify.c: thinner than RULE_PIECE_WIDTH 0.15 text heights, 3 px; at most
 * RULE_PIECE_GAP 0.25, 5 px, apart; together at least 3 text heights, 60 px, tall: four
 * pieces 4 px apart are 80 px, three 59 px), else each piece is text, a line of its own (as
 * tall as a letter: see test_lone_small_body). */
static void test_broken_rule(void)
{
    const struct {
        int pieces, width, gap, rule;
    } cases[] = {{6, 3, 5, 1}, {6, 4, 5, 0}, {6, 3, 6, 0}, {4, 2, 4, 1}, {3, 2, 4, 0}};
    for (int ci = 0; ci < 5; ci++) {
        char what[80];
        snprintf(what, sizeof what, "%d rule pieces %d px wide %d px apart", cases[ci].pieces,
                 cases[ci].width, cases[ci].gap);
        tu_rng r = {(uint64_t)(800 + ci)};
        page *p = page_new(1700, 700);
        draw_paragraph(p, &r, 150, 1300, 150, 8);
        for (int k = 0; k < cases[ci].pieces; k++) {
            const lt_box b = tu_box(1500, 150 + k * (17 + cases[ci].gap), 1500 + cases[ci].width,
                                    167 + k * (17 + cases[ci].gap));
            tu_fill_box(p->img, b, 1);
            if (cases[ci].rule) continue;
            const int l = p->nlines++;
            p->line_box[l] = b;
            p->baseline[l] = b.bottom;
            p->ncomp[l] = 1;
        }
        result res = run_stages(p, what);
        int rules = 0;
        for (int i = 0; res.comps && i < res.comps->count; i++)
            rules += res.comps->items[i].kind == LT_COMP_RULE &&
                     res.comps->items[i].box.left == 1500;
        CHECK_INT(rules, cases[ci].rule ? cases[ci].pieces : 0, "%s: rule pieces", what);
        int slivers = 0;
        for (int i = 0; res.lines && i < res.lines->count; i++)
            slivers += res.lines->items[i].box.left == 1500;
        CHECK_INT(slivers, cases[ci].rule ? 0 : cases[ci].pieces, "%s: lines", what);
        result_free(&res);
        page_free(p);
    }
}

/* A cloze row under a paragraph (text height 20 px): three words, blanks `blank` px wide
 * between them, each blank underlined by a hairline 2 px thick on the words' baseline, drawn
 * whole or broken into dashes `dash` px long `gap` px apart, as blur and noise break it
 * (a dash at each end). Broken into dashes a text height apart at most (classify.c:
 * ROW_RULE_PIECE_GAP 1, 20 px) along at least ROW_RULE_MIN_LENGTH 6 text heights (120 px),
 * the dashes are a rule as the whole hairline is, and the lines are the same as with the
 * whole hairline (the known transformation: a line broken by noise is the line it was; with
 * blanks of 298 px, 15 text heights, the three words as drawn); 22 px apart, or along 116 px,
 * they stay text. */
static void draw_cloze_row(page *p, int blank, int dash, int gap, int *dashes)
{
    tu_rng r = {(uint64_t)(900 + blank)};
    const int y = draw_paragraph(p, &r, 150, 1550, 150, 6) + PITCH;
    int x = 150;
    *dashes = 0;
    for (int w = 0; w < 3; w++) {
        x = p->line_box[draw_line(p, &r, x, x + 100, y, 0, 0)].right;
        if (w == 2) break;
        for (int d = x + 10; d < x + 10 + blank; d += dash + gap, ++*dashes)
            tu_fill_box(p->img, tu_box(d, y - 2, d + dash, y), 1);
        x += 20 + blank;
    }
}

static void test_broken_underline(void)
{
    const struct {
        int blank, dash, gap, rule;
    } cases[] = {{298, 12, 14, 1}, {142, 12, 14, 1}, {116, 12, 14, 0}, {298, 8, 22, 0}};
    for (int ci = 0; ci < 4; ci++) {
        char what[80];
        snprintf(what, sizeof what, "underline of %d px, dashes of %d px %d px apart",
                 cases[ci].blank, cases[ci].dash, cases[ci].gap);
        page *whole = page_new(1700, 700), *broken = page_new(1700, 700);
        int dashes;
        draw_cloze_row(whole, cases[ci].blank, cases[ci].blank, 0, &dashes);
        draw_cloze_row(broken, cases[ci].blank, cases[ci].dash, cases[ci].gap, &dashes);
        result ref = run_stages(whole, what), res = run_stages(broken, what);
        int rules = 0;
        for (int i = 0; res.comps && i < res.comps->count; i++)
            rules += res.comps->items[i].kind == LT_COMP_RULE;
        CHECK_INT(rules, cases[ci].rule ? dashes : 0, "%s: rule pieces", what);
        if (cases[ci].rule && ref.lines && res.lines) {
            CHECK_INT(res.lines->count, ref.lines->count, "%s: lines as whole", what);
            for (int i = 0; i < res.lines->count && i < ref.lines->count; i++)
                CHECK_BOX(res.lines->items[i].box, ref.lines->items[i].box, "%s: line %d as whole",
                          what, i);
        }
        if (cases[ci].blank == 298 && cases[ci].rule) compare_lines(broken, &res, what);
        result_free(&ref);
        result_free(&res);
        page_free(whole);
        page_free(broken);
    }
}

/* Typewritten rows: every letter a box 12 px wide and a text height tall, `letter_gap` px
 * apart, a word space `space` px; after the tenth letter of every row the same white,
 * `gutter` px wide, so that it runs straight through all twelve rows and the separators take
 * it for a gutter; `spaces` more word spaces in each row, where they do not line up from row
 * to row. The rows stay whole when that white is no wider than 1.2 of their word space
 * (WORD_SPACE_TOLERANCE: 34 against 30 px whole, 38 parted), with 3 word spaces measured
 * (WORD_SPACE_MIN_COUNT: 2 parted), and spaces more than twice the letter gaps
 * (WORD_SPACE_MIN_RATIO: 30 px spaces between letters 14 px apart whole, 16 px apart parted).
 * Monospaced letters: three more gaps in each row, `narrow` px wide (beside a colon or an i),
 * are wide gaps too but no word spaces where the spaces are at least twice as wide (the wider
 * mode, WORD_SPACE_MODE_MIN): 14 px whole (their lower median, 14 px, would part the rows),
 * 16 px parted. One wider gap, `lone` px, in every third row is no mode of its own: 70 px
 * beside three spaces of 30 whole. A vertical rule in that white parts the rows however
 * narrow it is. */
static void test_typewritten(void)
{
    const struct {
        int letter_gap, space, gutter, spaces, narrow, lone, rule, whole;
    } cases[] = {
        {6, 30, 34, 3, 0, 0, 0, 1},  {6, 30, 38, 3, 0, 0, 0, 0},  {6, 30, 34, 2, 0, 0, 0, 0},
        {14, 30, 34, 3, 0, 0, 0, 1}, {16, 30, 34, 3, 0, 0, 0, 0}, {6, 30, 34, 3, 0, 0, 1, 0},
        {6, 30, 34, 3, 14, 0, 0, 1}, {6, 30, 34, 3, 16, 0, 0, 0}, {6, 30, 34, 3, 0, 70, 0, 1}};
    const int ncases = (int)(sizeof cases / sizeof cases[0]);
    for (int ci = 0; ci < ncases; ci++) {
        char what[128];
        snprintf(what, sizeof what,
                 "typewritten, letters %d px apart, spaces %d, gutter %d%s, %d spaces, "
                 "narrow gaps %d, a lone gap %d",
                 cases[ci].letter_gap, cases[ci].space, cases[ci].gutter,
                 cases[ci].rule ? " with a rule" : "", cases[ci].spaces, cases[ci].narrow,
                 cases[ci].lone);
        page *p = page_new(1700, 800);
        for (int row = 0; row < 12; row++) {
            const int y = 150 + row * PITCH;
            int l = p->nlines++, x = 150;
            p->line_box[l] = tu_box(0, 0, 0, 0);
            p->baseline[l] = y;
            p->ncomp[l] = 0;
            for (int k = 0; k < 32; k++) {
                draw_glyph(p, l, tu_box(x, y - XH, x + 12, y), 0);
                int after = cases[ci].letter_gap;
                if (k == 9) {
                    after = cases[ci].gutter;
                    if (cases[ci].rule)
                        tu_fill_box(p->img,
                                    tu_box(x + 12 + after / 2 - 1, y - ASC, x + 12 + after / 2 + 1,
                                           y + DESC + 11),
                                    1);
                    if (!cases[ci].whole) {
                        l = p->nlines++;
                        p->line_box[l] = tu_box(0, 0, 0, 0);
                        p->baseline[l] = y;
                        p->ncomp[l] = 0;
                    }
                }
                for (int s = 0; s < cases[ci].spaces; s++)
                    if (k == 13 + 6 * s + row % 3) after = cases[ci].space;
                for (int s = 0; cases[ci].narrow && s < 3; s++)
                    if (k == 16 + 6 * s + row % 3) after = cases[ci].narrow;
                if (cases[ci].lone && k == 28 && row % 3 == 0) after = cases[ci].lone;
                x += 12 + after;
            }
        }
        result res = run_stages(p, what);
        compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* Makes the last n drawn lines one line (pieces of a row drawn one at a time). */
static void join_last_lines(page *p, int n)
{
    const int first = p->nlines - n;
    for (int l = first + 1; l < p->nlines; l++) {
        tu_box_union(&p->line_box[first], p->line_box[l]);
        p->ncomp[first] += p->ncomp[l];
    }
    for (int m = 0; m < p->nmarks; m++)
        if (p->mark_line[m] > first) p->mark_line[m] = first;
    p->nlines = first + 1;
}

/* A justified line stretched to its column with three words (a long word, then two short
 * ones, as the first line of an item whose label fills most of the measure): gaps wider than
 * lt_params' link_max_gap (5 text heights) between full lines of the paragraph. Gaps as wide
 * as each other to within STRETCH_TOLERANCE (0.2) of the wider make one line: 150 and 122 px
 * (0.19), 190 and 190 px (9.5 text heights, under STRETCH_MAX_GAP); 150 and 116 px (0.23)
 * and 210 and 210 px (10.5 text heights) leave three lines. */
static void test_stretched_line(void)
{
    const struct {
        int gap1, gap2, one_line;
    } cases[] = {{150, 122, 1}, {150, 116, 0}, {190, 190, 1}, {210, 210, 0}};
    for (int ci = 0; ci < 4; ci++) {
        char what[80];
        snprintf(what, sizeof what, "stretched line, gaps %d and %d px", cases[ci].gap1,
                 cases[ci].gap2);
        tu_rng r = {(uint64_t)(500 + ci)};
        page *p = page_new(1700, 900);
        const int x0 = 150, x1 = 1550;
        const int y = draw_paragraph(p, &r, x0, x1, 150, 4) + PITCH;
        int right = p->line_box[draw_line(p, &r, x0, x0 + 160, y, 0, 0)].right;
        right = p->line_box[draw_line(p, &r, right + cases[ci].gap1, right + cases[ci].gap1 + 120,
                                      y, 0, 0)]
                    .right;
        draw_line(p, &r, right + cases[ci].gap2, right + cases[ci].gap2 + 120, y, 0, 0);
        if (cases[ci].one_line) join_last_lines(p, 3);
        draw_paragraph(p, &r, x0, x1, y + PITCH, 4);
        result res = run_stages(p, what);
        compare_lines(p, &res, what);
        result_free(&res);
        page_free(p);
    }
}

/* A page of two rows run together, for stacked_rows. */
typedef struct stack_case {
    int pitch;        /* px from the first row's baseline to the second's */
    int letters;      /* in each row, 10 px wide and 3 px apart */
    int mixed;        /* x-height letters, ascenders 29 px tall and descenders 8 px deep in
                         turn (else x-height letters only) */
    int bar_width;    /* > 0: a stroke 2 px thin and that wide halfway between the rows */
    int extra;        /* pieces beside the joining one, centred on its middle */
    int extra_height; /* px */
    int rise;         /* px the rows rise from their first letter to their last (they lean) */
} stack_case;

/* Under a paragraph (which sets the text height, 20 px), two rows of letters joined by a
 * piece from the middle of the first row's x-height to the middle of the second's (a
 * subscript touching the superscript below it). Returns the lines lt_build_lines reads below
 * the paragraph. */
static int stacked_rows(stack_case sc)
{
    tu_rng r = {77};
    page *p = page_new(1000, 700);
    const int x0 = 150, base1 = draw_paragraph(p, &r, x0, 850, 150, 3) + 2 * PITCH + sc.rise;
    const int base2 = base1 + sc.pitch, upper = p->nlines, lower = upper + 1;
    for (int l = upper; l <= lower; l++) {
        p->line_box[l] = tu_box(0, 0, 0, 0);
        p->baseline[l] = l == upper ? base1 : base2;
        p->ncomp[l] = 0;
    }
    p->nlines += 2;
    int x = x0;
    for (int k = 0; k < sc.letters; k++, x += 13) {
        const int top = sc.mixed && k % 3 == 1 ? ASC : XH;
        const int below = sc.mixed && k % 3 == 2 ? DESC : 0;
        const int up = sc.rise * k / (sc.letters - 1);
        draw_glyph(p, upper, tu_box(x, base1 - up - top, x + 10, base1 - up + below), 0);
        draw_glyph(p, lower, tu_box(x, base2 - up - top, x + 10, base2 - up + below), 0);
    }
    draw_glyph(p, upper, tu_box(x, base1 - sc.rise - XH / 2, x + 8, base2 - sc.rise - XH / 2), 0);
    const int middle = (base1 + base2 - XH) / 2 - sc.rise;
    for (int k = 0; k < sc.extra; k++) {
        x += 11;
        draw_glyph(p, upper,
                   tu_box(x, middle - sc.extra_height / 2, x + 8,
                          middle - sc.extra_height / 2 + sc.extra_height),
                   0);
    }
    if (sc.bar_width > 0)
        draw_glyph(p, upper, tu_box(x0, middle - 1, x0 + sc.bar_width, middle + 1), 1);
    result res = run_stages(p, "stacked rows");
    int below = 0;
    for (int i = 0; res.lines && i < res.lines->count; i++)
        below += res.lines->items[i].box.top >= base1 - 2 * XH - sc.rise;
    result_free(&res);
    page_free(p);
    return below;
}

/* Two rows one over the other, run together by a piece that joins them, are two lines when
 * the group is at least 3 text heights tall (rows of x-height letters 40 px apart: 60 px; 39
 * px apart: one line), each row holds at least 3 letters on its baseline (rows of 4 letters,
 * one with a descender; of 3: one line), at most a quarter of the fewer letters cross the
 * white between the rows (rows of 8 letters: 2 pieces 30 px tall across, two lines; 3: one
 * line), where a letter is at most 1.75 text heights tall (rows of 3 letters and a piece
 * across 35 px tall: one line; 36 px: no letter, two lines), and no thin stroke a text height
 * wide or more (20 px; 18 px: two lines) lies between them, a fraction's bar or an
 * underline. Rows that lean (30 letters rising 20 px, 2.9 degrees; level, under a third of
 * their letters stand within the 4 px of slack of one baseline) are two lines as long as a lean
 * of up to 2 degrees brings a third of their letters onto one (rising 60 px, 8.8 degrees: one
 * line). */
static void test_stacked_rows(void)
{
    const struct {
        stack_case sc;
        int lines;
        const char *what;
    } cases[] = {
        {{48, 12, 1, 0, 0, 0, 0}, 2, "rows 48 px apart"},
        {{40, 12, 0, 0, 0, 0, 0}, 2, "x-height rows 40 px apart"},
        {{39, 12, 0, 0, 0, 0, 0}, 1, "x-height rows 39 px apart"},
        {{48, 4, 1, 0, 0, 0, 0}, 2, "rows of 4 letters, 3 on the baseline"},
        {{48, 3, 1, 0, 0, 0, 0}, 1, "rows of 3 letters, 2 on the baseline"},
        {{48, 8, 0, 0, 2, 30, 0}, 2, "rows of 8 letters, 2 letters across"},
        {{48, 8, 0, 0, 3, 30, 0}, 1, "rows of 8 letters, 3 letters across"},
        {{48, 3, 0, 0, 1, 35, 0}, 1, "rows of 3 letters, a piece 35 px tall across"},
        {{48, 3, 0, 0, 1, 36, 0}, 2, "rows of 3 letters, a piece 36 px tall across"},
        {{48, 12, 1, 20, 0, 0, 0}, 1, "rows with a bar 20 px wide between"},
        {{48, 12, 1, 18, 0, 0, 0}, 2, "rows with a stroke 18 px wide between"},
        {{48, 30, 0, 0, 0, 0, 20}, 2, "rows rising 20 px"},
        {{48, 30, 0, 0, 0, 0, 60}, 1, "rows rising 60 px"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++)
        CHECK_INT(stacked_rows(cases[i].sc), cases[i].lines, "%s run together: lines",
                  cases[i].what);
}

int main(void)
{
    double t0 = tu_now_s();
    test_one_column();
    test_two_columns();
    test_crossed_gutter();
    test_bridged_gutter();
    test_leaders();
    test_rules_and_picture();
    test_small_marks();
    test_analyze();
    test_text_height_among_specks();
    test_text_height_deskewed();
    test_edge_slivers();
    test_lone_small_body();
    test_column_of_strokes();
    test_initials_beside_gutter();
    test_scan_border();
    test_stretched_line();
    test_hairlines();
    test_joined_letters();
    test_broken_rule();
    test_broken_underline();
    test_typewritten();
    test_stacked_rows();
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_lines");
}

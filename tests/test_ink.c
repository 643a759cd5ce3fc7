/* test_ink.c — matching on ink (score.c): the summed-area table's count of the ink in a box
 * against counting pixel by pixel, on random ink and random boxes (partly off the page); a
 * line of ink whose truth box is drawn loosely around it (2.2 times as tall, reaching 0.3 of
 * the height above and 0.9 below, as annotation tools draw around a baseline): no match on
 * box areas, one match of IoU 1 on ink; a neighbour's ink inside the loose box lowers the ink
 * IoU by exactly its share. Standalone: exit 0 on success, 1 on failure. */
#include "score.h"
#include "testutil.h"

static long count_ink(const lt_image *ink, lt_box b) /* pixel by pixel */
{
    long n = 0;
    for (int y = b.top < 0 ? 0 : b.top; y < b.bottom && y < ink->height; y++)
        for (int x = b.left < 0 ? 0 : b.left; x < b.right && x < ink->width; x++)
            n += ink->pixels[(size_t)y * ink->width + x] != 0;
    return n;
}

static void random_boxes(void)
{
    tu_rng r = {20240611};
    lt_image *ink = tu_image(301, 197, LT_IMAGE_INK, 0);
    for (size_t i = 0; i < (size_t)ink->width * ink->height; i++)
        ink->pixels[i] = tu_unit(&r) < 0.3;
    lt_ink_table *t = NULL;
    lt_error err = {0};
    if (lt_ink_table_new(ink, 0, &t, &err)) tu_die("%s", err.message);
    int bad = 0;
    for (int k = 0; k < 500; k++) {
        int l = tu_range(&r, -20, 320), top = tu_range(&r, -20, 210);
        lt_box b = {l, top, l + tu_range(&r, 0, 120), top + tu_range(&r, 0, 90)};
        bad += lt_ink_in_box(t, &b) != count_ink(ink, b);
    }
    CHECK(bad == 0, "ink in box: %d of 500 random boxes differ from counting pixel by pixel", bad);
    lt_box whole = {0, 0, ink->width, ink->height};
    CHECK_INT((int)lt_ink_in_box(t, &whole), (int)tu_count_ink(ink), "ink of the whole page");
    lt_ink_table_free(t);
    lt_image_free(ink);
}

static lt_scored_line line_of(lt_box b)
{
    lt_scored_line l;
    memset(&l, 0, sizeof l);
    l.box = b;
    l.in_order = 1;
    return l;
}

static void loose_truth(void)
{
    lt_image *ink = tu_image(600, 300, LT_IMAGE_INK, 0);
    for (int x = 50; x < 450; x += 16) /* letters 10 x 20 px */
        tu_fill(ink, x, 100, x + 10, 120, 1);
    lt_ink_table *t = NULL;
    lt_error err = {0};
    if (lt_ink_table_new(ink, 0, &t, &err)) tu_die("%s", err.message);
    const lt_scored_line truth = line_of(tu_box(50, 94, 450, 138)); /* 44 px for 20 of ink */
    const lt_scored_line pred = line_of(tu_box(50, 100, 450, 120));
    lt_line_match *m = NULL;
    int nm = -1;
    if (lt_match_lines(&truth, 1, &pred, 1, &m, &nm, &err)) tu_die("%s", err.message);
    CHECK_INT(nm, 0, "loose truth: no match on box areas (IoU 20/44)");
    free(m);
    if (lt_match_lines_ink(&truth, 1, &pred, 1, t, &m, &nm, &err)) tu_die("%s", err.message);
    CHECK_INT(nm, 1, "loose truth: one match on ink");
    if (nm == 1) {
        CHECK_NEAR(m[0].iou, 1.0, 1e-12, "loose truth: ink IoU");
        CHECK_INT(m[0].strict, 1, "loose truth: ink IoU >= 0.75");
    }
    free(m);
    /* descenders of a neighbour reaching into the loose box: 25 letters x 10 x 4 px */
    for (int x = 50; x < 450; x += 16)
        tu_fill(ink, x, 134, x + 10, 138, 1);
    lt_ink_table_free(t);
    if (lt_ink_table_new(ink, 0, &t, &err)) tu_die("%s", err.message);
    if (lt_match_lines_ink(&truth, 1, &pred, 1, t, &m, &nm, &err)) tu_die("%s", err.message);
    CHECK_INT(nm, 1, "loose truth with a neighbour's ink: still a match");
    if (nm == 1) /* 25 letters of 200 px inside both, 25 x 40 px more inside the truth box */
        CHECK_NEAR(m[0].iou, 5000.0 / 6000.0, 1e-12, "loose truth with a neighbour's ink: IoU");
    free(m);
    lt_ink_table_free(t);
    lt_image_free(ink);
}

int main(void)
{
    random_boxes();
    loose_truth();
    return tu_summary("test_ink");
}

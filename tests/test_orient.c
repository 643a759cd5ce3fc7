/* test_orient.c — page orientation: lt_turn_ink against leptonica's pixRotateOrth (a general
 * image library: exact), the frame's mappings with a quarter turn (inverse of each other, and
 * every ink pixel carried onto the turned pixel), the two estimators on drawn pages of
 * Latin-like type (tests/textpage.h: 20 % ascenders, 12 % descenders) turned by known quarter
 * turns, lt_analyze on those pages (the turn found, the lines those of the upright page carried
 * through the turn, exactly), blank and noise pages (no estimate) and a given orientation; the
 * up/down evidences (ascenders against descenders, the lines' ends) on components and lines
 * set out by hand, each on either side of its threshold (expected z scores worked by hand). */
#include "testutil.h"
#include "textpage.h"

#include <assert.h>

/* Turns of a page that reads upright after a clockwise turn of N: turning it clockwise by
 * (360 - N) % 360 from the upright page. */
static int turn_away(int n)
{
    return (360 - n) % 360;
}

/* lt_turn_ink equals pixRotateOrth (quads = clockwise quarter turns, leptonica's
 * documentation) on a random page of odd size, for every turn. */
static void test_turn_against_leptonica(void)
{
    tu_rng r = {7};
    lt_image *ink = tu_image(131, 77, LT_IMAGE_INK, 0);
    for (size_t i = 0; i < (size_t)ink->width * ink->height; i++)
        ink->pixels[i] = tu_range(&r, 0, 2) == 0;
    PIX *pix = tu_pix_from_ink(ink);
    for (int quads = 0; quads < 4; quads++) {
        lt_image *turned = NULL;
        lt_error err = {0};
        CHECK(lt_turn_ink(ink, 90 * quads, &turned, &err) == 0, "turn %d: %s", 90 * quads,
              err.message);
        PIX *ref = pixRotateOrth(pix, quads);
        lt_image *want = tu_ink_from_pix(ref);
        CHECK(turned->width == want->width && turned->height == want->height &&
                  memcmp(turned->pixels, want->pixels, (size_t)want->width * want->height) == 0,
              "turn %d: the same pixels as pixRotateOrth", 90 * quads);
        pixDestroy(&ref);
        lt_image_free(want);
        lt_image_free(turned);
    }
    lt_image *bad = NULL;
    lt_error err = {0};
    CHECK(lt_turn_ink(ink, 45, &bad, &err) == LT_EINVAL && !bad, "a turn of 45 is refused");
    pixDestroy(&pix);
    lt_image_free(ink);
}

/* The frame of a turned and skewed page: the two mappings invert each other, and the centre
 * of every ink pixel of the image as given maps onto an ink pixel of the turned image. */
static void test_frame_turn(void)
{
    tu_rng r = {11};
    lt_image *ink = tu_image(64, 40, LT_IMAGE_INK, 0);
    for (int k = 0; k < 30; k++)
        ink->pixels[(size_t)tu_range(&r, 0, 39) * 64 + tu_range(&r, 0, 63)] = 1;
    for (int turn = 0; turn < 360; turn += 90) {
        lt_image *turned = NULL;
        lt_error err = {0};
        if (lt_turn_ink(ink, turn, &turned, &err)) tu_die("turn: %s", err.message);
        lt_frame f;
        lt_frame_init(&f, turned->width, turned->height, 0);
        lt_frame_set_turn(&f, turn, ink->width, ink->height);
        int landed = 0, inked = 0;
        for (int y = 0; y < ink->height; y++)
            for (int x = 0; x < ink->width; x++) {
                if (!ink->pixels[(size_t)y * ink->width + x]) continue;
                inked++;
                lt_point p = lt_frame_to_deskewed(&f, x + 0.5, y + 0.5);
                const int u = (int)floor(p.x), v = (int)floor(p.y);
                landed += u >= 0 && v >= 0 && u < turned->width && v < turned->height &&
                          turned->pixels[(size_t)v * turned->width + u];
            }
        CHECK_INT(landed, inked, "turn %d: ink pixels carried onto ink", turn);
        lt_frame_init(&f, turned->width, turned->height, 3.5);
        lt_frame_set_turn(&f, turn, ink->width, ink->height);
        double worst = 0;
        for (int k = 0; k < 50; k++) {
            const double x = tu_unit(&r) * 64, y = tu_unit(&r) * 40;
            lt_point d = lt_frame_to_deskewed(&f, x, y), o = lt_frame_to_original(&f, d.x, d.y);
            worst = fmax(worst, fmax(fabs(o.x - x), fabs(o.y - y)));
        }
        CHECK(worst < 1e-9, "turn %d with skew: mappings invert each other (off by %g)", turn,
              worst);
        lt_image_free(turned);
    }
    lt_image_free(ink);
}

/* A page of two columns of drawn type. */
static page *drawn_page(void)
{
    page *p = page_new(1400, 1700);
    tu_rng r = {2024};
    int y = draw_paragraph(p, &r, 100, 650, 150, 12);
    draw_paragraph(p, &r, 100, 650, y + PITCH, 14);
    y = draw_paragraph(p, &r, 750, 1300, 150, 10);
    draw_paragraph(p, &r, 750, 1300, y + PITCH, 16);
    return p;
}

/* The estimators on the drawn page turned each way. */
static void test_estimators(void)
{
    page *p = drawn_page();
    for (int n = 0; n < 360; n += 90) {
        lt_image *given = NULL;
        lt_error err = {0};
        if (lt_turn_ink(p->img, turn_away(n), &given, &err)) tu_die("turn: %s", err.message);
        page q = {.img = given};
        result res = run_stages(&q, "estimators");
        lt_orientation axis, up;
        CHECK(lt_estimate_line_axis(res.comps, &axis, &err) == 0, "axis: %s", err.message);
        CHECK_INT(axis.turn_deg, n % 180, "page needing %d: direction of the lines", n);
        CHECK(axis.confidence >= 0.9, "page needing %d: axis confidence %.2f", n, axis.confidence);
        if (n % 180 == 0) {
            CHECK(lt_estimate_upright(res.comps, res.lines, &up, &err) == 0, "upright: %s",
                  err.message);
            CHECK_INT(up.turn_deg, n, "page needing %d: which side is up", n);
            /* the drawn type's 20 ascenders to 12 descenders in a hundred letters are fewer
             * than real type's: an estimate, not a certain one */
            CHECK(up.confidence > 0, "page needing %d: up/down confidence %.2f", n, up.confidence);
        }
        result_free(&res);
        lt_image_free(given);
    }
    page_free(p);
}

/* lt_analyze on the drawn page turned each way: the turn found, with confidence, and every
 * line the upright page's line carried through the turn (its quad corner by corner). */
static void test_analyze_turned(void)
{
    page *p = drawn_page();
    lt_error err = {0};
    lt_layout *upright = NULL;
    if (lt_analyze(p->img, NULL, &upright, &err)) tu_die("analyze: %s", err.message);
    CHECK_INT(upright->orientation_deg, 0, "upright page");
    CHECK(upright->orientation_confidence > 0, "upright page: confidence %.2f",
          upright->orientation_confidence);
    CHECK_INT(upright->nlines, p->nlines, "upright page: lines");
    for (int n = 90; n < 360; n += 90) {
        lt_image *given = NULL;
        lt_layout *l = NULL;
        if (lt_turn_ink(p->img, turn_away(n), &given, &err)) tu_die("turn: %s", err.message);
        if (lt_analyze(given, NULL, &l, &err)) tu_die("analyze: %s", err.message);
        CHECK_INT(l->orientation_deg, n, "page needing %d: orientation", n);
        CHECK(l->orientation_confidence > 0, "page needing %d: confidence %.2f", n,
              l->orientation_confidence);
        CHECK_INT(l->width, given->width, "page needing %d: width as given", n);
        CHECK_INT(l->nlines, upright->nlines, "page needing %d: lines", n);
        /* the frame that turns the upright page into the given one carries the quads */
        lt_frame f;
        lt_frame_init(&f, p->img->width, p->img->height, 0);
        lt_frame_set_turn(&f, n, given->width, given->height);
        double worst = 0;
        for (int i = 0; i < l->nlines && i < upright->nlines; i++)
            for (int k = 0; k < 4; k++) {
                lt_point want = lt_frame_to_original(&f, upright->lines[i].quad[k].x,
                                                     upright->lines[i].quad[k].y);
                worst = fmax(worst, fmax(fabs(l->lines[i].quad[k].x - want.x),
                                         fabs(l->lines[i].quad[k].y - want.y)));
            }
        CHECK(worst < 1e-6, "page needing %d: quads those of the upright page turned (off by %g)",
              n, worst);
        lt_layout_free(l);
        lt_image_free(given);
    }
    /* a given orientation is used as it is, with no estimate */
    lt_params prm;
    lt_params_default(&prm);
    prm.orientation_deg = 180;
    lt_layout *forced = NULL;
    if (lt_analyze(p->img, &prm, &forced, &err)) tu_die("analyze: %s", err.message);
    CHECK(forced->orientation_deg == 180 && forced->orientation_confidence == 0,
          "orientation given: 180 with confidence 0");
    CHECK_INT(forced->nlines, upright->nlines, "orientation given: lines still found");
    lt_layout_free(forced);
    prm.orientation_deg = 45;
    CHECK(lt_analyze(p->img, &prm, &forced, &err) == LT_EINVAL && !forced &&
              strstr(err.message, "orientation_deg"),
          "orientation 45 refused, naming the field");
    lt_layout_free(upright);
    page_free(p);
}

/* Components and lines set out by hand for the up/down evidence alone: letters 20 px wide
 * on an x-height of 20 px, one line every 60 px, of plain letters, ascenders (reaching 12 px
 * above the band) and descenders (12 px below). */
enum { SET_XHEIGHT = 20, SET_REACH = 12, SET_PITCH = 60, SET_MAX_COMPS = 6000, SET_MAX_LINES = 60 };
typedef struct setting {
    lt_component comps[SET_MAX_COMPS];
    lt_raw_line lines[SET_MAX_LINES];
    int ncomps, nlines;
} setting;

static void set_letter(setting *s, int left, int top, int height)
{
    assert(s->ncomps < SET_MAX_COMPS);
    lt_component *c = &s->comps[s->ncomps++];
    *c = (lt_component){.box = {left, top, left + SET_XHEIGHT, top + height},
                        .pixels = (long)SET_XHEIGHT * height,
                        .kind = LT_COMP_TEXT};
    c->cx = left + 0.5 * SET_XHEIGHT;
    c->cy = top + 0.5 * height;
}

/* What a line holds: `letters` letters, the first `rising` ascenders, the next `falling`
 * descenders, the next `both` reaching out on both sides, the next `pieces` pieces of broken
 * letters piece_px tall at the top of the band, the rest plain. */
typedef struct line_spec {
    int letters, rising, falling, both, pieces, piece_px;
} line_spec;

/* A line as `spec` says from x = left, its band's top at band_top. */
static void set_line(setting *s, int left, int band_top, line_spec spec)
{
    const int reaching = spec.rising + spec.falling + spec.both;
    assert(s->nlines < SET_MAX_LINES && spec.letters >= reaching + spec.pieces);
    int x = left;
    for (int k = 0; k < spec.letters; k++, x += SET_XHEIGHT + 4) {
        const int rises = k < spec.rising || (k >= spec.rising + spec.falling && k < reaching);
        const int falls = k >= spec.rising && k < reaching;
        const int piece = k >= reaching && k < reaching + spec.pieces;
        set_letter(s, x, band_top - (rises ? SET_REACH : 0),
                   piece ? spec.piece_px : SET_XHEIGHT + SET_REACH * (rises + falls));
    }
    s->lines[s->nlines++] = (lt_raw_line){
        .box = {left, band_top - SET_REACH, x - 4, band_top + SET_XHEIGHT + SET_REACH},
        .baseline_y = band_top + SET_XHEIGHT,
        .xheight_px = SET_XHEIGHT,
        .ncomponents = spec.letters};
}

/* The setting turned by half a turn on a page of w x h (boxes stay [left, top, right, bottom)). */
static void set_turn_half(setting *s, int w, int h)
{
    for (int i = 0; i < s->ncomps; i++) {
        lt_component *c = &s->comps[i];
        c->box = (lt_box){w - c->box.right, h - c->box.bottom, w - c->box.left, h - c->box.top};
        c->cx = w - c->cx;
        c->cy = h - c->cy;
    }
    for (int i = 0; i < s->nlines; i++) {
        lt_raw_line *l = &s->lines[i];
        l->box = (lt_box){w - l->box.right, h - l->box.bottom, w - l->box.left, h - l->box.top};
        l->baseline_y = h - l->baseline_y + SET_XHEIGHT; /* the band's other side */
    }
}

static lt_orientation set_estimate(setting *s)
{
    lt_components c = {s->comps, s->ncomps};
    lt_raw_lines l = {s->lines, s->nlines};
    lt_orientation o;
    lt_error err = {0};
    if (lt_estimate_upright(&c, &l, &o, &err)) tu_die("upright: %s", err.message);
    return o;
}

/* Ragged right: lines of plain letters (no ascender, no descender) whose left ends step by
 * `step` px from line to line and whose right ends differ by whole words. Left ends 6 px
 * apart (0.3 x-height) still line up; 7 px apart they do not, and the page says nothing.
 * Upside down, the ragged edge is on the left: half a turn. */
static void test_edges(void)
{
    static const int widths[] = {30, 22, 27, 18, 25, 31, 20, 28};
    const struct {
        int step, want_turn, decided;
    } cases[] = {{0, 0, 1}, {6, 0, 1}, {7, 0, 0}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        for (int k = 0; k < 20; k++)
            set_line(&s, 100 + cases[i].step * k, 100 + SET_PITCH * k,
                     (line_spec){.letters = widths[k % 8]});
        for (int turn = 0; turn < 360; turn += 180) {
            lt_orientation o = set_estimate(&s);
            CHECK(o.turn_deg == (cases[i].decided ? turn : 0) &&
                      (o.confidence > 0) == cases[i].decided,
                  "left ends stepping %d px, page turned %d: turn %d (confidence %.2f)",
                  cases[i].step, turn, o.turn_deg, o.confidence);
            set_turn_half(&s, 2000, 1400);
        }
    }
}

/* Ascenders against descenders, in lines whose two ends line up (no evidence from the
 * edges): 251 ascenders to 149 descenders are evidence enough (z = (102 - 5 % of 400) / 20 =
 * 4.1, the surplus the type itself may have taken off); 249 to 151 are not (3.9); upside down,
 * the same counts ask for half a turn. */
static void test_letters(void)
{
    const struct {
        int rising, falling, decided;
    } cases[] = {{251, 149, 1}, {249, 151, 0}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        int rising = cases[i].rising, falling = cases[i].falling;
        for (int k = 0; k < 25; k++) {
            const int r = rising / (25 - k), f = falling / (25 - k);
            set_line(&s, 100, 100 + SET_PITCH * k,
                     (line_spec){.letters = 30, .rising = r, .falling = f});
            rising -= r;
            falling -= f;
        }
        for (int turn = 0; turn < 360; turn += 180) {
            lt_orientation o = set_estimate(&s);
            CHECK(o.turn_deg == (cases[i].decided ? turn : 0) &&
                      (o.confidence > 0) == cases[i].decided,
                  "%d ascenders, %d descenders, page turned %d: turn %d (confidence %.2f)",
                  cases[i].rising, cases[i].falling, turn, o.turn_deg, o.confidence);
            set_turn_half(&s, 2000, 1700);
        }
    }
}

/* Letters that reach out on both sides of the band (a long s, an f of gothic type) say
 * nothing: 251 ascenders and 149 descenders among 200 of them still decide (z = 4.1; counted
 * on both sides they would make 451 to 349, z = 2.2). Lines of broken letters: 250 ascenders
 * and 100 descenders among 150 whole plain letters and 1,000 pieces of letters, 11 px tall at
 * the band's top, the shortest letters; a band of 11 px, 0.55 of the lines' x-height, is that
 * of pieces, and the lines' own band (their baseline and x-height) shows the ascenders: upright
 * (z = 7.1). Pieces 12 px tall, 0.6 of it, give the band, beyond which the whole plain letters
 * and the descenders reach down and the ascenders both ways: upside down. */
static void test_letters_unclear(void)
{
    const struct {
        int rising, falling, both, pieces, piece_px, turn;
    } cases[] = {
        {251, 149, 200, 0, 0, 0}, {250, 100, 0, 1000, 11, 0}, {250, 100, 0, 1000, 12, 180}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        for (int k = 0; k < 25; k++) {
            const int r = cases[i].rising / 25 + (k < cases[i].rising % 25);
            const int f = cases[i].falling / 25 + (k < cases[i].falling % 25);
            const int b = cases[i].both / 25, p = cases[i].pieces / 25;
            set_line(&s, 100, 100 + SET_PITCH * k, (line_spec){60, r, f, b, p, cases[i].piece_px});
        }
        lt_orientation o = set_estimate(&s);
        CHECK(o.turn_deg == cases[i].turn && o.confidence > 0,
              "%d ascenders, %d descenders, %d both ways, %d pieces of %d px: turn %d (confidence "
              "%.2f)",
              cases[i].rising, cases[i].falling, cases[i].both, cases[i].pieces, cases[i].piece_px,
              o.turn_deg, o.confidence);
    }
}

/* The two evidences disagree: the letters say upright (z = 6.3), the edges say upside down.
 * Three lines ragged on the left (z = -1.7) leave the letters' estimate standing; four
 * (z = -2.0) leave no estimate. */
static void test_disagreement(void)
{
    static const int widths[] = {22, 27, 18, 25};
    for (int ragged = 3; ragged <= 4; ragged++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        int k = 0;
        for (; k < 20; k++) /* 200 ascenders, 80 descenders: (120 - 14) / 16.7 = 6.3 */
            set_line(&s, 100, 100 + SET_PITCH * k,
                     (line_spec){.letters = 30, .rising = 10, .falling = 4});
        for (int j = 0; j < ragged; j++, k++) /* ending with the others, far apart on the left */
            set_line(&s, 820 - 24 * widths[j] + 4, 100 + SET_PITCH * k,
                     (line_spec){.letters = widths[j]});
        lt_orientation o = set_estimate(&s);
        CHECK(ragged == 3 ? o.turn_deg == 0 && o.confidence > 0 : o.confidence == 0,
              "%d lines ragged on the left against the letters: turn %d (confidence %.2f)", ragged,
              o.turn_deg, o.confidence);
    }
}

/* A mark (a solid speck) with box b in the last line set, which grows to hold it. */
static void set_mark(setting *s, lt_box b)
{
    assert(s->ncomps < SET_MAX_COMPS && s->nlines > 0);
    lt_raw_line *l = &s->lines[s->nlines - 1];
    lt_component *c = &s->comps[s->ncomps++];
    *c = (lt_component){
        .box = b, .pixels = (long)lt_box_width(&b) * lt_box_height(&b), .kind = LT_COMP_SPECKLE};
    c->cx = 0.5 * (b.left + b.right);
    c->cy = 0.5 * (b.top + b.bottom);
    lt_box_grow(&l->box, &b);
    l->ncomponents++;
}

/* A mark of w x h px (a period, a comma, a dash) at the right end of the last line set, 4 px
 * after its last letter, its centre `above` px above the line's baseline. */
static void set_end_mark(setting *s, int w, int h, int above)
{
    assert(s->nlines > 0);
    const lt_raw_line *l = &s->lines[s->nlines - 1];
    const int left = l->box.right + 4, top = (int)l->baseline_y - above - h / 2;
    set_mark(s, (lt_box){left, top, left + w, top + h});
}

/* The marks at the lines' ends, in lines of plain letters whose two ends line up (no other
 * evidence): 17 lines ending with a period on the baseline are evidence enough (z = 17 /
 * sqrt 17 = 4.1), 15 are not (3.9); a period whose centre stands 6 px (0.3 x-height) above the
 * baseline is still low, at 7 px it is no end of a sentence; a dash (12 x 4 px) ends no sentence.
 * Upside down, the periods stand high at the lines' left ends: half a turn (by construction, the
 * turned setting). */
static void test_end_marks(void)
{
    const struct {
        int lines, w, h, above, decided;
    } cases[] = {
        {17, 6, 6, 0, 1}, {15, 6, 6, 0, 0}, {17, 6, 6, 6, 1}, {17, 6, 6, 7, 0}, {17, 12, 4, 0, 0}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        for (int k = 0; k < cases[i].lines; k++) {
            set_line(&s, 100, 100 + SET_PITCH * k, (line_spec){.letters = 30});
            set_end_mark(&s, cases[i].w, cases[i].h, cases[i].above);
        }
        for (int turn = 0; turn < 360; turn += 180) {
            lt_orientation o = set_estimate(&s);
            CHECK(o.turn_deg == (cases[i].decided ? turn : 0) &&
                      (o.confidence > 0) == cases[i].decided,
                  "%d lines ending with a %d x %d px mark %d px above the baseline, page turned "
                  "%d: turn %d (confidence %.2f)",
                  cases[i].lines, cases[i].w, cases[i].h, cases[i].above, turn, o.turn_deg,
                  o.confidence);
            set_turn_half(&s, 2000, 1400);
        }
    }
}

/* A dot of 6 x 6 px `gap` px above the band of the last line set, its centre over the
 * centre of the line's second letter, or over the white after it. */
static void set_dot_above(setting *s, int gap, int over_letter)
{
    assert(s->nlines > 0);
    const lt_raw_line *l = &s->lines[s->nlines - 1];
    const int band_top = (int)l->baseline_y - SET_XHEIGHT;
    const int cx =
        l->box.left + (SET_XHEIGHT + 4) + (over_letter ? SET_XHEIGHT / 2 : SET_XHEIGHT + 2);
    set_mark(s, (lt_box){cx - 3, band_top - gap - 6, cx + 3, band_top - gap});
}

/* The marks over letters, in lines of plain letters whose two ends line up (no other
 * evidence): a dot over a letter in each of 17 lines is evidence enough (z = 4.1), in 15 not
 * (3.9); a dot 12 px (0.6 x-height) above the band still stands over its letter, 13 px above
 * it is no mark of the line's; a dot over the white between two letters says nothing. Upside
 * down, the dots hang under the letters: half a turn. */
static void test_accents(void)
{
    const struct {
        int lines, gap, over_letter, decided;
    } cases[] = {{17, 4, 1, 1}, {15, 4, 1, 0}, {17, 12, 1, 1}, {17, 13, 1, 0}, {17, 4, 0, 0}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        static setting s;
        s.ncomps = s.nlines = 0;
        for (int k = 0; k < cases[i].lines; k++) {
            set_line(&s, 100, 100 + SET_PITCH * k, (line_spec){.letters = 30});
            set_dot_above(&s, cases[i].gap, cases[i].over_letter);
        }
        for (int turn = 0; turn < 360; turn += 180) {
            lt_orientation o = set_estimate(&s);
            CHECK(o.turn_deg == (cases[i].decided ? turn : 0) &&
                      (o.confidence > 0) == cases[i].decided,
                  "%d lines with a dot %d px above the band%s, page turned %d: turn %d "
                  "(confidence %.2f)",
                  cases[i].lines, cases[i].gap, cases[i].over_letter ? "" : " between letters",
                  turn, o.turn_deg, o.confidence);
            set_turn_half(&s, 2000, 1400);
        }
    }
}

/* Pages that do not say: blank, noise, a few words. */
static void test_no_estimate(void)
{
    lt_image *blank = tu_image(800, 1000, LT_IMAGE_INK, 0);
    lt_image *noise = tu_image(800, 1000, LT_IMAGE_INK, 0);
    tu_rng r = {5};
    for (size_t i = 0; i < (size_t)800 * 1000; i++)
        noise->pixels[i] = tu_range(&r, 0, 9) == 0;
    page *few = page_new(800, 1000);
    draw_line(few, &r, 100, 260, 300, 0, 0);
    const struct {
        const char *name;
        const lt_image *img;
    } cases[] = {{"blank", blank}, {"noise", noise}, {"a few words", few->img}};
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        lt_layout *l = NULL;
        lt_error err = {0};
        if (lt_analyze(cases[i].img, NULL, &l, &err)) tu_die("analyze: %s", err.message);
        CHECK(l->orientation_deg == 0 && l->orientation_confidence == 0,
              "%s: no estimate (got %d, confidence %.2f)", cases[i].name, l->orientation_deg,
              l->orientation_confidence);
        lt_layout_free(l);
    }
    page_free(few);
    lt_image_free(blank);
    lt_image_free(noise);
}

int main(void)
{
    test_turn_against_leptonica();
    test_frame_turn();
    test_estimators();
    test_analyze_turned();
    test_edges();
    test_letters();
    test_letters_unclear();
    test_disagreement();
    test_end_marks();
    test_accents();
    test_no_estimate();
    return tu_summary("test_orient");
}

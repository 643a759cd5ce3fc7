/* draw.c — the audit picture: canvas, clipped primitives, a bitmap font and the page picture.
 * Polygons are filled by the even-odd scanline method sampling pixel centres (Foley, van Dam,
 * Feiner & Hughes, Computer Graphics, 2nd ed., sec. 3.6); colours are blended per channel
 * (Porter & Duff 1984, "over" with an opaque canvas); the page is reduced by box averaging. */
#include "draw.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_POLYGON_POINTS 64

/* ---- colours (this project's own palette) ------------------------------------------------ */
/* Text block roles: tint and outline. Hues are spread round the colour wheel, and none is near
 * the line outline (navy), the order arrows (blue, red) or the neutral gray of the page. */
static const lt_rgb role_colors[LT_ROLE_COUNT] = {
    {120, 120, 120}, /* none (not a text block): gray */
    {46, 160, 120},  /* body: sea green */
    {236, 150, 20},  /* heading: amber */
    {140, 90, 210},  /* page-header: lavender */
    {110, 60, 150},  /* page-footer: plum */
    {160, 160, 20},  /* page-number: mustard */
    {30, 170, 200},  /* list-item: cyan */
    {230, 100, 160}, /* caption: pink */
    {150, 110, 70},  /* footnote: tan */
    {100, 190, 40},  /* margin-note: lime */
};
static const lt_rgb color_rule = {90, 90, 100};     /* slate: filled */
static const lt_rgb color_picture = {200, 60, 200}; /* magenta: outline and diagonal hatch */
static const lt_rgb color_table = {40, 100, 170};   /* steel blue: outline and grid */
static const lt_rgb color_other = {120, 120, 120};  /* gray: outline only */
static const lt_rgb color_line = {25, 30, 95};      /* navy: line outlines */
static const lt_rgb color_step = {20, 90, 230};     /* blue: ordinary reading-order step */
static const lt_rgb color_jump = {230, 30, 30};     /* red: jumps and the review note */
static const lt_rgb color_white = {255, 255, 255};
static const lt_rgb color_text = {40, 40, 40};   /* legend labels */
static const lt_rgb color_border = {70, 70, 70}; /* legend frame */

#define TINT_ALPHA 70         /* text block tint, of 255 */
#define RULE_ALPHA 150        /* rule fill */
#define LEGEND_ALPHA 235      /* legend background */
#define LABEL_ALPHA 210       /* backdrop of a line number */
#define PAGE_INK_GRAY 150     /* black ink is shown as this gray ... */
#define PAGE_PAPER_GRAY 255   /* ... and white paper stays white */
#define LEGEND_INNER_CHARS 17 /* legend text columns: swatch 4, gap 1, label 12 */
#define LEGEND_MAX_ROWS 60    /* review reasons beyond this are left out */

/* ---- canvas ---------------------------------------------------------------------------- */

lt_canvas *lt_canvas_new(int width, int height, lt_rgb fill)
{
    if (width <= 0 || height <= 0) return NULL;
    if ((size_t)width > SIZE_MAX / 3 / (size_t)height) return NULL;
    size_t n = (size_t)width * (size_t)height;
    lt_canvas *c = calloc(1, sizeof *c);
    if (!c) return NULL;
    c->rgb = malloc(n * 3);
    if (!c->rgb) {
        free(c);
        return NULL;
    }
    c->width = width;
    c->height = height;
    for (size_t i = 0; i < n; i++) {
        c->rgb[3 * i] = fill.r;
        c->rgb[3 * i + 1] = fill.g;
        c->rgb[3 * i + 2] = fill.b;
    }
    return c;
}

void lt_canvas_free(lt_canvas *c)
{
    if (!c) return;
    free(c->rgb);
    free(c);
}

/* dst over-blended with colour v at opacity a (0..255), rounded. */
static inline uint8_t blend(uint8_t dst, uint8_t v, int a)
{
    return (uint8_t)((dst * (255 - a) + v * a + 127) / 255);
}

/* Pixels x0..x1 (inclusive, already clipped) of row y. */
static void blend_span(lt_canvas *c, int y, int x0, int x1, lt_rgb col, int alpha)
{
    uint8_t *p = c->rgb + ((size_t)y * (size_t)c->width + (size_t)x0) * 3;
    if (alpha >= 255) {
        for (int x = x0; x <= x1; x++, p += 3) {
            p[0] = col.r;
            p[1] = col.g;
            p[2] = col.b;
        }
    } else {
        for (int x = x0; x <= x1; x++, p += 3) {
            p[0] = blend(p[0], col.r, alpha);
            p[1] = blend(p[1], col.g, alpha);
            p[2] = blend(p[2], col.b, alpha);
        }
    }
}

/* A span of a hatched fill: only the pixels on the pattern's strokes. */
static void hatch_span(lt_canvas *c, int y, int x0, int x1, lt_rgb col, int alpha, int pattern,
                       int period, int stroke)
{
    for (int x = x0; x <= x1; x++) {
        int on = pattern == LT_FILL_HATCH_GRID ? (x % period < stroke || y % period < stroke)
                                               : ((x + y) % period < stroke);
        if (on) blend_span(c, y, x, x, col, alpha);
    }
}

/* Clamps a coordinate to [lo, hi] before it is rounded to int (no overflow on huge input). */
static double clampd(double v, double lo, double hi)
{
    return v < lo ? lo : v > hi ? hi : v;
}

void lt_canvas_fill_polygon(lt_canvas *c, const lt_point *pts, int n, lt_rgb color, int alpha,
                            int pattern, int period_px, int stroke_px)
{
    if (!c || !pts || n < 3 || n > MAX_POLYGON_POINTS || alpha <= 0) return;
    if (period_px < 1) period_px = 1;
    if (stroke_px < 1) stroke_px = 1;
    double ymin = pts[0].y, ymax = pts[0].y;
    for (int i = 1; i < n; i++) {
        if (pts[i].y < ymin) ymin = pts[i].y;
        if (pts[i].y > ymax) ymax = pts[i].y;
    }
    /* Rows whose centre y + 0.5 lies in [ymin, ymax]. */
    int row0 = (int)ceil(clampd(ymin, -1.0, c->height + 1.0) - 0.5);
    int row1 = (int)floor(clampd(ymax, -1.0, c->height + 1.0) - 0.5);
    if (row0 < 0) row0 = 0;
    if (row1 > c->height - 1) row1 = c->height - 1;
    double xs[MAX_POLYGON_POINTS];
    for (int y = row0; y <= row1; y++) {
        double yc = y + 0.5;
        int k = 0;
        for (int i = 0, j = n - 1; i < n; j = i++) {
            const lt_point *p = &pts[i], *q = &pts[j];
            if ((p->y <= yc) != (q->y <= yc)) /* horizontal edges never cross */
                xs[k++] = p->x + (yc - p->y) * (q->x - p->x) / (q->y - p->y);
        }
        for (int i = 1; i < k; i++) { /* insertion sort: k is tiny */
            double v = xs[i];
            int j = i - 1;
            while (j >= 0 && xs[j] > v) {
                xs[j + 1] = xs[j];
                j--;
            }
            xs[j + 1] = v;
        }
        for (int i = 0; i + 1 < k; i += 2) {
            /* Pixels whose centre x + 0.5 lies in [xs[i], xs[i+1]). */
            int x0 = (int)ceil(clampd(xs[i], -1.0, c->width + 1.0) - 0.5);
            int x1 = (int)ceil(clampd(xs[i + 1], -1.0, c->width + 1.0) - 0.5) - 1;
            if (x0 < 0) x0 = 0;
            if (x1 > c->width - 1) x1 = c->width - 1;
            if (x0 > x1) continue;
            if (pattern == LT_FILL_SOLID)
                blend_span(c, y, x0, x1, color, alpha);
            else
                hatch_span(c, y, x0, x1, color, alpha, pattern, period_px, stroke_px);
        }
    }
}

void lt_canvas_fill_rect(lt_canvas *c, double x0, double y0, double x1, double y1, lt_rgb color,
                         int alpha)
{
    lt_point r[4] = {{x0, y0}, {x1, y0}, {x1, y1}, {x0, y1}};
    lt_canvas_fill_polygon(c, r, 4, color, alpha, LT_FILL_SOLID, 1, 1);
}

/* A stroke from a to b of width width_px, extended by cap_px past both ends. */
static void stroke(lt_canvas *c, lt_point a, lt_point b, double width_px, double cap_px,
                   lt_rgb color)
{
    double dx = b.x - a.x, dy = b.y - a.y, len = hypot(dx, dy);
    double ux = 1, uy = 0;
    if (len > 1e-9) {
        ux = dx / len;
        uy = dy / len;
    }
    double hw = width_px / 2, nx = -uy * hw, ny = ux * hw;
    lt_point s = {a.x - ux * cap_px, a.y - uy * cap_px}, e = {b.x + ux * cap_px, b.y + uy * cap_px};
    lt_point poly[4] = {
        {s.x + nx, s.y + ny}, {e.x + nx, e.y + ny}, {e.x - nx, e.y - ny}, {s.x - nx, s.y - ny}};
    lt_canvas_fill_polygon(c, poly, 4, color, 255, LT_FILL_SOLID, 1, 1);
}

void lt_canvas_line(lt_canvas *c, lt_point a, lt_point b, double width_px, lt_rgb color)
{
    if (width_px < 1) width_px = 1;
    stroke(c, a, b, width_px, width_px / 2, color);
}

void lt_canvas_outline(lt_canvas *c, const lt_point *pts, int n, double width_px, lt_rgb color)
{
    for (int i = 0; pts && i < n; i++)
        lt_canvas_line(c, pts[i], pts[(i + 1) % n], width_px, color);
}

void lt_canvas_arrow(lt_canvas *c, lt_point from, lt_point to, double width_px, double head_px,
                     lt_rgb color)
{
    double dx = to.x - from.x, dy = to.y - from.y, len = hypot(dx, dy);
    if (len < 1e-9) return;
    if (width_px < 1) width_px = 1;
    double ux = dx / len, uy = dy / len;
    double head = head_px < len / 2 ? head_px : len / 2;
    double half = 0.4 * head < width_px ? width_px : 0.4 * head; /* head wider than the shaft */
    lt_point base = {to.x - ux * head, to.y - uy * head};
    stroke(c, from, base, width_px, 0, color);
    lt_point tri[3] = {
        to, {base.x - uy * half, base.y + ux * half}, {base.x + uy * half, base.y - ux * half}};
    lt_canvas_fill_polygon(c, tri, 3, color, 255, LT_FILL_SOLID, 1, 1);
}

/* ---- font ------------------------------------------------------------------------------- */
/* Rows 0-1: ascenders; rows 2-6: the x-height; rows 7-8: descenders. '#' is ink. */
static const char glyphs[128][LT_FONT_HEIGHT][6] = {
    ['a'] = {".....", ".....", ".###.", "....#", ".####", "#...#", ".####", ".....", "....."},
    ['b'] = {"#....", "#....", "####.", "#...#", "#...#", "#...#", "####.", ".....", "....."},
    ['c'] = {".....", ".....", ".####", "#....", "#....", "#....", ".####", ".....", "....."},
    ['d'] = {"....#", "....#", ".####", "#...#", "#...#", "#...#", ".####", ".....", "....."},
    ['e'] = {".....", ".....", ".###.", "#...#", "#####", "#....", ".###.", ".....", "....."},
    ['f'] = {"..##.", ".#...", "####.", ".#...", ".#...", ".#...", ".#...", ".....", "....."},
    ['g'] = {".....", ".....", ".####", "#...#", "#...#", "#...#", ".####", "....#", ".###."},
    ['h'] = {"#....", "#....", "####.", "#...#", "#...#", "#...#", "#...#", ".....", "....."},
    ['i'] = {"..#..", ".....", ".##..", "..#..", "..#..", "..#..", ".###.", ".....", "....."},
    ['j'] = {"...#.", ".....", "..##.", "...#.", "...#.", "...#.", "...#.", "#..#.", ".##.."},
    ['k'] = {"#....", "#....", "#..#.", "#.#..", "##...", "#.#..", "#..#.", ".....", "....."},
    ['l'] = {".##..", "..#..", "..#..", "..#..", "..#..", "..#..", ".###.", ".....", "....."},
    ['m'] = {".....", ".....", "##.#.", "#.#.#", "#.#.#", "#.#.#", "#.#.#", ".....", "....."},
    ['n'] = {".....", ".....", "####.", "#...#", "#...#", "#...#", "#...#", ".....", "....."},
    ['o'] = {".....", ".....", ".###.", "#...#", "#...#", "#...#", ".###.", ".....", "....."},
    ['p'] = {".....", ".....", "####.", "#...#", "#...#", "#...#", "####.", "#....", "#...."},
    ['q'] = {".....", ".....", ".####", "#...#", "#...#", "#...#", ".####", "....#", "....#"},
    ['r'] = {".....", ".....", "#.##.", "##..#", "#....", "#....", "#....", ".....", "....."},
    ['s'] = {".....", ".....", ".####", "#....", ".###.", "....#", "####.", ".....", "....."},
    ['t'] = {".#...", ".#...", "####.", ".#...", ".#...", ".#..#", "..##.", ".....", "....."},
    ['u'] = {".....", ".....", "#...#", "#...#", "#...#", "#..##", ".##.#", ".....", "....."},
    ['v'] = {".....", ".....", "#...#", "#...#", "#...#", ".#.#.", "..#..", ".....", "....."},
    ['w'] = {".....", ".....", "#...#", "#...#", "#.#.#", "#.#.#", ".#.#.", ".....", "....."},
    ['x'] = {".....", ".....", "#...#", ".#.#.", "..#..", ".#.#.", "#...#", ".....", "....."},
    ['y'] = {".....", ".....", "#...#", "#...#", "#...#", "#...#", ".####", "....#", ".###."},
    ['z'] = {".....", ".....", "#####", "...#.", "..#..", ".#...", "#####", ".....", "....."},
    ['0'] = {".###.", "#...#", "#..##", "#.#.#", "##..#", "#...#", ".###.", ".....", "....."},
    ['1'] = {"..#..", ".##..", "..#..", "..#..", "..#..", "..#..", ".###.", ".....", "....."},
    ['2'] = {".###.", "#...#", "....#", "...#.", "..#..", ".#...", "#####", ".....", "....."},
    ['3'] = {"####.", "....#", "....#", ".###.", "....#", "....#", "####.", ".....", "....."},
    ['4'] = {"...#.", "..##.", ".#.#.", "#..#.", "#####", "...#.", "...#.", ".....", "....."},
    ['5'] = {"#####", "#....", "####.", "....#", "....#", "#...#", ".###.", ".....", "....."},
    ['6'] = {"..##.", ".#...", "#....", "####.", "#...#", "#...#", ".###.", ".....", "....."},
    ['7'] = {"#####", "....#", "...#.", "..#..", ".#...", ".#...", ".#...", ".....", "....."},
    ['8'] = {".###.", "#...#", "#...#", ".###.", "#...#", "#...#", ".###.", ".....", "....."},
    ['9'] = {".###.", "#...#", "#...#", ".####", "....#", "...#.", ".##..", ".....", "....."},
    ['-'] = {".....", ".....", ".....", ".....", ".###.", ".....", ".....", ".....", "....."},
    ['.'] = {".....", ".....", ".....", ".....", ".....", ".##..", ".##..", ".....", "....."},
    [','] = {".....", ".....", ".....", ".....", ".....", ".##..", ".##..", "..#..", ".#..."},
    [':'] = {".....", ".....", ".##..", ".##..", ".....", ".##..", ".##..", ".....", "....."},
    [';'] = {".....", ".....", ".##..", ".##..", ".....", ".##..", ".##..", "..#..", ".#..."},
    ['('] = {"...#.", "..#..", ".#...", ".#...", ".#...", ".#...", "..#..", "...#.", "....."},
    [')'] = {".#...", "..#..", "...#.", "...#.", "...#.", "...#.", "..#..", ".#...", "....."},
    ['/'] = {"....#", "....#", "...#.", "..#..", ".#...", "#....", "#....", ".....", "....."},
    ['\''] = {"..#..", "..#..", ".#...", ".....", ".....", ".....", ".....", ".....", "....."},
    ['_'] = {".....", ".....", ".....", ".....", ".....", ".....", ".....", "#####", "....."},
    ['+'] = {".....", ".....", "..#..", "..#..", "#####", "..#..", "..#..", ".....", "....."},
    ['='] = {".....", ".....", ".....", "#####", ".....", "#####", ".....", ".....", "....."},
    ['#'] = {".#.#.", ".#.#.", "#####", ".#.#.", "#####", ".#.#.", ".#.#.", ".....", "....."},
    ['%'] = {"##...", "##..#", "...#.", "..#..", ".#...", "#..##", "...##", ".....", "....."},
    ['?'] = {".###.", "#...#", "....#", "...#.", "..#..", ".....", "..#..", ".....", "....."},
};

int lt_text_width_px(const char *text, int scale)
{
    size_t n = text ? strlen(text) : 0;
    if (n == 0 || scale < 1) return 0;
    return (int)n * LT_FONT_ADVANCE * scale - scale;
}

/* The glyph of byte ch: upper case as lower case, unknown bytes as '?', space as blank. */
static const char (*glyph_of(unsigned char ch))[6]
{
    if (ch >= 'A' && ch <= 'Z') ch = (unsigned char)(ch - 'A' + 'a');
    if (ch == ' ') return NULL;
    if (ch >= 128 || glyphs[ch][0][0] == '\0') ch = '?';
    return glyphs[ch];
}

void lt_canvas_text(lt_canvas *c, int x, int y, const char *text, int scale, lt_rgb color)
{
    if (!c || !text || scale < 1) return;
    for (const char *t = text; *t; t++, x += LT_FONT_ADVANCE * scale) {
        if (x >= c->width) break;
        const char(*g)[6] = glyph_of((unsigned char)*t);
        if (!g || x + LT_FONT_ADVANCE * scale <= 0) continue;
        for (int r = 0; r < LT_FONT_HEIGHT; r++) {
            int y0 = y + r * scale, y1 = y0 + scale - 1; /* rows of this cell row */
            if (y1 < 0 || y0 >= c->height) continue;
            if (y0 < 0) y0 = 0;
            if (y1 > c->height - 1) y1 = c->height - 1;
            for (int k = 0; k < 5; k++) {
                if (g[r][k] != '#') continue;
                int x0 = x + k * scale, x1 = x0 + scale - 1;
                if (x1 < 0 || x0 >= c->width) continue;
                if (x0 < 0) x0 = 0;
                if (x1 > c->width - 1) x1 = c->width - 1;
                for (int yy = y0; yy <= y1; yy++)
                    blend_span(c, yy, x0, x1, color, 255);
            }
        }
    }
}

/* ---- names ------------------------------------------------------------------------------ */

int lt_role_from_name(const char *name)
{
    for (int i = LT_ROLE_BODY; name && i < LT_ROLE_COUNT; i++)
        if (strcmp(name, lt_role_name(i)) == 0) return i;
    return LT_ROLE_BODY;
}

int lt_draw_kind_from_name(const char *name)
{
    static const char *const kinds[] = {"text", "rule", "picture", "table"};
    for (int i = 0; name && i < 4; i++)
        if (strcmp(name, kinds[i]) == 0) return i;
    return LT_DRAW_OTHER;
}

void lt_draw_layout_free(lt_draw_layout *l)
{
    if (!l) return;
    for (int i = 0; i < l->nreasons; i++)
        free(l->reasons[i]);
    free(l->reasons);
    free(l->lines);
    free(l->blocks);
    free(l);
}

/* ---- reading-order steps ------------------------------------------------------------------ */

static lt_point mid(lt_point a, lt_point b)
{
    lt_point m = {(a.x + b.x) / 2, (a.y + b.y) / 2};
    return m;
}

int lt_draw_step_is_jump(const lt_draw_line *a, const lt_draw_line *b, int page_height_px)
{
    lt_point from = mid(a->quad[1], a->quad[2]), to = mid(b->quad[0], b->quad[3]);
    /* a's frame: along its top edge and down its left edge (image axes when degenerate). */
    double ax = a->quad[1].x - a->quad[0].x, ay = a->quad[1].y - a->quad[0].y;
    double al = hypot(ax, ay);
    double hx = a->quad[3].x - a->quad[0].x, hy = a->quad[3].y - a->quad[0].y;
    double h = hypot(hx, hy);
    double ux = 1, uy = 0;
    if (al > 1e-9) {
        ux = ax / al;
        uy = ay / al;
    }
    if (h < 1) h = 1;
    double dx = to.x - from.x, dy = to.y - from.y;
    double along = dx * ux + dy * uy, down = -dx * uy + dy * ux; /* down: ux rotated +90 deg */
    double tol = h / 2;
    if (down < -tol) return 1;                       /* up the page */
    if (fabs(down) <= tol && along < -tol) return 1; /* back along the same row */
    if (down > 0.25 * page_height_px) return 1;      /* a drop over a quarter page */
    if (down > tol && along > 2 * h) return 1;       /* down and off to the right */
    return 0;
}

/* ---- the page ------------------------------------------------------------------------------ */

/* Paints the page onto the canvas, reduced by box averaging (each canvas pixel the rounded
 * mean of the page pixels of its box) and lightened: gray g becomes
 * PAGE_INK_GRAY + g (PAGE_PAPER_GRAY - PAGE_INK_GRAY) / 255, rounded. Ink images count ink
 * as 0, paper as 255. Fails only when out of memory. */
static int paint_page(lt_canvas *c, const lt_image *page)
{
    uint8_t lut[256];
    for (int g = 0; g < 256; g++)
        lut[g] = (uint8_t)(PAGE_INK_GRAY + (g * (PAGE_PAPER_GRAY - PAGE_INK_GRAY) + 127) / 255);
    const int W = page->width, H = page->height, w = c->width, h = c->height;
    const int ink = page->kind == LT_IMAGE_INK;
    uint32_t *colsum = calloc((size_t)W, sizeof *colsum);
    int *x0s = malloc(((size_t)w + 1) * sizeof *x0s);
    if (!colsum || !x0s) {
        free(colsum);
        free(x0s);
        return LT_ENOMEM;
    }
    for (int ox = 0; ox <= w; ox++)
        x0s[ox] = (int)((int64_t)ox * W / w);
    for (int oy = 0; oy < h; oy++) {
        int y0 = (int)((int64_t)oy * H / h), y1 = (int)((int64_t)(oy + 1) * H / h);
        memset(colsum, 0, (size_t)W * sizeof *colsum);
        for (int y = y0; y < y1; y++) {
            const uint8_t *src = page->pixels + (size_t)y * (size_t)W;
            if (ink)
                for (int x = 0; x < W; x++)
                    colsum[x] += src[x] ? 0 : 255;
            else
                for (int x = 0; x < W; x++)
                    colsum[x] += src[x];
        }
        uint8_t *dst = c->rgb + (size_t)oy * (size_t)w * 3;
        for (int ox = 0; ox < w; ox++) {
            uint64_t sum = 0;
            for (int x = x0s[ox]; x < x0s[ox + 1]; x++)
                sum += colsum[x];
            uint64_t count = (uint64_t)(x0s[ox + 1] - x0s[ox]) * (uint64_t)(y1 - y0);
            uint8_t v = lut[(sum + count / 2) / count];
            dst[3 * ox] = dst[3 * ox + 1] = dst[3 * ox + 2] = v;
        }
    }
    free(colsum);
    free(x0s);
    return 0;
}

/* Drawing context: the canvas and the measures everything is sized from. */
typedef struct ctx {
    lt_canvas *c;
    double kx, ky;   /* canvas pixels per page pixel */
    double width_px; /* stroke width of outlines and arrows */
    double head_px;  /* arrow head length */
    int hatch_px;    /* hatch period */
    int font;        /* legend font scale */
    int label_font;  /* line number font scale */
} ctx;

static void map_quad(const ctx *x, const lt_point *q, lt_point *out)
{
    for (int i = 0; i < 4; i++) {
        out[i].x = q[i].x * x->kx;
        out[i].y = q[i].y * x->ky;
    }
}

/* Draws a block in the style of its kind (and role, for text) into the quad q (canvas). */
static void draw_block_style(const ctx *x, const lt_point *q, int kind, int role, double width)
{
    int stroke_px = (int)(width / 2) > 1 ? (int)(width / 2) : 1;
    switch (kind) {
    case LT_DRAW_TEXT:
        lt_canvas_fill_polygon(x->c, q, 4, role_colors[role], TINT_ALPHA, LT_FILL_SOLID, 1, 1);
        lt_canvas_outline(x->c, q, 4, width, role_colors[role]);
        break;
    case LT_DRAW_RULE:
        lt_canvas_fill_polygon(x->c, q, 4, color_rule, RULE_ALPHA, LT_FILL_SOLID, 1, 1);
        lt_canvas_outline(x->c, q, 4, width, color_rule);
        break;
    case LT_DRAW_PICTURE:
        lt_canvas_fill_polygon(x->c, q, 4, color_picture, 255, LT_FILL_HATCH_DIAGONAL, x->hatch_px,
                               stroke_px);
        lt_canvas_outline(x->c, q, 4, width, color_picture);
        break;
    case LT_DRAW_TABLE:
        lt_canvas_fill_polygon(x->c, q, 4, color_table, 255, LT_FILL_HATCH_GRID, x->hatch_px,
                               stroke_px);
        lt_canvas_outline(x->c, q, 4, width, color_table);
        break;
    default: lt_canvas_outline(x->c, q, 4, width, color_other); break;
    }
}

/* Line number `number` beside the start of a line (canvas point `start`): left of it when
 * there is room, else just inside the line; on a light backdrop. */
static void draw_label(const ctx *x, lt_point start, int number, lt_rgb color)
{
    char text[16];
    snprintf(text, sizeof text, "%d", number);
    int f = x->label_font, w = lt_text_width_px(text, f), hgt = LT_FONT_BODY * f;
    double left = start.x - 2 * f - w;
    if (left - f < 0) left = start.x + 2 * f;
    double top = start.y - hgt / 2.0;
    lt_canvas_fill_rect(x->c, left - f, top - f, left + w + f, top + hgt + f, color_white,
                        LABEL_ALPHA);
    lt_canvas_text(x->c, (int)lround(left), (int)lround(top), text, f, color);
}

/* ---- legend ------------------------------------------------------------------------------- */

typedef struct legend_row {
    int swatch; /* 0 none, 1 role, 2 kind, 3 line, 4 step, 5 jump */
    int value;  /* role or kind */
    const char *label;
    char text[LEGEND_INNER_CHARS + 1]; /* own text (wrapped review lines) when label NULL */
    int gap;                           /* extra half row before this one */
    int red;
} legend_row;

/* Appends the words of `s` wrapped to `cols` columns as rows; words longer than a row are
 * cut. Stops at `max` rows in total. */
static void wrap_rows(legend_row *rows, int *n, int max, const char *s, int cols, int indent)
{
    size_t len = strlen(s), pos = 0;
    int first = 1;
    while (pos < len && *n < max) {
        while (pos < len && s[pos] == ' ')
            pos++;
        if (pos >= len) break;
        int avail = cols - (first ? 0 : indent);
        size_t end = pos + (size_t)avail;
        if (end >= len) {
            end = len;
        } else {
            size_t cut = end;
            while (cut > pos && s[cut] != ' ')
                cut--;
            if (cut > pos) end = cut;
        }
        legend_row *r = &rows[(*n)++];
        memset(r, 0, sizeof *r);
        r->red = 1;
        int k = 0;
        if (!first)
            for (; k < indent; k++)
                r->text[k] = ' ';
        for (size_t i = pos; i < end && k < LEGEND_INNER_CHARS; i++)
            r->text[k++] = s[i];
        r->text[k] = '\0';
        pos = end;
        first = 0;
    }
}

/* Overlap area of two boxes [ax0, ax1) x [ay0, ay1) and [bx0, bx1) x [by0, by1). */
static double overlap(double ax0, double ay0, double ax1, double ay1, double bx0, double by0,
                      double bx1, double by1)
{
    double w = fmin(ax1, bx1) - fmax(ax0, bx0), h = fmin(ay1, by1) - fmax(ay0, by0);
    return w > 0 && h > 0 ? w * h : 0;
}

static void quad_bounds(const lt_point *q, double *x0, double *y0, double *x1, double *y1)
{
    *x0 = *x1 = q[0].x;
    *y0 = *y1 = q[0].y;
    for (int i = 1; i < 4; i++) {
        *x0 = fmin(*x0, q[i].x);
        *x1 = fmax(*x1, q[i].x);
        *y0 = fmin(*y0, q[i].y);
        *y1 = fmax(*y1, q[i].y);
    }
}

/* The legend: one row per role, per non-text kind, the line outline and (with the order) the
 * two arrow styles; then, when the layout asks for it, the order review note and its reasons
 * in red. Placed in the corner (top right, top left, bottom right, bottom left, in that order
 * of preference) whose box overlaps the layout's lines and blocks least. */
static int draw_legend(const ctx *x, const lt_draw_layout *lay, int show_order)
{
    static const char *const kind_labels[] = {"text", "rule", "picture", "table"};
    legend_row *rows = calloc(LEGEND_MAX_ROWS, sizeof *rows);
    if (!rows) return LT_ENOMEM;
    int n = 0;
    for (int r = LT_ROLE_BODY; r < LT_ROLE_COUNT; r++)
        rows[n++] = (legend_row){1, r, lt_role_name(r), "", 0, 0};
    for (int k = LT_DRAW_RULE; k <= LT_DRAW_TABLE; k++)
        rows[n++] = (legend_row){2, k, kind_labels[k], "", k == LT_DRAW_RULE, 0};
    rows[n++] = (legend_row){3, 0, "text line", "", 1, 0};
    if (show_order) {
        rows[n++] = (legend_row){4, 0, "next line", "", 0, 0};
        rows[n++] = (legend_row){5, 0, "order jump", "", 0, 1};
    }
    if (lay->review_needed && n < LEGEND_MAX_ROWS) {
        rows[n++] = (legend_row){0, 0, "review order:", "", 1, 1};
        for (int i = 0; i < lay->nreasons && n < LEGEND_MAX_ROWS; i++) {
            int before = n;
            wrap_rows(rows, &n, LEGEND_MAX_ROWS, lay->reasons[i], LEGEND_INNER_CHARS - 2, 0);
            for (int k = before; k < n; k++) { /* "- " before the first line, "  " after */
                char tmp[LEGEND_INNER_CHARS + 1];
                snprintf(tmp, sizeof tmp, "%s%.*s", k == before ? "- " : "  ",
                         LEGEND_INNER_CHARS - 2, rows[k].text);
                memcpy(rows[k].text, tmp, sizeof tmp);
            }
        }
    }
    const int f = x->font, ch = LT_FONT_ADVANCE * f, row_h = 12 * f, pad = ch;
    int gaps = 0;
    for (int i = 0; i < n; i++)
        gaps += rows[i].gap;
    const double lw = 2 * pad + LEGEND_INNER_CHARS * ch - f;
    const double lh = 2 * pad + n * row_h + gaps * row_h / 2 - 3 * f;
    const double margin = ch, W = x->c->width, H = x->c->height;
    const double corners[4][2] = {{W - margin - lw, margin},
                                  {margin, margin},
                                  {W - margin - lw, H - margin - lh},
                                  {margin, H - margin - lh}};
    int best = 0;
    double best_cost = -1;
    for (int k = 0; k < 4; k++) {
        double cx0 = corners[k][0], cy0 = corners[k][1], cost = 0;
        lt_point q[4];
        double b[4];
        for (int i = 0; i < lay->nlines; i++) {
            map_quad(x, lay->lines[i].quad, q);
            quad_bounds(q, &b[0], &b[1], &b[2], &b[3]);
            cost += overlap(cx0, cy0, cx0 + lw, cy0 + lh, b[0], b[1], b[2], b[3]);
        }
        for (int i = 0; i < lay->nblocks; i++) {
            map_quad(x, lay->blocks[i].quad, q);
            quad_bounds(q, &b[0], &b[1], &b[2], &b[3]);
            cost += overlap(cx0, cy0, cx0 + lw, cy0 + lh, b[0], b[1], b[2], b[3]);
        }
        if (best_cost < 0 || cost < best_cost) {
            best = k;
            best_cost = cost;
        }
    }
    double x0 = fmax(0, corners[best][0]), y0 = fmax(0, corners[best][1]);
    lt_canvas_fill_rect(x->c, x0, y0, x0 + lw, y0 + lh, color_white, LEGEND_ALPHA);
    lt_point frame[4] = {{x0, y0}, {x0 + lw, y0}, {x0 + lw, y0 + lh}, {x0, y0 + lh}};
    double thin = f / 2 > 1 ? f / 2 : 1;
    lt_canvas_outline(x->c, frame, 4, thin, color_border);
    double y = y0 + pad;
    for (int i = 0; i < n; i++) {
        const legend_row *r = &rows[i];
        y += r->gap * row_h / 2.0;
        double sx0 = x0 + pad, sx1 = sx0 + 4 * ch - f;
        double sy0 = y + 0.5 * f, sy1 = y + LT_FONT_BODY * f - 0.5 * f;
        lt_point q[4] = {{sx0, sy0}, {sx1, sy0}, {sx1, sy1}, {sx0, sy1}};
        lt_point a = {sx0, (sy0 + sy1) / 2}, b = {sx1, (sy0 + sy1) / 2};
        switch (r->swatch) {
        case 1: draw_block_style(x, q, LT_DRAW_TEXT, r->value, thin); break;
        case 2: draw_block_style(x, q, r->value, 0, thin); break;
        case 3: lt_canvas_outline(x->c, q, 4, thin, color_line); break;
        case 4: lt_canvas_arrow(x->c, a, b, thin, 3.0 * f, color_step); break;
        case 5: lt_canvas_arrow(x->c, a, b, thin, 3.0 * f, color_jump); break;
        default: break;
        }
        int tx = (int)lround(r->swatch ? x0 + pad + 5 * ch : x0 + pad);
        lt_canvas_text(x->c, tx, (int)lround(y), r->label ? r->label : r->text, f,
                       r->red ? color_jump : color_text);
        y += row_h;
    }
    free(rows);
    return 0;
}

/* ---- the picture -------------------------------------------------------------------------- */

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

int lt_draw_page(const lt_image *page, const lt_draw_layout *lay, const lt_draw_options *opt,
                 lt_canvas **out, lt_error *err)
{
    if (out) *out = NULL;
    if (!page || !page->pixels || !lay || !opt || !out)
        return lt_error_set(err, LT_EINVAL, "draw: missing argument");
    if (page->width != lay->width || page->height != lay->height)
        return lt_error_set(err, LT_EINVAL, "layout is %dx%d pixels, the page %dx%d", lay->width,
                            lay->height, page->width, page->height);
    if (!(opt->scale > 0 && opt->scale <= 1))
        return lt_error_set(err, LT_EINVAL, "scale %g is not in (0, 1]", opt->scale);
    long w = lround(page->width * opt->scale), h = lround(page->height * opt->scale);
    if (w < 1) w = 1;
    if (h < 1) h = 1;
    lt_canvas *c = lt_canvas_new((int)w, (int)h, color_white);
    if (!c) return lt_error_set(err, LT_ENOMEM, "out of memory for a %ldx%ld picture", w, h);
    if (paint_page(c, page)) {
        lt_canvas_free(c);
        return lt_error_set(err, LT_ENOMEM, "out of memory");
    }
    ctx x = {c, (double)w / page->width, (double)h / page->height, 1, 1, 1, 1, 1};
    /* Sizes follow the canvas width: 2 px strokes at 1275 px (an A4 page at 150 dpi). */
    x.width_px = fmax(1, lround(w / 800.0));
    x.hatch_px = (int)(8 * x.width_px);
    /* Legend font: the legend is about a quarter of the canvas wide. */
    x.font = (int)(w / 4 / ((LEGEND_INNER_CHARS + 2) * LT_FONT_ADVANCE));
    if (x.font < 1) x.font = 1;
    /* Line numbers and arrow heads follow the median line height. */
    double med_h = 0;
    if (lay->nlines > 0) {
        double *hs = malloc((size_t)lay->nlines * sizeof *hs);
        if (!hs) {
            lt_canvas_free(c);
            return lt_error_set(err, LT_ENOMEM, "out of memory");
        }
        for (int i = 0; i < lay->nlines; i++) {
            const lt_point *q = lay->lines[i].quad;
            hs[i] = (hypot((q[3].x - q[0].x) * x.kx, (q[3].y - q[0].y) * x.ky) +
                     hypot((q[2].x - q[1].x) * x.kx, (q[2].y - q[1].y) * x.ky)) /
                    2;
        }
        qsort(hs, (size_t)lay->nlines, sizeof *hs, cmp_double);
        med_h = hs[lay->nlines / 2];
        free(hs);
    }
    x.label_font = (int)lround(med_h * 0.55 / LT_FONT_BODY);
    if (x.label_font < 1) x.label_font = 1;
    if (x.label_font > x.font) x.label_font = x.font;
    x.head_px = fmax(4 * x.width_px, 0.6 * med_h);

    lt_point q[4];
    for (int pass = 0; pass < 2; pass++) /* text blocks first, other kinds over them */
        for (int i = 0; i < lay->nblocks; i++) {
            const lt_draw_block *b = &lay->blocks[i];
            if ((b->kind == LT_DRAW_TEXT) != (pass == 0)) continue;
            int role = b->role >= LT_ROLE_BODY && b->role < LT_ROLE_COUNT ? b->role : LT_ROLE_BODY;
            map_quad(&x, b->quad, q);
            draw_block_style(&x, q, b->kind, role, x.width_px);
        }
    for (int i = 0; i < lay->nlines; i++) {
        map_quad(&x, lay->lines[i].quad, q);
        lt_canvas_outline(c, q, 4, x.width_px, color_line);
    }
    if (opt->show_order && lay->nlines > 0) {
        for (int i = 0; i + 1 < lay->nlines; i++) {
            const lt_draw_line *a = &lay->lines[i], *b = &lay->lines[i + 1];
            int jump = lt_draw_step_is_jump(a, b, lay->height);
            lt_point from = mid(a->quad[1], a->quad[2]), to = mid(b->quad[0], b->quad[3]);
            from.x *= x.kx;
            from.y *= x.ky;
            to.x *= x.kx;
            to.y *= x.ky;
            lt_canvas_arrow(c, from, to, x.width_px, x.head_px, jump ? color_jump : color_step);
        }
        for (int i = 0; i < lay->nlines; i++) {
            const lt_draw_line *b = &lay->lines[i];
            int jump = i > 0 && lt_draw_step_is_jump(&lay->lines[i - 1], b, lay->height);
            lt_point start = mid(b->quad[0], b->quad[3]);
            start.x *= x.kx;
            start.y *= x.ky;
            draw_label(&x, start, i + 1, jump ? color_jump : color_step);
        }
    }
    if (draw_legend(&x, lay, opt->show_order)) {
        lt_canvas_free(c);
        return lt_error_set(err, LT_ENOMEM, "out of memory");
    }
    *out = c;
    return 0;
}

/* draw.c — the audit picture: the page reduced by box averaging and lightened, the layout drawn
 * over it with cairo (antialiased paths; text block tints blended with the "multiply" mode of
 * the PDF blend modes, ISO 32000-1 sec. 11.3.5) and, right of the page, a legend panel lettered
 * with a FreeType font (fonts-dejavu-core's DejaVu Sans by default, see configure.ac).
 *
 * Colours. The role tints are Paul Tol's "muted" qualitative scheme (P. Tol, "Colour Schemes",
 * SRON technical note SRON/EPS/TN/09-002: indigo #332288, cyan #88CCEE, teal #44AA99, green
 * #117733, olive #999933, sand #DDCC77, rose #CC6677, wine #882255, purple #AA4499; values from
 * memory), designed to stay distinct for readers with the common colour-vision deficiencies;
 * the reading-order arrows are the blue and vermillion of Okabe & Ito ("Color Universal
 * Design", 2002: blue #0072B2, vermillion #D55E00; from memory), and the line outlines their
 * black. tests/draw_picture.sh checks the tints as they come out in the PNG through the
 * deuteranopia, protanopia and tritanopia simulations of Machado, Oliveira & Fernandes (2009). */
#include "draw.h"

#include <cairo-ft.h>
#include <cairo.h>
#include <ft2build.h>
#include FT_FREETYPE_H
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "config.h" /* LT_FONT_FILE */

#define MAX_PICTURE_SIDE_PX 32767 /* cairo's largest image surface */

/* ---- colours ----------------------------------------------------------------------------- */
typedef struct rgb {
    uint8_t r, g, b;
} rgb;

/* Role colours (Tol's muted scheme): the outline of a text block; its tint is the colour
 * lightened to TINT_STRENGTH (see tint_of). Index LT_ROLE_NONE is not drawn (such blocks are
 * drawn as body). */
static const rgb role_colors[LT_ROLE_COUNT] = {
    {221, 221, 221}, /* none: Tol's pale grey */
    {136, 204, 238}, /* body: cyan */
    {204, 102, 119}, /* heading: rose */
    {51, 34, 136},   /* page-header: indigo */
    {170, 68, 153},  /* page-footer: purple */
    {153, 153, 51},  /* page-number: olive */
    {68, 170, 153},  /* list-item: teal */
    {221, 204, 119}, /* caption: sand */
    {17, 119, 51},   /* footnote: green */
    {136, 34, 85},   /* margin-note: wine */
};
static const rgb color_kind = {85, 85, 85};     /* rules, pictures, tables, other blocks */
static const rgb color_line = {0, 0, 0};        /* line outlines: Okabe-Ito black */
static const rgb color_step = {0, 114, 178};    /* ordinary order step: Okabe-Ito blue */
static const rgb color_jump = {213, 94, 0};     /* jumps and the review note: vermillion */
static const rgb color_white = {255, 255, 255}; /* arrow casing, label backdrop */
static const rgb color_text = {34, 34, 34};     /* legend labels */
static const rgb color_panel = {238, 238, 238}; /* legend panel background */
static const rgb color_rim = {136, 136, 136};   /* line between the page and the panel */

#define TINT_STRENGTH 180       /* of 255: tint = white + TINT_STRENGTH/255 (colour - white) */
#define RULE_ALPHA 0.6          /* opacity of a rule's fill */
#define CASING_ALPHA 0.85       /* opacity of the white casing under arrows */
#define LABEL_ALPHA 0.8         /* opacity of the backdrop of a line number */
#define PAGE_INK_GRAY 150       /* black ink is shown as this gray ... */
#define PAGE_PAPER_GRAY 255     /* ... and white paper stays white */
#define LEGEND_MAX_ROWS 60      /* rows of the legend; review reasons beyond them are left out */
#define LEGEND_MIN_FONT_PX 12.0 /* legend letters: page area's shorter side / 72, at least this */
#define LABEL_MIN_FONT_PX 8.0   /* line numbers: 0.55 x the median line height, at least this */

/* The tint of a role colour as it appears on white paper. */
static rgb tint_of(rgb c)
{
    rgb t = {(uint8_t)(255 - ((255 - c.r) * TINT_STRENGTH + 127) / 255),
             (uint8_t)(255 - ((255 - c.g) * TINT_STRENGTH + 127) / 255),
             (uint8_t)(255 - ((255 - c.b) * TINT_STRENGTH + 127) / 255)};
    return t;
}

static void set_color(cairo_t *cr, rgb c, double alpha)
{
    cairo_set_source_rgba(cr, c.r / 255.0, c.g / 255.0, c.b / 255.0, alpha);
}

/* ---- the font ---------------------------------------------------------------------------- */

/* The font owns its FreeType library and face; the cairo face holds them and releases both
 * when cairo drops its last reference (see release_face). */
struct lt_draw_font {
    cairo_font_face_t *face;
};

typedef struct ft_hold {
    FT_Library library;
    FT_Face face;
} ft_hold;

static const cairo_user_data_key_t ft_hold_key;

static void release_face(void *data)
{
    ft_hold *h = data;
    FT_Done_Face(h->face);
    FT_Done_FreeType(h->library);
    free(h);
}

int lt_draw_font_open(const char *path, lt_draw_font **out, lt_error *err)
{
    *out = NULL;
    if (!path) path = LT_FONT_FILE;
    lt_draw_font *f = calloc(1, sizeof *f);
    ft_hold *h = calloc(1, sizeof *h);
    if (!f || !h) {
        free(f);
        free(h);
        return lt_error_set(err, LT_ENOMEM, "out of memory");
    }
    FT_Error fe = FT_Init_FreeType(&h->library);
    if (fe) {
        free(f);
        free(h);
        return lt_error_set(err, LT_ENOMEM, "FreeType cannot start (error %d)", fe);
    }
    fe = FT_New_Face(h->library, path, 0, &h->face);
    if (fe) {
        FT_Done_FreeType(h->library);
        free(f);
        free(h);
        return lt_error_set(err, LT_EIO, "%s: cannot read the font (FreeType error %d)", path, fe);
    }
    f->face = cairo_ft_font_face_create_for_ft_face(h->face, 0);
    if (cairo_font_face_status(f->face) ||
        cairo_font_face_set_user_data(f->face, &ft_hold_key, h, release_face)) {
        cairo_font_face_destroy(f->face);
        release_face(h);
        free(f);
        return lt_error_set(err, LT_ENOMEM, "out of memory");
    }
    *out = f;
    return 0;
}

void lt_draw_font_close(lt_draw_font *f)
{
    if (!f) return;
    cairo_font_face_destroy(f->face);
    free(f);
}

void lt_draw_release_caches(void)
{
    cairo_debug_reset_static_data();
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

/* Paints the page into the top-left w x h pixels of the surface (cairo's RGB24: one 32-bit
 * 0x00RRGGBB word a pixel), reduced by box averaging (each picture pixel the rounded mean of
 * the page pixels of its box) and lightened: gray g becomes
 * PAGE_INK_GRAY + g (PAGE_PAPER_GRAY - PAGE_INK_GRAY) / 255, rounded. Ink images count ink
 * as 0, paper as 255. Fails only when out of memory. */
static int paint_page(cairo_surface_t *s, int w, int h, const lt_image *page)
{
    uint8_t lut[256];
    for (int g = 0; g < 256; g++)
        lut[g] = (uint8_t)(PAGE_INK_GRAY + (g * (PAGE_PAPER_GRAY - PAGE_INK_GRAY) + 127) / 255);
    const int W = page->width, H = page->height;
    const int ink = page->kind == LT_IMAGE_INK;
    uint32_t *colsum = calloc((size_t)W, sizeof *colsum);
    int *x0s = malloc(((size_t)w + 1) * sizeof *x0s);
    if (!colsum || !x0s) {
        free(colsum);
        free(x0s);
        return LT_ENOMEM;
    }
    cairo_surface_flush(s);
    uint8_t *data = cairo_image_surface_get_data(s);
    const size_t stride = (size_t)cairo_image_surface_get_stride(s);
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
        uint32_t *dst = (uint32_t *)(void *)(data + (size_t)oy * stride);
        for (int ox = 0; ox < w; ox++) {
            uint64_t sum = 0;
            for (int x = x0s[ox]; x < x0s[ox + 1]; x++)
                sum += colsum[x];
            uint64_t count = (uint64_t)(x0s[ox + 1] - x0s[ox]) * (uint64_t)(y1 - y0);
            uint32_t v = lut[(sum + count / 2) / count];
            dst[ox] = 0xff000000u | v << 16 | v << 8 | v;
        }
    }
    cairo_surface_mark_dirty(s);
    free(colsum);
    free(x0s);
    return 0;
}

/* ---- drawing ------------------------------------------------------------------------------ */

/* Drawing context: cairo and the measures everything is sized from (picture pixels). */
typedef struct ctx {
    cairo_t *cr;
    double kx, ky;   /* picture pixels per page pixel */
    double width_px; /* stroke width of block outlines and ordinary arrows (whole pixels) */
    double line_px;  /* stroke width of line outlines (whole pixels) */
    double head_px;  /* arrow head length */
    double hatch_px; /* hatch period */
    double font_px;  /* legend letters */
    double label_px; /* line numbers */
} ctx;

static void map_quad(const ctx *x, const lt_point *q, lt_point *out)
{
    for (int i = 0; i < 4; i++) {
        out[i].x = q[i].x * x->kx;
        out[i].y = q[i].y * x->ky;
    }
}

/* Moves the corners of q (top-left, top-right, bottom-right, bottom-left) d pixels outwards
 * along the quad's own top and left edges (the image axes when an edge is degenerate). */
static void grow_quad(lt_point *q, double d)
{
    double ex = q[1].x - q[0].x, ey = q[1].y - q[0].y, fx = q[3].x - q[0].x, fy = q[3].y - q[0].y;
    double el = hypot(ex, ey), fl = hypot(fx, fy);
    ex = el > 1e-9 ? ex / el : 1;
    ey = el > 1e-9 ? ey / el : 0;
    fx = fl > 1e-9 ? fx / fl : 0;
    fy = fl > 1e-9 ? fy / fl : 1;
    static const int sx[4] = {-1, 1, 1, -1}, sy[4] = {-1, -1, 1, 1};
    for (int i = 0; i < 4; i++) {
        q[i].x += d * (sx[i] * ex + sy[i] * fx);
        q[i].y += d * (sx[i] * ey + sy[i] * fy);
    }
}

/* A coordinate moved so that a stroke width_px wide (whole pixels) centred on it covers
 * whole pixels: onto a pixel centre for odd widths, onto a pixel edge for even ones. */
static double snap(double v, double width_px)
{
    return ((long)width_px % 2) ? floor(v) + 0.5 : floor(v + 0.5);
}

static void quad_path(cairo_t *cr, const lt_point *q, double snap_width_px)
{
    cairo_new_path(cr);
    for (int i = 0; i < 4; i++) {
        double px = snap_width_px > 0 ? snap(q[i].x, snap_width_px) : q[i].x;
        double py = snap_width_px > 0 ? snap(q[i].y, snap_width_px) : q[i].y;
        if (i == 0)
            cairo_move_to(cr, px, py);
        else
            cairo_line_to(cr, px, py);
    }
    cairo_close_path(cr);
}

static void outline_quad(cairo_t *cr, const lt_point *q, double width_px, rgb color)
{
    quad_path(cr, q, width_px);
    set_color(cr, color, 1);
    cairo_set_line_width(cr, width_px);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_MITER);
    cairo_stroke(cr);
}

/* Strokes of a hatch over the quad: rising diagonals (x + y a multiple of the period) or a
 * grid (x or y a multiple of it), anchored to the picture's origin; only where the quad is
 * visible (inside the current clip), so a huge quad costs no more than the picture. */
static void hatch_quad(cairo_t *cr, const lt_point *q, double period, double stroke_px, int grid)
{
    cairo_save(cr);
    quad_path(cr, q, 0);
    cairo_clip(cr);
    double x0, y0, x1, y1;
    cairo_clip_extents(cr, &x0, &y0, &x1, &y1);
    cairo_new_path(cr);
    if (grid) {
        for (double k = floor(x0 / period); k * period <= x1; k++) {
            cairo_move_to(cr, k * period + 0.5, y0);
            cairo_line_to(cr, k * period + 0.5, y1);
        }
        for (double k = floor(y0 / period); k * period <= y1; k++) {
            cairo_move_to(cr, x0, k * period + 0.5);
            cairo_line_to(cr, x1, k * period + 0.5);
        }
    } else {
        for (double k = floor((x0 + y0) / period); k * period <= x1 + y1; k++) {
            cairo_move_to(cr, k * period - y0, y0);
            cairo_line_to(cr, k * period - y1, y1);
        }
    }
    cairo_set_line_width(cr, stroke_px);
    cairo_stroke(cr);
    cairo_restore(cr);
}

/* A block in the style of its kind (and role, for text) in the quad q (picture pixels). */
static void draw_block(const ctx *x, const lt_point *q, int kind, int role, double width_px)
{
    cairo_t *cr = x->cr;
    double hatch_stroke_px = fmax(1, floor(width_px / 2));
    switch (kind) {
    case LT_DRAW_TEXT:
        quad_path(cr, q, 0);
        set_color(cr, tint_of(role_colors[role]), 1);
        cairo_set_operator(cr, CAIRO_OPERATOR_MULTIPLY);
        cairo_fill(cr);
        cairo_set_operator(cr, CAIRO_OPERATOR_OVER);
        outline_quad(cr, q, width_px, role_colors[role]);
        break;
    case LT_DRAW_RULE:
        quad_path(cr, q, 0);
        set_color(cr, color_kind, RULE_ALPHA);
        cairo_fill(cr);
        outline_quad(cr, q, width_px, color_kind);
        break;
    case LT_DRAW_PICTURE:
    case LT_DRAW_TABLE:
        set_color(cr, color_kind, 1);
        hatch_quad(cr, q, x->hatch_px, hatch_stroke_px, kind == LT_DRAW_TABLE);
        outline_quad(cr, q, width_px, color_kind);
        break;
    default: {
        double dash[2] = {3 * width_px, 2 * width_px};
        cairo_set_dash(cr, dash, 2, 0);
        outline_quad(cr, q, width_px, color_kind);
        cairo_set_dash(cr, NULL, 0, 0);
        break;
    }
    }
}

/* An arrow from `from` to `to`: a shaft and a filled head head_px long and 0.8 head_px wide
 * whose tip is `to` (at most half the arrow's length), over a white casing. */
static void draw_arrow(cairo_t *cr, lt_point from, lt_point to, double width_px, double head_px,
                       rgb color)
{
    double dx = to.x - from.x, dy = to.y - from.y, len = hypot(dx, dy);
    if (!(len > 1e-6)) return;
    double ux = dx / len, uy = dy / len;
    if (head_px > len / 2) head_px = len / 2;
    double hw = 0.4 * head_px;
    lt_point base = {to.x - ux * head_px, to.y - uy * head_px};
    double casing_px = fmax(1, width_px / 2);
    for (int pass = 0; pass < 2; pass++) { /* casing, then the arrow */
        set_color(cr, pass ? color : color_white, pass ? 1 : CASING_ALPHA);
        cairo_new_path(cr);
        cairo_move_to(cr, from.x, from.y);
        cairo_line_to(cr, base.x, base.y);
        cairo_set_line_width(cr, pass ? width_px : width_px + 2 * casing_px);
        cairo_set_line_cap(cr, CAIRO_LINE_CAP_BUTT);
        cairo_stroke(cr);
        cairo_move_to(cr, to.x, to.y);
        cairo_line_to(cr, base.x - uy * hw, base.y + ux * hw);
        cairo_line_to(cr, base.x + uy * hw, base.y - ux * hw);
        cairo_close_path(cr);
        if (pass) {
            cairo_fill(cr);
        } else {
            cairo_set_line_width(cr, 2 * casing_px);
            cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
            cairo_fill_preserve(cr);
            cairo_stroke(cr);
            cairo_set_line_join(cr, CAIRO_LINE_JOIN_MITER);
        }
    }
}

/* Line number `number` beside the start of a line (picture point `start`): left of it when
 * there is room, else just inside the line; on a light backdrop. */
static void draw_label(const ctx *x, lt_point start, int number, rgb color)
{
    cairo_t *cr = x->cr;
    char text[16];
    snprintf(text, sizeof text, "%d", number);
    cairo_set_font_size(cr, x->label_px);
    cairo_text_extents_t e;
    cairo_text_extents(cr, text, &e);
    double gap = 0.3 * x->label_px, pad = 0.15 * x->label_px;
    double left = start.x - gap - e.x_advance;
    if (left - pad < 0) left = start.x + gap;
    double baseline = start.y - (e.y_bearing + e.height / 2);
    cairo_rectangle(cr, left + e.x_bearing - pad, baseline + e.y_bearing - pad, e.width + 2 * pad,
                    e.height + 2 * pad);
    set_color(cr, color_white, LABEL_ALPHA);
    cairo_fill(cr);
    set_color(cr, color, 1);
    cairo_move_to(cr, left, baseline);
    cairo_show_text(cr, text);
}

/* ---- legend ------------------------------------------------------------------------------- */

enum { SWATCH_NONE, SWATCH_ROLE, SWATCH_KIND, SWATCH_LINE, SWATCH_STEP, SWATCH_JUMP };

typedef struct legend_row {
    int swatch;       /* SWATCH_* */
    int value;        /* role or kind */
    char *text;       /* owned */
    double indent_px; /* text start after the left padding (rows without a swatch) */
    int gap;          /* half a row of space before this one */
    int note;         /* a row of the review note, in the jump colour */
} legend_row;

typedef struct legend {
    legend_row rows[LEGEND_MAX_ROWS];
    int n;
    double em, width_px, height_px; /* font size; panel size */
} legend;

static void legend_free(legend *g)
{
    for (int i = 0; i < g->n; i++)
        free(g->rows[i].text);
}

/* Appends a row holding a copy of `text`; 0, or LT_ENOMEM. Rows beyond LEGEND_MAX_ROWS are
 * dropped. */
static int add_row(legend *g, int swatch, int value, const char *text, int gap, int note)
{
    if (g->n >= LEGEND_MAX_ROWS) return 0;
    size_t len = strlen(text);
    char *copy = malloc(len + 1);
    if (!copy) return LT_ENOMEM;
    memcpy(copy, text, len + 1);
    g->rows[g->n++] = (legend_row){swatch, value, copy, 0, gap, note};
    return 0;
}

/* A copy of `s` that cairo can show: bytes that are not part of valid UTF-8 become '?',
 * control characters a space. NULL when out of memory. */
static char *showable_utf8(const char *s)
{
    size_t n = strlen(s);
    char *out = malloc(n + 1);
    if (!out) return NULL;
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0, o = 0;
    while (i < n) {
        unsigned c = p[i];
        size_t len = c < 0x80 ? 1 : (c >> 5) == 6 ? 2 : (c >> 4) == 14 ? 3 : (c >> 3) == 30 ? 4 : 0;
        int ok = len > 0 && i + len <= n;
        for (size_t k = 1; ok && k < len; k++)
            ok = (p[i + k] & 0xc0) == 0x80;
        if (ok && len > 1) { /* overlong forms, surrogates and code points past U+10FFFF */
            unsigned cp = len == 2   ? (c & 0x1f) << 6 | (p[i + 1] & 0x3f)
                          : len == 3 ? (c & 0x0f) << 12 | (p[i + 1] & 0x3f) << 6 | (p[i + 2] & 0x3f)
                                     : (c & 0x07) << 18 | (p[i + 1] & 0x3f) << 12 |
                                           (p[i + 2] & 0x3f) << 6 | (p[i + 3] & 0x3f);
            ok = (len == 2 && cp >= 0x80) ||
                 (len == 3 && cp >= 0x800 && (cp < 0xd800 || cp > 0xdfff)) ||
                 (len == 4 && cp >= 0x10000 && cp <= 0x10ffff);
        }
        if (!ok) {
            out[o++] = '?';
            i++;
        } else if (len == 1) {
            out[o++] = c < 0x20 || c == 0x7f ? ' ' : (char)c;
            i++;
        } else {
            memcpy(out + o, p + i, len);
            o += len;
            i += len;
        }
    }
    out[o] = '\0';
    return out;
}

static double text_width(cairo_t *cr, const char *s, size_t len)
{
    char buf[512];
    if (len >= sizeof buf) len = sizeof buf - 1;
    memcpy(buf, s, len);
    buf[len] = '\0';
    cairo_text_extents_t e;
    cairo_text_extents(cr, buf, &e);
    return e.x_advance;
}

/* Length of the longest prefix of s[0..len) that ends on a character boundary and is at most
 * max_px wide; at least one character. */
static size_t fitting_prefix(cairo_t *cr, const char *s, size_t len, double max_px)
{
    size_t best = 0;
    for (size_t k = 1; k <= len; k++) {
        if (k < len && ((unsigned char)s[k] & 0xc0) == 0x80) continue; /* inside a character */
        if (best > 0 && text_width(cr, s, k) > max_px) break;
        best = k;
    }
    return best;
}

/* Appends the words of the (showable) text `s` as rows of the review note, each at most
 * max_px wide, words too long for a row cut; the first row starts with `bullet`, the others
 * are indented by its width. Stops when the legend has max_rows rows; *complete tells whether
 * the whole text found room. 0, or LT_ENOMEM. */
static int add_wrapped(legend *g, cairo_t *cr, const char *bullet, const char *s, double max_px,
                       int max_rows, int *complete)
{
    const double indent = text_width(cr, bullet, strlen(bullet));
    const size_t blen = strlen(bullet);
    size_t pos = 0, len = strlen(s);
    int first = 1;
    *complete = 0;
    for (;;) {
        while (pos < len && s[pos] == ' ')
            pos++;
        if (pos >= len) break;
        if (g->n >= max_rows) return 0;
        while (pos < len && s[pos] == ' ')
            pos++;
        /* Take words while the row fits. */
        size_t end = pos, best = 0;
        while (end < len) {
            size_t next = end;
            while (next < len && s[next] == ' ')
                next++;
            while (next < len && s[next] != ' ')
                next++;
            if (text_width(cr, s + pos, next - pos) > max_px - indent) break;
            best = end = next;
        }
        if (best == 0) best = pos + fitting_prefix(cr, s + pos, len - pos, max_px - indent);
        size_t n = best - pos;
        char *row = malloc(blen + n + 1);
        if (!row) return LT_ENOMEM;
        size_t k = 0;
        if (first) {
            memcpy(row, bullet, blen);
            k = blen;
        }
        memcpy(row + k, s + pos, n);
        row[k + n] = '\0';
        g->rows[g->n++] = (legend_row){SWATCH_NONE, 0, row, first ? 0 : indent, 0, 1};
        pos = best;
        first = 0;
    }
    *complete = 1;
    return 0;
}

/* Lays the legend out for letters of size em (cr has the font): one row per role, per
 * non-text kind, the line outline and (with the order) the two arrow styles; then, when the
 * layout asks for it, the review note and its reasons, as many as LEGEND_MAX_ROWS allow, and a
 * last row saying that there are more when some are left out. Sets the panel's size. */
static int legend_build(legend *g, cairo_t *cr, double em, const lt_draw_layout *lay,
                        int show_order)
{
    static const char *const kind_labels[] = {"text", "rule", "picture", "table"};
    memset(g, 0, sizeof *g);
    g->em = em;
    cairo_set_font_size(cr, em);
    int rc = 0;
    for (int r = LT_ROLE_BODY; r < LT_ROLE_COUNT && !rc; r++)
        rc = add_row(g, SWATCH_ROLE, r, lt_role_name(r), 0, 0);
    for (int k = LT_DRAW_RULE; k <= LT_DRAW_TABLE && !rc; k++)
        rc = add_row(g, SWATCH_KIND, k, kind_labels[k], k == LT_DRAW_RULE, 0);
    if (!rc) rc = add_row(g, SWATCH_LINE, 0, "text line", 1, 0);
    if (!rc && show_order) rc = add_row(g, SWATCH_STEP, 0, "next line", 0, 0);
    if (!rc && show_order) rc = add_row(g, SWATCH_JUMP, 0, "order jump", 0, 0);
    double label_w = 0;
    for (int i = 0; i < g->n; i++)
        label_w = fmax(label_w, text_width(cr, g->rows[i].text, strlen(g->rows[i].text)));
    /* Padding 1 em, swatch 2.4 em, gap 0.6 em, the longest label, padding; at least 13 em. */
    g->width_px = ceil(fmax(em * 4 + label_w + em, 13 * em));
    if (!rc && lay->review_needed) {
        rc = add_row(g, SWATCH_NONE, 0, "review the order:", 1, 1);
        int complete = 1;
        for (int i = 0; i < lay->nreasons && complete && !rc; i++) {
            char *text = showable_utf8(lay->reasons[i]);
            rc = text ? add_wrapped(g, cr, "\xe2\x80\x93 ", text, g->width_px - 2 * em,
                                    LEGEND_MAX_ROWS - 1, &complete) /* "– ", an en dash */
                      : LT_ENOMEM;
            free(text);
        }
        if (!rc && !complete) rc = add_row(g, SWATCH_NONE, 0, "(more in the layout)", 0, 1);
    }
    int gaps = 0;
    for (int i = 0; i < g->n; i++)
        gaps += g->rows[i].gap;
    g->height_px = ceil(em * (2 + 1.5 * g->n + 0.75 * gaps));
    return rc;
}

/* Draws the legend panel with its top-left corner at (x0, 0), as tall as `height`. */
static void legend_draw(const legend *g, const ctx *x, double x0, double height)
{
    cairo_t *cr = x->cr;
    const double em = g->em, thin = fmax(1, round(em / 10));
    set_color(cr, color_rim, 1);
    cairo_rectangle(cr, x0, 0, 1, height);
    cairo_fill(cr);
    cairo_set_font_size(cr, em);
    double y = em; /* top of the current row */
    for (int i = 0; i < g->n; i++) {
        const legend_row *r = &g->rows[i];
        y += r->gap * 0.75 * em;
        const double sx0 = x0 + em, sx1 = sx0 + 2.4 * em;
        const double sy0 = y + 0.3 * em, sy1 = y + 1.2 * em;
        lt_point q[4] = {{sx0, sy0}, {sx1, sy0}, {sx1, sy1}, {sx0, sy1}};
        lt_point a = {sx0, (sy0 + sy1) / 2}, b = {sx1, (sy0 + sy1) / 2};
        switch (r->swatch) {
        case SWATCH_ROLE:
        case SWATCH_KIND:
            cairo_rectangle(cr, sx0, sy0, sx1 - sx0, sy1 - sy0); /* white paper under it */
            set_color(cr, color_white, 1);
            cairo_fill(cr);
            draw_block(x, q, r->swatch == SWATCH_ROLE ? LT_DRAW_TEXT : r->value, r->value, thin);
            break;
        case SWATCH_LINE:
            cairo_rectangle(cr, sx0, sy0, sx1 - sx0, sy1 - sy0);
            set_color(cr, color_white, 1);
            cairo_fill(cr);
            outline_quad(cr, q, thin, color_line);
            break;
        case SWATCH_STEP: draw_arrow(cr, a, b, thin, 0.8 * em, color_step); break;
        case SWATCH_JUMP: draw_arrow(cr, a, b, 2 * thin, 0.8 * em, color_jump); break;
        default: break;
        }
        double tx = r->swatch ? x0 + 4 * em : x0 + em + r->indent_px;
        set_color(cr, r->note ? color_jump : color_text, 1);
        cairo_move_to(cr, tx, y + 1.1 * em);
        cairo_show_text(cr, r->text);
        y += 1.5 * em;
    }
}

/* ---- the picture -------------------------------------------------------------------------- */

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Median height of the lines in picture pixels (0 without lines); -1 when out of memory. */
static double median_line_height(const ctx *x, const lt_draw_layout *lay)
{
    if (lay->nlines == 0) return 0;
    double *hs = malloc((size_t)lay->nlines * sizeof *hs);
    if (!hs) return -1;
    for (int i = 0; i < lay->nlines; i++) {
        const lt_point *q = lay->lines[i].quad;
        hs[i] = (hypot((q[3].x - q[0].x) * x->kx, (q[3].y - q[0].y) * x->ky) +
                 hypot((q[2].x - q[1].x) * x->kx, (q[2].y - q[1].y) * x->ky)) /
                2;
    }
    qsort(hs, (size_t)lay->nlines, sizeof *hs, cmp_double);
    double m = hs[lay->nlines / 2];
    free(hs);
    return m;
}

/* The layout over the page area (clipped to it): blocks, line outlines, the reading order. */
static void draw_layout(const ctx *x, const lt_draw_layout *lay, int show_order)
{
    cairo_t *cr = x->cr;
    lt_point q[4];
    for (int pass = 0; pass < 2; pass++) /* text blocks first, other kinds over them */
        for (int i = 0; i < lay->nblocks; i++) {
            const lt_draw_block *b = &lay->blocks[i];
            if ((b->kind == LT_DRAW_TEXT) != (pass == 0)) continue;
            int role = b->role >= LT_ROLE_BODY && b->role < LT_ROLE_COUNT ? b->role : LT_ROLE_BODY;
            map_quad(x, b->quad, q);
            draw_block(x, q, b->kind, role, x->width_px);
        }
    for (int i = 0; i < lay->nlines; i++) { /* outside the quad: the ink stays clear */
        map_quad(x, lay->lines[i].quad, q);
        grow_quad(q, x->line_px / 2);
        outline_quad(cr, q, x->line_px, color_line);
    }
    if (!show_order) return;
    for (int i = 0; i + 1 < lay->nlines; i++) {
        const lt_draw_line *a = &lay->lines[i], *b = &lay->lines[i + 1];
        int jump = lt_draw_step_is_jump(a, b, lay->height);
        lt_point from = mid(a->quad[1], a->quad[2]), to = mid(b->quad[0], b->quad[3]);
        from.x *= x->kx;
        from.y *= x->ky;
        to.x *= x->kx;
        to.y *= x->ky;
        /* Jumps twice as wide: told apart from steps by more than their colour. */
        draw_arrow(cr, from, to, jump ? 2 * x->width_px : x->width_px, x->head_px,
                   jump ? color_jump : color_step);
    }
    for (int i = 0; i < lay->nlines; i++) {
        const lt_draw_line *b = &lay->lines[i];
        int jump = i > 0 && lt_draw_step_is_jump(&lay->lines[i - 1], b, lay->height);
        lt_point start = mid(b->quad[0], b->quad[3]);
        start.x *= x->kx;
        start.y *= x->ky;
        draw_label(x, start, i + 1, jump ? color_jump : color_step);
    }
}

/* The surface's pixels as a picture of RGB bytes; NULL when out of memory. */
static lt_picture *picture_from(cairo_surface_t *s, int page_w, int page_h)
{
    const int w = cairo_image_surface_get_width(s), h = cairo_image_surface_get_height(s);
    lt_picture *p = calloc(1, sizeof *p);
    if (!p || !(p->rgb = malloc((size_t)w * (size_t)h * 3))) {
        free(p);
        return NULL;
    }
    p->width = w;
    p->height = h;
    p->page_width = page_w;
    p->page_height = page_h;
    cairo_surface_flush(s);
    const uint8_t *data = cairo_image_surface_get_data(s);
    const size_t stride = (size_t)cairo_image_surface_get_stride(s);
    uint8_t *o = p->rgb;
    for (int y = 0; y < h; y++) {
        const uint32_t *row = (const uint32_t *)(const void *)(data + (size_t)y * stride);
        for (int xx = 0; xx < w; xx++, o += 3) {
            o[0] = (uint8_t)(row[xx] >> 16);
            o[1] = (uint8_t)(row[xx] >> 8);
            o[2] = (uint8_t)row[xx];
        }
    }
    return p;
}

void lt_picture_free(lt_picture *p)
{
    if (!p) return;
    free(p->rgb);
    free(p);
}

/* A cairo context on a new surface, with the font and its rendering options; the surface is
 * referenced by the context only. NULL when out of memory. */
static cairo_t *new_context(int width, int height, const lt_draw_font *font)
{
    cairo_surface_t *s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, width, height);
    cairo_t *cr = cairo_create(s);
    cairo_surface_destroy(s);
    if (cairo_status(cr)) {
        cairo_destroy(cr);
        return NULL;
    }
    cairo_set_font_face(cr, font->face);
    /* Gray antialiasing, light hinting, unhinted advances: the same letters at every scale
     * and on every screen. */
    cairo_font_options_t *fo = cairo_font_options_create();
    cairo_font_options_set_antialias(fo, CAIRO_ANTIALIAS_GRAY);
    cairo_font_options_set_hint_style(fo, CAIRO_HINT_STYLE_SLIGHT);
    cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);
    cairo_set_font_options(cr, fo);
    cairo_font_options_destroy(fo);
    return cr;
}

int lt_draw_page(const lt_image *page, const lt_draw_layout *lay, const lt_draw_options *opt,
                 const lt_draw_font *font, lt_picture **out, lt_error *err)
{
    if (out) *out = NULL;
    if (!page || !page->pixels || !lay || !opt || !font || !out)
        return lt_error_set(err, LT_EINVAL, "draw: missing argument");
    if (page->width != lay->width || page->height != lay->height)
        return lt_error_set(err, LT_EINVAL, "layout is %dx%d pixels, the page %dx%d", lay->width,
                            lay->height, page->width, page->height);
    if (!(opt->scale > 0 && opt->scale <= 1))
        return lt_error_set(err, LT_EINVAL, "scale %g is not in (0, 1]", opt->scale);
    long w = lround(page->width * opt->scale), h = lround(page->height * opt->scale);
    if (w < 1) w = 1;
    if (h < 1) h = 1;
    ctx x = {NULL, (double)w / page->width, (double)h / page->height, 1, 1, 1, 1, 1, 1};
    /* Sizes follow the page area's width: 2 px strokes at 1275 px (an A4 page at 150 dpi),
     * line outlines half as wide. */
    x.width_px = fmax(1, round(w / 800.0));
    x.line_px = fmax(1, round(w / 1600.0));
    x.hatch_px = 8 * x.width_px;
    x.font_px = fmax(LEGEND_MIN_FONT_PX, round((w < h ? w : h) / 72.0));
    double med_h = median_line_height(&x, lay);
    if (med_h < 0) return lt_error_set(err, LT_ENOMEM, "out of memory");
    x.label_px = fmin(fmax(LABEL_MIN_FONT_PX, round(0.55 * med_h)), x.font_px);
    x.head_px = fmax(4 * x.width_px, 0.6 * med_h);

    /* The legend is laid out first (on a scratch surface), for the picture's size. */
    legend g = {.n = 0};
    cairo_t *cr = new_context(1, 1, font);
    int rc = cr ? legend_build(&g, cr, x.font_px, lay, opt->show_order) : LT_ENOMEM;
    if (cr) cairo_destroy(cr);
    cr = NULL;
    if (rc) {
        legend_free(&g);
        return lt_error_set(err, LT_ENOMEM, "out of memory");
    }
    const double pw = w + g.width_px, ph = fmax(h, g.height_px);
    if (pw > MAX_PICTURE_SIDE_PX || ph > MAX_PICTURE_SIDE_PX) {
        legend_free(&g);
        return lt_error_set(err, LT_ELIMIT,
                            "a picture of %.0fx%.0f pixels, more than %d on a side (try a "
                            "smaller --scale)",
                            pw, ph, MAX_PICTURE_SIDE_PX);
    }
    cr = new_context((int)pw, (int)ph, font);
    if (!cr) {
        legend_free(&g);
        return lt_error_set(err, LT_ENOMEM, "out of memory for a %.0fx%.0f picture", pw, ph);
    }
    x.cr = cr;
    cairo_surface_t *s = cairo_get_target(cr);
    set_color(cr, color_panel, 1);
    cairo_paint(cr);
    rc = paint_page(s, (int)w, (int)h, page);
    if (!rc) {
        cairo_save(cr);
        cairo_rectangle(cr, 0, 0, (double)w, (double)h);
        cairo_clip(cr);
        draw_layout(&x, lay, opt->show_order);
        cairo_restore(cr);
        legend_draw(&g, &x, (double)w, ph);
    }
    legend_free(&g);
    cairo_status_t st = cairo_status(cr);
    lt_picture *p = rc || st ? NULL : picture_from(s, (int)w, (int)h);
    cairo_destroy(cr);
    if (st && st != CAIRO_STATUS_NO_MEMORY)
        return lt_error_set(err, LT_EINVAL, "drawing failed: %s", cairo_status_to_string(st));
    if (!p) return lt_error_set(err, LT_ENOMEM, "out of memory");
    *out = p;
    return 0;
}

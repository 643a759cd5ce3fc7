/* binarize.c — Sauvola & Pietikäinen (2000) adaptive thresholding, in the normalised form of
 * Wolf & Jolion (2004) where the page is pale:
 *   T(x,y) = M + (m - M) * (1 - k * (1 - s / R')),   R' = R * (W - M) / 255,
 * m and s the mean and standard deviation over a window x window neighbourhood (clipped at
 * the image border): Sauvola's threshold on the page's gray range [M, W] stretched to
 * [0, 255] and mapped back. It follows every increasing linear map of the gray levels that M
 * and W follow, so a faded or lightened copy of a page gives the page's own ink. M = 0 and
 * W = 255 give Sauvola's T = m * (1 + k * (s / R - 1)), whose threshold over flat paper,
 * (1 - k) m, lies below faded print (ink 170 on paper 235: 155). Wolf & Jolion take M = the
 * image minimum and R = the largest s on the page (k = 0.5; values from memory). Here W is the
 * page's paper gray and M the level of its ink (ink_black: the darkest solid 3 x 3 tile, not the
 * darkest tile, which a resampled copy's ringing or thin type moves either way); a page whose
 * darkest tile is dark against its paper, as print scanned on any paper is, keeps Sauvola's
 * threshold, a pale one gets the stretch, and the pages in between part of it; by the same
 * share, where the lightest tile within a window's reach is darker than W (a tint, a shaded
 * box), its mean takes W's place.
 * Exact at every pixel (lt_binarize*): running column and row sums give O(pixels) time for any
 * window, the same complexity as the integral images of Shafait, Keysers & Breuel (2008) with
 * memory proportional to the width only. Sampled (lt_binarize_sampled*, which the analysis
 * uses): T exact at the centre of every 3 x 3 tile, from tile sums, and interpolated in between.
 * The analysis (lt_binarize_page) also reads light print on a dark ground: in dark regions that
 * look like print (keep_framed_dark) the ink is where Sauvola's threshold on the negative puts
 * it. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Constants of the stage. */
enum {
    /* Side of the tiles, px: binarize_sampled computes the threshold at the centre of each (odd,
     * so that a tile has a centre pixel), and the page's black point is its darkest tile's mean:
     * a patch narrower than a stroke of 10 pt text at 200 dpi, so that the core of a stroke
     * makes it and one dark pixel of noise does not. */
    TILE = 3,
    /* Values a whole tile's sum of gray levels takes: the bins of the histogram the page's
     * gray points are read from. */
    TILE_SUMS = TILE * TILE * 255 + 1,
    /* Least gray range, levels, that a page is stretched from: type of gray 190 on white (65
     * levels) still reads well; a narrower range is a nearly blank page, whose paper texture
     * a full stretch would turn into marks. */
    MIN_RANGE = 64,
    /* Mean gray, levels, below which a window is read as light marks on a dark ground (a band,
     * a box, a whole page printed in negative): well below the middle of the gray scale, so the
     * window is mostly dark ground (white text covering a quarter of it on ground up to 50);
     * windows of dense heavy type on toned paper (black letter, about 110 to 135) stay above. */
    DARK_MEAN = 100,
    /* Pixels that ink_row decides at once where they are all paper. */
    INK_BLOCK = 32,
    /* Copies of the histogram of tile sums, counted in turn (sum_tiles). */
    HIST_COPIES = 4,
    /* Marks a tile that is not dark in the table of inverted thresholds. */
    NOT_DARK = 0xFFFF,
    /* Least width of a dark region, in windows (about half an inch): room for a word or two of
     * light text. Smaller dark patches are marks themselves (black boxes, decorated initials,
     * blots), whose light holes are no text. */
    DARK_MIN_WIDTH_WINDOWS = 3,
    /* Deviation, gray levels, below which a window is flat ground without marks. */
    FLAT_DEVIATION = 8,
    /* Least mean deviation, gray levels, of a dark region's windows with marks: light print
     * stands out from its ground (white text covering a tenth to a fifth of a window on black:
     * 75 to 100; measured 68 to 71 on negatives of corpus pages), painted shades in a picture
     * do not (15 to 16 in the miniatures of the real scans). */
    DARK_MIN_DEVIATION = 40,
    /* Longest run of light tiles along a row or a column that a dark ground closes around
     * (extend_dark_ground), in windows' reaches divided by this: half a reach (12 px at 300
     * dpi), the strokes of light text up to bold type of about 20 pt; a picture's light bars a
     * third of a window thick (26 px) are not strokes. */
    GROUND_GAP_REACH_DIVISOR = 2,
    /* Farthest a dark ground is followed from the tiles whose window is dark, in 4-connected
     * steps of tiles, in windows' reaches: a window's mean stays light within about a reach
     * of a ground's edge, and the ground between letters winds around them. */
    GROUND_STEPS_REACHES = 2,
    /* Farthest a followed ground is kept from a light stroke on it, in 4-connected steps of
     * tiles, in windows' reaches: the ground between the letters of a word and the band's
     * edge above them; elsewhere the edge stays as its windows read it (a picture's outline). */
    STROKE_GROUND_REACHES = 1,
};
/* Share of the page's whole tiles whose mean lies at most at its white point: the paper's
 * gray, with room for a tenth of the tiles on lighter specks, margins or tinted parts' edges;
 * ink and pictures cover far less than nine tenths of a page. */
static const double WHITE_SHARE = 0.9;
/* The page's black point over its white point, below which the gray range is not stretched:
 * print scanned on any paper (0.06 to 0.27 on the real scans of the development sets), where
 * Sauvola's threshold over paper, (1 - k) = 0.66 of the paper's gray, lies far above the ink. */
static const double PLAIN_RATIO = 0.3;
/* The ratio from which the range is stretched fully: ink lighter than about half the paper's
 * gray, which Sauvola's threshold reaches only in the densest windows (copies of a page mapped
 * onto [150, 255] or [170, 235]: 0.59 to 0.72); in between, the stretch grows linearly. */
static const double STRETCHED_RATIO = 0.55;
/* Deviation of the nine pixels of a tile, as a share of the page's range from its darkest tile
 * to its paper, up to which the tile is solid: the inside of a stroke, a rule or a bold letter
 * (a tile across a stroke's edge deviates by a third of the range and more). On the copies of
 * the development pages resampled from 300 to 200 dpi, the darkest solid tile lay within 5
 * levels of 255 (1.2 levels of 65) above the ink's own black; the darkest tile, 19 levels below
 * it to 32 above. */
static const double SOLID_DEVIATION = 0.02;
/* How far above the darkest tile, as a share of the same range, a solid tile may lie and still
 * be the ink's black: resampling with a sharpening kernel (Lanczos) rings below black beside
 * the edges of strokes by up to about an eighth of the step, where the darkest tile then lies.
 * A solid tile farther up is gray print or a shaded box (38 % of the range above on a page of
 * code on gray), or on a scan a patch of faint ink (29 % on the faint real scan). */
static const double RINGING_SHARE = 0.125;
/* On a page without a solid tile of ink (type too thin to hold one at the page's resolution),
 * the share of the ink's pixels (those darker than halfway from the darkest tile to the paper)
 * whose level the black point is where that is darker than the darkest tile: stroke cores, the
 * darkest quarter of a stroke's pixels; on the resampled copies of such pages, 6 levels of 255
 * below the ink's black on average, where the darkest tile lay 14 to 32 above it. */
static const double INK_CORE_SHARE = 0.25;

/* The gray range [black, black + span] stretched to [0, 255]: Sauvola's threshold on the
 * stretched gray, mapped back, is T = black + (m - black) (1 - k + k s / R'), R' = R span / 255
 * (m and s of the gray as it is); span at least MIN_RANGE. */
typedef struct stretch {
    double black, span, r;
    /* Share t by which a window's own paper, where darker than the page's, takes the place of
     * the page's (window_r); white_sums: per whole tile, the largest whole-tile sum within the
     * window's reach of tiles (NULL when t is 0), tiles_x x tiles_y of them. */
    double local;
    const uint16_t *white_sums;
    int tiles_x, tiles_y;
} stretch;

static stretch stretch_for(double black, double white, double r)
{
    return (stretch){black, white - black, r, 0, NULL, 0, 0};
}

/* R' for the page's range: R (W - M) / 255, the range at least MIN_RANGE. */
static inline double page_r(const stretch *st)
{
    return st->r * (st->span > MIN_RANGE ? st->span : MIN_RANGE) / 255.0;
}

/* R' where the lightest whole tile within the window's reach sums to paper_sum: R (W - M) / 255,
 * or where that tile is darker than the page's paper (a tint, a shaded box), by the share
 * `local` its mean in place of W, so that the threshold sits among the ink and the paper of the
 * tint as it would on white paper; the range at least MIN_RANGE. */
static inline double paper_r(const stretch *st, unsigned paper_sum)
{
    double span = st->span;
    const double own = paper_sum / (double)(TILE * TILE) - st->black;
    if (own < span) span -= st->local * (span - own);
    return st->r * (span > MIN_RANGE ? span : MIN_RANGE) / 255.0;
}

/* R' at the tile (tx, ty) (clamped to the whole tiles): paper_r of the lightest tile within the
 * window's reach, or page_r without window paper. */
static inline double window_r(const stretch *st, int tx, int ty)
{
    if (!st->white_sums) return page_r(st);
    tx = tx < st->tiles_x ? tx : st->tiles_x - 1;
    ty = ty < st->tiles_y ? ty : st->tiles_y - 1;
    return paper_r(st, st->white_sums[(size_t)ty * st->tiles_x + tx]);
}

/* The largest of each n x rows grid entry's column neighbours within `reach` rows (rows
 * clipped to the grid), into out, in O(n rows) (van Herk 1992; Gil & Werman 1993): the maxima
 * of blocks of 2 reach + 1 rows from the block's first row (ahead) and from its last (behind).
 * Row by row, so that each pass reads the grid in order; behind may be out. */
static void sliding_max_rows(const uint16_t *in, uint16_t *out, int n, int rows, int reach,
                             uint16_t *ahead, uint16_t *behind)
{
    const int block = 2 * reach + 1;
    for (int y = 0; y < rows; y++) {
        const uint16_t *src = in + (size_t)y * n, *prev = ahead + (size_t)(y - 1) * n;
        uint16_t *dst = ahead + (size_t)y * n;
        for (int i = 0; i < n; i++)
            dst[i] = y % block == 0 || src[i] > prev[i] ? src[i] : prev[i];
    }
    for (int y = rows - 1; y >= 0; y--) {
        const uint16_t *src = in + (size_t)y * n, *next = behind + (size_t)(y + 1) * n;
        uint16_t *dst = behind + (size_t)y * n;
        for (int i = 0; i < n; i++)
            dst[i] = y % block == block - 1 || y == rows - 1 || src[i] > next[i] ? src[i] : next[i];
    }
    for (int y = 0; y < rows; y++) {
        const int lo = y - reach > 0 ? y - reach : 0, hi = y + reach < rows ? y + reach : rows - 1;
        const uint16_t *a = behind + (size_t)lo * n, *b = ahead + (size_t)hi * n;
        uint16_t *dst = out + (size_t)y * n;
        for (int i = 0; i < n; i++)
            dst[i] = a[i] > b[i] ? a[i] : b[i];
    }
}

/* The largest of in[0..n) within `reach` of each, into out, in O(n), the same way along a row. */
static void sliding_max(const uint16_t *in, uint16_t *out, int n, int reach, uint16_t *ahead,
                        uint16_t *behind)
{
    const int block = 2 * reach + 1;
    for (int i = 0; i < n; i++)
        ahead[i] = i % block == 0 || in[i] > ahead[i - 1] ? in[i] : ahead[i - 1];
    for (int i = n - 1; i >= 0; i--)
        behind[i] =
            i % block == block - 1 || i == n - 1 || in[i] > behind[i + 1] ? in[i] : behind[i + 1];
    for (int i = 0; i < n; i++) {
        const int lo = i - reach > 0 ? i - reach : 0, hi = i + reach < n ? i + reach : n - 1;
        out[i] = behind[lo] > ahead[hi] ? behind[lo] : ahead[hi];
    }
}

/* The largest tile sum within `reach` tiles of each tile of the tw x th grid `sums` (reach
 * clipped to the grid), as a new grid; NULL when out of memory. */
static uint16_t *lightest_tiles(const uint16_t *sums, int tw, int th, int reach)
{
    const size_t n = (size_t)tw * th;
    uint16_t *out = malloc(n * sizeof *out), *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b);
    if (!out || !a || !b) {
        free(out), free(a), free(b);
        return NULL;
    }
    sliding_max_rows(sums, out, tw, th, reach, a, b); /* down the columns */
    for (int y = 0; y < th; y++)                      /* along the rows */
        sliding_max(out + (size_t)y * tw, out + (size_t)y * tw, tw, reach, a, b);
    free(a), free(b);
    return out;
}

/* Ink decision without a square root: g <= M + d(1-k) + (d k / R') s, with d = m - M (0 when
 * the window is darker than the black point, which an exact window can be by a fraction of a
 * level), holds when the left part a = g - M - d(1-k) is negative, or else when
 * a^2 < (d k / R')^2 * variance. Written without branches: for paper just above or below the
 * mean the answer is a coin toss, which a branch predictor cannot learn. */
static inline uint8_t is_ink(double g, double sum, double sumsq, double inv_n, double k,
                             const stretch *st, int tx, int ty)
{
    const double m = sum * inv_n, d = m > st->black ? m - st->black : 0;
    const double a = g - st->black - d * (1.0 - k);
    const double var = sumsq * inv_n - m * m;
    const double b = d * k / window_r(st, tx, ty);
    return (uint8_t)((a <= 0) | (a * a < b * b * var));
}

/* From a histogram of whole-tile sums (TILE_SUMS bins, `tiles` counted): the page's darkest
 * tile's mean, its white point W (the mean that WHITE_SHARE of the tiles are at most) and the
 * share t of the full stretch by the ratio of the two (0 up to PLAIN_RATIO, 1 from
 * STRETCHED_RATIO, linear between). */
static void points_from_histogram(const uint32_t *hist, size_t tiles, double *darkest,
                                  double *white, double *share)
{
    int dark_sum = 0;
    while (dark_sum < TILE_SUMS - 1 && hist[dark_sum] == 0)
        dark_sum++;
    const double want = WHITE_SHARE * (double)tiles;
    size_t below = 0;
    int lightest = 0;
    for (; lightest < TILE_SUMS - 1; lightest++)
        if ((double)(below += hist[lightest]) >= want) break;
    *darkest = (double)dark_sum / (TILE * TILE);
    *white = (double)lightest / (TILE * TILE);
    const double ratio = *white > 0 ? *darkest / *white : 0;
    *share = ratio <= PLAIN_RATIO        ? 0
             : ratio >= STRETCHED_RATIO ? 1
                                         : (ratio - PLAIN_RATIO) / (STRETCHED_RATIO - PLAIN_RATIO);
}

/* The least of INK_BLOCK gray levels. */
static inline int block_min(const uint8_t *restrict src)
{
    uint8_t least = 255;
    for (int i = 0; i < INK_BLOCK; i++)
        least = src[i] < least ? src[i] : least;
    return least;
}

/* Counts the n gray levels of src darker than `middle` into levels; returns how many. */
static size_t count_dark(const uint8_t *src, int n, int middle, size_t *levels)
{
    size_t dark = 0;
    for (int i = 0; i < n; i++)
        if (src[i] < middle) levels[src[i]]++, dark++;
    return dark;
}

/* The black point of a page whose range is stretched, from its darkest whole tile's mean
 * `darkest` and its white point `white`: the mean of the darkest solid tile (SOLID_DEVIATION) at
 * most RINGING_SHARE of the range above the darkest tile, the ink's own level where strokes are
 * wide enough to hold one (the darkest tile may lie where a resampled copy rings below it);
 * else the level INK_CORE_SHARE of the ink's pixels reach where that is darker than the darkest
 * tile (thin type never fills a tile with its black). Whole tiles only: their sums of gray
 * levels and of squares from tile_sum and tile_sq (a row of tiles every `stride` entries), or
 * from the pixels where those are NULL. */
static double ink_black(const lt_image *gray, const uint16_t *tile_sum, const uint32_t *tile_sq,
                        int stride, double darkest, double white)
{
    const int w = gray->width, tiles_x = gray->width / TILE, tiles_y = gray->height / TILE;
    const double range = white - darkest;
    /* In integers: a tile of sum S and sum of squares Q deviates by sqrt(9 Q - S^2) / 9. */
    const double most_deviation = TILE * TILE * SOLID_DEVIATION * range;
    const int64_t most_spread = (int64_t)floor(most_deviation * most_deviation);
    const int most_sum = (int)floor(TILE * TILE * (darkest + RINGING_SHARE * range));
    int solid = INT32_MAX; /* the least sum of a solid tile */
    _Static_assert(TILE == 3, "the sums below add 3 x 3 pixels");
    for (int ty = 0; ty < tiles_y; ty++) {
        const uint8_t *r0 = gray->pixels + (size_t)ty * TILE * w, *r1 = r0 + w, *r2 = r1 + w;
        for (int tx = 0, x = 0; tx < tiles_x; tx++, x += TILE) {
            int sum;
            int64_t sq;
            if (tile_sum) {
                sum = tile_sum[(size_t)ty * stride + tx];
                if (sum > most_sum || sum >= solid) continue;
                sq = tile_sq[(size_t)ty * stride + tx];
            } else {
                sum = r0[x] + r0[x + 1] + r0[x + 2] + r1[x] + r1[x + 1] + r1[x + 2] + r2[x] +
                      r2[x + 1] + r2[x + 2];
                if (sum > most_sum || sum >= solid) continue;
                sq = 0;
                for (int i = 0; i < TILE; i++)
                    sq += r0[x + i] * r0[x + i] + r1[x + i] * r1[x + i] + r2[x + i] * r2[x + i];
            }
            if (TILE * TILE * sq - (int64_t)sum * sum <= most_spread) solid = sum;
        }
    }
    if (solid != INT32_MAX) return (double)solid / (TILE * TILE);
    const int middle = (int)ceil(darkest + range / 2); /* ink: darker than this */
    size_t levels[256] = {0}, ink = 0, reached = 0;
    const int tiled_width = tiles_x * TILE; /* the pixels of whole tiles */
    for (int y = 0; y < tiles_y * TILE; y++) {
        const uint8_t *row = gray->pixels + (size_t)y * w;
        int x = 0;
        for (; x + INK_BLOCK <= tiled_width; x += INK_BLOCK) /* blocks of paper passed at once */
            if (block_min(row + x) < middle) ink += count_dark(row + x, INK_BLOCK, middle, levels);
        ink += count_dark(row + x, tiled_width - x, middle, levels);
    }
    if (!ink) return darkest;
    int core = 0;
    for (; core < middle; core++)
        if ((double)(reached += levels[core]) >= INK_CORE_SHARE * (double)ink) break;
    return core < darkest ? core : darkest;
}

/* The gray points: (0, 255), plain Sauvola, for print on paper (share 0); else t B and
 * 255 - t (255 - W) for the black point B (ink_black, with the tile sums as there) and the
 * white point W, (B, W) for a pale page. */
static void stretch_points(const lt_image *gray, const uint16_t *tile_sum, const uint32_t *tile_sq,
                           int stride, double darkest, double white, double share,
                           double *black_point, double *white_point)
{
    *black_point =
        share > 0 ? share * ink_black(gray, tile_sum, tile_sq, stride, darkest, white) : 0;
    *white_point = 255.0 - share * (255.0 - white);
}

/* lt_gray_points, and the share of the stretch in *share. */
static int page_points(const lt_image *gray, double *black, double *white, double *share)
{
    *black = 0, *white = 255, *share = 0;
    if (!gray || gray->kind != LT_IMAGE_GRAY) return 0;
    const int w = gray->width, tiles_x = gray->width / TILE, tiles_y = gray->height / TILE;
    if (tiles_x < 1 || tiles_y < 1) return 0;
    uint32_t *hist = calloc(TILE_SUMS, sizeof *hist);
    if (!hist) return LT_ENOMEM;
    _Static_assert(TILE == 3, "the sum below adds 3 x 3 pixels");
    for (int ty = 0; ty < tiles_y; ty++) {
        const uint8_t *r0 = gray->pixels + (size_t)ty * TILE * w, *r1 = r0 + w, *r2 = r1 + w;
        for (int x = 0; x < tiles_x * TILE; x += TILE)
            hist[r0[x] + r0[x + 1] + r0[x + 2] + r1[x] + r1[x + 1] + r1[x + 2] + r2[x] + r2[x + 1] +
                 r2[x + 2]]++;
    }
    double darkest, paper;
    points_from_histogram(hist, (size_t)tiles_x * tiles_y, &darkest, &paper, share);
    free(hist);
    stretch_points(gray, NULL, NULL, 0, darkest, paper, *share, black, white);
    return 0;
}

int lt_gray_points(const lt_image *gray, double *black, double *white)
{
    double share;
    return page_points(gray, black, white, &share);
}

/* Sets st's window paper (lightest_tiles) from the tile sums `sums` (tw x th) when the share of
 * the stretch is above 0; returns LT_ENOMEM or 0. */
static int add_window_paper(stretch *st, const uint16_t *sums, int tw, int th, int window_px,
                            double share)
{
    if (share <= 0 || tw < 1 || th < 1) return 0;
    st->local = share;
    st->tiles_x = tw, st->tiles_y = th;
    st->white_sums = lightest_tiles(sums, tw, th, window_px / TILE / 2);
    return st->white_sums ? 0 : LT_ENOMEM;
}

/* The sums of the whole tiles of the page, (width / TILE) x (height / TILE); NULL when out of
 * memory or when there is none. */
static uint16_t *whole_tile_sums(const lt_image *gray)
{
    const int w = gray->width, tw = gray->width / TILE, th = gray->height / TILE;
    uint16_t *sums = tw > 0 && th > 0 ? malloc((size_t)tw * th * sizeof *sums) : NULL;
    if (!sums) return NULL;
    for (int ty = 0; ty < th; ty++) {
        const uint8_t *r0 = gray->pixels + (size_t)ty * TILE * w, *r1 = r0 + w, *r2 = r1 + w;
        for (int t = 0, x = 0; t < tw; t++, x += TILE)
            sums[(size_t)ty * tw + t] =
                (uint16_t)(r0[x] + r0[x + 1] + r0[x + 2] + r1[x] + r1[x + 1] + r1[x + 2] + r2[x] +
                           r2[x + 1] + r2[x + 2]);
    }
    return sums;
}

int lt_sauvola_window_px(const lt_params *p, double dpi)
{
    if (p && p->sauvola_window_px > 0) return p->sauvola_window_px;
    if (!lt_dpi_plausible(dpi)) dpi = 300;          /* keeps the window in range */
    int thirds = (int)lround(0.17 * dpi / 3.0) | 1; /* odd */
    return thirds < 5 ? 15 : 3 * thirds;
}

/* The threshold at every pixel, from running column sums and running sums along the row.
 * Sets *ink, or returns LT_ENOMEM. */
static int binarize_exact(const lt_image *gray, int window_px, double k, const stretch *st,
                          lt_image **ink)
{
    const int w = gray->width, h = gray->height, half = window_px / 2;
    lt_image *out = lt_image_alloc(w, h, LT_IMAGE_INK, 0); /* every pixel is written below */
    uint32_t *colsum = calloc((size_t)w, sizeof *colsum);
    uint32_t *colsq = calloc((size_t)w, sizeof *colsq); /* <= 65535 rows x 255^2 < 2^32 */
    double *winsum = malloc((size_t)w * sizeof *winsum), *winsq = malloc((size_t)w * sizeof *winsq);
    double *inv_cols = malloc((size_t)w * sizeof *inv_cols);
    int rc = LT_ENOMEM;
    if (!out || !colsum || !colsq || !winsum || !winsq || !inv_cols) goto done;
    out->dpi = gray->dpi;
    for (int x = 0; x < w; x++) {
        int right = x + half < w ? x + half : w - 1, left = x - half > 0 ? x - half : 0;
        inv_cols[x] = 1.0 / (right - left + 1);
    }
    /* Column sums hold rows [y - half, y + half] clipped; start with rows [0, half). */
    for (int y = 0; y < half && y < h; y++) {
        const uint8_t *row = gray->pixels + (size_t)y * w;
        for (int x = 0; x < w; x++) {
            colsum[x] += row[x];
            colsq[x] += (uint32_t)row[x] * row[x];
        }
    }
    for (int y = 0; y < h; y++) {
        int add = y + half, drop = y - half - 1;
        if (add < h) {
            const uint8_t *row = gray->pixels + (size_t)add * w;
            for (int x = 0; x < w; x++) {
                colsum[x] += row[x];
                colsq[x] += (uint32_t)row[x] * row[x];
            }
        }
        if (drop >= 0) {
            const uint8_t *row = gray->pixels + (size_t)drop * w;
            for (int x = 0; x < w; x++) {
                colsum[x] -= row[x];
                colsq[x] -= (uint32_t)row[x] * row[x];
            }
        }
        const int rows = (add < h ? add : h - 1) - (drop + 1 > 0 ? drop + 1 : 0) + 1;
        const double inv_rows = 1.0 / rows;
        /* Window sums along the row (a serial chain), then the decisions (independent). */
        int64_t sum = 0, sumsq = 0; /* signed: converts to double in one instruction */
        for (int x = 0; x < half && x < w; x++) {
            sum += colsum[x];
            sumsq += colsq[x];
        }
        for (int x = 0; x < w; x++) {
            int right = x + half, left = x - half - 1;
            if (right < w) {
                sum += colsum[right];
                sumsq += colsq[right];
            }
            if (left >= 0) {
                sum -= colsum[left];
                sumsq -= colsq[left];
            }
            winsum[x] = (double)sum;
            winsq[x] = (double)sumsq;
        }
        const uint8_t *src = gray->pixels + (size_t)y * w;
        uint8_t *dst = out->pixels + (size_t)y * w;
        for (int x = 0; x < w; x++)
            dst[x] = is_ink(src[x], winsum[x], winsq[x], inv_rows * inv_cols[x], k, st, x / TILE,
                            y / TILE);
    }
    *ink = out;
    out = NULL;
    rc = 0;
done:
    lt_image_free(out);
    free(colsum);
    free(colsq);
    free(winsum);
    free(winsq);
    free(inv_cols);
    return rc;
}

/* Pushes the tile `i` on `stack` when it is dark and not yet at `state` (marking it so). */
static inline void push_dark(const uint16_t *light_from, uint8_t *seen, uint8_t state,
                             uint32_t *stack, size_t *top, size_t i)
{
    if (seen[i] == state || light_from[i] == NOT_DARK) return;
    seen[i] = state;
    stack[(*top)++] = (uint32_t)i;
}

/* Keeps the dark tiles (light_from[i] != NOT_DARK, gw x gh) of the regions (4-connected) at
 * least DARK_MIN_WIDTH_WINDOWS windows wide and half a window tall (window_tiles tiles a side),
 * whose windows with marks (deviation dev[i] at least FLAT_DEVIATION) deviate by
 * DARK_MIN_DEVIATION on average, and that do not run along the page's edge: a region that
 * touches an edge over a stretch at least as long as it reaches into the page from it is the
 * scanner's ground or a shadow, while a band or box printed to the edge (a bleed) reaches in
 * farther than it runs along it, and a page printed in negative covers half the page or more. Each
 * region is walked twice: to measure it, then to keep or drop it. Sets dark_rows[ty] to 1 for the
 * tile rows that keep a dark tile, and dev[i] of each dark tile to 1 where its region is kept and
 * at least a window tall (a ground that extend_dark_ground follows to its edge), 0 elsewhere;
 * returns how many tiles are kept, or -1 when out of memory. */
static long keep_framed_dark(uint16_t *light_from, uint8_t *dev, int gw, int gh, int window_tiles,
                             uint8_t *dark_rows)
{
    const size_t tiles = (size_t)gw * gh;
    uint8_t *seen = calloc(tiles, 1); /* 1: measured, 2: decided */
    uint32_t *stack = malloc(tiles * sizeof *stack);
    long kept = -1;
    if (!seen || !stack) goto done;
    kept = 0;
    memset(dark_rows, 0, (size_t)gh);
    for (size_t start = 0; start < tiles; start++) {
        if (seen[start] || light_from[start] == NOT_DARK) continue;
        size_t top = 0, n = 0, marked = 0;
        double marked_dev = 0; /* deviation summed over the tiles with marks */
        int left = gw, right = 0, up = gh, down = 0;
        int on_left = 0, on_right = 0, on_top = 0, on_bottom = 0; /* tiles on each edge */
        push_dark(light_from, seen, 1, stack, &top, start);
        while (top) {
            const size_t i = stack[--top];
            const int tx = (int)(i % gw), ty = (int)(i / gw);
            n++;
            if (dev[i] >= FLAT_DEVIATION) marked_dev += dev[i], marked++;
            on_left += tx == 0, on_right += tx == gw - 1;
            on_top += ty == 0, on_bottom += ty == gh - 1;
            left = tx < left ? tx : left, right = tx > right ? tx : right;
            up = ty < up ? ty : up, down = ty > down ? ty : down;
            if (tx > 0) push_dark(light_from, seen, 1, stack, &top, i - 1);
            if (tx + 1 < gw) push_dark(light_from, seen, 1, stack, &top, i + 1);
            if (ty > 0) push_dark(light_from, seen, 1, stack, &top, i - gw);
            if (ty + 1 < gh) push_dark(light_from, seen, 1, stack, &top, i + gw);
        }
        const int wide = right - left + 1, tall = down - up + 1;
        const int along_edge =
            on_left >= wide || on_right >= wide || on_top >= tall || on_bottom >= tall;
        const int keep = (!along_edge || 2 * n >= tiles) && marked > 0 &&
                         marked_dev >= DARK_MIN_DEVIATION * (double)marked &&
                         wide >= DARK_MIN_WIDTH_WINDOWS * window_tiles && 2 * tall >= window_tiles;
        kept += keep ? (long)n : 0;
        const uint8_t ground = keep && tall >= window_tiles;
        push_dark(light_from, seen, 2, stack, &top, start);
        while (top) {
            const size_t i = stack[--top];
            const int tx = (int)(i % gw), ty = (int)(i / gw);
            if (tx > 0) push_dark(light_from, seen, 2, stack, &top, i - 1);
            if (tx + 1 < gw) push_dark(light_from, seen, 2, stack, &top, i + 1);
            if (ty > 0) push_dark(light_from, seen, 2, stack, &top, i - gw);
            if (ty + 1 < gh) push_dark(light_from, seen, 2, stack, &top, i + gw);
            dev[i] = ground; /* measured */
            if (keep)
                dark_rows[ty] = 1;
            else
                light_from[i] = NOT_DARK; /* after its neighbours are pushed */
        }
    }
done:
    free(seen);
    free(stack);
    return kept;
}

/* Marks of the dark tiles in extend_dark_ground (undefined on tiles that are not dark). */
enum { OFF_GROUND, ON_GROUND, FOLLOWED, STROKE };

/* Whether the tile i lies on a ground that extend_dark_ground follows, or may follow. */
static inline int on_ground(const uint16_t *light_from, const uint8_t *ground, size_t i)
{
    return light_from[i] != NOT_DARK && ground[i] != OFF_GROUND;
}

/* Appends the tile j to the queue (growing it); returns 0 or -1 when out of memory. */
static int enqueue(uint32_t **queue, size_t *len, size_t *cap, size_t j)
{
    if (*len == *cap) {
        const size_t more = *cap ? 2 * *cap : 4096;
        uint32_t *grown = realloc(*queue, more * sizeof *grown);
        if (!grown) return -1;
        *queue = grown, *cap = more;
    }
    (*queue)[(*len)++] = (uint32_t)j;
    return 0;
}

/* Closes the runs of at most `gap` tiles off the ground between two ground tiles, along each
 * row of the gw x gh tiles (across = 1) or each column (across = 0, the rows read in order, the
 * last ground tile of each column in last_ground, gw entries), reading only the tile rows
 * marked in dark_rows (the others hold no ground): they join the ground with the threshold of
 * the ground tile before them, and their tile rows are marked; those that were not dark are
 * marked STROKE and queued. Returns 0, or -1 when out of memory. */
static int close_gaps(uint16_t *light_from, uint8_t *ground, int gw, int gh, int gap, int across,
                      int *last_ground, uint8_t *dark_rows, uint32_t **queue, size_t *len,
                      size_t *cap)
{
    for (int tx = 0; tx < gw; tx++)
        last_ground[tx] = -1;
    for (int ty = 0; ty < gh; ty++) {
        if (!dark_rows[ty]) continue;
        int last = -1; /* along the row */
        for (int tx = 0; tx < gw; tx++) {
            const size_t at = (size_t)ty * gw + tx;
            if (!on_ground(light_from, ground, at)) continue;
            const int before = across ? last : last_ground[tx], here = across ? tx : ty;
            const size_t stride = across ? 1 : (size_t)gw;
            if (before >= 0 && here - before > 1 && here - before - 1 <= gap) {
                const size_t from = at - (size_t)(here - before) * stride;
                for (size_t t = from + stride; t < at; t += stride) {
                    const int light = light_from[t] == NOT_DARK;
                    light_from[t] = light_from[from];
                    ground[t] = light ? STROKE : ON_GROUND;
                    dark_rows[t / gw] = 1;
                    if (light && enqueue(queue, len, cap, t)) return -1;
                }
            }
            last = tx, last_ground[tx] = ty;
        }
    }
    return 0;
}

/* A window whose mean is light stands within about a reach of a dark ground's edge, and its
 * tiles were read as dark print on paper: light text near a band's edge lost the part that
 * stands there. Extends the grounds (the dark tiles, light_from != NOT_DARK, gw x gh of them,
 * marked ON_GROUND in `ground`) to their own edge where light strokes stand near it: through
 * dark whole tiles (sum tsum under DARK_MEAN per pixel, the first whole_x x whole_y tiles) at
 * most GROUND_STEPS_REACHES reaches away in 4-connected steps, each with the threshold of the
 * tile it was reached from; across the light strokes on them, runs of tiles along a row, then
 * along a column, between two ground tiles at most a reach / GROUND_GAP_REACH_DIVISOR apart; and
 * keeps of the tiles followed those within a reach of such a stroke: elsewhere the ground's edge
 * stays as its windows read it, dark, which holds a picture's pieces together. Paper beside a
 * ground is no such run, and a dark mark or a picture that was not kept is not followed. Marks
 * the rows of the tiles it adds in dark_rows; returns how many it adds, or -1 when out of
 * memory. */
static long extend_dark_ground(uint16_t *light_from, uint8_t *ground, const uint16_t *tsum, int gw,
                               int gh, int whole_x, int whole_y, int reach, uint8_t *dark_rows)
{
    uint32_t *queue = NULL; /* the ground's edge, the tiles followed, the strokes */
    size_t len = 0, cap = 0;
    int *last_ground = malloc((size_t)gw * sizeof *last_ground);
    long added = -1;
    if (!last_ground) goto done;
    for (int ty = 0; ty < gh; ty++) {
        if (!dark_rows[ty]) continue;
        for (int tx = 0; tx < gw; tx++) { /* the edge: a tile inside has no tile to follow */
            const size_t i = (size_t)ty * gw + tx;
            if (on_ground(light_from, ground, i) &&
                ((tx > 0 && light_from[i - 1] == NOT_DARK) ||
                 (tx + 1 < gw && light_from[i + 1] == NOT_DARK) ||
                 (ty > 0 && light_from[i - gw] == NOT_DARK) ||
                 (ty + 1 < gh && light_from[i + gw] == NOT_DARK)) &&
                enqueue(&queue, &len, &cap, i))
                goto done;
        }
    }
    const size_t first_followed = len;
    size_t head = 0;
    for (int step = 0; step < GROUND_STEPS_REACHES * reach && head < len; step++) {
        const size_t reached = len;
        for (; head < reached; head++) {
            const size_t i = queue[head];
            const int tx = (int)(i % gw), ty = (int)(i / gw);
            if (tx >= whole_x || ty >= whole_y) continue;
            const size_t next[4] = {i - 1, i + 1, i - gw, i + gw};
            const int inside[4] = {tx > 0, tx + 1 < whole_x, ty > 0, ty + 1 < whole_y};
            for (int n = 0; n < 4; n++) {
                const size_t j = next[n];
                if (!inside[n] || light_from[j] != NOT_DARK || tsum[j] >= DARK_MEAN * TILE * TILE)
                    continue;
                light_from[j] = light_from[i];
                ground[j] = FOLLOWED;
                dark_rows[j / gw] = 1;
                if (enqueue(&queue, &len, &cap, j)) goto done;
            }
        }
    }
    const size_t first_stroke = len;
    const int gap = reach / GROUND_GAP_REACH_DIVISOR;
    if (close_gaps(light_from, ground, gw, gh, gap, 1, last_ground, dark_rows, &queue, &len,
                   &cap) ||
        close_gaps(light_from, ground, gw, gh, gap, 0, last_ground, dark_rows, &queue, &len, &cap))
        goto done;
    added = (long)(len - first_stroke);
    /* The tiles followed within a reach of a stroke, step by step from the strokes. */
    head = first_stroke;
    for (int step = 0; step < STROKE_GROUND_REACHES * reach && head < len; step++) {
        const size_t reached = len;
        for (; head < reached; head++) {
            const size_t i = queue[head];
            const int tx = (int)(i % gw), ty = (int)(i / gw);
            const size_t next[4] = {i - 1, i + 1, i - gw, i + gw};
            const int inside[4] = {tx > 0, tx + 1 < gw, ty > 0, ty + 1 < gh};
            for (int n = 0; n < 4; n++) {
                const size_t j = next[n];
                if (!inside[n] || light_from[j] == NOT_DARK || ground[j] != FOLLOWED) continue;
                ground[j] = ON_GROUND;
                added++;
                if (enqueue(&queue, &len, &cap, j)) goto done;
            }
        }
    }
    for (size_t q = first_followed; q < first_stroke; q++)
        if (ground[queue[q]] == FOLLOWED) light_from[queue[q]] = NOT_DARK, ground[queue[q]] = 0;
done:
    free(queue);
    free(last_ground);
    return added;
}

/* Sums over three rows a, b and c of the gray levels (sum, < 2^16) and of their squares (sq)
 * at each of the w columns. In blocks of 16 columns, which the compiler turns into vector
 * instructions at -O2 (a loop of unknown length it leaves scalar there). */
static void add_three_rows(const uint8_t *restrict a, const uint8_t *restrict b,
                           const uint8_t *restrict c, int w, uint16_t *restrict sum,
                           uint32_t *restrict sq)
{
    int x = 0;
    for (; x + 16 <= w; x += 16)
        for (int i = 0; i < 16; i++) {
            const uint16_t p = a[x + i], q = b[x + i], r = c[x + i];
            sum[x + i] = (uint16_t)(p + q + r);
            sq[x + i] = (uint32_t)(uint16_t)(p * p) + (uint16_t)(q * q) + (uint16_t)(r * r);
        }
    for (; x < w; x++) {
        const uint32_t p = a[x], q = b[x], r = c[x];
        sum[x] = (uint16_t)(p + q + r);
        sq[x] = p * p + q * q + r * r;
    }
}

/* The sums of the gray levels (tsum) and of their squares (tsq) over every TILE x TILE tile of
 * the gw x gh grid (clipped at the right and bottom edges), and the histogram of the whole
 * tiles' sums in HIST_COPIES copies of TILE_SUMS bins (hist), a tile's sum counted in copy
 * t mod HIST_COPIES: neighbouring tiles of blank paper have the same sum, and one copy's bin
 * would take one increment after the other. col_sum and col_sq hold w columns; zero_row is w
 * zero bytes, added for the rows missing below the page. */
static void sum_tiles(const lt_image *gray, int gw, int gh, uint16_t *restrict tsum,
                      uint32_t *restrict tsq, uint32_t *restrict hist, uint16_t *restrict col_sum,
                      uint32_t *restrict col_sq, const uint8_t *zero_row)
{
    const int w = gray->width, h = gray->height;
    _Static_assert(TILE == 3, "the sums below add 3 rows and 3 columns");
    for (int ty = 0; ty < gh; ty++) {
        const int rows = h - ty * TILE < TILE ? h - ty * TILE : TILE;
        const uint8_t *r0 = gray->pixels + (size_t)ty * TILE * w;
        const uint8_t *r1 = rows > 1 ? r0 + w : zero_row, *r2 = rows > 2 ? r0 + 2 * w : zero_row;
        add_three_rows(r0, r1, r2, w, col_sum, col_sq);
        uint16_t *ts = tsum + (size_t)ty * gw;
        uint32_t *tq = tsq + (size_t)ty * gw;
        int x = 0, t = 0;
        for (; x + TILE <= w; x += TILE, t++) {
            const unsigned sum = col_sum[x] + col_sum[x + 1] + col_sum[x + 2];
            ts[t] = (uint16_t)sum;
            tq[t] = col_sq[x] + col_sq[x + 1] + col_sq[x + 2];
            if (rows == TILE) hist[(t % HIST_COPIES) * TILE_SUMS + sum]++;
        }
        if (x < w) { /* a partial tile at the right edge */
            ts[t] = 0, tq[t] = 0;
            for (; x < w; x++)
                ts[t] = (uint16_t)(ts[t] + col_sum[x]), tq[t] += col_sq[x];
        }
    }
}

/* Moves the column sums colsum and colsq down a row: adds a row of n tile sums and sums of
 * squares (add_sum, add_sq) and subtracts another (drop_sum, drop_sq); a row of zeros stands for
 * either beyond the page. In blocks (add_three_rows). */
static void slide_columns(int64_t *restrict colsum, int64_t *restrict colsq,
                          const uint16_t *restrict add_sum, const uint32_t *restrict add_sq,
                          const uint16_t *restrict drop_sum, const uint32_t *restrict drop_sq,
                          int n)
{
    int i = 0;
    for (; i + 8 <= n; i += 8)
        for (int j = 0; j < 8; j++) {
            colsum[i + j] += (int32_t)add_sum[i + j] - drop_sum[i + j];
            colsq[i + j] += (int64_t)add_sq[i + j] - drop_sq[i + j];
        }
    for (; i < n; i++) {
        colsum[i] += (int32_t)add_sum[i] - drop_sum[i];
        colsq[i] += (int64_t)add_sq[i] - drop_sq[i];
    }
}

/* The thresholds of a row of tile centres (thr, gw of them) spread along a row of w pixels:
 * at x, TILE times the threshold interpolated linearly between the centres on either side,
 * held beyond the outermost centres; out has w entries. In ceiling[b] for each whole block b of
 * INK_BLOCK pixels, the highest gray level that a threshold interpolated from out may put to ink
 * in it (-1: none). */
static void spread_thresholds(const int32_t *restrict thr, int gw, int w, int32_t *restrict out,
                              int16_t *restrict ceiling)
{
    const int centre = TILE / 2;
    int x = 0;
    for (; x < centre && x < w; x++)
        out[x] = thr[0] * TILE;
    for (int t = 0; t + 1 < gw && x + TILE <= w; t++, x += TILE) {
        out[x] = thr[t] * TILE;
        out[x + 1] = 2 * thr[t] + thr[t + 1];
        out[x + 2] = thr[t] + 2 * thr[t + 1];
    }
    for (; x < w; x++) /* beyond the last centre, or the last tiles' partial pixels */
        out[x] = thr[x / TILE < gw ? x / TILE : gw - 1] * TILE;
    for (int b = 0; b < w / INK_BLOCK; b++) {
        int32_t most = out[b * INK_BLOCK];
        for (int i = 0; i < INK_BLOCK; i++)
            most = out[b * INK_BLOCK + i] > most ? out[b * INK_BLOCK + i] : most;
        /* the interpolation's weights add to TILE (ink_row) */
        ceiling[b] = (int16_t)(most < 0 ? -1 : (int64_t)most * TILE / (TILE * TILE << 16));
    }
}

/* One row of ink: dst[x] = 1 where the gray src[x] is at most the threshold interpolated
 * between the tile centres' rows above and below (spread_thresholds), weighted
 * weight_above : weight_below (thirds), 0 elsewhere. Spread thresholds are TILE times the
 * threshold in 16.16 fixed point, and the interpolation adds TILE times more. A block of
 * INK_BLOCK pixels lighter than both rows' ceilings is paper; in the others each pixel is
 * compared, in blocks, which the compiler turns into vector instructions (add_three_rows);
 * called with constant weights, which become additions. */
static inline void ink_row(const uint8_t *restrict src, const int32_t *restrict above,
                           const int16_t *ceiling_above, int32_t weight_above,
                           const int32_t *restrict below, const int16_t *ceiling_below,
                           int32_t weight_below, int w, uint8_t *restrict dst)
{
    const int32_t unit = TILE * TILE << 16; /* gray values x TILE^2 in 16.16 (< 2^31) */
    int x = 0;
    for (; x + INK_BLOCK <= w; x += INK_BLOCK) {
        const int b = x / INK_BLOCK, least = block_min(src + x);
        if (least > ceiling_above[b] && least > ceiling_below[b]) {
            memset(dst + x, 0, INK_BLOCK);
            continue;
        }
        for (int i = 0; i < INK_BLOCK; i++)
            dst[x + i] =
                src[x + i] * unit <= weight_above * above[x + i] + weight_below * below[x + i];
    }
    for (; x < w; x++)
        dst[x] = src[x] * unit <= weight_above * above[x] + weight_below * below[x];
}

/* The threshold computed exactly at the centre pixel of every TILE x TILE tile, where a
 * window that is an odd number of tiles wide is a whole number of tiles, from tile sums; for
 * the pixels in between it is interpolated bilinearly from the four nearest tile centres. The
 * threshold is a statistic of a wide window and varies slowly across the page, so the
 * interpolation moves it by a small fraction of a gray level while the window sums and square
 * roots drop to one per tile. Thresholds in 16.16 fixed point; ink where gray <= threshold.
 * Sets *ink, or returns LT_ENOMEM. */
static int binarize_sampled(const lt_image *gray, int window_px, double k, double r, double black,
                            double white, lt_image **ink, lt_dark_map *dark)
{
    const int w = gray->width, h = gray->height, centre = TILE / 2;
    const int gw = (w + TILE - 1) / TILE, gh = (h + TILE - 1) / TILE;
    const int reach = window_px / TILE / 2; /* tiles on each side of the centre tile */
    const size_t tiles = (size_t)gw * gh;
    uint16_t *tsum = malloc(tiles * sizeof *tsum); /* <= 9 x 255 */
    uint32_t *tsq = malloc(tiles * sizeof *tsq);
    int32_t *thr = malloc(tiles * sizeof *thr);
    /* The thresholds of two rows of tile centres spread along the pixels (spread_thresholds). */
    int32_t *spread[2] = {malloc((size_t)w * sizeof(int32_t)), malloc((size_t)w * sizeof(int32_t))};
    int16_t *ceiling[2] = {malloc((size_t)(w / INK_BLOCK + 1) * sizeof(int16_t)),
                           malloc((size_t)(w / INK_BLOCK + 1) * sizeof(int16_t))};
    /* Dark tiles (only when dark != NULL, allocated at the first): ink where gray >= light_from
     * (NOT_DARK elsewhere); the window deviation of each, capped; tile rows with a dark tile. */
    uint16_t *light_from = NULL, *window_paper = NULL; /* window_paper: st.white_sums */
    uint8_t *dev = NULL, *dark_rows = NULL;
    lt_image *out = NULL;
    /* Column sums of the window's rows, reach + 1 zeros before the first and reach after the
     * last, so that the window slides along a row without tests at its ends. */
    const size_t padded = (size_t)gw + 2 * (size_t)reach + 1;
    int64_t *colsum = calloc(padded, sizeof *colsum), *colsq = calloc(padded, sizeof *colsq);
    double *inv_cols = malloc((size_t)gw * sizeof *inv_cols);
    uint16_t *zero_sum = calloc((size_t)gw, sizeof *zero_sum); /* a row of tiles beyond the page */
    uint32_t *zero_sq = calloc((size_t)gw, sizeof *zero_sq);
    /* A row's window means and deviations; k / R' by the sum of the lightest
     * tile within a window's reach (paper_r), on pages with window paper. */
    double *mean = malloc((size_t)gw * sizeof *mean),
           *dev_row = malloc((size_t)gw * sizeof *dev_row);
    double *k_over_paper = NULL;
    int rc = LT_ENOMEM;
    if (!tsum || !tsq || !thr || !spread[0] || !spread[1] || !ceiling[0] || !ceiling[1] ||
        !colsum || !colsq || !inv_cols || !zero_sum || !zero_sq || !mean || !dev_row)
        goto done;
    for (int tx = 0; tx < gw; tx++) {
        const int left = (tx - reach) * TILE, right = (tx + reach + 1) * TILE;
        inv_cols[tx] = 1.0 / ((right < w ? right : w) - (left > 0 ? left : 0));
    }

    /* 1. Tile sums of the gray values and of their squares; the histogram of the whole tiles'
     * sums. */
    uint32_t *hist = calloc((size_t)HIST_COPIES * TILE_SUMS, sizeof *hist);
    uint16_t *col_sum = malloc((size_t)w * sizeof *col_sum);
    uint32_t *col_sq = malloc((size_t)w * sizeof *col_sq);
    uint8_t *zero_row = calloc((size_t)w, 1);
    const int summed = hist && col_sum && col_sq && zero_row;
    if (summed) {
        sum_tiles(gray, gw, gh, tsum, tsq, hist, col_sum, col_sq, zero_row);
        for (int c = 1; c < HIST_COPIES; c++)
            for (int i = 0; i < TILE_SUMS; i++)
                hist[i] += hist[(size_t)c * TILE_SUMS + i];
    }
    free(col_sum);
    free(col_sq);
    free(zero_row);
    if (!summed) {
        free(hist);
        goto done;
    }
    const int auto_points = black == LT_GRAY_POINT_AUTO && white == LT_GRAY_POINT_AUTO;
    double share = 0;
    if (w >= TILE && h >= TILE) { /* else 0 and 255, as lt_gray_points */
        double darkest, paper, page_black, page_white;
        points_from_histogram(hist, (size_t)(w / TILE) * (h / TILE), &darkest, &paper, &share);
        stretch_points(gray, tsum, tsq, gw, darkest, paper, share, &page_black, &page_white);
        black = black == LT_GRAY_POINT_AUTO ? page_black : black;
        white = white == LT_GRAY_POINT_AUTO ? page_white : white;
    }
    free(hist);
    stretch st = stretch_for(black < 0 ? 0 : black, white < 0 ? 255 : white, r);
    /* The tile sums of partial tiles at the right and bottom edges are of fewer pixels, so
     * that they are never the lightest within a window's reach of a whole one. */
    if (auto_points && add_window_paper(&st, tsum, gw, gh, window_px, share)) goto done;
    window_paper = (uint16_t *)st.white_sums;
    const double k_over_r = k / r, k_over_rs = k / page_r(&st);
    if (st.white_sums) {
        if (!(k_over_paper = malloc(TILE_SUMS * sizeof *k_over_paper))) goto done;
        for (unsigned v = 0; v < TILE_SUMS; v++)
            k_over_paper[v] = k / paper_r(&st, v);
    }
    /* 2. The threshold at each tile centre: window sums over (2 reach + 1)^2 tiles, clipped to
     * the image, from column sums that slide down the tile rows. */
    int64_t *const column_sum = colsum + reach + 1, *const column_sq = colsq + reach + 1;
    for (int ty = 0; ty < reach && ty < gh; ty++)
        slide_columns(column_sum, column_sq, tsum + (size_t)ty * gw, tsq + (size_t)ty * gw,
                      zero_sum, zero_sq, gw);
    for (int ty = 0; ty < gh; ty++) {
        const int add = ty + reach, drop = ty - reach - 1;
        slide_columns(column_sum, column_sq, add < gh ? tsum + (size_t)add * gw : zero_sum,
                      add < gh ? tsq + (size_t)add * gw : zero_sq,
                      drop >= 0 ? tsum + (size_t)drop * gw : zero_sum,
                      drop >= 0 ? tsq + (size_t)drop * gw : zero_sq, gw);
        const int top = (ty - reach) * TILE, bottom = (ty + reach + 1) * TILE;
        const double inv_rows = 1.0 / ((bottom < h ? bottom : h) - (top > 0 ? top : 0));
        int64_t sum = 0, sumsq = 0; /* signed: converts to double in one instruction */
        for (int t = 0; t < reach; t++) {
            sum += column_sum[t];
            sumsq += column_sq[t];
        }
        int32_t *thr_row = thr + (size_t)ty * gw;
        const uint16_t *paper_row = st.white_sums ? st.white_sums + (size_t)ty * gw : NULL;
        int any_dark = 0; /* a window mean of the row under DARK_MEAN */
        for (int tx = 0; tx < gw; tx++) {
            sum += column_sum[tx + reach] - column_sum[tx - reach - 1];
            sumsq += column_sq[tx + reach] - column_sq[tx - reach - 1];
            const double inv_n = inv_rows * inv_cols[tx], m = (double)sum * inv_n;
            const double var = (double)sumsq * inv_n - m * m, sd = var > 0 ? sqrt(var) : 0;
            const double d = m > st.black ? m - st.black : 0;
            const double k_over_rw = paper_row ? k_over_paper[paper_row[tx]] : k_over_rs;
            double t = st.black + d * (1.0 - k + k_over_rw * sd);
            t = t < -1 ? -1 : t > 256 ? 256 : t; /* beyond every gray value either way */
            thr_row[tx] = (int32_t)(t * 65536.0 + 65536.0) - 65536; /* floor */
            mean[tx] = m;
            dev_row[tx] = sd;
            any_dark |= m < DARK_MEAN;
        }
        if (!dark || (!any_dark && !light_from)) continue;
        for (int tx = 0; tx < gw; tx++) {
            const size_t at = (size_t)ty * gw + tx;
            const double m = mean[tx], sd = dev_row[tx];
            if (m < DARK_MEAN) {
                if (!light_from) { /* the first dark tile: those before it are not */
                    light_from = malloc(tiles * sizeof *light_from);
                    dev = malloc(tiles);
                    dark_rows = malloc((size_t)gh);
                    if (!light_from || !dev || !dark_rows) goto done;
                    for (size_t i = 0; i < at; i++)
                        light_from[i] = NOT_DARK;
                }
                /* Sauvola's threshold on the negative (255 - gray, mean 255 - m, the same s):
                 * ink where 255 - gray <= it. */
                const double from = ceil(255.0 - (255.0 - m) * (1.0 - k + k_over_r * sd));
                light_from[at] = (uint16_t)(from < 0 ? 0 : from > 256 ? 256 : from);
                dev[at] = (uint8_t)(sd < 255 ? sd : 255);
            } else if (light_from) {
                light_from[at] = NOT_DARK;
            }
        }
    }
    long dark_kept = 0; /* tiles read light on dark */
    if (light_from &&
        (dark_kept = keep_framed_dark(light_from, dev, gw, gh, 2 * reach + 1, dark_rows)) < 0)
        goto done;
    if (dark_kept > 0) {
        const long added =
            extend_dark_ground(light_from, dev, tsum, gw, gh, w / TILE, h / TILE, reach, dark_rows);
        if (added < 0) goto done;
        dark_kept += added;
    }
    /* 3. Every pixel against the threshold interpolated from the tile centres around it (held
     * constant beyond the outermost centres), into an image allocated only now that the tile
     * and window sums are gone, which lowers the peak memory of the stage. */
    free(tsum), free(tsq), free(colsum), free(colsq), free(inv_cols), free(mean), free(dev_row);
    free(zero_sum), free(zero_sq);
    tsum = NULL, tsq = NULL, colsum = NULL, colsq = NULL, inv_cols = NULL, mean = NULL;
    dev_row = NULL, zero_sum = NULL, zero_sq = NULL;
    if (!(out = lt_image_alloc(w, h, LT_IMAGE_INK, 0))) goto done; /* every pixel written */
    out->dpi = gray->dpi;
    int spread_row[2] = {-1, -1}; /* the tile row whose thresholds spread[i] holds */
    for (int y = 0; y < h; y++) {
        int ty = y < centre ? 0 : (y - centre) / TILE, step = y < centre ? 0 : (y - centre) % TILE;
        if (ty >= gh - 1) ty = gh - 1, step = 0;
        for (int row = ty; row <= ty + (step > 0); row++)
            if (spread_row[row % 2] != row) {
                spread_thresholds(thr + (size_t)row * gw, gw, w, spread[row % 2], ceiling[row % 2]);
                spread_row[row % 2] = row;
            }
        const int32_t *above = spread[ty % 2], *below = spread[(ty + 1) % 2];
        const int16_t *ceil_above = ceiling[ty % 2], *ceil_below = ceiling[(ty + 1) % 2];
        const uint8_t *src = gray->pixels + (size_t)y * w;
        uint8_t *dst = out->pixels + (size_t)y * w;
        _Static_assert(TILE == 3, "the weights below are thirds");
        if (step == 0)
            ink_row(src, above, ceil_above, 3, above, ceil_above, 0, w, dst);
        else if (step == 1)
            ink_row(src, above, ceil_above, 2, below, ceil_below, 1, w, dst);
        else
            ink_row(src, above, ceil_above, 1, below, ceil_below, 2, w, dst);
        if (dark_kept > 0 && dark_rows[y / TILE]) { /* dark tiles: light marks are the ink */
            const uint16_t *from = light_from + (size_t)(y / TILE) * gw;
            for (int t = 0; t < gw; t++) {
                if (from[t] == NOT_DARK) continue;
                const int end = (t + 1) * TILE < w ? (t + 1) * TILE : w;
                for (int x = t * TILE; x < end; x++)
                    dst[x] = src[x] >= from[t];
            }
        }
    }
    if (dark_kept > 0) {
        dark->tile_px = TILE;
        dark->tiles_x = gw;
        dark->tiles_y = gh;
        dark->dark = malloc(tiles);
        if (!dark->dark) goto done;
        for (size_t i = 0; i < tiles; i++)
            dark->dark[i] = light_from[i] != NOT_DARK;
    }
    *ink = out;
    out = NULL;
    rc = 0;
done:
    lt_image_free(out);
    free(tsum);
    free(tsq);
    free(thr);
    free(spread[0]);
    free(spread[1]);
    free(ceiling[0]);
    free(ceiling[1]);
    free(light_from);
    free(window_paper);
    free(dark_rows);
    free(dev);
    free(colsum);
    free(colsq);
    free(inv_cols);
    free(mean);
    free(dev_row);
    free(zero_sum);
    free(zero_sq);
    free(k_over_paper);
    return rc;
}

static int binarize(const lt_image *gray, int window_px, double k, double r, double black,
                    double white, int sampled, lt_image **ink, lt_dark_map *dark, lt_error *err)
{
    *ink = NULL;
    if (dark) *dark = (lt_dark_map){0};
    const int auto_black = black == LT_GRAY_POINT_AUTO, auto_white = white == LT_GRAY_POINT_AUTO;
    if (!gray || gray->kind != LT_IMAGE_GRAY || window_px < 1 || window_px > LT_MAX_WINDOW_PX ||
        r <= 0 || k < 0 || !(auto_black || (black >= 0 && black <= 255)) ||
        !(auto_white || (white >= 0 && white <= 255)) ||
        (!auto_black && !auto_white && !(black < white)))
        return lt_error_set(err, LT_EINVAL, "binarize: bad arguments");
    /* Sampling needs a window of whole tiles, odd, and wide against a tile (9 tiles at least). */
    sampled = sampled && window_px % (2 * TILE) == TILE && window_px >= 9 * TILE;
    int rc = 0;
    if (sampled) {
        rc = binarize_sampled(gray, window_px, k, r, black, white, ink, dark); /* points its own */
    } else {
        double page_black = black, page_white = white, share = 0;
        if ((auto_black || auto_white) &&
            (rc = page_points(gray, &page_black, &page_white, &share)))
            return lt_error_set(err, rc, "binarize: out of memory");
        stretch st =
            stretch_for(auto_black ? page_black : black, auto_white ? page_white : white, r);
        uint16_t *sums = NULL;
        if (auto_black && auto_white && share > 0 && gray->width >= TILE && gray->height >= TILE &&
            !(sums = whole_tile_sums(gray)))
            rc = LT_ENOMEM;
        if (!rc)
            rc = add_window_paper(&st, sums, gray->width / TILE, gray->height / TILE, window_px,
                                  share);
        if (!rc) rc = binarize_exact(gray, window_px, k, &st, ink);
        free(sums);
        free((void *)st.white_sums);
    }
    return rc ? lt_error_set(err, rc, "binarize: out of memory") : 0;
}

int lt_binarize(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                lt_error *err)
{
    return binarize(gray, window_px, k, r, 0, 255, 0, ink, NULL, err);
}

int lt_binarize_sampled(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                        lt_error *err)
{
    return binarize(gray, window_px, k, r, 0, 255, 1, ink, NULL, err);
}

int lt_binarize_normalized(const lt_image *gray, int window_px, double k, double r, double black,
                           double white, int sampled, lt_image **ink, lt_error *err)
{
    return binarize(gray, window_px, k, r, black, white, sampled, ink, NULL, err);
}

int lt_binarize_page(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                     lt_dark_map *dark, lt_error *err)
{
    int rc =
        binarize(gray, window_px, k, r, LT_GRAY_POINT_AUTO, LT_GRAY_POINT_AUTO, 1, ink, dark, err);
    if (rc) lt_dark_map_clear(dark);
    return rc;
}

void lt_dark_map_clear(lt_dark_map *map)
{
    if (!map) return;
    free(map->dark);
    *map = (lt_dark_map){0};
}

int lt_dark_at(const lt_dark_map *map, double x, double y)
{
    if (!map || !map->dark || !(x >= 0 && y >= 0)) return 0;
    const double tx = x / map->tile_px, ty = y / map->tile_px;
    if (tx >= map->tiles_x || ty >= map->tiles_y) return 0;
    return map->dark[(size_t)ty * map->tiles_x + (size_t)tx];
}

/* test_load.c — checks lt_source_* on image files written by leptonica (a general-purpose image
 * library lineate did not write) into a temp folder: PNG gray, RGB, palette, 16-bit, 1-bit and
 * RGBA; JPEG; PGM/PPM; TIFF G4 and a multi-page TIFF; resolution from the file; and bad input
 * (empty, not an image, truncated, a header claiming a huge size, missing file, a folder),
 * each with a one-line message naming the file; and the version the library reports.
 * Standalone: exit 0 on success, 1 on failure (one line per failed check on stderr). */
#include "testutil.h"

#include <errno.h>
#include <jpeglib.h>

static char dir[256];

static const char *tmp(const char *name)
{
    static char path[8][512];
    static int slot;
    slot = (slot + 1) % 8;
    return tu_path(path[slot], sizeof path[slot], dir, name);
}

static void write_pix(PIX *pix, const char *path, int format)
{
    if (pixWrite(path, pix, format)) tu_die("leptonica could not write %s", path);
}

/* Opens path and reads page `index`; NULL (and a failed check) when it cannot. */
static lt_image *load(const char *path, int index)
{
    lt_error err = {0};
    lt_source *src = NULL;
    lt_image *img = NULL;
    if (lt_source_open(path, LT_DEFAULT_MAX_PAGES, &src, &err) ||
        lt_source_read_page(src, index, LT_DEFAULT_MAX_PIXELS, &img, &err))
        tu_fail("%s: %s", path, err.message);
    lt_source_free(src);
    return img;
}

/* A smooth 8-bpp page for lossy formats: a gradient with a few flat boxes. */
static PIX *smooth_pix(int w, int h)
{
    PIX *pix = pixCreate(w, h, 8);
    for (int y = 0; y < h; y++)
        for (int x = 0; x < w; x++) {
            int v = 40 + (x * 150) / w + (y * 60) / h;
            if (x > w / 4 && x < w / 2 && y > h / 4 && y < h / 2) v = 30;
            pixSetPixel(pix, x, y, (l_uint32)v);
        }
    return pix;
}

/* An 8-bpp gradient with noise (fixed seed). */
static PIX *gray_pix(int w, int h, uint64_t seed)
{
    tu_rng r = {seed};
    PIX *pix = pixCreate(w, h, 8);
    for (int y = 0; y < h; y++)
        for (int x = 0; x < w; x++)
            pixSetPixel(pix, x, y, (l_uint32)((x * 7 + y * 3 + tu_range(&r, 0, 40)) & 255));
    return pix;
}

/* Pixels of a 1-bpp PIX with text-like boxes (fixed seed). */
static PIX *ink_pix(int w, int h, uint64_t seed)
{
    tu_rng r = {seed};
    PIX *pix = pixCreate(w, h, 1);
    for (int b = 0; b < w * h / 400; b++) {
        int x = tu_range(&r, 0, w - 1), y = tu_range(&r, 0, h - 1);
        pixRasterop(pix, x, y, tu_range(&r, 2, 14), tu_range(&r, 2, 20), PIX_SET, NULL, 0, 0);
    }
    return pix;
}

/* Pixels of img equal to the 8-bpp (gray) or 1-bpp (ink) PIX, in kind and value. */
static void check_same(const lt_image *img, PIX *pix, const char *what)
{
    if (!img) return;
    const int d = pixGetDepth(pix);
    CHECK_INT(img->kind, d == 1 ? LT_IMAGE_INK : LT_IMAGE_GRAY, "%s: kind", what);
    CHECK(img->width == pixGetWidth(pix) && img->height == pixGetHeight(pix),
          "%s: size %dx%d, want %dx%d", what, img->width, img->height, pixGetWidth(pix),
          pixGetHeight(pix));
    if (img->width != pixGetWidth(pix) || img->height != pixGetHeight(pix)) return;
    long wrong = 0;
    for (int y = 0; y < img->height; y++)
        for (int x = 0; x < img->width; x++) {
            l_uint32 v = 0;
            pixGetPixel(pix, x, y, &v);
            wrong += img->pixels[(size_t)y * img->width + x] != v;
        }
    CHECK_INT(wrong, 0, "%s: pixels differing from what was written", what);
}

static void check_header(const char *path, int bps, int spp, int cmap, const char *what)
{
    l_int32 format, w, h, b = 0, s = 0, c = 0;
    if (pixReadHeader(path, &format, &w, &h, &b, &s, &c)) tu_die("%s: no header", path);
    CHECK(b == bps && s == spp && !!c == cmap,
          "%s: the file written is not what the test needs (bps %d spp %d cmap %d)", what, b, s, c);
}

static void test_png(void)
{
    /* 8-bit gray. */
    PIX *g = gray_pix(97, 61, 1);
    write_pix(g, tmp("gray.png"), IFF_PNG);
    check_header(tmp("gray.png"), 8, 1, 0, "gray png");
    lt_source *src = NULL;
    lt_error err = {0};
    if (lt_source_open(tmp("gray.png"), 10, &src, &err)) {
        tu_fail("gray png: %s", err.message);
    } else {
        CHECK_INT(lt_source_pages(src), 1, "gray png: pages");
        CHECK(!strcmp(lt_source_format(src), "png"), "gray png: format %s", lt_source_format(src));
        CHECK(!strcmp(lt_source_name(src), tmp("gray.png")), "gray png: name %s",
              lt_source_name(src));
        lt_image *img = NULL;
        if (lt_source_read_page(src, 0, LT_DEFAULT_MAX_PIXELS, &img, &err))
            tu_fail("gray png: %s", err.message);
        check_same(img, g, "gray png");
        if (img) CHECK_NEAR(img->dpi, 0, 0, "gray png without resolution: dpi");
        lt_image_free(img);
        /* Page 2 of a one-page file. */
        lt_error e2 = {0};
        img = NULL;
        CHECK_INT(lt_source_read_page(src, 1, LT_DEFAULT_MAX_PIXELS, &img, &e2), LT_EINVAL,
                  "gray png: page 2");
        CHECK(img == NULL && strstr(e2.message, "gray.png"), "gray png page 2: '%s'", e2.message);
    }
    lt_source_free(src);
    /* The same bytes from memory. */
    size_t size = 0;
    uint8_t *bytes = tu_read_file(tmp("gray.png"), &size);
    lt_error em = {0};
    lt_image *img = NULL;
    if (!bytes || lt_source_open_memory(bytes, size, "buffer", 1, &src, &em) ||
        lt_source_read_page(src, 0, LT_DEFAULT_MAX_PIXELS, &img, &em))
        tu_fail("gray png from memory: %s", em.message);
    check_same(img, g, "gray png from memory");
    lt_image_free(img);
    lt_source_free(src);
    free(bytes);
    pixDestroy(&g);

    /* 16-bit gray: values v * 257 must come back as v; others as the high byte (libpng's
     * strip) or the rounded v / 257 (libpng's scale), which differ by at most one. */
    PIX *g16 = pixCreate(64, 40, 16);
    for (int y = 0; y < 40; y++)
        for (int x = 0; x < 64; x++)
            pixSetPixel(g16, x, y, y < 20 ? (l_uint32)((x * 4) * 257) : (l_uint32)(x * 1000 + y));
    write_pix(g16, tmp("gray16.png"), IFF_PNG);
    check_header(tmp("gray16.png"), 16, 1, 0, "16-bit png");
    img = load(tmp("gray16.png"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "16-bit png: kind");
        long exact_wrong = 0, near_wrong = 0;
        for (int y = 0; y < 40; y++)
            for (int x = 0; x < 64; x++) {
                int v = img->pixels[y * 64 + x];
                if (y < 20)
                    exact_wrong += v != x * 4;
                else
                    near_wrong += fabs(v - (x * 1000 + y) / 257.0) > 1.0;
            }
        CHECK_INT(exact_wrong, 0, "16-bit png: pixels v*257 not read as v");
        CHECK_INT(near_wrong, 0, "16-bit png: pixels more than 1 from v/257");
    }
    lt_image_free(img);
    pixDestroy(&g16);

    /* RGB: neutral pixels keep their value exactly (any luminance weights sum to 1); coloured
     * pixels lie between their smallest and largest channel; dark blue text stays dark. */
    PIX *rgb = pixCreate(60, 30, 32);
    for (int y = 0; y < 30; y++)
        for (int x = 0; x < 60; x++) {
            l_uint32 px;
            int v = x * 4;
            if (y < 10)
                composeRGBPixel(v, v, v, &px);
            else if (y < 20)
                composeRGBPixel(v, 255 - v, (v * 3) & 255, &px);
            else
                composeRGBPixel(x < 30 ? 0 : 255, x < 30 ? 0 : 255, x < 30 ? 128 : 255, &px);
            pixSetPixel(rgb, x, y, px);
        }
    write_pix(rgb, tmp("rgb.png"), IFF_PNG);
    check_header(tmp("rgb.png"), 8, 3, 0, "rgb png");
    img = load(tmp("rgb.png"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "rgb png: kind");
        long neutral = 0, outside = 0, blue = 0;
        for (int x = 0; x < 60; x++) {
            int v = x * 4, r = v, gg = 255 - v, b = (v * 3) & 255;
            int lo = r < gg ? (r < b ? r : b) : (gg < b ? gg : b);
            int hi = r > gg ? (r > b ? r : b) : (gg > b ? gg : b);
            neutral += img->pixels[5 * 60 + x] != v;
            outside += img->pixels[15 * 60 + x] < lo - 1 || img->pixels[15 * 60 + x] > hi + 1;
            blue += x < 30 ? img->pixels[25 * 60 + x] >= 128 : img->pixels[25 * 60 + x] != 255;
        }
        CHECK_INT(neutral, 0, "rgb png: neutral pixels not kept exactly");
        CHECK_INT(outside, 0, "rgb png: coloured pixels outside their channels' range");
        CHECK_INT(blue, 0, "rgb png: dark blue on white not dark on white");
    }
    lt_image_free(img);
    pixDestroy(&rgb);

    /* Palette: white, black, mid gray and an orange; the grays exactly. */
    PIX *pal = pixCreate(40, 20, 8);
    PIXCMAP *cmap = pixcmapCreate(8);
    pixcmapAddColor(cmap, 255, 255, 255);
    pixcmapAddColor(cmap, 0, 0, 0);
    pixcmapAddColor(cmap, 128, 128, 128);
    pixcmapAddColor(cmap, 200, 100, 50);
    pixSetColormap(pal, cmap);
    for (int y = 0; y < 20; y++)
        for (int x = 0; x < 40; x++)
            pixSetPixel(pal, x, y, (l_uint32)(x / 10));
    write_pix(pal, tmp("palette.png"), IFF_PNG);
    check_header(tmp("palette.png"), 8, 1, 1, "palette png");
    img = load(tmp("palette.png"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "palette png: kind");
        CHECK_INT(img->pixels[5], 255, "palette png: white entry");
        CHECK_INT(img->pixels[15], 0, "palette png: black entry");
        CHECK_INT(img->pixels[25], 128, "palette png: gray entry");
        CHECK(img->pixels[35] >= 50 && img->pixels[35] <= 200, "palette png: orange gives %d",
              img->pixels[35]);
    }
    lt_image_free(img);
    pixDestroy(&pal);

    /* 1-bit PNG: ink image, same ink. And a 1-bit palette whose entry 0 is BLACK (the
     * opposite of the usual 0 = white): ink where the index is 0. */
    PIX *bw = ink_pix(75, 50, 3);
    write_pix(bw, tmp("bw.png"), IFF_PNG);
    img = load(tmp("bw.png"), 0);
    check_same(img, bw, "1-bit png");
    lt_image_free(img);
    PIX *inv = pixCopy(NULL, bw);
    PIXCMAP *c2 = pixcmapCreate(1);
    pixcmapAddColor(c2, 0, 0, 0);
    pixcmapAddColor(c2, 255, 255, 255);
    pixSetColormap(inv, c2);
    write_pix(inv, tmp("bw-palette.png"), IFF_PNG);
    check_header(tmp("bw-palette.png"), 1, 1, 1, "1-bit palette png");
    img = load(tmp("bw-palette.png"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_INK, "1-bit palette png: kind");
        long wrong = 0;
        for (int y = 0; y < 50; y++)
            for (int x = 0; x < 75; x++) {
                l_uint32 v;
                pixGetPixel(bw, x, y, &v);
                wrong += img->pixels[y * 75 + x] != (v == 0);
            }
        CHECK_INT(wrong, 0, "1-bit palette png (0 = black): pixels with the wrong ink");
    }
    lt_image_free(img);
    pixDestroy(&inv);
    pixDestroy(&bw);

    /* RGBA with a transparent background: transparent black must read as white paper, opaque
     * black as ink, 50% black over white as mid gray (alpha compositing, Porter & Duff 1984:
     * 255 * (1 - 128/255) = 127). */
    PIX *rgba = pixCreate(50, 30, 32);
    pixSetSpp(rgba, 4);
    for (int y = 0; y < 30; y++)
        for (int x = 0; x < 50; x++) {
            l_uint32 px;
            int a = x >= 10 && x < 20 && y >= 10 && y < 20 ? 255 : x >= 30 && x < 40 ? 128 : 0;
            composeRGBAPixel(0, 0, 0, a, &px);
            pixSetPixel(rgba, x, y, px);
        }
    write_pix(rgba, tmp("rgba.png"), IFF_PNG);
    check_header(tmp("rgba.png"), 8, 4, 0, "rgba png");
    img = load(tmp("rgba.png"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "rgba png: kind");
        CHECK_INT(img->pixels[2 * 50 + 2], 255, "rgba png: transparent background");
        CHECK_INT(img->pixels[15 * 50 + 15], 0, "rgba png: opaque black");
        CHECK_NEAR(img->pixels[5 * 50 + 35], 127, 2, "rgba png: 50%% black over white");
    }
    lt_image_free(img);
    pixDestroy(&rgba);
}

static void test_jpeg_pnm(void)
{
    /* JPEG is lossy: the gray page must equal leptonica's own decoding of the file, and be
     * close to what was written (mean error < 4 levels at leptonica's default quality 75 on
     * smooth content with a few edges: from memory). */
    PIX *g = smooth_pix(120, 90);
    pixSetResolution(g, 150, 150);
    write_pix(g, tmp("gray.jpg"), IFF_JFIF_JPEG);
    PIX *dec = pixRead(tmp("gray.jpg"));
    lt_image *img = load(tmp("gray.jpg"), 0);
    if (img && dec) {
        check_same(img, dec, "gray jpeg vs leptonica's decoding");
        double sum = 0;
        for (int y = 0; y < 90; y++)
            for (int x = 0; x < 120; x++) {
                l_uint32 v;
                pixGetPixel(g, x, y, &v);
                sum += fabs((double)img->pixels[y * 120 + x] - v);
            }
        CHECK(sum / (120 * 90) < 4, "gray jpeg: mean error %.2f vs the original", sum / 10800);
        CHECK_NEAR(img->dpi, 150, 0, "jpeg: resolution from the file");
    }
    lt_source *src = NULL;
    lt_error err = {0};
    if (!lt_source_open(tmp("gray.jpg"), 1, &src, &err))
        CHECK(!strcmp(lt_source_format(src), "jpeg"), "jpeg: format %s", lt_source_format(src));
    lt_source_free(src);
    lt_image_free(img);
    pixDestroy(&dec);

    /* Colour JPEG of a neutral gradient: gray within 3 levels of the original. */
    PIX *rgb = pixConvertTo32(g);
    write_pix(rgb, tmp("rgb.jpg"), IFF_JFIF_JPEG);
    img = load(tmp("rgb.jpg"), 0);
    if (img) {
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "rgb jpeg: kind");
        double sum = 0;
        for (int y = 0; y < 90; y++)
            for (int x = 0; x < 120; x++) {
                l_uint32 v;
                pixGetPixel(g, x, y, &v);
                sum += fabs((double)img->pixels[y * 120 + x] - v);
            }
        CHECK(sum / (120 * 90) < 4, "rgb jpeg: mean error %.2f vs the original", sum / 10800);
    }
    lt_image_free(img);

    /* PGM (P5) and PPM (P6): lossless. */
    write_pix(g, tmp("gray.pgm"), IFF_PNM);
    write_pix(rgb, tmp("rgb.ppm"), IFF_PNM);
    size_t n1 = 0, n2 = 0;
    uint8_t *b1 = tu_read_file(tmp("gray.pgm"), &n1), *b2 = tu_read_file(tmp("rgb.ppm"), &n2);
    CHECK(b1 && n1 > 2 && !memcmp(b1, "P5", 2), "pgm: leptonica did not write P5");
    CHECK(b2 && n2 > 2 && !memcmp(b2, "P6", 2), "ppm: leptonica did not write P6");
    free(b1);
    free(b2);
    img = load(tmp("gray.pgm"), 0);
    check_same(img, g, "pgm");
    lt_image_free(img);
    img = load(tmp("rgb.ppm"), 0);
    check_same(img, g, "ppm of a neutral image");
    if (!lt_source_open(tmp("rgb.ppm"), 1, &src, &err))
        CHECK(!strcmp(lt_source_format(src), "pnm"), "ppm: format %s", lt_source_format(src));
    lt_source_free(src);
    lt_image_free(img);
    pixDestroy(&rgb);
    pixDestroy(&g);
}

/* Writes w x h four-channel samples as a JPEG in `jpeg_space` (JCS_CMYK or JCS_YCCK), with
 * Adobe's marker, by libjpeg's own encoder (quality 100). */
static void write_cmyk_jpeg(const char *path, const uint8_t *samples, int w, int h,
                            J_COLOR_SPACE jpeg_space)
{
    FILE *fp = fopen(path, "wb");
    if (!fp) tu_die("cannot write %s", path);
    struct jpeg_compress_struct c;
    struct jpeg_error_mgr e;
    c.err = jpeg_std_error(&e);
    jpeg_create_compress(&c);
    jpeg_stdio_dest(&c, fp);
    c.image_width = (JDIMENSION)w;
    c.image_height = (JDIMENSION)h;
    c.input_components = 4;
    c.in_color_space = JCS_CMYK;
    jpeg_set_defaults(&c);
    jpeg_set_colorspace(&c, jpeg_space); /* writes Adobe's marker for both */
    jpeg_set_quality(&c, 100, TRUE);
    jpeg_start_compress(&c, TRUE);
    while (c.next_scanline < c.image_height) {
        JSAMPROW row = (JSAMPROW)samples + (size_t)c.next_scanline * w * 4;
        jpeg_write_scanlines(&c, &row, 1);
    }
    jpeg_finish_compress(&c);
    jpeg_destroy_compress(&c);
    fclose(fp);
}

/* CMYK and YCCK JPEGs (print workflows) in Adobe's convention, where the stored samples are
 * inverted, 255 meaning no ink (libjpeg's libjpeg.txt, "Special color spaces"). Four flat
 * patches whose gray is known from the usual conversion: red = (1 - C)(1 - K), green and blue
 * alike, then luminance 0.299 R + 0.587 G + 0.114 B (ITU-R BT.601). */
static void test_cmyk_jpeg(void)
{
    enum { W = 64, H = 64 };
    static const uint8_t ink[4][4] = {/* C, M, Y, K as fractions of 255 */
                                      {0, 0, 0, 0},
                                      {0, 0, 0, 255},
                                      {255, 0, 0, 0},
                                      {51, 102, 153, 128}};
    static uint8_t samples[W * H * 4];
    for (int y = 0; y < H; y++)
        for (int x = 0; x < W; x++) {
            const uint8_t *p = ink[(y >= H / 2) * 2 + (x >= W / 2)];
            for (int k = 0; k < 4; k++)
                samples[(y * W + x) * 4 + k] = (uint8_t)(255 - p[k]); /* inverted */
        }
    const J_COLOR_SPACE spaces[2] = {JCS_CMYK, JCS_YCCK};
    const char *names[2] = {"cmyk.jpg", "ycck.jpg"};
    for (int s = 0; s < 2; s++) {
        write_cmyk_jpeg(tmp(names[s]), samples, W, H, spaces[s]);
        lt_image *img = load(tmp(names[s]), 0);
        if (!img) continue;
        CHECK_INT(img->kind, LT_IMAGE_GRAY, "%s: kind", names[s]);
        for (int q = 0; q < 4; q++) {
            const uint8_t *p = ink[q];
            double r = (255 - p[0]) * (255 - p[3]) / 255.0, g = (255 - p[1]) * (255 - p[3]) / 255.0,
                   b = (255 - p[2]) * (255 - p[3]) / 255.0;
            double want = 0.299 * r + 0.587 * g + 0.114 * b;
            int x = (q & 1) ? 3 * W / 4 : W / 4, y = (q & 2) ? 3 * H / 4 : H / 4;
            /* flat patch centres: JPEG at quality 100 (YCCK through its colour transform)
             * within 3 levels (from memory) */
            CHECK_NEAR(img->pixels[y * W + x], want, 3, "%s: patch %d gray", names[s], q);
        }
        lt_image_free(img);
    }
}

static void test_tiff(void)
{
    /* 1-bit G4: an ink image with the same ink; resolution from the file. */
    PIX *bw = ink_pix(203, 157, 5);
    pixSetResolution(bw, 300, 300);
    write_pix(bw, tmp("g4.tif"), IFF_TIFF_G4);
    lt_image *img = load(tmp("g4.tif"), 0);
    check_same(img, bw, "tiff g4");
    if (img) CHECK_NEAR(img->dpi, 300, 0, "tiff g4: resolution from the file");
    lt_image_free(img);

    /* Three pages of different sizes and kinds: G4, 8-bit gray (zip), RGB (LZW). */
    PIX *gray = gray_pix(120, 80, 6);
    PIX *gray2 = gray_pix(64, 200, 7);
    PIX *rgb = pixConvertTo32(gray2); /* neutral: must read back as gray2 exactly */
    const char *multi = tmp("multi.tif");
    if (pixWriteTiff(multi, bw, IFF_TIFF_G4, "w") || pixWriteTiff(multi, gray, IFF_TIFF_ZIP, "a") ||
        pixWriteTiff(multi, rgb, IFF_TIFF_LZW, "a"))
        tu_die("leptonica could not write %s", multi);
    lt_source *src = NULL;
    lt_error err = {0};
    if (lt_source_open(multi, 10, &src, &err)) {
        tu_fail("multi-page tiff: %s", err.message);
    } else {
        CHECK_INT(lt_source_pages(src), 3, "multi-page tiff: pages");
        CHECK(!strcmp(lt_source_format(src), "tiff"), "tiff: format %s", lt_source_format(src));
        PIX *want[3] = {bw, gray, gray2};
        for (int i = 0; i < 3 && lt_source_pages(src) == 3; i++) {
            lt_image *page = NULL;
            char what[64];
            snprintf(what, sizeof what, "multi-page tiff, page %d", i + 1);
            if (lt_source_read_page(src, i, LT_DEFAULT_MAX_PIXELS, &page, &err))
                tu_fail("%s: %s", what, err.message);
            check_same(page, want[i], what);
            lt_image_free(page);
        }
        lt_error e2 = {0};
        lt_image *none = NULL;
        CHECK_INT(lt_source_read_page(src, 3, LT_DEFAULT_MAX_PIXELS, &none, &e2), LT_EINVAL,
                  "multi-page tiff: page 4");
        CHECK(strstr(e2.message, "multi.tif") != NULL, "page 4: message '%s'", e2.message);
    }
    lt_source_free(src);
    /* More pages than max_pages. */
    lt_error e3 = {0};
    src = NULL;
    CHECK_INT(lt_source_open(multi, 2, &src, &e3), LT_ELIMIT, "multi-page tiff, max_pages 2");
    CHECK(src == NULL && strstr(e3.message, "multi.tif"), "max_pages: message '%s'", e3.message);
    lt_source_free(src);
    pixDestroy(&gray);
    pixDestroy(&rgb);
    pixDestroy(&gray2);
    pixDestroy(&bw);
}

/* CRC-32 of PNG chunks (ISO 3309 / ITU-T V.42 polynomial, as the PNG specification gives). */
static uint32_t crc32_png(const uint8_t *p, size_t n)
{
    uint32_t c = 0xffffffffu;
    for (size_t i = 0; i < n; i++) {
        c ^= p[i];
        for (int k = 0; k < 8; k++)
            c = c & 1 ? 0xedb88320u ^ (c >> 1) : c >> 1;
    }
    return c ^ 0xffffffffu;
}

static void put32(uint8_t *p, uint32_t v)
{
    p[0] = (uint8_t)(v >> 24);
    p[1] = (uint8_t)(v >> 16);
    p[2] = (uint8_t)(v >> 8);
    p[3] = (uint8_t)v;
}

static void test_resolution(void)
{
    /* PNG stores pixels per metre: 200 dpi is 7874 px/m, which reads back as 200 within the
     * rounding of that conversion (1 inch = 0.0254 m). */
    PIX *g = gray_pix(30, 20, 8);
    pixSetResolution(g, 200, 200);
    write_pix(g, tmp("dpi200.png"), IFF_PNG);
    lt_image *img = load(tmp("dpi200.png"), 0);
    if (img) CHECK_NEAR(img->dpi, 200, 0.5, "png: resolution from the file");
    lt_image_free(img);
    pixSetResolution(g, 400, 400);
    write_pix(g, tmp("dpi400.tif"), IFF_TIFF_ZIP);
    img = load(tmp("dpi400.tif"), 0);
    if (img) CHECK_NEAR(img->dpi, 400, 0, "tiff: resolution from the file");
    lt_image_free(img);
    pixDestroy(&g);
}

/* An uncompressed 8-bit gray TIFF of w x h white pixels whose XResolution and YResolution
 * have TIFF type `type` (5 RATIONAL, 12 DOUBLE; TIFF 6.0 and its Technical Notes) and the
 * 8-byte value `value`; resolution unit absent, so inches. */
static size_t tiff_with_resolution(uint8_t *buf, int w, int h, int type, const uint8_t value[8])
{
    enum { ENTRIES = 11, IFD = 8, VALUES = IFD + 2 + ENTRIES * 12 + 4, DATA = VALUES + 16 };
    const uint32_t tags[ENTRIES][3] = {{256, 3, (uint32_t)w},
                                       {257, 3, (uint32_t)h},
                                       {258, 3, 8},
                                       {259, 3, 1},
                                       {262, 3, 1},
                                       {273, 4, DATA},
                                       {277, 3, 1},
                                       {278, 3, (uint32_t)h},
                                       {279, 4, (uint32_t)(w * h)},
                                       {282, (uint32_t)type, VALUES},
                                       {283, (uint32_t)type, VALUES + 8}};
    memset(buf, 0, DATA);
    memcpy(buf, "II*\0\x08\0\0\0", 8);
    buf[IFD] = ENTRIES;
    for (int i = 0; i < ENTRIES; i++) {
        uint8_t *e = buf + IFD + 2 + 12 * i;
        e[0] = (uint8_t)tags[i][0];
        e[1] = (uint8_t)(tags[i][0] >> 8);
        e[2] = (uint8_t)tags[i][1];
        e[4] = 1; /* count */
        for (int k = 0; k < 4; k++)
            e[8 + k] = (uint8_t)(tags[i][2] >> (8 * k));
    }
    memcpy(buf + VALUES, value, 8);
    memcpy(buf + VALUES + 8, value, 8);
    memset(buf + DATA, 255, (size_t)w * h);
    return DATA + (size_t)w * h;
}

/* Resolutions outside LT_MIN_DPI..LT_MAX_DPI, each legal in its format: ignored, flagged, and
 * the page analysed at the assumed resolution. */
static void test_implausible_resolution(void)
{
    static uint8_t buf[4096];
    const double huge = 1e38;
    uint8_t value[8];
    memcpy(value, &huge, 8); /* little-endian host, as the file ("II") */
    size_t n = tiff_with_resolution(buf, 40, 30, 12, value);
    tu_write_file(tmp("res-double.tif"), buf, n);
    const uint8_t max_rational[8] = {0xff, 0xff, 0xff, 0xff, 1, 0, 0, 0}; /* 4294967295 / 1 */
    n = tiff_with_resolution(buf, 40, 30, 5, max_rational);
    tu_write_file(tmp("res-rational.tif"), buf, n);
    const double normal = 150;
    memcpy(value, &normal, 8);
    n = tiff_with_resolution(buf, 40, 30, 12, value);
    tu_write_file(tmp("res-150.tif"), buf, n);
    /* PNG pHYs of 0xffffffff pixels per metre (PNG specification: a 4-byte unsigned count). */
    PIX *g = gray_pix(30, 20, 8);
    pixSetResolution(g, 300, 300);
    write_pix(g, tmp("phys.png"), IFF_PNG);
    pixDestroy(&g);
    size_t size = 0;
    uint8_t *png = tu_read_file(tmp("phys.png"), &size);
    uint8_t *at = NULL;
    for (size_t i = 0; png && i + 4 < size; i++)
        if (!memcmp(png + i, "pHYs", 4)) at = png + i;
    if (!at) tu_die("leptonica wrote no pHYs chunk");
    memset(at + 4, 0xff, 8);
    put32(at + 13, crc32_png(at, 13));
    tu_write_file(tmp("phys.png"), png, size);
    free(png);

    const char *files[3] = {"res-double.tif", "res-rational.tif", "phys.png"};
    for (int i = 0; i < 3; i++) {
        lt_image *img = load(tmp(files[i]), 0);
        if (!img) continue;
        CHECK(img->dpi == 0 && img->dpi_rejected == 1, "%s: dpi %g, rejected %d", files[i],
              img->dpi, img->dpi_rejected);
        lt_layout *layout = NULL;
        lt_error err = {0};
        lt_params p;
        lt_params_default(&p);
        p.dpi = 200;
        if (lt_analyze(img, &p, &layout, &err))
            tu_fail("%s: %s", files[i], err.message);
        else
            CHECK(layout->dpi == 200 && !layout->dpi_from_file && layout->dpi_rejected,
                  "%s: analysed at %g dpi (from file %d, rejected %d)", files[i], layout->dpi,
                  layout->dpi_from_file, layout->dpi_rejected);
        lt_layout_free(layout);
        lt_image_free(img);
    }
    lt_image *img = load(tmp("res-150.tif"), 0);
    if (img) CHECK(img->dpi == 150 && !img->dpi_rejected, "tiff double 150: dpi %g", img->dpi);
    /* An embedder's image with an implausible resolution is treated the same way; an
     * implausible assumed resolution is refused. */
    if (img) {
        img->dpi = 1e300;
        lt_layout *layout = NULL;
        lt_error err = {0};
        if (!lt_analyze(img, NULL, &layout, &err))
            CHECK(layout->dpi == 300 && layout->dpi_rejected, "dpi 1e300 set by hand: %g",
                  layout->dpi);
        lt_layout_free(layout);
        lt_params p;
        lt_params_default(&p);
        p.dpi = 5;
        lt_error err2 = {0};
        CHECK_INT(lt_analyze(img, &p, &layout, &err2), LT_EINVAL, "assumed dpi 5");
        lt_params_default(&p);
        p.link_max_gap = 1e300; /* sizes in text units are checked too */
        lt_error err3 = {0};
        CHECK_INT(lt_analyze(img, &p, &layout, &err3), LT_EINVAL, "link_max_gap 1e300");
    }
    lt_image_free(img);
}

/* Every field of lt_params outside its range (lineate.h) is refused before any work, with
 * LT_EINVAL and a message that starts with the field's name; NaN too. The values inside are
 * the defaults, which the analysis of a blank page accepts. */
static void test_param_ranges(void)
{
    lt_image *img = lt_image_new(64, 64, LT_IMAGE_GRAY);
    if (!img) {
        tu_fail("param ranges: out of memory");
        return;
    }
    memset(img->pixels, 255, 64 * 64);
    const struct {
        const char *field;
        size_t offset;
        int is_long, is_int;
        double below, above;
    } cases[] = {
        {"dpi", offsetof(lt_params, dpi), 0, 0, LT_MIN_DPI - 1, LT_MAX_DPI + 1},
        {"sauvola_window_px", offsetof(lt_params, sauvola_window_px), 0, 1, -1, LT_MAX_WINDOW_PX + 2},
        {"sauvola_k", offsetof(lt_params, sauvola_k), 0, 0, -0.1, 7},
        {"sauvola_r", offsetof(lt_params, sauvola_r), 0, 0, 0, 256},
        {"skew_range_deg", offsetof(lt_params, skew_range_deg), 0, 0, -1, 46},
        {"skew_min_confidence", offsetof(lt_params, skew_min_confidence), 0, 0, -0.5, 1.5},
        {"deskew_min_deg", offsetof(lt_params, deskew_min_deg), 0, 0, -0.05, 90},
        {"speckle_max", offsetof(lt_params, speckle_max), 0, 0, -1, 1e300},
        {"rule_min_aspect", offsetof(lt_params, rule_min_aspect), 0, 0, 0.5, 1e6},
        {"picture_min_height", offsetof(lt_params, picture_min_height), 0, 0, -6, 1001},
        {"link_max_gap", offsetof(lt_params, link_max_gap), 0, 0, -5, 1e300},
        {"column_min_gap", offsetof(lt_params, column_min_gap), 0, 0, -1.5, 1e4},
        {"block_min_gap", offsetof(lt_params, block_min_gap), 0, 0, -1.2, 1e4},
        {"max_pixels", offsetof(lt_params, max_pixels), 1, 0, 0, 0},
        {"max_components", offsetof(lt_params, max_components), 1, 0, -1, 0},
    };
    lt_params p;
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        for (int side = 0; side < 3; side++) {
            if (side == 2 && (cases[i].is_long || cases[i].is_int)) continue; /* no NaN */
            if (side == 1 && cases[i].is_long) continue; /* LONG_MAX is in range */
            const double value = side == 0 ? cases[i].below : side == 1 ? cases[i].above : NAN;
            lt_params_default(&p);
            char *field = (char *)&p + cases[i].offset;
            if (cases[i].is_long)
                *(long *)field = (long)value;
            else if (cases[i].is_int)
                *(int *)field = (int)value;
            else
                *(double *)field = value;
            lt_layout *layout = NULL;
            lt_error err = {0};
            const int rc = lt_analyze(img, &p, &layout, &err);
            CHECK(rc == LT_EINVAL && !layout, "%s = %g: code %d", cases[i].field, value, rc);
            const size_t n = strlen(cases[i].field);
            CHECK(strncmp(err.message, cases[i].field, n) == 0 && err.message[n] == ':' &&
                      strstr(err.message, " is outside "),
                  "%s = %g: message \"%s\"", cases[i].field, value, err.message);
            lt_layout_free(layout);
        }
    }
    lt_params_default(&p);
    lt_layout *layout = NULL;
    lt_error err = {0};
    CHECK_INT(lt_analyze(img, &p, &layout, &err), 0, "param ranges: the defaults refused");
    lt_layout_free(layout);
    lt_image_free(img);
}

/* Standard error of this process goes to a file from begin_quiet() to end_quiet(), which
 * returns what was written there (the library must never print), NUL-terminated. */
static int saved_stderr = -1;

static void begin_quiet(void)
{
    fflush(stderr);
    saved_stderr = dup(2);
    FILE *fp = fopen(tmp("stderr.txt"), "w");
    if (saved_stderr < 0 || !fp) tu_die("cannot redirect standard error");
    dup2(fileno(fp), 2);
    fclose(fp);
}

static const char *end_quiet(void)
{
    static char text[512];
    fflush(stderr);
    dup2(saved_stderr, 2);
    close(saved_stderr);
    size_t n = 0;
    uint8_t *b = tu_read_file(tmp("stderr.txt"), &n);
    if (n >= sizeof text) n = sizeof text - 1;
    if (b) memcpy(text, b, n);
    text[b ? n : 0] = 0;
    free(b);
    char *nl = strchr(text, '\n');
    if (nl && nl[1] == 0) *nl = 0;
    return text;
}

/* Checks that opening or reading path fails with `code`, names the file in a one-line
 * message, returns no image, and prints nothing. */
static void expect_failure(const char *path, int code, long max_pixels, const char *what)
{
    lt_error err = {0};
    lt_source *src = NULL;
    lt_image *img = NULL;
    double t0 = tu_now_s();
    begin_quiet();
    int rc = lt_source_open(path, 10, &src, &err);
    if (rc == 0) rc = lt_source_read_page(src, 0, max_pixels, &img, &err);
    const char *printed = end_quiet();
    CHECK(printed[0] == 0, "%s: the library printed '%s' (it must never print)", what, printed);
    CHECK_INT(rc, code, "%s: return code (message '%s')", what, err.message);
    CHECK_INT(err.code, code, "%s: error code", what);
    CHECK(img == NULL, "%s: an image came back", what);
    CHECK(strstr(err.message, path) != NULL, "%s: message '%s' does not name the file", what,
          err.message);
    CHECK(strchr(err.message, '\n') == NULL && strlen(err.message) > strlen(path) + 2,
          "%s: message '%s' is not one line with a reason", what, err.message);
    CHECK(tu_now_s() - t0 < 2, "%s: took %.1f s", what, tu_now_s() - t0);
    lt_image_free(img);
    lt_source_free(src);
}

static void test_bad_input(void)
{
    tu_write_file(tmp("empty.png"), "", 0);
    expect_failure(tmp("empty.png"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "empty file");
    const char *text = "Minutes of the harbour committee: buoys, moorings and the slipway.\n";
    tu_write_file(tmp("notes.png"), text, strlen(text));
    expect_failure(tmp("notes.png"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "text file named .png");
    tu_write_file(tmp("short.tif"), "II*\0\x08\0\0\0\x01\0", 10);
    expect_failure(tmp("short.tif"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "ten bytes of TIFF");
    uint8_t bad_tiff[64] = "II*\0\x08\0\0\0";
    memset(bad_tiff + 8, 0xff, sizeof bad_tiff - 8); /* a directory of 65535 garbage entries */
    tu_write_file(tmp("corrupt.tif"), bad_tiff, sizeof bad_tiff);
    expect_failure(tmp("corrupt.tif"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "corrupt TIFF");

    /* Truncated PNG: half of a real file, and its first 30 bytes (IHDR cut). */
    PIX *g = gray_pix(200, 150, 9);
    write_pix(g, tmp("full.png"), IFF_PNG);
    size_t size = 0;
    uint8_t *bytes = tu_read_file(tmp("full.png"), &size);
    if (!bytes || size < 100) tu_die("cannot read back full.png");
    tu_write_file(tmp("half.png"), bytes, size / 2);
    expect_failure(tmp("half.png"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "truncated png (half)");
    tu_write_file(tmp("cut.png"), bytes, 30);
    expect_failure(tmp("cut.png"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "truncated png (30 B)");
    /* A real image over a small max_pixels. */
    expect_failure(tmp("full.png"), LT_ELIMIT, 200 * 150 - 1, "png over max_pixels");

    /* A PNG header claiming 100000 x 100000 pixels (10^10, over the 2 * 10^8 default), with a
     * correct CRC and no image data: LT_ELIMIT from the header, before any decoding. */
    uint8_t huge[8 + 25 + 12];
    memcpy(huge, "\x89PNG\r\n\x1a\n", 8);
    put32(huge + 8, 13);
    memcpy(huge + 12, "IHDR", 4);
    put32(huge + 16, 100000);
    put32(huge + 20, 100000);
    memcpy(huge + 24, "\x08\x00\x00\x00\x00", 5); /* 8-bit gray, no interlace */
    put32(huge + 29, crc32_png(huge + 12, 17));
    put32(huge + 33, 0);
    memcpy(huge + 37, "IEND", 4);
    put32(huge + 41, crc32_png(huge + 37, 4));
    tu_write_file(tmp("huge.png"), huge, sizeof huge);
    expect_failure(tmp("huge.png"), LT_ELIMIT, LT_DEFAULT_MAX_PIXELS, "png claiming 10^10 px");
    const char *pgm = "P5\n60000 60000\n255\n\x01\x02\x03\x04\x05\x06\x07\x08";
    tu_write_file(tmp("huge.pgm"), pgm, strlen(pgm));
    expect_failure(tmp("huge.pgm"), LT_ELIMIT, LT_DEFAULT_MAX_PIXELS, "pgm claiming 3.6e9 px");

    /* Damaged JPEGs and a PGM with maxval 0: the decoders' own messages go into the error,
     * nothing is printed. */
    PIX *j = smooth_pix(60, 40);
    write_pix(j, tmp("whole.jpg"), IFF_JFIF_JPEG);
    pixDestroy(&j);
    size_t jsize = 0;
    uint8_t *jpeg = tu_read_file(tmp("whole.jpg"), &jsize);
    size_t sos = 0;
    while (jpeg && sos + 1 < jsize && !(jpeg[sos] == 0xff && jpeg[sos + 1] == 0xda))
        sos++;
    tu_write_file(tmp("header-only.jpg"), jpeg, sos);
    expect_failure(tmp("header-only.jpg"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "jpeg header only");
    free(jpeg);
    uint8_t garbage[1026] = {0xff, 0xd8};
    for (int i = 2; i < (int)sizeof garbage; i++)
        garbage[i] = (uint8_t)(i * 37);
    tu_write_file(tmp("garbage.jpg"), garbage, sizeof garbage);
    expect_failure(tmp("garbage.jpg"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "jpeg SOI + garbage");
    char maxval0[64 + 600];
    int head = snprintf(maxval0, 64, "P5\n30 20\n0\n");
    memset(maxval0 + head, 0, 600);
    tu_write_file(tmp("maxval0.pgm"), maxval0, (size_t)head + 600);
    expect_failure(tmp("maxval0.pgm"), LT_EFORMAT, LT_DEFAULT_MAX_PIXELS, "pgm maxval 0");

    /* Missing file and a folder: LT_EIO. */
    expect_failure(tmp("no-such-page.png"), LT_EIO, LT_DEFAULT_MAX_PIXELS, "missing file");
    expect_failure(dir, LT_EIO, LT_DEFAULT_MAX_PIXELS, "a folder");
    /* From memory: garbage and nothing, named by the caller. */
    lt_error err = {0}, e2 = {0};
    lt_source *src = NULL;
    CHECK_INT(lt_source_open_memory(text, strlen(text), "clipboard", 1, &src, &err), LT_EFORMAT,
              "memory garbage: return code");
    CHECK(strstr(err.message, "clipboard") != NULL, "memory garbage: message '%s'", err.message);
    CHECK_INT(lt_source_open_memory(text, 0, "nothing", 1, &src, &e2), LT_EFORMAT,
              "memory empty: return code");
    CHECK(src == NULL, "bad memory input: a source came back");
    free(bytes);
    pixDestroy(&g);
}

/* The library as loaded reports the version the test was compiled against, as a string and
 * as a number that says the same (major * 10000 + minor * 100 + patch). */
static void test_version(void)
{
    CHECK(strcmp(lt_version(), LT_VERSION_STRING) == 0, "lt_version() '%s', header '%s'",
          lt_version(), LT_VERSION_STRING);
    CHECK_INT(lt_version_number(), LT_VERSION_NUMBER, "lt_version_number()");
    int major = -1, minor = -1, patch = -1, end = 0;
    sscanf(lt_version(), "%d.%d.%d%n", &major, &minor, &patch, &end);
    CHECK(end > 0 && lt_version()[end] == '\0', "lt_version() '%s' is not N.N.N", lt_version());
    CHECK_INT(major * 10000 + minor * 100 + patch, lt_version_number(),
              "version number from the string '%s'", lt_version());
}

int main(void)
{
    setMsgSeverity(L_SEVERITY_NONE);
    double t0 = tu_now_s();
    tu_mkdtemp(dir, sizeof dir);
    test_png();
    test_jpeg_pnm();
    test_tiff();
    test_resolution();
    test_implausible_resolution();
    test_param_ranges();
    test_cmyk_jpeg();
    test_bad_input();
    test_version();
    tu_rmtree(dir);
    struct stat st;
    CHECK(stat(dir, &st) != 0 && errno == ENOENT, "temp folder %s not removed", dir);
    printf("time %.2f s\n", tu_now_s() - t0);
    return tu_summary("test_load");
}

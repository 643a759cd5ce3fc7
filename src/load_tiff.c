/* load_tiff.c — TIFF pages through libtiff directly, from memory: every directory is a page;
 * 1-bit strips (G3/G4/packbits/none) are unpacked to ink as they are, everything else goes
 * through libtiff's RGBA reader to 8-bit gray. libtiff's messages are kept per handle (never
 * printed) and its allocations are capped. */
#include "config.h"
#include "internal.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <tiffio.h>

#define LT_TIFF_MAX_SINGLE_ALLOC ((tmsize_t)512 << 20) /* one libtiff allocation, bytes */

typedef struct tiff_input {
    const uint8_t *data;
    toff_t size, pos;
    char message[160]; /* first error libtiff reported */
} tiff_input;

static tmsize_t tiff_read(thandle_t h, void *buf, tmsize_t n)
{
    tiff_input *in = h;
    if (n < 0) return -1;
    toff_t left = in->pos < in->size ? in->size - in->pos : 0;
    tmsize_t got = (toff_t)n < left ? n : (tmsize_t)left;
    memcpy(buf, in->data + in->pos, (size_t)got);
    in->pos += (toff_t)got;
    return got;
}

static tmsize_t tiff_write(thandle_t h, void *buf, tmsize_t n)
{
    (void)h;
    (void)buf;
    (void)n;
    return -1;
}

static toff_t tiff_seek(thandle_t h, toff_t off, int whence)
{
    tiff_input *in = h;
    toff_t base = whence == SEEK_CUR ? in->pos : whence == SEEK_END ? in->size : 0;
    in->pos = base + off;
    return in->pos;
}

static int tiff_close(thandle_t h)
{
    (void)h;
    return 0;
}

static toff_t tiff_size(thandle_t h)
{
    return ((tiff_input *)h)->size;
}

static int tiff_map(thandle_t h, void **base, toff_t *size)
{
    tiff_input *in = h;
    *base = (void *)in->data;
    *size = in->size;
    return 1;
}

static void tiff_unmap(thandle_t h, void *base, toff_t size)
{
    (void)h;
    (void)base;
    (void)size;
}

#ifdef HAVE_TIFFCLIENTOPENEXT
static int tiff_keep_error(TIFF *tif, void *user, const char *module, const char *fmt, va_list ap)
{
    (void)tif;
    (void)module;
    tiff_input *in = user;
    if (!in->message[0]) vsnprintf(in->message, sizeof in->message, fmt, ap);
    return 1; /* handled: no global handler, nothing printed */
}

static int tiff_ignore_warning(TIFF *tif, void *user, const char *module, const char *fmt,
                               va_list ap)
{
    (void)tif;
    (void)user;
    (void)module;
    (void)fmt;
    (void)ap;
    return 1;
}
#endif

static TIFF *tiff_open(tiff_input *in)
{
#ifdef HAVE_TIFFCLIENTOPENEXT
    TIFFOpenOptions *opts = TIFFOpenOptionsAlloc();
    if (!opts) return NULL;
    TIFFOpenOptionsSetMaxSingleMemAlloc(opts, LT_TIFF_MAX_SINGLE_ALLOC);
    TIFFOpenOptionsSetErrorHandlerExtR(opts, tiff_keep_error, in);
    TIFFOpenOptionsSetWarningHandlerExtR(opts, tiff_ignore_warning, in);
    TIFF *tif = TIFFClientOpenExt("memory", "rm", in, tiff_read, tiff_write, tiff_seek, tiff_close,
                                  tiff_size, tiff_map, tiff_unmap, opts);
    TIFFOpenOptionsFree(opts);
    return tif;
#else
    /* Older libtiff: silence the process-wide handlers instead. */
    TIFFSetErrorHandler(NULL);
    TIFFSetWarningHandler(NULL);
    return TIFFClientOpen("memory", "rm", in, tiff_read, tiff_write, tiff_seek, tiff_close,
                          tiff_size, tiff_map, tiff_unmap);
#endif
}

int lt_tiff_count_pages(const uint8_t *data, size_t size, const char *name, int *pages,
                        lt_error *err)
{
    tiff_input in = {data, size, 0, ""};
    TIFF *tif = tiff_open(&in);
    if (!tif)
        return lt_error_set(err, LT_EFORMAT, "%s: corrupt TIFF (%s)", name,
                            in.message[0] ? in.message : "no readable page directory");
    tdir_t n = TIFFNumberOfDirectories(tif);
    TIFFClose(tif);
    if (n == 0) return lt_error_set(err, LT_EFORMAT, "%s: TIFF without pages", name);
    *pages = (int)n;
    return 0;
}

/* Unpacks the 1-bit strips of the current directory to ink; 0 on success, LT_ENOMEM, or -1
 * when the page cannot be decoded. */
static int read_bilevel(TIFF *tif, int min_is_white, lt_image *img)
{
    tmsize_t line = TIFFScanlineSize(tif);
    uint8_t *buf = malloc(line > 0 ? (size_t)line : 1);
    if (!buf) return LT_ENOMEM;
    if (line < (img->width + 7) / 8) {
        free(buf);
        return -1;
    }
    for (int y = 0; y < img->height; y++) {
        if (TIFFReadScanline(tif, buf, (uint32_t)y, 0) < 0) {
            free(buf);
            return -1;
        }
        uint8_t *dst = img->pixels + (size_t)y * img->width;
        for (int x = 0; x < img->width; x++) {
            int bit = (buf[x >> 3] >> (7 - (x & 7))) & 1;
            dst[x] = (uint8_t)(min_is_white ? bit : !bit);
        }
    }
    free(buf);
    return 0;
}

/* Reads the current directory through the RGBA reader into 8-bit gray (luminance by the
 * ITU-R BT.601 weights, alpha composited over white); 0 on success, LT_ENOMEM, or -1 when the
 * page cannot be decoded. */
static int read_rgba(TIFF *tif, lt_image *img)
{
    uint32_t *raster = lt_alloc_array((size_t)img->width * img->height, sizeof *raster);
    if (!raster) return LT_ENOMEM;
    if (!TIFFReadRGBAImageOriented(tif, (uint32_t)img->width, (uint32_t)img->height, raster,
                                   ORIENTATION_TOPLEFT, 1)) {
        free(raster);
        return -1;
    }
    const size_t n = (size_t)img->width * img->height;
    for (size_t i = 0; i < n; i++) {
        uint32_t p = raster[i];
        unsigned r = TIFFGetR(p), g = TIFFGetG(p), b = TIFFGetB(p), a = TIFFGetA(p);
        unsigned lum = (299 * r + 587 * g + 114 * b + 500) / 1000;
        img->pixels[i] = (uint8_t)((lum * a + 255u * (255u - a) + 127u) / 255u);
    }
    free(raster);
    return 0;
}

int lt_tiff_read_page(const uint8_t *data, size_t size, const char *name, int index,
                      long max_pixels, lt_image **out, lt_error *err)
{
    *out = NULL;
    tiff_input in = {data, size, 0, ""};
    TIFF *tif = tiff_open(&in);
    if (!tif) return lt_error_set(err, LT_EFORMAT, "%s: corrupt TIFF", name);
    uint32_t w = 0, h = 0;
    uint16_t bps = 1, spp = 1, photometric = PHOTOMETRIC_MINISWHITE, unit = RESUNIT_INCH;
    float xres = 0;
    int rc = 0;
    if (!TIFFSetDirectory(tif, (tdir_t)index) || !TIFFGetField(tif, TIFFTAG_IMAGEWIDTH, &w) ||
        !TIFFGetField(tif, TIFFTAG_IMAGELENGTH, &h) || w == 0 || h == 0) {
        rc = lt_error_set(err, LT_EFORMAT, "%s: page %d: unreadable page directory", name,
                          index + 1);
        goto done;
    }
    if ((double)w * (double)h > (double)max_pixels) {
        rc = lt_error_set(err, LT_ELIMIT, "%s: page %d: %u x %u pixels, more than the limit of %ld",
                          name, index + 1, w, h, max_pixels);
        goto done;
    }
    TIFFGetFieldDefaulted(tif, TIFFTAG_BITSPERSAMPLE, &bps);
    TIFFGetFieldDefaulted(tif, TIFFTAG_SAMPLESPERPIXEL, &spp);
    TIFFGetField(tif, TIFFTAG_PHOTOMETRIC, &photometric);
    const int bilevel =
        bps == 1 && spp == 1 && !TIFFIsTiled(tif) &&
        (photometric == PHOTOMETRIC_MINISWHITE || photometric == PHOTOMETRIC_MINISBLACK);
    lt_image *img = lt_image_new((int)w, (int)h, bilevel ? LT_IMAGE_INK : LT_IMAGE_GRAY);
    if (!img) {
        rc = lt_error_set(err, LT_ENOMEM, "%s: page %d: out of memory", name, index + 1);
        goto done;
    }
    int bad = bilevel ? read_bilevel(tif, photometric == PHOTOMETRIC_MINISWHITE, img)
                      : read_rgba(tif, img);
    if (bad == LT_ENOMEM) {
        lt_image_free(img);
        rc = lt_error_set(err, LT_ENOMEM, "%s: page %d: out of memory", name, index + 1);
        goto done;
    }
    if (bad || in.message[0]) { /* an error libtiff reported but read through counts too */
        lt_image_free(img);
        rc = lt_error_set(err, LT_EFORMAT, "%s: page %d: cannot decode (%s)", name, index + 1,
                          in.message[0] ? in.message : "corrupt or truncated");
        goto done;
    }
    double dpi = 0; /* stored as a rational or (legally) as a double, read as a float */
    if (TIFFGetField(tif, TIFFTAG_XRESOLUTION, &xres)) {
        TIFFGetFieldDefaulted(tif, TIFFTAG_RESOLUTIONUNIT, &unit);
        dpi = unit == RESUNIT_CENTIMETER ? xres * 2.54 : unit == RESUNIT_INCH ? xres : 0;
    }
    lt_image_set_file_dpi(img, dpi);
    *out = img;
done:
    TIFFClose(tif);
    return rc;
}

/* load.c — reads PNG (libpng), TIFF (every page, load_tiff.c), JPEG (libjpeg), and PNM and
 * the other formats leptonica decodes, and normalises each page to 8-bit gray, or to an ink image when
 * the page is 1-bit.
 * Files are read into memory once; every page's size is checked before it is decoded. */
#include "internal.h"

#include <leptonica/allheaders.h>
#include <jpeglib.h>
#include <png.h>
#include <setjmp.h>

#include <errno.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#define LT_FORMAT_PROBE_BYTES 12 /* the first bytes that tell an image format */

struct lt_source {
    char *name;
    uint8_t *data;
    size_t size;
    int format; /* leptonica IFF_* */
    int pages;
};

static int is_tiff(int format)
{
    return format == IFF_TIFF || format == IFF_TIFF_PACKBITS || format == IFF_TIFF_RLE ||
           format == IFF_TIFF_G3 || format == IFF_TIFF_G4 || format == IFF_TIFF_LZW ||
           format == IFF_TIFF_ZIP || format == IFF_TIFF_JPEG;
}

const char *lt_source_format(const lt_source *src)
{
    if (!src) return "unknown";
    if (is_tiff(src->format)) return "tiff";
    switch (src->format) {
    case IFF_PNG: return "png";
    case IFF_JFIF_JPEG: return "jpeg";
    case IFF_PNM: return "pnm";
    case IFF_BMP: return "bmp";
    case IFF_GIF: return "gif";
    case IFF_WEBP: return "webp";
    case IFF_JP2: return "jp2";
    default: return "unknown";
    }
}

/* Leptonica's IFF_* format of the first bytes of a file, IFF_UNKNOWN when it is no image
 * format that lineate reads (or too short to tell). */
static int format_of(const uint8_t *data, size_t size)
{
    l_int32 format = IFF_UNKNOWN;
    if (size < LT_FORMAT_PROBE_BYTES || findFileFormatBuffer(data, &format)) return IFF_UNKNOWN;
    return strcmp(lt_source_format(&(lt_source){.format = format}), "unknown") ? format
                                                                               : IFF_UNKNOWN;
}

/* Reads all of `fp` into a new buffer. Fails beyond LT_MAX_FILE_BYTES, before reading when
 * the file's size is known, else as the stream grows past it; and as soon as the first bytes
 * show that the input is not an image, so that a stream of noise is not read to its end. */
static int slurp(FILE *fp, const char *name, uint8_t **data, size_t *size, lt_error *err)
{
    struct stat st;
    const int sized = fstat(fileno(fp), &st) == 0 && S_ISREG(st.st_mode);
    if (sized && st.st_size > LT_MAX_FILE_BYTES)
        return lt_error_set(err, LT_ELIMIT, "%s: file larger than %lld bytes", name,
                            (long long)LT_MAX_FILE_BYTES);
    size_t cap = sized && st.st_size > 0 ? (size_t)st.st_size + 1 : 1 << 16, len = 0;
    uint8_t *buf = malloc(cap);
    if (!buf) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    int probed = 0;
    for (;;) {
        if (len == cap) {
            if ((long long)cap > LT_MAX_FILE_BYTES) {
                free(buf);
                return lt_error_set(err, LT_ELIMIT, "%s: file larger than %lld bytes", name,
                                    (long long)LT_MAX_FILE_BYTES);
            }
            size_t bigger_cap = 2 * cap;
            if ((long long)bigger_cap > LT_MAX_FILE_BYTES + 1)
                bigger_cap = (size_t)LT_MAX_FILE_BYTES + 1; /* one byte more tells "too large" */
            uint8_t *bigger = realloc(buf, bigger_cap);
            if (!bigger) {
                free(buf);
                return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
            }
            buf = bigger;
            cap = bigger_cap;
        }
        const size_t room = cap - len, first = 1 << 16; /* a first read small enough to probe */
        size_t got = fread(buf + len, 1, probed || room < first ? room : first, fp);
        len += got;
        if (!probed && len >= LT_FORMAT_PROBE_BYTES) {
            probed = 1;
            if (format_of(buf, len) == IFF_UNKNOWN) {
                free(buf);
                return lt_error_set(err, LT_EFORMAT, "%s: not an image file (unknown format)",
                                    name);
            }
        }
        if (got == 0) break;
    }
    if (ferror(fp)) {
        int e = errno;
        free(buf);
        return lt_error_set(err, LT_EIO, "%s: read error: %s", name, strerror(e));
    }
    *data = buf;
    *size = len;
    return 0;
}

/* ---- leptonica's messages: kept per thread, never printed ---------------------------------
 * Some of leptonica's readers write to stderr whatever the message severity (the PNM reader's
 * "maxval = 0"); its stderr handler is replaced once for the process by one that keeps the
 * first message of the current thread, so it can go into the page's error. */
static _Thread_local char lept_message[160];

static void lept_keep_message(const char *msg)
{
    if (lept_message[0]) return;
    snprintf(lept_message, sizeof lept_message, "%s", msg);
    size_t n = strlen(lept_message);
    while (n > 0 && (lept_message[n - 1] == '\n' || lept_message[n - 1] == ' '))
        lept_message[--n] = '\0';
}

static void lept_silence(void)
{
    setMsgSeverity(L_SEVERITY_NONE);
    leptSetStderrHandler(lept_keep_message);
}

static void lept_quiet(void)
{
    static pthread_once_t once = PTHREAD_ONCE_INIT;
    pthread_once(&once, lept_silence);
    lept_message[0] = '\0';
}

/* " (leptonica's message)" when it gave one since lept_quiet(), else "". */
static const char *lept_reason(char *buf, size_t size)
{
    if (lept_message[0])
        snprintf(buf, size, " (%s)", lept_message);
    else
        buf[0] = '\0';
    return buf;
}

static int open_buffer(uint8_t *data, size_t size, const char *name, long max_pages,
                       lt_source **out, lt_error *err)
{
    *out = NULL;
    lept_quiet(); /* the library never prints */
    if (size == 0) {
        free(data);
        return lt_error_set(err, LT_EFORMAT, "%s: empty file", name);
    }
    const int format = format_of(data, size);
    if (format == IFF_UNKNOWN) {
        free(data);
        return lt_error_set(err, LT_EFORMAT, "%s: not an image file (unknown format)", name);
    }
    int pages = 1;
    if (is_tiff(format) && lt_tiff_count_pages(data, size, name, &pages, err)) {
        free(data);
        return err ? err->code : LT_EFORMAT;
    }
    if (pages > max_pages) {
        free(data);
        return lt_error_set(err, LT_ELIMIT, "%s: %d pages, more than the limit of %ld", name, pages,
                            max_pages);
    }
    lt_source *src = calloc(1, sizeof *src);
    char *copy = strdup(name);
    if (!src || !copy) {
        free(src);
        free(copy);
        free(data);
        return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    }
    src->name = copy;
    src->data = data;
    src->size = size;
    src->format = format;
    src->pages = pages;
    *out = src;
    return 0;
}

int lt_source_open(const char *path, long max_pages, lt_source **out, lt_error *err)
{
    *out = NULL;
    int use_stdin = strcmp(path, "-") == 0;
    const char *name = use_stdin ? "stdin" : path;
    FILE *fp = use_stdin ? stdin : fopen(path, "rb");
    if (!fp) return lt_error_set(err, LT_EIO, "%s: %s", name, strerror(errno));
    uint8_t *data = NULL;
    size_t size = 0;
    int rc = slurp(fp, name, &data, &size, err);
    if (!use_stdin) fclose(fp);
    if (rc) return rc;
    return open_buffer(data, size, name, max_pages, out, err);
}

int lt_source_open_memory(const void *data, size_t size, const char *name, long max_pages,
                          lt_source **out, lt_error *err)
{
    *out = NULL;
    uint8_t *copy = malloc(size ? size : 1);
    if (!copy) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    if (size) memcpy(copy, data, size);
    return open_buffer(copy, size, name, max_pages, out, err);
}

int lt_source_pages(const lt_source *src)
{
    return src ? src->pages : 0;
}

const char *lt_source_name(const lt_source *src)
{
    return src ? src->name : "";
}

void lt_source_free(lt_source *src)
{
    if (!src) return;
    free(src->name);
    free(src->data);
    free(src);
}

/* Copies a 1-bpp leptonica image (1 = black) into an ink image. */
static void copy_ink(PIX *pix, lt_image *img)
{
    const int w = img->width, wpl = pixGetWpl(pix);
    const l_uint32 *data = pixGetData(pix);
    for (int y = 0; y < img->height; y++) {
        const l_uint32 *row = data + (size_t)y * wpl;
        uint8_t *dst = img->pixels + (size_t)y * w;
        for (int x = 0; x < w; x++)
            dst[x] = (row[x >> 5] >> (31 - (x & 31))) & 1;
    }
}

/* Copies an 8-bpp leptonica image without colormap into a gray image. */
static void copy_gray(PIX *pix, lt_image *img)
{
    const int w = img->width, wpl = pixGetWpl(pix);
    const l_uint32 *data = pixGetData(pix);
    for (int y = 0; y < img->height; y++) {
        const l_uint32 *row = data + (size_t)y * wpl;
        uint8_t *dst = img->pixels + (size_t)y * w;
        for (int x = 0; x < w; x++)
            dst[x] = (row[x >> 2] >> (8 * (3 - (x & 3)))) & 0xff;
    }
}

/* Converts any leptonica image to 1-bpp-black or 8-bpp-gray without colormap (new PIX). */
static PIX *normalise(PIX *pix)
{
    int depth = pixGetDepth(pix);
    if (depth == 1) {
        if (!pixGetColormap(pix)) return pixClone(pix);
        return pixRemoveColormap(pix, REMOVE_CMAP_TO_BINARY);
    }
    if (depth == 32 && pixGetSpp(pix) == 4) {
        /* Transparent areas are paper: composite over white before taking luminance. */
        PIX *flat = pixAlphaBlendUniform(pix, 0xffffff00);
        if (!flat) return NULL;
        PIX *gray = pixConvertTo8(flat, 0);
        pixDestroy(&flat);
        return gray;
    }
    return pixConvertTo8(pix, 0);
}

static int too_many_pixels(const lt_source *src, unsigned long w, unsigned long h, long max_pixels,
                           lt_error *err)
{
    return lt_error_set(err, LT_ELIMIT, "%s: page 1: %lu x %lu pixels, more than the limit of %ld",
                        src->name, w, h, max_pixels);
}

static unsigned long big_endian32(const uint8_t *p)
{
    return (unsigned long)p[0] << 24 | (unsigned long)p[1] << 16 | (unsigned long)p[2] << 8 | p[3];
}

/* ---- PNG through libpng directly: its messages are kept, never printed ------------------- */
typedef struct png_input {
    const uint8_t *data;
    size_t size, pos;
    char message[160];
} png_input;

static void png_read_memory(png_structp png, png_bytep out, png_size_t n)
{
    png_input *in = png_get_io_ptr(png);
    if (n > in->size - in->pos) png_error(png, "truncated data");
    memcpy(out, in->data + in->pos, n);
    in->pos += n;
}

static void png_fail(png_structp png, png_const_charp msg)
{
    png_input *in = png_get_error_ptr(png);
    snprintf(in->message, sizeof in->message, "%s", msg);
    png_longjmp(png, 1);
}

static void png_ignore_warning(png_structp png, png_const_charp msg)
{
    (void)png;
    (void)msg;
}

/* Decodes a PNG to 8-bit gray (colour by luminance, alpha composited over white paper) or,
 * for 1-bit gray or two-colour palette, to an ink image (dark = ink). The size is checked
 * against max_pixels as soon as the header is read. */
static int decode_png(const lt_source *src, long max_pixels, lt_image **out, lt_error *err)
{
    /* The size from IHDR, which the PNG specification puts first, before libpng reads on. */
    const uint8_t *ihdr = src->data + 8;
    if (src->size >= 24 && !memcmp(ihdr + 4, "IHDR", 4)) {
        const unsigned long w = big_endian32(ihdr + 8), h = big_endian32(ihdr + 12);
        if ((double)w * (double)h > (double)max_pixels)
            return too_many_pixels(src, w, h, max_pixels, err);
    }
    png_input in = {src->data, src->size, 0, "corrupt data"};
    png_structp png =
        png_create_read_struct(PNG_LIBPNG_VER_STRING, &in, png_fail, png_ignore_warning);
    png_infop info = png ? png_create_info_struct(png) : NULL;
    uint8_t *volatile pixels = NULL;
    png_bytep *volatile rows = NULL;
    lt_image *volatile img = NULL;
    if (!png || !info) {
        png_destroy_read_struct(png ? &png : NULL, NULL, NULL);
        return lt_error_set(err, LT_ENOMEM, "%s: out of memory", src->name);
    }
    if (setjmp(png_jmpbuf(png))) {
        png_destroy_read_struct(&png, &info, NULL);
        free(pixels);
        free(rows);
        lt_image_free(img);
        return lt_error_set(err, LT_EFORMAT, "%s: page 1: cannot decode PNG (%s)", src->name,
                            in.message);
    }
    png_set_read_fn(png, &in, png_read_memory);
    png_set_user_limits(png, 1u << 24, 1u << 24);
    png_set_chunk_malloc_max(png, 64u << 20);
    png_read_info(png, info);
    const png_uint_32 w = png_get_image_width(png, info), h = png_get_image_height(png, info);
    const int depth = png_get_bit_depth(png, info), type = png_get_color_type(png, info);
    const int one_bit = depth == 1 &&
                        (type == PNG_COLOR_TYPE_GRAY || type == PNG_COLOR_TYPE_PALETTE) &&
                        !png_get_valid(png, info, PNG_INFO_tRNS);
    if (type == PNG_COLOR_TYPE_PALETTE) png_set_palette_to_rgb(png);
    if (type == PNG_COLOR_TYPE_GRAY && depth < 8) png_set_expand_gray_1_2_4_to_8(png);
    if (png_get_valid(png, info, PNG_INFO_tRNS)) png_set_tRNS_to_alpha(png);
    if (depth == 16) png_set_strip_16(png);
    if (type & PNG_COLOR_MASK_COLOR || type == PNG_COLOR_TYPE_PALETTE)
        png_set_rgb_to_gray_fixed(png, 1, -1, -1);
    png_set_interlace_handling(png);
    png_read_update_info(png, info);
    const int channels = png_get_channels(png, info); /* 1 (gray) or 2 (gray + alpha) */
    const size_t rowbytes = png_get_rowbytes(png, info);
    if (channels < 1 || channels > 2 || rowbytes != (size_t)w * channels)
        png_error(png, "unsupported pixel layout");
    pixels = malloc(rowbytes * h);
    rows = malloc(sizeof *rows * h);
    img = lt_image_new((int)w, (int)h, one_bit ? LT_IMAGE_INK : LT_IMAGE_GRAY);
    if (!pixels || !rows || !img) png_error(png, "out of memory");
    for (png_uint_32 y = 0; y < h; y++)
        rows[y] = pixels + (size_t)y * rowbytes;
    png_read_image(png, rows);
    png_uint_32 res_x = 0, res_y = 0;
    int unit = 0;
    if (png_get_pHYs(png, info, &res_x, &res_y, &unit) && unit == PNG_RESOLUTION_METER)
        lt_image_set_file_dpi(img, res_x * 0.0254);
    png_destroy_read_struct(&png, &info, NULL);
    const size_t n = (size_t)w * h;
    if (channels == 2) {
        for (size_t i = 0; i < n; i++) {
            unsigned v = pixels[2 * i], a = pixels[2 * i + 1];
            img->pixels[i] = (uint8_t)((v * a + 255u * (255u - a) + 127u) / 255u);
        }
    } else if (one_bit) {
        for (size_t i = 0; i < n; i++)
            img->pixels[i] = pixels[i] < 128;
    } else {
        memcpy(img->pixels, pixels, n);
    }
    free(pixels);
    free(rows);
    *out = img;
    return 0;
}

/* ---- JPEG through libjpeg directly: messages kept, never printed ------------------------- */
typedef struct jpeg_failure {
    struct jpeg_error_mgr base;
    jmp_buf jump;
    char message[JMSG_LENGTH_MAX];
} jpeg_failure;

static void jpeg_fail(j_common_ptr cinfo)
{
    jpeg_failure *f = (jpeg_failure *)cinfo->err;
    cinfo->err->format_message(cinfo, f->message); /* the error, not an earlier warning */
    longjmp(f->jump, 1);
}

/* A warning ("Premature end of JPEG file", "Corrupt JPEG data") means a damaged page that the
 * decoder would fill in with gray: it is kept and the page fails after decoding. */
static void jpeg_keep_warning(j_common_ptr cinfo)
{
    jpeg_failure *f = (jpeg_failure *)cinfo->err;
    if (!f->message[0]) cinfo->err->format_message(cinfo, f->message);
}

/* Gray of one row of CMYK samples as libjpeg gives them: inverted (0 = full ink) when the file
 * has Adobe's marker, as Adobe's applications write it, else plain. Red is
 * (1 - C)(1 - K), and so on, then luminance by the ITU-R BT.601 weights, as for TIFF. */
static void cmyk_row_to_gray(const uint8_t *cmyk, int width, int inverted, uint8_t *gray)
{
    for (int x = 0; x < width; x++, cmyk += 4) {
        unsigned c = cmyk[0], m = cmyk[1], y = cmyk[2], k = cmyk[3];
        if (!inverted) {
            c = 255 - c;
            m = 255 - m;
            y = 255 - y;
            k = 255 - k;
        }
        /* r = c * k / 255 etc.; luminance weights sum to 1000 */
        unsigned lum = (299 * c + 587 * m + 114 * y) * k;
        gray[x] = (uint8_t)((lum + 127500) / 255000);
    }
}

/* Decodes a JPEG to 8-bit gray: libjpeg converts gray, YCbCr and RGB to luminance itself;
 * CMYK and YCCK (which libjpeg turns into CMYK) are converted here. The size is checked
 * against max_pixels as soon as the header is read. */
static int decode_jpeg(const lt_source *src, long max_pixels, lt_image **out, lt_error *err)
{
    struct jpeg_decompress_struct cinfo;
    jpeg_failure failure;
    lt_image *volatile img = NULL;
    uint8_t *volatile cmyk = NULL;
    cinfo.err = jpeg_std_error(&failure.base);
    failure.base.error_exit = jpeg_fail;
    failure.base.output_message = jpeg_keep_warning;
    failure.message[0] = 0;
    if (setjmp(failure.jump)) {
        jpeg_destroy_decompress(&cinfo);
        lt_image_free(img);
        free(cmyk);
        return lt_error_set(err, LT_EFORMAT, "%s: page 1: cannot decode JPEG (%s)", src->name,
                            failure.message);
    }
    jpeg_create_decompress(&cinfo);
    jpeg_mem_src(&cinfo, src->data, (unsigned long)src->size);
    jpeg_read_header(&cinfo, TRUE);
    if ((double)cinfo.image_width * cinfo.image_height > (double)max_pixels) {
        const unsigned long w = cinfo.image_width, h = cinfo.image_height;
        jpeg_destroy_decompress(&cinfo);
        return too_many_pixels(src, w, h, max_pixels, err);
    }
    const int four_channel =
        cinfo.jpeg_color_space == JCS_CMYK || cinfo.jpeg_color_space == JCS_YCCK;
    cinfo.out_color_space = four_channel ? JCS_CMYK : JCS_GRAYSCALE;
    jpeg_start_decompress(&cinfo);
    if (cinfo.output_components != (four_channel ? 4 : 1)) {
        snprintf(failure.message, sizeof failure.message, "unsupported colour space");
        longjmp(failure.jump, 1);
    }
    img = lt_image_new((int)cinfo.output_width, (int)cinfo.output_height, LT_IMAGE_GRAY);
    if (four_channel) cmyk = lt_alloc_array(cinfo.output_width, 4);
    if (!img || (four_channel && !cmyk)) {
        snprintf(failure.message, sizeof failure.message, "out of memory");
        longjmp(failure.jump, 1);
    }
    while (cinfo.output_scanline < cinfo.output_height) {
        uint8_t *gray = img->pixels + (size_t)cinfo.output_scanline * img->width;
        JSAMPROW row = four_channel ? cmyk : gray;
        if (jpeg_read_scanlines(&cinfo, &row, 1) != 1) break; /* a warning says why */
        if (four_channel) cmyk_row_to_gray(cmyk, img->width, cinfo.saw_Adobe_marker, gray);
    }
    if (cinfo.saw_JFIF_marker && cinfo.X_density > 0)
        lt_image_set_file_dpi(img, cinfo.density_unit == 1   ? cinfo.X_density
                                   : cinfo.density_unit == 2 ? cinfo.X_density * 2.54
                                                             : 0);
    if (failure.message[0]) longjmp(failure.jump, 1); /* damaged: a warning was given */
    jpeg_finish_decompress(&cinfo);
    jpeg_destroy_decompress(&cinfo);
    free(cmyk);
    *out = img;
    return 0;
}

int lt_source_read_page(lt_source *src, int index, long max_pixels, lt_image **out, lt_error *err)
{
    *out = NULL;
    if (!src || index < 0 || index >= src->pages)
        return lt_error_set(err, LT_EINVAL, "%s: no page %d", src ? src->name : "?", index + 1);
    if (is_tiff(src->format))
        return lt_tiff_read_page(src->data, src->size, src->name, index, max_pixels, out, err);
    if (src->format == IFF_PNG) return decode_png(src, max_pixels, out, err);
    if (src->format == IFF_JFIF_JPEG) return decode_jpeg(src, max_pixels, out, err);
    lept_quiet();
    char why[sizeof lept_message + 4];
    l_int32 w = 0, h = 0, bps = 0, spp = 0, cmap = 0, fmt = 0;
    int bad = pixReadHeaderMem(src->data, src->size, &fmt, &w, &h, &bps, &spp, &cmap);
    if (bad || w <= 0 || h <= 0)
        return lt_error_set(err, LT_EFORMAT, "%s: page %d: unreadable image header%s", src->name,
                            index + 1, lept_reason(why, sizeof why));
    if ((double)w * (double)h > (double)max_pixels)
        return lt_error_set(err, LT_ELIMIT,
                            "%s: page %d: %d x %d pixels, more than the limit of %ld", src->name,
                            index + 1, (int)w, (int)h, max_pixels);
    PIX *pix = pixReadMem(src->data, src->size);
    if (!pix)
        return lt_error_set(err, LT_EFORMAT, "%s: page %d: cannot decode (%s)", src->name,
                            index + 1, lept_message[0] ? lept_message : "corrupt or truncated");
    if (pixGetWidth(pix) != w || pixGetHeight(pix) != h) {
        pixDestroy(&pix);
        return lt_error_set(err, LT_EFORMAT, "%s: page %d: size differs from its header", src->name,
                            index + 1);
    }
    PIX *norm = normalise(pix);
    double dpi = pixGetXRes(pix);
    pixDestroy(&pix);
    if (!norm)
        return lt_error_set(err, LT_EFORMAT, "%s: page %d: unsupported pixel format", src->name,
                            index + 1);
    int ink = pixGetDepth(norm) == 1;
    lt_image *img = lt_image_new(w, h, ink ? LT_IMAGE_INK : LT_IMAGE_GRAY);
    if (!img) {
        pixDestroy(&norm);
        return lt_error_set(err, LT_ENOMEM, "%s: page %d: out of memory", src->name, index + 1);
    }
    if (ink)
        copy_ink(norm, img);
    else
        copy_gray(norm, img);
    pixDestroy(&norm);
    lt_image_set_file_dpi(img, dpi);
    *out = img;
    return 0;
}

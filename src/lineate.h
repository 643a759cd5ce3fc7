/* lineate.h — the public interface of liblineate: classical layout analysis of page images.
 *
 * Pipeline: load -> Sauvola binarization -> projection-profile skew -> connected components
 * -> classification -> docstrum-style text lines -> recursive XY-cut blocks -> reading order.
 *
 * Ownership: every `lt_*_new`/`lt_*_open`/`lt_analyze`/`lt_load_*` result is owned by the
 * caller and released with the matching `*_free`, which accepts NULL. Inputs are never
 * modified or retained. The library never prints and never exits: functions return 0 or a
 * negative `LT_E*` code and describe the failure in the caller's `lt_error`.
 *
 * Coordinates: integer boxes are [left, top, right, bottom) in pixels of the image as given,
 * right and bottom exclusive; points are continuous (pixel x covers [x, x+1)). Angles are in
 * degrees, positive when text lines rise to the right as the image is displayed.
 *
 * Threads: a call works on its arguments and what it allocates; the library's only state of
 * its own is a once-flag and a per-thread buffer for leptonica's last message (below), with
 * no caches and no locks held across calls. So several threads may run any calls at once on
 * different pages: lt_source_open*, lt_source_read_page, lt_analyze*, the stage functions,
 * and the writers lt_layout_to_* (libxml2 set up first, below), each with its own lt_error.
 * Objects a call takes as const (an image, lt_params, a layout) may be shared by threads that
 * only read them; an object that a call writes or frees belongs to one thread at a time.
 * lt_source_read_page leaves its source unchanged and decodes with a decoder of its own over
 * the source's bytes, so threads may read different pages of one source at once (never while
 * another frees it). What is shared with the rest of the process:
 *  - leptonica: the first lt_source_open* or lt_source_read_page of the process (once,
 *    by pthread_once) sets leptonica's process-wide message severity to none
 *    (setMsgSeverity) and its stderr handler (leptSetStderrHandler) to one that keeps the
 *    message in a per-thread buffer for lineate's error text. From then on leptonica prints
 *    nothing in the whole process, the embedding program's own leptonica calls included; an
 *    embedder who installs another handler afterwards takes those messages from lineate's
 *    errors. Formats other than PNG, JPEG and TIFF are decoded by leptonica from memory.
 *  - libpng and libjpeg: a decoder and an error handler of its own for each page, errors
 *    caught by setjmp within the call; nothing process-wide.
 *  - libtiff: error and warning handlers per handle (libtiff >= 4.5, TIFFOpenOptions). Built
 *    against an older libtiff, every TIFF opening instead sets libtiff's process-wide error
 *    and warning handlers to none, which silences libtiff for the whole process.
 *  - libxml2 (lt_layout_to_page_xml, lt_layout_to_alto): a document of its own per call,
 *    but libxml2's global state is set up lazily, which is not safe to race (libxml2 2.9);
 *    call xmlInitParser() once before threads use these writers, as the lineate command does.
 *  - cJSON: its default allocator; an embedder who installs cJSON_InitHooks does so for
 *    lineate too, before starting threads.
 *  - the message of a failed file read comes from strerror(), which POSIX does not require
 *    to be thread-safe (glibc gives the text of a known error code as a constant string).
 */
#ifndef LINEATE_H
#define LINEATE_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Marks the functions liblineate.so exports; the library is built with every other symbol
 * hidden, so an internal function cannot be reached or relied upon from outside. */
#if defined(__GNUC__) && !defined(_WIN32)
#define LT_API __attribute__((visibility("default")))
#else
#define LT_API
#endif

/* The version compiled against; lt_version() and lt_version_number() give the one loaded at
 * run time (they differ when a program runs with another build of the shared library). */
#define LT_VERSION_STRING "1.0.0"
#define LT_VERSION_NUMBER 10000      /* major * 10000 + minor * 100 + patch */
LT_API const char *lt_version(void); /* a static string, LT_VERSION_STRING of the library's build */
LT_API int lt_version_number(void);  /* LT_VERSION_NUMBER of the library's build */
/* Version of the JSON layout format written by lt_json_*; bumped on incompatible changes. */
#define LT_FORMAT_NAME "lineate-layout-1"

/* ---- errors ------------------------------------------------------------------------- */
enum {
    LT_OK = 0,
    LT_EINVAL = -1,  /* bad argument or parameter */
    LT_ENOMEM = -2,  /* allocation failed */
    LT_EIO = -3,     /* file could not be read or written */
    LT_EFORMAT = -4, /* not an image, or an image that cannot be decoded */
    LT_ELIMIT = -5,  /* input exceeds a documented limit */
    LT_EPARSE = -6   /* malformed JSON (layout or ground-truth reader) */
};

typedef struct lt_error {
    int code;          /* one of LT_E*, 0 when nothing failed */
    char message[320]; /* one line, no trailing newline: "file: reason" or "reason" */
} lt_error;

/* Records the first failure only: later calls keep the original message. Returns `code`. */
LT_API int lt_error_set(lt_error *err, int code, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

/* ---- limits (named, documented; each has a parameter to change it) ------------------- */
#define LT_DEFAULT_MAX_PIXELS (200L * 1000L * 1000L) /* 200 Mpx: 600 dpi A2 fits */
#define LT_DEFAULT_MAX_PAGES 10000                   /* pages per multi-page TIFF */
#define LT_DEFAULT_MAX_COMPONENTS 2000000            /* beyond this the page is noise */
#define LT_MAX_FILE_BYTES (2LL * 1024 * 1024 * 1024) /* files are read into memory */
/* Plausible resolutions, dots per inch: the range of --dpi, and of a resolution read from a
 * file (a file's value outside it is ignored, and the page analysed at the assumed one). */
#define LT_MIN_DPI 10
#define LT_MAX_DPI 100000
/* Largest size of a parameter in text units (lt_params): with the text height at most a
 * third of LT_MAX_DPI, every size derived from one stays far inside an int. */
#define LT_MAX_TEXT_UNITS 1000.0

/* ---- images --------------------------------------------------------------------------- */
/* A page image, one byte per pixel, row-major, no padding (stride == width).
 * kind LT_IMAGE_GRAY: 0 = black .. 255 = white. kind LT_IMAGE_INK: 1 = ink, 0 = paper. */
enum { LT_IMAGE_GRAY = 0, LT_IMAGE_INK = 1 };

typedef struct lt_image {
    int width, height;
    int kind;         /* LT_IMAGE_GRAY or LT_IMAGE_INK */
    double dpi;       /* resolution from the file, 0 when the file gives none or an
                         implausible one (outside LT_MIN_DPI..LT_MAX_DPI) */
    int dpi_rejected; /* 1 when the file gave a resolution outside that range (ignored) */
    uint8_t *pixels;  /* width * height bytes, owned by the image */
} lt_image;

LT_API lt_image *lt_image_new(int width, int height, int kind); /* zero-filled; NULL on failure */
LT_API void lt_image_free(lt_image *img);

/* An opened image file (or memory buffer): one or more pages. */
typedef struct lt_source lt_source;

/* Opens `path` ("-" reads standard input) and counts its pages. `name` in messages is `path`
 * ("stdin" for "-"). Fails with LT_EIO, LT_EFORMAT or LT_ELIMIT (too many pages, file too
 * large). */
LT_API int lt_source_open(const char *path, long max_pages, lt_source **out, lt_error *err);
/* Same from a caller's buffer, which is copied. `name` is used in messages. */
LT_API int lt_source_open_memory(const void *data, size_t size, const char *name, long max_pages,
                                 lt_source **out, lt_error *err);
LT_API int lt_source_pages(const lt_source *src);
LT_API const char *lt_source_name(const lt_source *src);
/* Short format name of the file: "png", "tiff", "jpeg", "pnm", ... */
LT_API const char *lt_source_format(const lt_source *src);
/* Decodes page `index` (0-based) to 8-bit gray, or to an ink image when the page is 1-bit.
 * The page size is checked against `max_pixels` before the pixels are decoded. */
LT_API int lt_source_read_page(lt_source *src, int index, long max_pixels, lt_image **out,
                               lt_error *err);
LT_API void lt_source_free(lt_source *src);

/* ---- parameters ----------------------------------------------------------------------- */
/* Sizes marked "text units" are multiples of the page's measured text height (the mode of
 * component heights, close to the x-height for Latin scripts), so that a 200 dpi and a
 * 600 dpi scan of one page give the same lines. 0 for an "auto" field means: derive it.
 * [min..max] is a field's range: lt_analyze refuses a value outside it (or NaN) before any
 * work, with LT_EINVAL and a message naming the field ("sauvola_k: 7 is outside 0..1").
 * Text units are at most LT_MAX_TEXT_UNITS. */
typedef struct lt_params {
    double dpi;                 /* resolution to assume when the file gives none (default 300)
                                   [LT_MIN_DPI..LT_MAX_DPI] */
    int force_dpi;              /* nonzero: use `dpi` even when the file has one */
    int sauvola_window_px;      /* Sauvola window side, odd; 0 = auto: 0.17 inch (51 px at 300)
                                   [0..LT_MAX_WINDOW_PX] */
    double sauvola_k;           /* Sauvola k (default 0.34; the paper uses 0.5 for clean scans)
                                   [0..1] */
    double sauvola_r;           /* Sauvola R, dynamic range of the deviation (default 128; the
                                   deviation of 8-bit gray is at most 127.5) [1..255] */
    double skew_range_deg;      /* search -range..+range (default 15) [0..45] */
    double skew_min_confidence; /* below this the page reports no estimate (0.05) [0..1] */
    double deskew_min_deg;      /* below this |skew| the page is left unrotated (0.05) [0..45] */
    double speckle_max;         /* text units: components smaller in both sides are speckle (0.2) */
    double rule_min_aspect;     /* long side / short side of a rule (default 12)
                                   [1..LT_MAX_TEXT_UNITS] */
    double picture_min_height;  /* text units: taller components are non-text (default 6) */
    double link_max_gap;        /* text units: widest gap bridged inside a line unless a
                                   separator lies in it (default 5: stretched spaces, a
                                   number after a leader, a label before its item) */
    double column_min_gap;      /* text units: narrowest gutter the XY-cut splits at (1.5) */
    double block_min_gap;       /* text units: narrowest vertical gap between blocks (1.2) */
    int right_to_left;          /* nonzero: columns, and pieces of a row, read right to left */
    int orientation_deg;        /* LT_ORIENTATION_AUTO (default): estimate which quarter turn
                                   makes the page upright; 0, 90, 180 or 270: the page reads
                                   upright when turned clockwise by this much (0: as given) */
    long max_pixels;            /* LT_DEFAULT_MAX_PIXELS [1..LONG_MAX] */
    long max_components;        /* LT_DEFAULT_MAX_COMPONENTS [1..INT_MAX] */
} lt_params;

/* lt_params.orientation_deg: estimate the orientation. */
#define LT_ORIENTATION_AUTO (-1)

LT_API void lt_params_default(lt_params *p);

/* ---- geometry ------------------------------------------------------------------------- */
typedef struct lt_box {
    int left, top, right, bottom; /* right, bottom exclusive */
} lt_box;

typedef struct lt_point {
    double x, y;
} lt_point;

/* ---- results -------------------------------------------------------------------------- */
enum { LT_COMP_TEXT = 0, LT_COMP_SPECKLE, LT_COMP_RULE, LT_COMP_PICTURE };
/* Kinds of block: text blocks hold lines; the others are non-text regions. A table block is
 * the region of a table (a frame, or a grid of rules around cells of text); the text of its
 * cells stays in text blocks that name it. */
enum { LT_BLOCK_TEXT = 0, LT_BLOCK_RULE, LT_BLOCK_PICTURE, LT_BLOCK_TABLE };

/* Roles of text blocks, from geometry and type size alone (non-text blocks have
 * LT_ROLE_NONE). */
enum {
    LT_ROLE_NONE = 0,
    LT_ROLE_BODY,        /* running text */
    LT_ROLE_HEADING,     /* larger type, or a short line set apart above a body block */
    LT_ROLE_PAGE_HEADER, /* running head above the text area */
    LT_ROLE_PAGE_FOOTER, /* running foot below the text area */
    LT_ROLE_PAGE_NUMBER, /* a short head or foot: the folio */
    LT_ROLE_LIST_ITEM,   /* hanging indent or a bullet-like first mark */
    LT_ROLE_CAPTION,     /* short block beside a picture or table */
    LT_ROLE_FOOTNOTE,    /* smaller type at the foot of a column */
    LT_ROLE_MARGIN_NOTE, /* narrow block outside the text columns */
    LT_ROLE_COUNT
};
/* Name of a role as written in JSON ("body", "heading", "page-header", ...). */
LT_API const char *lt_role_name(int role);

typedef struct lt_line {
    lt_box box;           /* axis-aligned hull of `quad`, original image pixels */
    lt_point quad[4];     /* top-left, top-right, bottom-right, bottom-left in the line's
                             own (deskewed) frame, mapped to the original image */
    lt_point baseline[2]; /* left and right ends of the baseline, original image */
    double xheight_px;    /* distance from baseline to the top of lowercase letters */
    int block;            /* index into lt_layout.blocks */
    int components;       /* number of connected components in the line */
    lt_point *polygon;    /* outline of the line's ink, clockwise as displayed, original image
                             pixels; points into lt_layout.polygon_points (not owned); NULL
                             when the line has none */
    int npolygon;         /* points of `polygon` (0 or >= 3) */
    int light_on_dark;    /* 1 when the line was read as light marks on a dark ground (a band,
                             box or page printed in negative), else 0 */
} lt_line;

typedef struct lt_block {
    int kind;         /* LT_BLOCK_* */
    lt_box box;       /* axis-aligned hull of `quad` */
    lt_point quad[4]; /* as for lines */
    int first_line;   /* lines of a text block are lines[first_line .. first_line+nlines) */
    int nlines;       /* 0 for non-text blocks */
    int role;         /* LT_ROLE_* */
    int table;        /* text block in a table: index of the table block; -1 otherwise */
} lt_block;

/* Reasons why a page's reading order deserves a look (bits of lt_layout.order_doubts). */
enum {
    LT_DOUBT_CYCLE = 1,      /* the precedence between blocks contradicts itself */
    LT_DOUBT_UNORDERED = 2,  /* blocks of body text side by side with no rule between them */
    LT_DOUBT_DISAGREE = 4,   /* the cut tree and the precedence give different orders */
    LT_DOUBT_NARROW_GAP = 8, /* rows of similar text aligned across a narrow gutter */
    LT_DOUBT_BRIDGED = 16    /* a few lines of a block run across what looks like a gutter */
};
/* Short English text of one LT_DOUBT_* bit; NULL for an unknown bit. */
LT_API const char *lt_doubt_text(int bit);

typedef struct lt_layout {
    int width, height;      /* of the analysed image */
    double dpi;             /* resolution used */
    int dpi_from_file;      /* 1 when the file gave it, 0 when assumed */
    int dpi_rejected;       /* 1 when the file gave one outside LT_MIN_DPI..LT_MAX_DPI, which
                               was ignored: `dpi` is then the assumed one */
    int orientation_deg;    /* 0, 90, 180 or 270: the quarter turn, clockwise as displayed,
                               that makes the page upright; the stages ran on the page turned
                               so, and every coordinate is mapped back to the image as given */
    double orientation_confidence; /* 0 .. 1: the lesser of the confidence that the lines run
                               across the turned page and that it is not upside down; 0 when
                               the page does not say (orientation_deg then 0, or 90 when only
                               the direction of the lines was clear) or it was given */
    double skew_deg;        /* estimated skew, 0 when there is no estimate; measured on the page
                               turned upright (a quarter turn leaves a rotation's angle as it is) */
    double skew_confidence; /* 0 (no estimate) .. 1 */
    double text_height_px;  /* measured text height (0 when the page has no text) */
    int ncomponents;        /* connected components found */
    lt_line *lines;         /* IN READING ORDER */
    int nlines;
    lt_block *blocks; /* text blocks in reading order, then non-text blocks */
    int nblocks;
    int order_doubts;         /* LT_DOUBT_* bits, 0 when nothing calls the reading order in doubt */
    lt_point *polygon_points; /* storage of every line's polygon (owned by the layout) */
} lt_layout;

/* Analyses one page. `params` may be NULL for the defaults. On success *out holds a layout
 * the caller frees with lt_layout_free. */
LT_API int lt_analyze(const lt_image *img, const lt_params *params, lt_layout **out, lt_error *err);
/* As lt_analyze, taking ownership of *img: it is freed as soon as the analysis no longer needs
 * it (a gray page right after binarization, which lowers the peak memory of the analysis by
 * the size of the page), and in any case before return; *img is then NULL. */
LT_API int lt_analyze_consume(lt_image **img, const lt_params *params, lt_layout **out,
                              lt_error *err);
LT_API void lt_layout_free(lt_layout *layout);

/* ---- output --------------------------------------------------------------------------- */
/* The page as one JSON object (format LT_FORMAT_NAME, see schema/lineate-layout.schema.json):
 * a NUL-terminated string the caller frees with free(), on one line unless `pretty`.
 * `source` is the input's name, `page` counts from 1 of `pages`. NULL when out of memory. */
LT_API char *lt_layout_to_json(const lt_layout *layout, const char *source, int page, int pages,
                               int pretty);
/* The page as one PAGE XML document (PAGE content schema 2019-07-15): text regions with their
 * role as region type, their lines with Coords (the line's polygon, else its quad) and
 * Baseline, the reading order as an OrderedGroup, tables, rules and pictures as TableRegion,
 * SeparatorRegion and ImageRegion. `created_utc` (seconds since 1970, UTC) is the time written
 * into the metadata. A NUL-terminated string without a final newline, freed with free();
 * NULL when out of memory. The mapping is documented in man/lineate.1. */
LT_API char *lt_layout_to_page_xml(const lt_layout *layout, const char *source, int page, int pages,
                                   long long created_utc);
/* The page as one ALTO 4.4 document: pixel units, the resolution in the processing
 * settings, text blocks (roles as RoleTags) and lines in reading order, table cells in a
 * ComposedBlock, rules as GraphicalElements, pictures as Illustrations. As above. */
LT_API char *lt_layout_to_alto(const lt_layout *layout, const char *source, int page, int pages);

/* ---- stages (each pure: inputs are not modified) ----------------------------------------
 * Exposed for tests, tools and embedders who need one step. */

/* Sauvola & Pietikäinen (2000) with running window sums: ink where
 * gray <= m * (1 + k * (s / R - 1)), m and s the mean and standard deviation of the
 * neighbourhood of pixels at most window_px / 2 away (an even window acts as window_px + 1),
 * clipped to the image. A flat black area is ink. O(pixels) for any window up to
 * LT_MAX_WINDOW_PX. */
#define LT_MAX_WINDOW_PX 65535

/* The Sauvola window lt_analyze uses for a page of `dpi`: p->sauvola_window_px when set, else
 * about 0.17 inch (a few text lines high, wide enough to see paper around the strokes; common
 * practice: 15..60 px at 200..400 dpi), at least 15 px, an odd multiple of 3 (51 px at 300
 * dpi, 33 at 200, 69 at 400), so that lt_binarize_sampled samples it. A dpi outside
 * LT_MIN_DPI..LT_MAX_DPI counts as 300. */
LT_API int lt_sauvola_window_px(const lt_params *p, double dpi);
LT_API int lt_binarize(const lt_image *gray, int window_px, double k, double r, lt_image **ink,
                       lt_error *err);
/* As lt_binarize, with the threshold computed exactly only at the centre of every 3 x 3 tile
 * and interpolated bilinearly between tile centres, when window_px is an odd multiple of 3 of
 * at least 27 (else exactly as lt_binarize). The threshold varies slowly, so the ink differs
 * from lt_binarize's on at most a few pixels in ten thousand, in under half the time. This is
 * what lt_analyze uses. */
LT_API int lt_binarize_sampled(const lt_image *gray, int window_px, double k, double r,
                               lt_image **ink, lt_error *err);
/* Sauvola's threshold in Wolf & Jolion's (2004) normalised form, which the analysis uses:
 * Sauvola's threshold on the page's gray range [black, white] stretched to [0, 255], mapped
 * back: ink where gray <= M + (m - M) * (1 - k * (1 - s / R')), R' = r * (W - M) / 255 (W - M
 * taken as 64 when less). The threshold follows any increasing linear map of the gray levels
 * that the two points follow, so a faded, pale or lightened copy of a page (ink of gray 170 on
 * paper of 235, which Sauvola's own threshold, 0.66 m over paper, loses) gives the ink of the
 * page itself; M = 0 and W = 255 give lt_binarize. `black` and `white` are gray levels 0..255
 * (black < white) or LT_GRAY_POINT_AUTO for the page's own: from the mean of its darkest 3 x 3
 * tile D and the tile mean P that nine tenths of the tiles are at most (the paper; tiles at
 * multiples of 3 px, whole tiles only), M = t B and W = 255 - t (255 - P), t = 0 while D is
 * under 0.3 P (print on paper as scanned: Sauvola's threshold), 1 from 0.55 P (a pale page:
 * its whole range), linear between; B, the ink's level, is the mean of the darkest tile whose
 * pixels deviate by at most 2 % of P - D and that lies at most an eighth of P - D above D (solid
 * ink; a copy resampled with a sharpening filter rings below it), else the level a quarter of
 * the pixels darker than (D + P) / 2 reach where under D (type too thin to fill a tile), else
 * D; with both points automatic, by the same share t, W is the mean of the lightest tile within
 * the window's reach where that is darker (a tint, a shaded box has a paper of its own).
 * `sampled` nonzero: sampled as lt_binarize_sampled, else exact. */
#define LT_GRAY_POINT_AUTO (-1.0)
LT_API int lt_binarize_normalized(const lt_image *gray, int window_px, double k, double r,
                                  double black, double white, int sampled, lt_image **ink,
                                  lt_error *err);

typedef struct lt_skew {
    double angle_deg;  /* 0 when confidence is 0 */
    double confidence; /* 0 .. 1 */
} lt_skew;

/* Projection-profile skew of an ink image in [-range, +range] degrees. */
LT_API int lt_estimate_skew(const lt_image *ink, double range_deg, double min_confidence,
                            lt_skew *out, lt_error *err);

/* Rotates an ink image by -angle_deg (so text skewed by angle_deg becomes level), about its
 * centre, onto a canvas large enough to hold all of it (nearest-neighbour sampling). */
LT_API int lt_rotate_ink(const lt_image *ink, double angle_deg, lt_image **out, lt_error *err);

typedef struct lt_component {
    lt_box box;
    long pixels;       /* ink pixel count */
    double cx, cy;     /* centroid (mean of pixel centres) */
    int kind;          /* LT_COMP_* (set by lt_classify_components) */
    float core_height; /* px, fractional: the height of the rows that hold its ink but the top
                        * and bottom 3 % of it (a row's ink taken as spread evenly over it);
                        * a float, to fit in the record's padding */
} lt_component;

typedef struct lt_components {
    lt_component *items;
    int count;
} lt_components;

/* 8-connected components of an ink image, ordered by their first pixel in raster order.
 * Fails with LT_ELIMIT when there are more than max_components. */
LT_API int lt_find_components(const lt_image *ink, long max_components, lt_components **out,
                              lt_error *err);
LT_API void lt_components_free(lt_components *c);

/* Text height of a level page: mode of the box heights of plausible character components
 * (0 when there are none, -1 when out of memory). A dpi outside LT_MIN_DPI..LT_MAX_DPI counts as 300. */
LT_API double lt_text_height(const lt_components *c, double dpi);
/* Sets kind of every component from its size relative to text_height_px. */
LT_API void lt_classify_components(lt_components *c, double text_height_px, const lt_params *p);

#ifdef __cplusplus
}
#endif
#endif

/* layoutfile.h — a saved layout stream (src/layoutfile.c): the page objects of one or more
 * files, as `lineate` writes them, found again by the image they belong to. Used by the draw
 * and crop commands. */
#ifndef LINEATE_LAYOUTFILE_H
#define LINEATE_LAYOUTFILE_H

#include "lineate.h"

#include <cjson/cJSON.h>

typedef struct lt_layout_file lt_layout_file;

/* Reads `path` ("-": standard input) holding one or more JSON page objects (one document,
 * JSON Lines, or objects one after another) and indexes them by source and page (an object
 * without "page" counts as its position in the file, from 1). Fails with "PATH: reason" on
 * JSON that does not parse, a value that is not an object, or a bad "page". */
int lt_layout_file_read(const char *path, lt_layout_file **out, lt_error *err);
void lt_layout_file_free(lt_layout_file *f);

/* The page object (new, the caller deletes it) of page `page` of the image `image` (as given;
 * "-" for standard input), a file of `image_pages` pages. An object belongs to the image when
 * its "source" names the same file: the same path, or a path of the same file (device and
 * inode). An object without a source (or "stdin") belongs to whatever image it is paired
 * with, but only when it is the one object of that page in the stream; so does every object
 * when the image is standard input. Fails with a message naming the layout and the image when
 * no object of the page belongs to the image (naming the source found instead), when several
 * could, when the object is an error record, or when its "pages" differ from image_pages.
 * The caller checks width and height against the image. */
int lt_layout_file_find(const lt_layout_file *f, const char *image, int page, int image_pages,
                        cJSON **out, lt_error *err);

/* Reads an integral JSON number in [lo, hi]; -1 when `item` is not one. */
int lt_json_int(const cJSON *item, double lo, double hi, int *out);
/* A point [x, y] of finite numbers within the reader's coordinate limit; -1 when not one. */
int lt_json_point(const cJSON *item, lt_point *p);
/* The quad of a line or block: its "quad" (4 points) or, when it has none, the corners of its
 * "box" [left, top, right, bottom]. -1 when neither is valid. */
int lt_json_quad(const cJSON *obj, lt_point *q);

#endif

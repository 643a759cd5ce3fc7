/* layoutfile.c — a saved layout stream, read once and indexed by each page object's source
 * and page; an object is parsed again from its bytes when it is asked for, so a stream of many
 * pages does not stay in memory as a tree. */
#include "layoutfile.h"
#include "internal.h" /* lt_source_bytes_decode */
#include "score.h" /* lt_read_whole_file, lt_json_cut_short and the reader's limits */

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

typedef struct entry {
    size_t start, len; /* the object's bytes in the stream */
    int page;
    char *source;   /* NULL when the object names none, or names standard input */
    int identified; /* the source is a file here: dev and ino are its identity */
    dev_t dev;
    ino_t ino;
} entry;

struct lt_layout_file {
    char *name; /* for messages: the path, or "stdin" */
    char *data;
    size_t size;
    entry *entries;
    int count;
};

void lt_layout_file_free(lt_layout_file *f)
{
    if (!f) return;
    for (int i = 0; i < f->count; i++)
        free(f->entries[i].source);
    free(f->entries);
    free(f->data);
    free(f->name);
    free(f);
}

/* Line and column (from 1) of byte `pos` of data. */
static void line_col(const char *data, size_t pos, long *line, long *col)
{
    *line = 1;
    *col = 1;
    for (size_t i = 0; i < pos; i++) {
        if (data[i] == '\n') {
            ++*line;
            *col = 1;
        } else {
            ++*col;
        }
    }
}

/* Reads an integral JSON number in [lo, hi]; -1 when `item` is not one. */
int lt_json_int(const cJSON *item, double lo, double hi, int *out)
{
    if (!cJSON_IsNumber(item)) return -1;
    double v = item->valuedouble;
    if (!isfinite(v) || v != floor(v) || v < lo || v > hi) return -1;
    *out = (int)v;
    return 0;
}

/* A point [x, y] of finite numbers within the reader's coordinate limit. */
int lt_json_point(const cJSON *item, lt_point *p)
{
    if (!cJSON_IsArray(item) || cJSON_GetArraySize(item) != 2) return -1;
    const cJSON *x = cJSON_GetArrayItem(item, 0), *y = cJSON_GetArrayItem(item, 1);
    if (!cJSON_IsNumber(x) || !cJSON_IsNumber(y)) return -1;
    if (!(fabs(x->valuedouble) <= LT_SCORE_MAX_COORD && fabs(y->valuedouble) <= LT_SCORE_MAX_COORD))
        return -1;
    p->x = x->valuedouble;
    p->y = y->valuedouble;
    return 0;
}

/* The quad of a line or block: its "quad" (4 points) or, when it has none, the corners of its
 * "box" [left, top, right, bottom]. -1 when neither is valid. */
int lt_json_quad(const cJSON *obj, lt_point *q)
{
    const cJSON *quad = cJSON_GetObjectItemCaseSensitive(obj, "quad");
    if (quad) {
        if (!cJSON_IsArray(quad) || cJSON_GetArraySize(quad) != 4) return -1;
        for (int i = 0; i < 4; i++)
            if (lt_json_point(cJSON_GetArrayItem(quad, i), &q[i])) return -1;
        return 0;
    }
    const cJSON *box = cJSON_GetObjectItemCaseSensitive(obj, "box");
    if (!cJSON_IsArray(box) || cJSON_GetArraySize(box) != 4) return -1;
    int v[4];
    for (int i = 0; i < 4; i++)
        if (lt_json_int(cJSON_GetArrayItem(box, i), -LT_SCORE_MAX_COORD, LT_SCORE_MAX_COORD, &v[i]))
            return -1;
    q[0] = (lt_point){v[0], v[1]};
    q[1] = (lt_point){v[2], v[1]};
    q[2] = (lt_point){v[2], v[3]};
    q[3] = (lt_point){v[0], v[3]};
    return 0;
}

/* Indexes the object `obj`, the `count`-th of the stream, found at bytes [start, end). */
static int add_entry(lt_layout_file *f, const cJSON *obj, size_t start, size_t end, int *cap,
                     lt_error *err)
{
    const int count = f->count + 1;
    int number = count;
    if (!cJSON_IsObject(obj))
        return lt_error_set(err, LT_EPARSE, "%s: JSON value %d is not an object", f->name, count);
    const cJSON *p = cJSON_GetObjectItemCaseSensitive(obj, "page");
    if (p && lt_json_int(p, 1, INT32_MAX, &number))
        return lt_error_set(err, LT_EPARSE, "%s: object %d: \"page\" is not a page number", f->name,
                            count);
    if (f->count == *cap) {
        int bigger_cap = *cap ? 2 * *cap : 64;
        entry *bigger = realloc(f->entries, (size_t)bigger_cap * sizeof *bigger);
        if (!bigger) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", f->name);
        f->entries = bigger;
        *cap = bigger_cap;
    }
    entry *e = &f->entries[f->count];
    memset(e, 0, sizeof *e);
    e->start = start;
    e->len = end - start;
    e->page = number;
    const cJSON *src = cJSON_GetObjectItemCaseSensitive(obj, "source");
    const cJSON *exact = cJSON_GetObjectItemCaseSensitive(obj, "source_bytes"); /* not UTF-8 */
    if (cJSON_IsString(src) && src->valuestring[0] && strcmp(src->valuestring, "stdin") != 0) {
        if (!(e->source = cJSON_IsString(exact) ? lt_source_bytes_decode(exact->valuestring)
                                                : strdup(src->valuestring)))
            return lt_error_set(err, LT_ENOMEM, "%s: out of memory", f->name);
        struct stat st;
        if (stat(e->source, &st) == 0) {
            e->identified = 1;
            e->dev = st.st_dev;
            e->ino = st.st_ino;
        }
    }
    f->count++;
    return 0;
}

int lt_layout_file_read(const char *path, lt_layout_file **out, lt_error *err)
{
    *out = NULL;
    lt_layout_file *f = calloc(1, sizeof *f);
    if (!f || !(f->name = strdup(strcmp(path, "-") == 0 ? "stdin" : path))) {
        free(f);
        return lt_error_set(err, LT_ENOMEM, "%s: out of memory", path);
    }
    int rc = lt_read_whole_file(path, LT_SCORE_MAX_FILE_BYTES, &f->data, &f->size, err);
    int cap = 0;
    for (size_t pos = 0; rc == 0;) {
        while (pos < f->size && strchr(" \t\r\n", f->data[pos]) && f->data[pos])
            pos++;
        if (pos >= f->size) break;
        const char *end = NULL;
        cJSON *obj = cJSON_ParseWithLengthOpts(f->data + pos, f->size - pos, &end, 0);
        if (!obj) {
            long line, col;
            size_t at = end && end >= f->data + pos && end <= f->data + f->size
                            ? (size_t)(end - f->data)
                            : pos;
            if (lt_json_cut_short(f->data + pos, f->size - pos)) {
                rc = lt_error_set(err, LT_EPARSE,
                                  "%s: truncated JSON (the file ends inside object %d)", f->name,
                                  f->count + 1);
            } else {
                line_col(f->data, at, &line, &col);
                rc = lt_error_set(err, LT_EPARSE, "%s: not valid JSON at line %ld, column %ld",
                                  f->name, line, col);
            }
            break;
        }
        size_t next = (size_t)(end - f->data);
        rc = add_entry(f, obj, pos, next, &cap, err);
        cJSON_Delete(obj);
        if (next <= pos) break; /* cannot happen with cJSON; guards the loop */
        pos = next;
    }
    if (rc == 0 && f->count == 0)
        rc = lt_error_set(err, LT_EPARSE, "%s: no JSON object (empty file)", f->name);
    if (rc) {
        lt_layout_file_free(f);
        return rc;
    }
    *out = f;
    return 0;
}

/* How an object's source relates to the image: 2 the same file, 1 unknown, 0 another file. */
static int belongs(const entry *e, const char *image, const struct stat *image_st)
{
    if (!e->source || !image_st) return 1;
    if (strcmp(e->source, image) == 0) return 2;
    return e->identified && e->dev == image_st->st_dev && e->ino == image_st->st_ino ? 2 : 0;
}

int lt_layout_file_find(const lt_layout_file *f, const char *image, int page, int image_pages,
                        cJSON **out, lt_error *err)
{
    *out = NULL;
    const char *shown = strcmp(image, "-") == 0 ? "stdin" : image;
    struct stat st;
    const struct stat *image_st = strcmp(image, "-") != 0 && stat(image, &st) == 0 ? &st : NULL;
    const entry *same = NULL, *unknown = NULL, *other = NULL;
    int candidates = 0;
    for (int i = 0; i < f->count && !same; i++) {
        const entry *e = &f->entries[i];
        if (e->page != page) continue;
        candidates++;
        const int b = image_st || e->source ? belongs(e, image, image_st) : 1;
        if (b == 2)
            same = e;
        else if (b == 1 && !unknown)
            unknown = e;
        else if (b == 0 && !other)
            other = e;
    }
    const entry *e = same ? same : unknown && candidates == 1 ? unknown : NULL;
    if (!e) {
        if (candidates == 0)
            return lt_error_set(err, LT_EPARSE,
                                "%s: no layout of page %d (the file holds %d page %s)", f->name,
                                page, f->count, f->count == 1 ? "object" : "objects");
        if (unknown)
            return lt_error_set(err, LT_EPARSE,
                                "%s: %d layouts of page %d, and none names %s as its source",
                                f->name, candidates, page, shown);
        return lt_error_set(err, LT_EPARSE, "%s: the layout of page %d is of %s, not of %s%s",
                            f->name, page, other->source, shown,
                            candidates > 1 ? " (nor is any other of that page)" : "");
    }
    cJSON *obj = cJSON_ParseWithLength(f->data + e->start, e->len);
    if (!obj) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", f->name);
    const cJSON *error = cJSON_GetObjectItemCaseSensitive(obj, "error");
    const cJSON *jp = cJSON_GetObjectItemCaseSensitive(obj, "pages");
    int pages = 0, rc = 0;
    if (cJSON_IsString(error))
        rc = lt_error_set(err, LT_EPARSE, "%s: page %d is an error record: %s", f->name, page,
                          error->valuestring);
    else if (jp && lt_json_int(jp, 1, INT32_MAX, &pages))
        rc = lt_error_set(err, LT_EPARSE, "%s: page %d: \"pages\" is not a page count", f->name,
                          page);
    else if (jp && pages != image_pages)
        rc = lt_error_set(err, LT_EPARSE, "%s: layout of a file of %d %s, but %s has %d %s",
                          f->name, pages, pages == 1 ? "page" : "pages", shown, image_pages,
                          image_pages == 1 ? "page" : "pages");
    if (rc) {
        cJSON_Delete(obj);
        return rc;
    }
    *out = obj;
    return 0;
}

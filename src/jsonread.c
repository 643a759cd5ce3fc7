/* jsonread.c — reads files of one or more JSON page objects (lineate's layout format or the
 * corpus ground truth) into lt_scored_page arrays for the scorer. Parsing is cJSON's; objects
 * are walked with cJSON_ParseWithLengthOpts and its parse-end pointer (RFC 8259 JSON texts,
 * concatenated or one per line as in JSON Lines). */
#include "score.h"

#include <cJSON.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define FORMAT_TRUTH "lineseg-gt-1"
#define READ_CHUNK_BYTES (1 << 16)

/* ---- whole-file reading --------------------------------------------------------------- */

/* Reads fd to its end into a growing buffer of at most max_bytes + 2 bytes (room to see one
 * byte past the limit, and the NUL). `hint` is the expected size (the size of a regular
 * file, 0 otherwise). */
static int read_fd(int fd, const char *name, size_t max_bytes, size_t hint, char **data,
                   size_t *size, lt_error *err)
{
    size_t cap = (hint > 0 && hint <= max_bytes) ? hint + 2 : READ_CHUNK_BYTES;
    if (cap > max_bytes + 2) cap = max_bytes + 2;
    size_t len = 0;
    char *buf = malloc(cap);
    if (!buf) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    for (;;) {
        if (len + 1 >= cap) {
            if (cap >= max_bytes + 2) { /* cannot happen: len > max_bytes is caught below */
                free(buf);
                return lt_error_set(err, LT_ELIMIT, "%s: file is larger than the %zu MiB limit",
                                    name, max_bytes >> 20);
            }
            size_t ncap = cap * 2 > max_bytes + 2 ? max_bytes + 2 : cap * 2;
            char *nbuf = realloc(buf, ncap);
            if (!nbuf) {
                free(buf);
                return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
            }
            buf = nbuf;
            cap = ncap;
        }
        ssize_t got = read(fd, buf + len, cap - 1 - len);
        if (got < 0) {
            if (errno == EINTR) continue;
            int e = errno;
            free(buf);
            return lt_error_set(err, LT_EIO, "%s: cannot read: %s", name, strerror(e));
        }
        if (got == 0) break;
        len += (size_t)got;
        if (len > max_bytes) {
            free(buf);
            return lt_error_set(err, LT_ELIMIT, "%s: file is larger than the %zu MiB limit", name,
                                max_bytes >> 20);
        }
    }
    buf[len] = '\0';
    *data = buf;
    *size = len;
    return 0;
}

int lt_read_whole_file(const char *path, size_t max_bytes, char **data, size_t *size, lt_error *err)
{
    *data = NULL;
    *size = 0;
    if (!path) return lt_error_set(err, LT_EINVAL, "no file name given");
    int is_stdin = strcmp(path, "-") == 0;
    const char *name = is_stdin ? "stdin" : path;
    int fd = is_stdin ? STDIN_FILENO : open(path, O_RDONLY);
    if (fd < 0) return lt_error_set(err, LT_EIO, "%s: cannot open: %s", name, strerror(errno));
    struct stat st;
    size_t hint = 0;
    if (fstat(fd, &st) == 0) {
        if (S_ISDIR(st.st_mode)) {
            if (!is_stdin) close(fd);
            return lt_error_set(err, LT_EIO, "%s: is a directory, not a file", name);
        }
        if (S_ISREG(st.st_mode)) {
            if ((unsigned long long)st.st_size > (unsigned long long)max_bytes) {
                if (!is_stdin) close(fd);
                return lt_error_set(err, LT_ELIMIT, "%s: file is larger than the %zu MiB limit",
                                    name, max_bytes >> 20);
            }
            hint = (size_t)st.st_size;
        }
    }
    int rc = read_fd(fd, name, max_bytes, hint, data, size, err);
    if (!is_stdin) close(fd);
    return rc;
}

/* ---- JSON objects -> pages ------------------------------------------------------------ */

static int is_json_space(char c)
{
    return c == ' ' || c == '\t' || c == '\n' || c == '\r';
}

int lt_json_cut_short(const char *data, size_t n)
{
    long depth = 0;
    int in_string = 0;
    for (size_t i = 0; i < n; i++) {
        char c = data[i];
        if (in_string) {
            if (c == '\\')
                i++;
            else if (c == '"')
                in_string = 0;
        } else if (c == '"') {
            in_string = 1;
        } else if (c == '{' || c == '[') {
            depth++;
        } else if ((c == '}' || c == ']') && depth > 0) {
            depth--;
        }
    }
    return in_string || depth > 0;
}

/* Records "NAME: line L, column C: not valid JSON" for a cJSON failure at data + pos while
 * parsing page k that starts at data + start, or "NAME: truncated ..." when the file ends
 * inside that page. */
static int syntax_error(const char *name, int k, const char *data, size_t size, size_t start,
                        size_t pos, lt_error *err)
{
    if (pos > size) pos = size;
    long line = 1, col = 1;
    for (size_t i = 0; i < pos; i++) {
        if (data[i] == '\n') {
            line++;
            col = 1;
        } else {
            col++;
        }
    }
    if (lt_json_cut_short(data + start, size - start))
        return lt_error_set(err, LT_EPARSE, "%s: truncated JSON: the file ends inside page %d",
                            name, k);
    return lt_error_set(err, LT_EPARSE, "%s: line %ld, column %ld: not valid JSON", name, line,
                        col);
}

/* Reads an integer member into *out. Returns 1 when present and a whole number in
 * [lo, hi], 0 when absent, -1 when present but not such a number. */
static int get_int(const cJSON *obj, const char *key, long lo, long hi, int *out)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!v) return 0;
    if (!cJSON_IsNumber(v)) return -1;
    double d = v->valuedouble;
    if (!isfinite(d) || d != floor(d) || d < (double)lo || d > (double)hi) return -1;
    *out = (int)d;
    return 1;
}

/* Reads quad [[x, y] x 4] from a JSON array: finite numbers within +-LT_SCORE_MAX_COORD.
 * Returns NULL, or what is wrong with it. */
static const char *parse_quad(const cJSON *arr, lt_point quad[4])
{
    if (!cJSON_IsArray(arr) || cJSON_GetArraySize(arr) != 4)
        return "\"quad\" is not an array of 4 points";
    int n = 0;
    for (const cJSON *pt = arr->child; pt; pt = pt->next, n++) {
        if (!cJSON_IsArray(pt) || cJSON_GetArraySize(pt) != 2 || !cJSON_IsNumber(pt->child) ||
            !cJSON_IsNumber(pt->child->next))
            return "\"quad\" holds a point that is not 2 numbers";
        const double x = pt->child->valuedouble, y = pt->child->next->valuedouble;
        if (!isfinite(x) || !isfinite(y) || fabs(x) > LT_SCORE_MAX_COORD ||
            fabs(y) > LT_SCORE_MAX_COORD)
            return "\"quad\" coordinate is out of range";
        quad[n].x = x;
        quad[n].y = y;
    }
    return NULL;
}

/* Reads box [l, t, r, b] from a JSON array: 4 whole numbers within +-LT_SCORE_MAX_COORD,
 * left <= right, top <= bottom. Returns NULL on success or a static reason. */
static const char *parse_box(const cJSON *arr, lt_box *box)
{
    if (!cJSON_IsArray(arr)) return "\"box\" is not an array of 4 integers";
    int v[4], n = 0;
    for (const cJSON *it = arr->child; it; it = it->next) {
        if (n == 4) return "\"box\" has more than 4 numbers";
        if (!cJSON_IsNumber(it)) return "\"box\" holds a value that is not a number";
        double d = it->valuedouble;
        if (!isfinite(d) || d != floor(d)) return "\"box\" holds a number that is not whole";
        if (fabs(d) > LT_SCORE_MAX_COORD) return "\"box\" coordinate is out of range";
        v[n++] = (int)d;
    }
    if (n != 4) return "\"box\" does not have 4 numbers";
    if (v[2] < v[0]) return "\"box\" has right < left";
    if (v[3] < v[1]) return "\"box\" has bottom < top";
    box->left = v[0];
    box->top = v[1];
    box->right = v[2];
    box->bottom = v[3];
    return NULL;
}

static char *dup_string(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d) memcpy(d, s, n);
    return d;
}

/* Copies the string member `key` of obj into *out (NULL when absent). Returns 0, 1 when the
 * member exists but is not a string, or LT_ENOMEM. */
static int get_string(const cJSON *obj, const char *key, char **out)
{
    *out = NULL;
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!v) return 0;
    if (!cJSON_IsString(v) || !v->valuestring) return 1;
    *out = dup_string(v->valuestring);
    return *out ? 0 : LT_ENOMEM;
}

static void page_clear(lt_scored_page *pg)
{
    free(pg->source);
    free(pg->variant);
    free(pg->error);
    free(pg->lines);
    memset(pg, 0, sizeof *pg);
}

/* Converts one parsed object (the k-th of the file, from 1) into *pg, which starts zeroed.
 * On failure pg is cleared and the message names the file and k. */
static int convert_page(const cJSON *obj, const char *name, int k, lt_scored_page *pg,
                        lt_error *err)
{
#define FAIL(code, ...)                                                                            \
    do {                                                                                           \
        page_clear(pg);                                                                            \
        return lt_error_set(err, code, __VA_ARGS__);                                               \
    } while (0)
    if (!cJSON_IsObject(obj)) FAIL(LT_EPARSE, "%s: page %d: not a JSON object", name, k);

    const cJSON *errv = cJSON_GetObjectItemCaseSensitive(obj, "error");
    const cJSON *fmtv = cJSON_GetObjectItemCaseSensitive(obj, "format");
    if (fmtv && !cJSON_IsString(fmtv))
        FAIL(LT_EPARSE, "%s: page %d: \"format\" is not a string", name, k);
    const char *fmt = fmtv ? fmtv->valuestring : NULL;
    pg->format = (fmt && strcmp(fmt, FORMAT_TRUTH) == 0) ? LT_SCORED_TRUTH : LT_SCORED_LAYOUT;
    const char *src_key = pg->format == LT_SCORED_TRUTH ? "image" : "source";
    int rc;

    if (cJSON_IsString(errv)) { /* error record of a page that could not be analysed */
        pg->failed = 1;
        pg->page = 1;
        if (!(pg->error = dup_string(errv->valuestring ? errv->valuestring : "")) ||
            get_string(obj, src_key, &pg->source) == LT_ENOMEM)
            FAIL(LT_ENOMEM, "%s: out of memory", name);
        (void)get_int(obj, "page", 1, INT32_MAX, &pg->page);
        (void)get_int(obj, "width", 1, LT_SCORE_MAX_COORD, &pg->width);
        (void)get_int(obj, "height", 1, LT_SCORE_MAX_COORD, &pg->height);
        return 0;
    }
    if (!fmt) FAIL(LT_EPARSE, "%s: page %d: missing \"format\"", name, k);
    if (pg->format == LT_SCORED_LAYOUT && strcmp(fmt, LT_FORMAT_NAME) != 0)
        FAIL(LT_EPARSE, "%s: page %d: unknown format \"%.40s\" (expected %s or %s)", name, k, fmt,
             LT_FORMAT_NAME, FORMAT_TRUTH);

    rc = get_string(obj, src_key, &pg->source);
    if (rc == LT_ENOMEM) FAIL(LT_ENOMEM, "%s: out of memory", name);
    if (rc == 1) FAIL(LT_EPARSE, "%s: page %d: \"%s\" is not a string", name, k, src_key);
    if (!pg->source) FAIL(LT_EPARSE, "%s: page %d: missing \"%s\"", name, k, src_key);
    if (pg->format == LT_SCORED_TRUTH) {
        rc = get_string(obj, "variant", &pg->variant);
        if (rc == LT_ENOMEM) FAIL(LT_ENOMEM, "%s: out of memory", name);
        if (rc == 1) FAIL(LT_EPARSE, "%s: page %d: \"variant\" is not a string", name, k);
        if (get_int(obj, "columns", 1, LT_SCORE_MAX_COLUMNS, &pg->columns) < 0)
            FAIL(LT_EPARSE, "%s: page %d: \"columns\" is not an integer 1..%d", name, k,
                 LT_SCORE_MAX_COLUMNS);
        pg->page = 1;
    } else {
        rc = get_int(obj, "page", 1, INT32_MAX, &pg->page);
        if (rc == 0) FAIL(LT_EPARSE, "%s: page %d: missing \"page\"", name, k);
        if (rc < 0) FAIL(LT_EPARSE, "%s: page %d: \"page\" is not a positive integer", name, k);
    }
    static const char *const sides[2] = {"width", "height"};
    for (int s = 0; s < 2; s++) {
        int *dst = s == 0 ? &pg->width : &pg->height;
        rc = get_int(obj, sides[s], 1, LT_SCORE_MAX_COORD, dst);
        if (rc == 0) FAIL(LT_EPARSE, "%s: page %d: missing \"%s\"", name, k, sides[s]);
        if (rc < 0)
            FAIL(LT_EPARSE, "%s: page %d: \"%s\" is not an integer in 1..%d", name, k, sides[s],
                 LT_SCORE_MAX_COORD);
    }
    const cJSON *skew = cJSON_GetObjectItemCaseSensitive(obj, "skew_deg");
    if (skew) {
        if (!cJSON_IsNumber(skew) || !isfinite(skew->valuedouble) ||
            fabs(skew->valuedouble) > LT_SCORE_MAX_SKEW_DEG)
            FAIL(LT_EPARSE, "%s: page %d: \"skew_deg\" is not a number in -%g..%g", name, k,
                 LT_SCORE_MAX_SKEW_DEG, LT_SCORE_MAX_SKEW_DEG);
        pg->skew_deg = skew->valuedouble;
        pg->has_skew = 1;
    }

    const cJSON *lines = cJSON_GetObjectItemCaseSensitive(obj, "lines");
    if (!lines) FAIL(LT_EPARSE, "%s: page %d: missing \"lines\"", name, k);
    if (!cJSON_IsArray(lines)) FAIL(LT_EPARSE, "%s: page %d: \"lines\" is not an array", name, k);
    long n = 0;
    for (const cJSON *it = lines->child; it; it = it->next)
        n++;
    if (n > LT_SCORE_MAX_LINES)
        FAIL(LT_ELIMIT, "%s: page %d: %ld lines, more than the limit of %d", name, k, n,
             LT_SCORE_MAX_LINES);
    pg->lines = malloc((size_t)(n > 0 ? n : 1) * sizeof *pg->lines);
    if (!pg->lines) FAIL(LT_ENOMEM, "%s: out of memory", name);
    long i = 0;
    for (const cJSON *it = lines->child; it; it = it->next, i++) {
        if (!cJSON_IsObject(it))
            FAIL(LT_EPARSE, "%s: page %d: lines[%ld] is not an object", name, k, i);
        const cJSON *box = cJSON_GetObjectItemCaseSensitive(it, "box");
        if (!box) FAIL(LT_EPARSE, "%s: page %d: lines[%ld]: missing \"box\"", name, k, i);
        const char *why = parse_box(box, &pg->lines[i].box);
        if (why) FAIL(LT_EPARSE, "%s: page %d: lines[%ld]: %s", name, k, i, why);
        const cJSON *quad = cJSON_GetObjectItemCaseSensitive(it, "quad");
        pg->lines[i].has_quad = quad != NULL;
        if (quad && (why = parse_quad(quad, pg->lines[i].quad)))
            FAIL(LT_EPARSE, "%s: page %d: lines[%ld]: %s", name, k, i, why);
        pg->lines[i].in_order = 1;
        const cJSON *io = cJSON_GetObjectItemCaseSensitive(it, "in_order");
        if (io) {
            if (!cJSON_IsBool(io))
                FAIL(LT_EPARSE, "%s: page %d: lines[%ld]: \"in_order\" is not true or false", name,
                     k, i);
            pg->lines[i].in_order = cJSON_IsTrue(io) ? 1 : 0;
        }
    }
    pg->nlines = (int)n;
    return 0;
#undef FAIL
}

int lt_scored_pages_parse(const char *data, size_t size, const char *name, lt_scored_page **pages,
                          int *npages, lt_error *err)
{
    *pages = NULL;
    *npages = 0;
    if (!name) name = "input";
    if (!data) return lt_error_set(err, LT_EINVAL, "%s: no data", name);
    lt_scored_page *arr = NULL;
    int n = 0, cap = 0;
    size_t pos = 0;
    int rc = 0;
    /* A UTF-8 byte order mark at the start is allowed (cJSON skips it too). */
    if (size >= 3 && memcmp(data, "\xEF\xBB\xBF", 3) == 0) pos = 3;
    for (;;) {
        while (pos < size && is_json_space(data[pos]))
            pos++;
        if (pos >= size) break;
        const char *end = NULL;
        cJSON *obj = cJSON_ParseWithLengthOpts(data + pos, size - pos, &end, 0);
        if (!obj) {
            size_t at = end ? (size_t)(end - data) : pos;
            rc = syntax_error(name, n + 1, data, size, pos, at, err);
            goto fail;
        }
        size_t next = (size_t)(end - data);
        if (next <= pos || next > size) { /* cannot happen with cJSON; guards the loop */
            cJSON_Delete(obj);
            rc = lt_error_set(err, LT_EPARSE, "%s: cannot find the end of page %d", name, n + 1);
            goto fail;
        }
        if (n == cap) {
            if (cap >= INT32_MAX / 2) {
                cJSON_Delete(obj);
                rc = lt_error_set(err, LT_ELIMIT, "%s: too many pages", name);
                goto fail;
            }
            int ncap = cap ? cap * 2 : 4;
            lt_scored_page *narr = realloc(arr, (size_t)ncap * sizeof *narr);
            if (!narr) {
                cJSON_Delete(obj);
                rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
                goto fail;
            }
            arr = narr;
            cap = ncap;
        }
        memset(&arr[n], 0, sizeof arr[n]);
        rc = convert_page(obj, name, n + 1, &arr[n], err);
        cJSON_Delete(obj);
        if (rc) goto fail;
        n++;
        pos = next;
    }
    if (n == 0) {
        rc = lt_error_set(err, LT_EPARSE, "%s: no JSON object (the file is empty)", name);
        goto fail;
    }
    *pages = arr;
    *npages = n;
    return 0;
fail:
    lt_scored_pages_free(arr, n);
    return rc;
}

int lt_scored_pages_read(const char *path, lt_scored_page **pages, int *npages, lt_error *err)
{
    *pages = NULL;
    *npages = 0;
    char *data;
    size_t size;
    int rc = lt_read_whole_file(path, LT_SCORE_MAX_FILE_BYTES, &data, &size, err);
    if (rc) return rc;
    const char *name = strcmp(path, "-") == 0 ? "stdin" : path;
    size_t first = size >= 3 && memcmp(data, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    while (first < size && is_json_space(data[first]))
        first++;
    if (first < size && data[first] == '<') /* PAGE XML or ALTO */
        rc = lt_scored_pages_parse_xml(data, size, name, pages, npages, err);
    else
        rc = lt_scored_pages_parse(data, size, name, pages, npages, err);
    free(data);
    return rc;
}

void lt_scored_pages_free(lt_scored_page *pages, int npages)
{
    if (!pages) return;
    for (int i = 0; i < npages; i++)
        page_clear(&pages[i]);
    free(pages);
}

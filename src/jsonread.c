/* jsonread.c — reads files of one or more JSON page objects (lineate's layout format or the
 * corpus ground truth; RFC 8259 JSON texts, concatenated or one per line as in JSON Lines)
 * into lt_scored_page arrays for the scorer. The text is checked and walked in place, and only
 * the few values the scorer reads are parsed, by cJSON, so no tree of a whole page is built. */
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

/* Records "NAME: line L, column C: not valid JSON" for the byte data + pos that breaks the
 * grammar in page k, which starts at data + start, or "NAME: truncated ..." when the file ends
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

/* ---- skimming: JSON checked in place, without a tree ------------------------------------
 * A page object is walked byte by byte by the grammar of RFC 8259 (sections 2 to 7). The
 * "box", "quad" and "in_order" of each line are read from their bytes as they are met, and
 * the few members of the page the scorer reads go to cJSON, each on its own. A tree of a whole
 * page would take about 20 times its bytes; this way memory stays within the file and the
 * array of lines, and the line limit is checked as the lines are counted, before the next one
 * is read. */

#define MAX_NESTING 1000    /* arrays and objects one inside another (cJSON's own limit) */
#define MAX_NUMBER_CHARS 63 /* cJSON reads no longer number; the skim refuses one, as it did */
/* Longest value handed to cJSON: the page members read are numbers and names; a path is at
 * most 4096 bytes, each escaped in at most 6. */
#define MAX_READ_VALUE_BYTES 65536

enum { SKIM_SYNTAX = -1, SKIM_TOO_MANY = -2 };

typedef struct skim {
    const char *data;
    size_t size;
    size_t pos; /* the next byte; after a failure, the byte that breaks the grammar */
} skim;

typedef struct span { /* a member's key or value: data[start, end) */
    size_t start, end;
    int present;
} span;

/* The next byte, or -1 at the end of the data. */
static int peek(const skim *s)
{
    return s->pos < s->size ? (unsigned char)s->data[s->pos] : -1;
}

static void skip_space(skim *s)
{
    while (s->pos < s->size && is_json_space(s->data[s->pos]))
        s->pos++;
}

static int is_digit(int c)
{
    return c >= '0' && c <= '9';
}

static int hex_value(int c)
{
    return is_digit(c)            ? c - '0'
           : c >= 'a' && c <= 'f' ? c - 'a' + 10
           : c >= 'A' && c <= 'F' ? c - 'A' + 10
                                  : -1;
}

/* The 4 hex digits of a \u escape, s at the 'u'; -1 when they are not. */
static long skim_code_unit(skim *s)
{
    long unit = 0;
    for (int i = 0; i < 4; i++) {
        s->pos++;
        const int h = hex_value(peek(s));
        if (h < 0) return -1;
        unit = unit * 16 + h;
    }
    s->pos++;
    return unit;
}

/* A string, s at its opening quote: no raw control character, the escapes of RFC 8259
 * section 7, and UTF-16 surrogates only in pairs (which cJSON, reading the string, needs). */
static int skim_string(skim *s)
{
    s->pos++;
    for (;;) {
        const int c = peek(s);
        if (c == '"') {
            s->pos++;
            return 0;
        }
        if (c < 0x20) return SKIM_SYNTAX; /* a control character, or the end of the data */
        if (c != '\\') {
            s->pos++;
            continue;
        }
        s->pos++;
        const int e = peek(s);
        if (e != 'u') {
            if (e < 0 || !strchr("\"\\/bfnrt", e)) return SKIM_SYNTAX;
            s->pos++;
            continue;
        }
        const long unit = skim_code_unit(s);
        if (unit < 0 || (unit >= 0xDC00 && unit <= 0xDFFF)) return SKIM_SYNTAX;
        if (unit >= 0xD800 && unit <= 0xDBFF) { /* a high surrogate: its low half follows */
            if (peek(s) != '\\') return SKIM_SYNTAX;
            s->pos++;
            if (peek(s) != 'u') return SKIM_SYNTAX;
            const long low = skim_code_unit(s);
            if (low < 0xDC00 || low > 0xDFFF) return SKIM_SYNTAX;
        }
    }
}

/* One or more digits. */
static int skim_digits(skim *s)
{
    if (!is_digit(peek(s))) return SKIM_SYNTAX;
    while (is_digit(peek(s)))
        s->pos++;
    return 0;
}

/* -? (0 | [1-9][0-9]*) (. [0-9]+)? ([eE] [+-]? [0-9]+)?, at most MAX_NUMBER_CHARS long. */
static int skim_number(skim *s)
{
    const size_t start = s->pos;
    if (peek(s) == '-') s->pos++;
    if (peek(s) == '0')
        s->pos++;
    else if (skim_digits(s))
        return SKIM_SYNTAX;
    if (peek(s) == '.') {
        s->pos++;
        if (skim_digits(s)) return SKIM_SYNTAX;
    }
    if (peek(s) == 'e' || peek(s) == 'E') {
        s->pos++;
        if (peek(s) == '+' || peek(s) == '-') s->pos++;
        if (skim_digits(s)) return SKIM_SYNTAX;
    }
    if (s->pos - start > MAX_NUMBER_CHARS) {
        s->pos = start + MAX_NUMBER_CHARS;
        return SKIM_SYNTAX;
    }
    return 0;
}

static int skim_word(skim *s, const char *word)
{
    const size_t n = strlen(word);
    if (s->size - s->pos < n || memcmp(s->data + s->pos, word, n) != 0) return SKIM_SYNTAX;
    s->pos += n;
    return 0;
}

/* Steps to the next item of an array (close ']') or object (close '}') whose opening bracket s
 * has passed (*first set, cleared here) or whose last item s has passed. Returns 1 with s at
 * the item's value (for an object past its key and colon, the key's bytes in *key), 0 with s
 * past the closing bracket, or SKIM_SYNTAX. */
static int next_item(skim *s, int close, int *first, span *key)
{
    skip_space(s);
    if (peek(s) == close) {
        s->pos++;
        return 0;
    }
    if (!*first) {
        if (peek(s) != ',') return SKIM_SYNTAX;
        s->pos++;
        skip_space(s);
    }
    *first = 0;
    if (close == '}') {
        if (peek(s) != '"') return SKIM_SYNTAX;
        key->start = s->pos + 1;
        if (skim_string(s)) return SKIM_SYNTAX;
        key->end = s->pos - 1;
        skip_space(s);
        if (peek(s) != ':') return SKIM_SYNTAX;
        s->pos++;
        skip_space(s);
    }
    return 1;
}

/* Any value, s at its first byte; `depth` arrays and objects hold it. */
static int skim_value(skim *s, int depth)
{
    const int c = peek(s);
    if (c == '{' || c == '[') {
        if (depth >= MAX_NESTING) return SKIM_SYNTAX;
        s->pos++;
        int first = 1, more;
        span key;
        while ((more = next_item(s, c == '{' ? '}' : ']', &first, &key)) == 1)
            if (skim_value(s, depth + 1)) return SKIM_SYNTAX;
        return more;
    }
    if (c == '"') return skim_string(s);
    if (c == 't') return skim_word(s, "true");
    if (c == 'f') return skim_word(s, "false");
    if (c == 'n') return skim_word(s, "null");
    if (c == '-' || is_digit(c)) return skim_number(s);
    return SKIM_SYNTAX;
}

/* 1 when the key's bytes are `name` (escapes are not decoded). */
static int key_is(const skim *s, span key, const char *name)
{
    const size_t n = strlen(name);
    return key.end - key.start == n && memcmp(s->data + key.start, name, n) == 0;
}

/* A cJSON object of the members of page k that the skim found (names[i] when found[i] is
 * present, each value parsed on its own, none longer than MAX_READ_VALUE_BYTES), in place of
 * the whole page's tree; *out is NULL on failure. The values were skimmed, so cJSON fails on
 * them only for want of memory. */
static int shallow_object(const skim *s, const char *const *names, int nnames, const span *found,
                          const char *name, int k, cJSON **out, lt_error *err)
{
    *out = cJSON_CreateObject();
    if (!*out) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    for (int i = 0; i < nnames; i++) {
        if (!found[i].present) continue;
        const size_t len = found[i].end - found[i].start;
        if (len > MAX_READ_VALUE_BYTES) {
            cJSON_Delete(*out);
            *out = NULL;
            return lt_error_set(err, LT_EPARSE, "%s: page %d: \"%s\" is longer than %d bytes", name,
                                k, names[i], MAX_READ_VALUE_BYTES);
        }
        cJSON *value = cJSON_ParseWithLength(s->data + found[i].start, len);
        if (!value || !cJSON_AddItemToObject(*out, names[i], value)) {
            cJSON_Delete(value);
            cJSON_Delete(*out);
            *out = NULL;
            return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
        }
    }
    return 0;
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

/* ---- lines, read from their bytes ------------------------------------------------------------
 * The line readers walk the bytes once, checking the grammar as the skim does (SKIM_SYNTAX
 * when it breaks), and always move past the value they were given: a value they refuse is
 * skimmed to its end and what is wrong with it is left in *why. The depths below count the
 * arrays and objects that hold a value (the page object, "lines", a line, a quad). */
enum { LINE_DEPTH = 2, MEMBER_DEPTH = 3, POINT_DEPTH = 4 };

/* The lines of a page as they are read. */
typedef struct line_array {
    lt_scored_line *items;
    long count, cap;
    lt_error refused; /* the first line that could not be read; code 0 when none */
} line_array;

static int is_number_start(int c)
{
    return c == '-' || is_digit(c);
}

/* The number at s into *v, as cJSON reads it: a whole number of at most 15 digits exactly (a
 * double holds it), any other by strtod. */
static int read_number(skim *s, double *v)
{
    const size_t start = s->pos;
    const int minus = peek(s) == '-';
    s->pos += (size_t)minus;
    double whole = 0;
    int digits = 0;
    for (int c; is_digit(c = peek(s)); s->pos++, digits++)
        whole = whole * 10 + (c - '0');
    const int next = peek(s);
    const int leading_zero = digits > 1 && s->data[start + (size_t)minus] == '0';
    if (digits >= 1 && digits <= 15 && !leading_zero && next != '.' && next != 'e' && next != 'E') {
        *v = minus ? -whole : whole;
        return 0;
    }
    s->pos = start;
    if (skim_number(s)) return SKIM_SYNTAX;
    char text[MAX_NUMBER_CHARS + 1];
    memcpy(text, s->data + start, s->pos - start);
    text[s->pos - start] = '\0';
    *v = strtod(text, NULL);
    return 0;
}

/* Records `reason` in *why and moves past the value that starts at `start`, at `depth`. */
static int refuse(skim *s, size_t start, int depth, const char *reason, const char **why)
{
    *why = reason;
    s->pos = start;
    return skim_value(s, depth);
}

/* A box [l, t, r, b]: 4 whole numbers within +-LT_SCORE_MAX_COORD, left <= right,
 * top <= bottom. */
static int read_box(skim *s, lt_box *box, const char **why)
{
    const size_t start = s->pos;
    if (peek(s) != '[')
        return refuse(s, start, MEMBER_DEPTH, "\"box\" is not an array of 4 integers", why);
    s->pos++;
    int v[4], n = 0, first = 1, more;
    span unused;
    while ((more = next_item(s, ']', &first, &unused)) == 1) {
        if (n == 4) return refuse(s, start, MEMBER_DEPTH, "\"box\" has more than 4 numbers", why);
        if (!is_number_start(peek(s)))
            return refuse(s, start, MEMBER_DEPTH, "\"box\" holds a value that is not a number",
                          why);
        double d;
        if (read_number(s, &d)) return SKIM_SYNTAX;
        if (!isfinite(d) || d != floor(d))
            return refuse(s, start, MEMBER_DEPTH, "\"box\" holds a number that is not whole", why);
        if (fabs(d) > LT_SCORE_MAX_COORD)
            return refuse(s, start, MEMBER_DEPTH, "\"box\" coordinate is out of range", why);
        v[n++] = (int)d;
    }
    if (more) return SKIM_SYNTAX;
    if (n != 4)
        *why = "\"box\" does not have 4 numbers";
    else if (v[2] < v[0])
        *why = "\"box\" has right < left";
    else if (v[3] < v[1])
        *why = "\"box\" has bottom < top";
    else
        *box = (lt_box){v[0], v[1], v[2], v[3]};
    return 0;
}

/* A point [x, y] of a quad: 2 finite numbers within +-LT_SCORE_MAX_COORD. */
static int read_point(skim *s, lt_point *point, const char **why)
{
    static const char *const not_two = "\"quad\" holds a point that is not 2 numbers";
    const size_t start = s->pos;
    if (peek(s) != '[') return refuse(s, start, POINT_DEPTH, not_two, why);
    s->pos++;
    double xy[2];
    int n = 0, first = 1, more;
    span unused;
    while ((more = next_item(s, ']', &first, &unused)) == 1) {
        if (n == 2 || !is_number_start(peek(s))) return refuse(s, start, POINT_DEPTH, not_two, why);
        if (read_number(s, &xy[n++])) return SKIM_SYNTAX;
    }
    if (more) return SKIM_SYNTAX;
    if (n != 2)
        *why = not_two;
    else if (!isfinite(xy[0]) || !isfinite(xy[1]) || fabs(xy[0]) > LT_SCORE_MAX_COORD ||
             fabs(xy[1]) > LT_SCORE_MAX_COORD)
        *why = "\"quad\" coordinate is out of range";
    else
        *point = (lt_point){xy[0], xy[1]};
    return 0;
}

/* A quad [[x, y] x 4]. One of another length is refused as such before any of its points. */
static int read_quad(skim *s, lt_point quad[4], const char **why)
{
    static const char *const not_four = "\"quad\" is not an array of 4 points";
    const size_t start = s->pos;
    if (peek(s) != '[') return refuse(s, start, MEMBER_DEPTH, not_four, why);
    s->pos++;
    const char *point_why = NULL;
    int n = 0, first = 1, more;
    span unused;
    while ((more = next_item(s, ']', &first, &unused)) == 1) {
        const int rc =
            n < 4 && !point_why ? read_point(s, &quad[n], &point_why) : skim_value(s, POINT_DEPTH);
        if (rc) return SKIM_SYNTAX;
        n++;
    }
    if (more) return SKIM_SYNTAX;
    *why = n != 4 ? not_four : point_why;
    return 0;
}

/* Reads line i of page k, the value at s, into *line. Its first "box", "quad" and "in_order"
 * count, the rest is skimmed; what is wrong is told in that order of precedence, in *refused
 * (naming the file, k and i). */
static int read_line(skim *s, const char *name, int k, long i, lt_scored_line *line,
                     lt_error *refused)
{
    if (peek(s) != '{') {
        lt_error_set(refused, LT_EPARSE, "%s: page %d: lines[%ld] is not an object", name, k, i);
        return skim_value(s, LINE_DEPTH);
    }
    s->pos++;
    const char *box_why = "missing \"box\"", *quad_why = NULL, *order_why = NULL;
    int seen_box = 0, seen_order = 0, first = 1, more, rc = 0;
    span key;
    line->has_quad = 0;
    line->in_order = 1;
    while (!rc && (more = next_item(s, '}', &first, &key)) == 1) {
        if (!seen_box && key_is(s, key, "box")) {
            seen_box = 1;
            box_why = NULL;
            rc = read_box(s, &line->box, &box_why);
        } else if (!line->has_quad && key_is(s, key, "quad")) {
            line->has_quad = 1;
            rc = read_quad(s, line->quad, &quad_why);
        } else if (!seen_order && key_is(s, key, "in_order")) {
            seen_order = 1;
            const int c = peek(s);
            if (c == 't' || c == 'f')
                line->in_order = c == 't';
            else
                order_why = "\"in_order\" is not true or false";
            rc = skim_value(s, MEMBER_DEPTH);
        } else {
            rc = skim_value(s, MEMBER_DEPTH);
        }
    }
    if (rc || more) return SKIM_SYNTAX;
    const char *why = box_why ? box_why : quad_why ? quad_why : order_why;
    if (why) lt_error_set(refused, LT_EPARSE, "%s: page %d: lines[%ld]: %s", name, k, i, why);
    return 0;
}

/* Reads the array of lines at s into *a, keeping the first refusal in a->refused (the lines
 * after it are only skimmed). Its item LT_SCORE_MAX_LINES + 1 stops it with SKIM_TOO_MANY
 * before it is looked at. */
static int read_lines(skim *s, const char *name, int k, line_array *a)
{
    s->pos++;
    int first = 1, more;
    span unused;
    while ((more = next_item(s, ']', &first, &unused)) == 1) {
        if (a->count == LT_SCORE_MAX_LINES) return SKIM_TOO_MANY;
        if (!a->refused.code && a->count == a->cap) {
            const long cap =
                a->cap ? (a->cap < LT_SCORE_MAX_LINES / 2 ? 2 * a->cap : LT_SCORE_MAX_LINES) : 64;
            lt_scored_line *items = realloc(a->items, (size_t)cap * sizeof *items);
            if (items) {
                a->items = items;
                a->cap = cap;
            } else {
                lt_error_set(&a->refused, LT_ENOMEM, "%s: out of memory", name);
            }
        }
        const int rc = a->refused.code
                           ? skim_value(s, LINE_DEPTH)
                           : read_line(s, name, k, a->count, &a->items[a->count], &a->refused);
        if (rc) return SKIM_SYNTAX;
        a->count++;
    }
    return more;
}

/* Skims the page object at s to its end: records in found[i] the value of the first member
 * named keys[i], and reads the lines of the first "lines" (keys[nkeys - 1]) into *lines when
 * it is an array. */
static int skim_page(skim *s, const char *name, int k, const char *const *keys, int nkeys,
                     span *found, line_array *lines)
{
    s->pos++;
    int first = 1, more;
    span key;
    while ((more = next_item(s, '}', &first, &key)) == 1) {
        int which = -1;
        for (int i = 0; i < nkeys && which < 0; i++)
            if (!found[i].present && key_is(s, key, keys[i])) which = i;
        const size_t start = s->pos;
        const int rc =
            which == nkeys - 1 && peek(s) == '[' ? read_lines(s, name, k, lines) : skim_value(s, 1);
        if (rc) return rc;
        if (which >= 0) found[which] = (span){start, s->pos, 1};
    }
    return more;
}

/* Converts the k-th page object of the file (from 1) into *pg, which starts zeroed: `obj`
 * holds the members it reads but its lines, which were read into *lines; `lines_value` is the
 * first byte of its "lines" (NULL when it has none). On success pg takes the lines (not those
 * of an error record); on failure pg is cleared and the message names the file and k. */
static int convert_page(const cJSON *obj, const char *lines_value, line_array *lines,
                        const char *name, int k, lt_scored_page *pg, lt_error *err)
{
#define FAIL(code, ...)                                                                            \
    do {                                                                                           \
        page_clear(pg);                                                                            \
        return lt_error_set(err, code, __VA_ARGS__);                                               \
    } while (0)
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

    if (!lines_value) FAIL(LT_EPARSE, "%s: page %d: missing \"lines\"", name, k);
    if (*lines_value != '[') FAIL(LT_EPARSE, "%s: page %d: \"lines\" is not an array", name, k);
    if (lines->refused.code) FAIL(lines->refused.code, "%s", lines->refused.message);
    pg->lines = lines->items;
    pg->nlines = (int)lines->count;
    lines->items = NULL;
    return 0;
#undef FAIL
}

/* Reads the value at s, page k of the file, into *pg (zeroed) as convert_page does. */
static int read_page(skim *s, const char *name, int k, lt_scored_page *pg, lt_error *err)
{
    static const char *const keys[] = {"format",  "error",    "source", "image",
                                       "variant", "columns",  "page",   "width",
                                       "height",  "skew_deg", "lines"};
    enum { NKEYS = sizeof keys / sizeof *keys, LINES = NKEYS - 1 };
    const size_t start = s->pos;
    span found[NKEYS] = {{0}};
    line_array lines = {0};
    int rc = peek(s) == '{' ? skim_page(s, name, k, keys, NKEYS, found, &lines) : skim_value(s, 0);
    cJSON *obj = NULL;
    if (rc == SKIM_TOO_MANY)
        rc = lt_error_set(err, LT_ELIMIT, "%s: page %d: more than %d lines, the limit of one page",
                          name, k, LT_SCORE_MAX_LINES);
    else if (rc)
        rc = syntax_error(name, k, s->data, s->size, start, s->pos, err);
    else if (s->data[start] != '{')
        rc = lt_error_set(err, LT_EPARSE, "%s: page %d: not a JSON object", name, k);
    else if (!(rc = shallow_object(s, keys, LINES, found, name, k, &obj, err)))
        rc = convert_page(obj, found[LINES].present ? s->data + found[LINES].start : NULL, &lines,
                          name, k, pg, err);
    cJSON_Delete(obj);
    free(lines.items);
    return rc;
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
    int rc = 0;
    skim s = {data, size, 0};
    /* A UTF-8 byte order mark at the start is allowed (cJSON skips it too). */
    if (size >= 3 && memcmp(data, "\xEF\xBB\xBF", 3) == 0) s.pos = 3;
    for (;;) {
        skip_space(&s);
        if (s.pos >= size) break;
        if (n == LT_SCORE_MAX_PAGES) {
            rc = lt_error_set(err, LT_ELIMIT, "%s: more than %d pages, the limit of one file", name,
                              LT_SCORE_MAX_PAGES);
            goto fail;
        }
        if (n == cap) {
            int ncap = cap ? (cap < LT_SCORE_MAX_PAGES / 2 ? cap * 2 : LT_SCORE_MAX_PAGES) : 4;
            lt_scored_page *narr = realloc(arr, (size_t)ncap * sizeof *narr);
            if (!narr) {
                rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
                goto fail;
            }
            arr = narr;
            cap = ncap;
        }
        memset(&arr[n], 0, sizeof arr[n]);
        rc = read_page(&s, name, n + 1, &arr[n], err);
        if (rc) goto fail;
        n++;
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

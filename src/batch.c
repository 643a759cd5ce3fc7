/* batch.c — the analyse command over many inputs: folders are searched for image files, pages
 * (of every input, the pages of a multi-page TIFF too) are analysed by a pool of worker threads,
 * and the writer emits the records in input and page order, so the output does not depend on
 * the number of threads. At most 2 x jobs pages are in flight, which bounds memory. With an output
 * folder every page is its own file, written under a temporary name and renamed into place;
 * --resume skips pages already complete. */
#include "batch.h"
#include "internal.h" /* lt_json_add_source, lt_utf8_clean */

#include <cjson/cJSON.h>
#include <dirent.h>
#include <errno.h>
#include <libxml/parser.h>
#include <pthread.h>
#include <signal.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/ioctl.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

/* ---- messages on standard error ------------------------------------------------------- */

/* The live progress bar of a run on a terminal: one row drawn again in place ("\r", no
 * newline) as inputs are done. */
enum { BAR_GAUGE_MAX = 30, BAR_GAUGE_MIN = 5 }; /* characters of the bar's gauge */
typedef struct progress_bar {
    int shown;     /* the row is on screen, the cursor at its end */
    char row[256]; /* its text, to draw it again */
} progress_bar;

/* Every message of the batch machinery goes out here: one line on standard error, "COMMAND: "
 * (NULL: "lineate") and the formatted text. With the live bar on screen (`bar` not NULL), its
 * row is cleared first ("\r" then ESC [ K, erase to the end of the line, ECMA-48), so that the
 * message takes the row alone, and the bar is drawn again on the row below. Only the main
 * thread writes on standard error: the workers keep their messages in their results. */
static void say(progress_bar *bar, const char *command, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static void say(progress_bar *bar, const char *command, const char *fmt, ...)
{
    const int redraw = bar && bar->shown;
    if (redraw) fputs("\r\033[K", stderr);
    fprintf(stderr, "%s: ", command ? command : "lineate");
    va_list ap;
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fputc('\n', stderr);
    if (redraw) fputs(bar->row, stderr);
}

/* ---- inputs --------------------------------------------------------------------------- */

static const char *const image_extensions[] = {".png", ".tif", ".tiff", ".jpg", ".jpeg",
                                               ".jpe", ".pnm", ".pbm",  ".pgm", ".ppm",
                                               ".bmp", ".gif", ".webp", ".jp2"};

static int is_image_name(const char *name)
{
    const char *dot = strrchr(name, '.');
    if (!dot) return 0;
    for (size_t i = 0; i < sizeof image_extensions / sizeof *image_extensions; i++)
        if (strcasecmp(dot, image_extensions[i]) == 0) return 1;
    return 0;
}

/* `name` without its extension (a new string). */
static char *strip_extension(const char *name)
{
    const char *slash = strrchr(name, '/'), *dot = strrchr(name, '.');
    size_t n = dot && (!slash || dot > slash) ? (size_t)(dot - name) : strlen(name);
    char *s = malloc(n + 1);
    if (s) {
        memcpy(s, name, n);
        s[n] = 0;
    }
    return s;
}

/* The output name of a file given by itself (a new string): its path as given, made relative
 * and clean, so that files of different folders keep apart under the output folder. A leading
 * '/', empty and "." components are dropped and each ".." becomes "__" (the name never
 * leaves the output folder): "/data/vol1/0001.png" gives "data/vol1/0001.png", "../scans/a.tif"
 * gives "__/scans/a.tif". */
static char *mirrored_name(const char *path)
{
    char *name = malloc(2 * strlen(path) + 8), *w = name;
    if (!name) return NULL;
    for (const char *s = path; *s;) {
        while (*s == '/')
            s++;
        size_t n = strcspn(s, "/");
        if (n == 0 || (n == 1 && s[0] == '.')) {
            s += n;
            continue;
        }
        if (w > name) *w++ = '/';
        if (n == 2 && s[0] == '.' && s[1] == '.') {
            memcpy(w, "__", 2);
            w += 2;
        } else {
            memcpy(w, s, n);
            w += n;
        }
        s += n;
    }
    if (w == name) w = stpcpy(name, "page"); /* "." or "/": never an empty name */
    *w = 0;
    return name;
}

static int push_input(lt_inputs *in, const char *path, const char *out_name)
{
    if (in->count == in->cap) {
        int cap = in->cap ? 2 * in->cap : 64;
        lt_input *bigger = realloc(in->items, (size_t)cap * sizeof *bigger);
        if (!bigger) return -1;
        in->items = bigger;
        in->cap = cap;
    }
    lt_input *it = &in->items[in->count];
    it->path = strdup(path);
    it->out_name = strip_extension(out_name);
    if (!it->path || !it->out_name) {
        free(it->path);
        free(it->out_name);
        return -1;
    }
    in->count++;
    return 0;
}

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* A folder walk: the folders entered so far, by device and inode (a hash set with linear
 * probing, at most half full), so that each is searched once however links lead back to it. */
typedef struct walk_folder {
    dev_t dev;
    ino_t ino;
    int used;
} walk_folder;

typedef struct walk {
    walk_folder *slots;
    size_t count, size; /* size: a power of two, or 0 */
} walk;

static size_t walk_slot(const walk *w, dev_t dev, ino_t ino)
{
    size_t i = ((size_t)ino * 0x9E3779B97F4A7C15u ^ (size_t)dev) & (w->size - 1);
    while (w->slots[i].used && (w->slots[i].dev != dev || w->slots[i].ino != ino))
        i = (i + 1) & (w->size - 1);
    return i;
}

/* 1 when the folder st is new to the walk (and now remembered), 0 when seen, -1 when out of
 * memory. */
static int walk_enter(walk *w, const struct stat *st)
{
    if (2 * (w->count + 1) > w->size) {
        walk bigger = {calloc(w->size ? 2 * w->size : 64, sizeof *w->slots), w->count,
                       w->size ? 2 * w->size : 64};
        if (!bigger.slots) return -1;
        for (size_t i = 0; i < w->size; i++)
            if (w->slots[i].used)
                bigger.slots[walk_slot(&bigger, w->slots[i].dev, w->slots[i].ino)] = w->slots[i];
        free(w->slots);
        *w = bigger;
    }
    const size_t i = walk_slot(w, st->st_dev, st->st_ino);
    if (w->slots[i].used) return 0;
    w->slots[i] = (walk_folder){st->st_dev, st->st_ino, 1};
    w->count++;
    return 1;
}

/* The sorted names in `dir` but the hidden ones (and "." and ".."); NULL with a message on
 * stderr when the folder cannot be read. */
static char **folder_names(const lt_inputs *in, const char *dir, size_t *count)
{
    DIR *d = opendir(dir);
    if (!d) {
        say(NULL, in->command, "%s: %s", dir, strerror(errno));
        return NULL;
    }
    char **names = NULL;
    size_t n = 0, cap = 0;
    const char *failure = NULL;
    for (;;) {
        errno = 0;
        struct dirent *e = readdir(d);
        if (!e) {
            if (errno) failure = strerror(errno);
            break;
        }
        if (e->d_name[0] == '.') continue;
        if (n == cap) {
            cap = cap ? 2 * cap : 64;
            char **bigger = realloc(names, cap * sizeof *bigger);
            if (!bigger) {
                failure = "out of memory";
                break;
            }
            names = bigger;
        }
        if (!(names[n] = strdup(e->d_name))) {
            failure = "out of memory";
            break;
        }
        n++;
    }
    closedir(d);
    if (!failure && !names && !(names = malloc(sizeof *names))) /* an empty folder */
        failure = "out of memory";
    if (failure) {
        say(NULL, in->command, "%s: %s", dir, failure);
        for (size_t i = 0; i < n; i++)
            free(names[i]);
        free(names);
        return NULL;
    }
    if (n) qsort(names, n, sizeof *names, cmp_str);
    *count = n;
    return names;
}

/* Adds the image files below `dir` (whose stat is `st`); `rel` is the path relative to the
 * folder given. Only regular files are taken; a folder met again (a link back to one already
 * searched) and other kinds of file named like images (FIFOs, devices) are reported and
 * skipped. A folder that cannot be read is reported, and the walk goes on; then -1. */
static int add_folder(lt_inputs *in, walk *w, const char *dir, const struct stat *st,
                      const char *rel, int depth)
{
    if (depth > 64) {
        say(NULL, in->command, "%s: folders nested too deep", dir);
        return -1;
    }
    const int entered = walk_enter(w, st);
    if (entered <= 0) {
        if (entered == 0)
            say(NULL, in->command, "%s: skipped, a folder searched already (a link)", dir);
        else
            say(NULL, in->command, "%s: out of memory", dir);
        return entered == 0 ? 0 : -1;
    }
    size_t n = 0;
    char **names = folder_names(in, dir, &n);
    if (!names) return -1;
    int rc = 0;
    for (size_t i = 0; i < n; i++) {
        size_t lp = strlen(dir) + strlen(names[i]) + 2, lr = strlen(rel) + strlen(names[i]) + 2;
        char *path = malloc(lp), *sub = malloc(lr);
        struct stat est;
        if (!path || !sub) {
            say(NULL, in->command, "%s: out of memory", dir);
            rc = -1;
        } else {
            snprintf(path, lp, "%s/%s", dir, names[i]);
            snprintf(sub, lr, "%s%s%s", rel, *rel ? "/" : "", names[i]);
            const int found = stat(path, &est) == 0;
            if (found && S_ISDIR(est.st_mode)) {
                if (add_folder(in, w, path, &est, sub, depth + 1)) rc = -1;
            } else if (!is_image_name(names[i])) {
                /* not taken */
            } else if (found && !S_ISREG(est.st_mode)) {
                say(NULL, in->command, "%s: skipped, not a regular file", path);
            } else if (push_input(in, path, sub)) { /* a broken link fails when opened */
                say(NULL, in->command, "%s: out of memory", path);
                rc = -1;
            }
        }
        free(path);
        free(sub);
    }
    for (size_t i = 0; i < n; i++)
        free(names[i]);
    free(names);
    return rc;
}

int lt_inputs_add_arg(lt_inputs *in, const char *arg)
{
    struct stat st;
    if (strcmp(arg, "-") != 0 && stat(arg, &st) == 0 && S_ISDIR(st.st_mode)) {
        size_t n = strlen(arg);
        char *dir = strdup(arg);
        if (!dir) return -1;
        while (n > 1 && dir[n - 1] == '/')
            dir[--n] = 0;
        const int before = in->count;
        walk w = {0};
        int rc = add_folder(in, &w, dir, &st, "", 0);
        free(w.slots);
        if (rc == 0 && in->count == before) {
            say(NULL, in->command, "%s: no image files in this folder", dir);
            rc = -1;
        }
        free(dir);
        return rc;
    }
    char *name = strcmp(arg, "-") == 0 ? strdup("stdin") : mirrored_name(arg);
    if (!name || push_input(in, arg, name)) {
        free(name);
        say(NULL, in->command, "out of memory");
        return -1;
    }
    free(name);
    return 0;
}

int lt_inputs_add_list(lt_inputs *in, const char *list_path)
{
    FILE *fp = strcmp(list_path, "-") == 0 ? stdin : fopen(list_path, "r");
    if (!fp) {
        say(NULL, in->command, "%s: %s", list_path, strerror(errno));
        return -1;
    }
    char *line = NULL;
    size_t cap = 0;
    ssize_t len;
    int rc = 0;
    while (rc == 0 && (len = getline(&line, &cap, fp)) >= 0) {
        while (len > 0 && (line[len - 1] == '\n' || line[len - 1] == '\r'))
            line[--len] = 0;
        if (len > 0) rc = lt_inputs_add_arg(in, line);
    }
    if (rc == 0 && ferror(fp)) {
        say(NULL, in->command, "%s: read error", list_path);
        rc = -1;
    }
    free(line);
    if (fp != stdin) fclose(fp);
    return rc;
}

void lt_inputs_free(lt_inputs *in)
{
    for (int i = 0; i < in->count; i++) {
        free(in->items[i].path);
        free(in->items[i].out_name);
    }
    free(in->items);
    in->items = NULL;
    in->count = in->cap = 0;
}

static int cmp_out_name(const void *a, const void *b)
{
    const lt_input *x = *(const lt_input *const *)a, *y = *(const lt_input *const *)b;
    int c = strcmp(x->out_name, y->out_name);
    return c ? c : (x > y) - (x < y); /* input order among equal names */
}

/* The input named `name`, or NULL; `sorted` is in cmp_out_name order. */
static const lt_input *find_out_name(const lt_input **sorted, int n, const char *name)
{
    int lo = 0, hi = n;
    while (lo < hi) {
        int mid = lo + (hi - lo) / 2, c = strcmp(sorted[mid]->out_name, name);
        if (c == 0) return sorted[mid];
        if (c < 0)
            lo = mid + 1;
        else
            hi = mid;
    }
    return NULL;
}

int lt_inputs_check_out_names(const lt_inputs *in, const char *out_dir, const char *suffix)
{
    const lt_input **sorted = malloc(((size_t)in->count + 1) * sizeof *sorted);
    if (!sorted) {
        say(NULL, in->command, "out of memory");
        return -1;
    }
    for (int k = 0; k < in->count; k++)
        sorted[k] = &in->items[k];
    qsort(sorted, (size_t)in->count, sizeof *sorted, cmp_out_name);
    int rc = 0;
    for (int k = 1; k < in->count && rc == 0; k++)
        if (strcmp(sorted[k - 1]->out_name, sorted[k]->out_name) == 0) {
            say(NULL, in->command,
                "%s and %s would both write %s/%s%s: give inputs of the same name "
                "in different folders, or run them apart",
                sorted[k - 1]->path, sorted[k]->path, out_dir, sorted[k]->out_name, suffix);
            rc = -1;
        }
    for (int k = 0; k < in->count && rc == 0; k++) { /* NAME.pN beside the pages of NAME */
        const char *name = sorted[k]->out_name, *dot = strrchr(name, '.');
        if (!dot || dot[1] != 'p' || !dot[2] || strspn(dot + 2, "0123456789") != strlen(dot + 2))
            continue;
        char *stem = strndup(name, (size_t)(dot - name));
        const lt_input *other = stem ? find_out_name(sorted, in->count, stem) : NULL;
        if (other) {
            say(NULL, in->command,
                "%s and %s would both write %s/%s%s when %s has several pages: "
                "rename one or run them apart",
                other->path, sorted[k]->path, out_dir, name, suffix, other->path);
            rc = -1;
        }
        free(stem);
    }
    free(sorted);
    return rc;
}

/* ---- growing text buffers ------------------------------------------------------------- */

typedef struct text {
    char *data;
    size_t len, cap;
    int failed; /* out of memory: the result is incomplete */
} text;

static void text_add(text *t, const char *s, size_t n)
{
    if (t->failed) return;
    if (t->len + n + 1 > t->cap) {
        size_t cap = t->cap ? t->cap : 4096;
        while (cap < t->len + n + 1)
            cap *= 2;
        char *bigger = realloc(t->data, cap);
        if (!bigger) {
            t->failed = 1;
            return;
        }
        t->data = bigger;
        t->cap = cap;
    }
    memcpy(t->data + t->len, s, n);
    t->len += n;
    t->data[t->len] = 0;
}

static void text_printf(text *t, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void text_printf(text *t, const char *fmt, ...)
{
    char buf[1024];
    va_list ap, again;
    va_start(ap, fmt);
    va_copy(again, ap);
    int n = vsnprintf(buf, sizeof buf, fmt, ap);
    if (n >= (int)sizeof buf) { /* a long file name: the whole line */
        char *line = malloc((size_t)n + 1);
        if (line) {
            vsnprintf(line, (size_t)n + 1, fmt, again);
            text_add(t, line, (size_t)n);
            free(line);
        } else {
            t->failed = 1;
        }
    } else if (n > 0) {
        text_add(t, buf, (size_t)n);
    }
    va_end(again);
    va_end(ap);
}

/* ---- temporary files and signals -------------------------------------------------------
 * SIGINT, SIGTERM and SIGHUP are taken by a thread of their own (sigwait), which waits until
 * no page file is being written, removes the stream's temporary file, and ends the process
 * by the same signal; so no temporary file is left behind, and no new one is begun. */
static pthread_mutex_t temp_lock = PTHREAD_MUTEX_INITIALIZER;
static pthread_cond_t temp_idle = PTHREAD_COND_INITIALIZER;
static int temp_writers;  /* page files between their creation and their rename */
static int temp_stopping; /* a signal came: no new temporary file */
static char *temp_stream; /* the stream's temporary file, or NULL */
static sigset_t temp_signals;

static void temp_write_begin(void)
{
    pthread_mutex_lock(&temp_lock);
    while (temp_stopping) /* the process is about to end */
        pthread_cond_wait(&temp_idle, &temp_lock);
    temp_writers++;
    pthread_mutex_unlock(&temp_lock);
}

static void temp_write_end(void)
{
    pthread_mutex_lock(&temp_lock);
    if (--temp_writers == 0) pthread_cond_broadcast(&temp_idle);
    pthread_mutex_unlock(&temp_lock);
}

static void *temp_guard(void *arg)
{
    (void)arg;
    int sig = 0;
    if (sigwait(&temp_signals, &sig) != 0) return NULL;
    pthread_mutex_lock(&temp_lock);
    temp_stopping = 1;
    while (temp_writers > 0)
        pthread_cond_wait(&temp_idle, &temp_lock);
    if (temp_stream) unlink(temp_stream);
    signal(sig, SIG_DFL);
    pthread_sigmask(SIG_UNBLOCK, &temp_signals, NULL);
    raise(sig); /* the default action: the process ends here, the lock still held */
    _exit(128 + sig);
}

int lt_batch_guard_signals(void)
{
    sigemptyset(&temp_signals);
    sigaddset(&temp_signals, SIGINT);
    sigaddset(&temp_signals, SIGTERM);
    sigaddset(&temp_signals, SIGHUP);
    pthread_t guard;
    if (pthread_sigmask(SIG_BLOCK, &temp_signals, NULL) != 0) return -1;
    if (pthread_create(&guard, NULL, temp_guard, NULL) != 0) {
        pthread_sigmask(SIG_UNBLOCK, &temp_signals, NULL);
        return -1;
    }
    pthread_detach(guard);
    return 0;
}

void lt_batch_stream_temp(const char *path)
{
    pthread_mutex_lock(&temp_lock);
    free(temp_stream);
    temp_stream = path ? strdup(path) : NULL;
    pthread_mutex_unlock(&temp_lock);
}

/* ---- one input ------------------------------------------------------------------------ */

typedef struct result {
    text records;  /* JSON lines for the stream */
    text messages; /* lines for stderr, without the command's name */
    long done, failed, skipped;
    int write_failed;
    int finished;
} result;

/* The error record of a page: format, source, page (0 when the file did not open), error. */
static char *error_record(const char *format_name, const char *source, int page, int pages,
                          const char *message)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    cJSON_AddStringToObject(o, "format", format_name);
    if (strcmp(format_name, LT_FORMAT_NAME) != 0) cJSON_AddStringToObject(o, "kind", "error");
    char *clean = lt_utf8_clean(message); /* it names the file */
    if (lt_json_add_source(o, source) || !clean) {
        free(clean);
        cJSON_Delete(o);
        return NULL;
    }
    if (page > 0)
        cJSON_AddNumberToObject(o, "page", page);
    else
        cJSON_AddNullToObject(o, "page");
    if (pages > 0) cJSON_AddNumberToObject(o, "pages", pages);
    cJSON_AddStringToObject(o, "error", clean);
    free(clean);
    char *s = cJSON_PrintUnformatted(o);
    cJSON_Delete(o);
    return s;
}

/* File name extension of each output format. */
static const char *const format_extension[] = {"json", "page.xml", "alto.xml"};

/* Path of a page's file in the output folder (new string). */
static char *page_file(const lt_batch_options *opt, const char *name, int page, int pages)
{
    const char *ext = opt->task ? opt->task->suffix : format_extension[opt->format];
    size_t n = strlen(opt->out_dir) + strlen(name) + strlen(ext) + 32;
    char *p = malloc(n);
    if (!p) return NULL;
    if (pages <= 1)
        snprintf(p, n, "%s/%s.%s", opt->out_dir, name, ext);
    else
        snprintf(p, n, "%s/%s.p%d.%s", opt->out_dir, name, page, ext);
    return p;
}

/* The whole of a file as a string in t (t->failed when it could not be read whole). */
static void read_text_file(const char *path, text *t)
{
    FILE *fp = fopen(path, "rb");
    if (!fp) {
        t->failed = 1;
        return;
    }
    char buf[65536];
    size_t got;
    while ((got = fread(buf, 1, sizeof buf, fp)) > 0)
        text_add(t, buf, got);
    if (ferror(fp)) t->failed = 1;
    fclose(fp);
}

int lt_make_parents(char *path)
{
    for (char *s = strchr(path + 1, '/'); s; s = strchr(s + 1, '/')) {
        *s = 0;
        int bad = mkdir(path, 0777) != 0 && errno != EEXIST ? errno : 0;
        *s = '/';
        if (bad) return bad;
    }
    return 0;
}

/* Writes `json` and a newline to `path` through a temporary file (PATH.tmp) renamed into
 * place. The temporary name is the same in every run, so that what a killed run left of a
 * page is replaced when a resumed run does the page again. Returns 0 or the errno of the
 * step that failed. */
static int write_page_file(char *path, const char *json)
{
    int bad = lt_make_parents(path);
    if (bad) return bad;
    size_t n = strlen(path) + 8;
    char *tmp = malloc(n);
    if (!tmp) return ENOMEM;
    snprintf(tmp, n, "%s.tmp", path);
    temp_write_begin();
    FILE *fp = fopen(tmp, "wb");
    if (!fp) bad = errno;
    if (fp) {
        if (fputs(json, fp) < 0 || fputc('\n', fp) == EOF) bad = errno ? errno : EIO;
        if (fclose(fp) != 0 && !bad) bad = errno ? errno : EIO;
        if (!bad && rename(tmp, path) != 0) bad = errno;
        if (bad) remove(tmp);
    }
    temp_write_end();
    free(tmp);
    return bad;
}

/* Whether a page file from an earlier run is complete: a layout (not an error record) that
 * parses as one JSON object. Files are only ever renamed into place whole, so a partial file
 * cannot exist; this also rejects a file edited or damaged since. */
static int page_file_complete(const char *path, const lt_batch_options *opt)
{
    const int format = opt->format;
    if (!opt->task && format != LT_OUTPUT_JSON) { /* a well-formed document whose root is the format's */
        xmlDocPtr doc = xmlReadFile(path, NULL, XML_PARSE_NONET | XML_PARSE_NOERROR |
                                                    XML_PARSE_NOWARNING);
        xmlNodePtr root = doc ? xmlDocGetRootElement(doc) : NULL;
        int ok = root && xmlStrEqual(root->name,
                                     BAD_CAST(format == LT_OUTPUT_PAGE ? "PcGts" : "alto"));
        xmlFreeDoc(doc);
        return ok;
    }
    text t = {0};
    read_text_file(path, &t);
    int ok = 0;
    if (!t.failed && t.data && opt->task) {
        ok = opt->task->complete(opt->task->ctx, t.data);
    } else if (!t.failed && t.data) {
        cJSON *o = cJSON_Parse(t.data);
        ok = cJSON_IsObject(o) && cJSON_IsArray(cJSON_GetObjectItemCaseSensitive(o, "lines")) &&
             !cJSON_GetObjectItemCaseSensitive(o, "error");
        cJSON_Delete(o);
    }
    free(t.data);
    return ok;
}

/* Hands one page's record to the stream or the output folder; -1 when its file could not
 * be written (reported). */
static int emit(result *r, const lt_batch_options *opt, const lt_input *in, int page, int pages,
                char *json)
{
    if (!opt->out_dir) {
        text_add(&r->records, json, strlen(json));
        text_add(&r->records, "\n", 1);
        return 0;
    }
    char *path = page_file(opt, in->out_name, page, pages);
    const int bad = path ? write_page_file(path, json) : ENOMEM;
    if (bad) {
        text_printf(&r->messages, "%s: cannot write: %s\n", path ? path : opt->out_dir,
                    strerror(bad));
        r->write_failed = 1;
    }
    free(path);
    return bad ? -1 : 0;
}

static void fail_page(result *r, const lt_batch_options *opt, const lt_input *in, int page,
                      int pages, const char *message)
{
    text_printf(&r->messages, "%s\n", message);
    char *rec = opt->task                     ? error_record(opt->task->format_name, in->path, page,
                                                             pages, message)
                : opt->format == LT_OUTPUT_JSON ? error_record(LT_FORMAT_NAME, in->path, page, pages,
                                                             message)
                                                : NULL;
    if (rec) emit(r, opt, in, page > 0 ? page : 1, pages, rec);
    free(rec);
    r->failed++;
}

void lt_page_message(char *buf, size_t n, const char *name, int page, const char *msg)
{
    /* The library's messages name the file first, perhaps shortened in the middle. */
    const size_t named = strlen(name) < 32 ? strlen(name) : 32;
    if (strncmp(msg, name, named) == 0) {
        lt_shorten_middle(buf, n, msg);
        return;
    }
    const size_t len = strlen(name) + strlen(msg) + 32;
    char *full = malloc(len);
    if (!full) {
        lt_shorten_middle(buf, n, msg);
        return;
    }
    snprintf(full, len, "%s: page %d: %s", name, page, msg);
    lt_shorten_middle(buf, n, full); /* a long name loses its middle, not the reason */
    free(full);
}

/* A page task's work on a decoded page: its record, or an error record. */
static void run_task(const lt_input *in, const lt_batch_options *opt, const char *name,
                     lt_image **img, int page, int pages, result *r)
{
    lt_error err = {0};
    char *record = NULL, msg[512];
    int rc = opt->task->page_record(opt->task->ctx, in, page, pages, img, &record, &err);
    if (rc == 0 || record) {
        if (record) emit(r, opt, in, page, pages, record);
        if (rc == 0) r->done++;
    }
    if (rc) {
        lt_page_message(msg, sizeof msg, name, page, err.message[0] ? err.message : "failed");
        text_printf(&r->messages, "%s\n", msg);
        if (!record) {
            char *rec = error_record(opt->task->format_name, in->path, page, pages, msg);
            if (rec) emit(r, opt, in, page, pages, rec);
            free(rec);
        }
        r->failed++;
        if (rc == -2) r->write_failed = 1;
    }
    free(record);
}

/* One page of an opened input: its record (layout or error) and messages into *r. The source
 * is shared by the workers on the input's pages; `read_lock` serialises the decoding. */
static void process_page(const lt_input *in, const lt_batch_options *opt, lt_source *src,
                         pthread_mutex_t *read_lock, int i, int pages, result *r)
{
    if (opt->out_dir && opt->resume) {
        char *path = page_file(opt, in->out_name, i + 1, pages);
        int complete = path && page_file_complete(path, opt);
        free(path);
        if (complete) {
            r->skipped++;
            return;
        }
    }
    lt_error perr = {0};
    lt_image *img = NULL;
    lt_layout *layout = NULL;
    pthread_mutex_lock(read_lock);
    int rc = lt_source_read_page(src, i, opt->params->max_pixels, &img, &perr);
    pthread_mutex_unlock(read_lock);
    char msg[512];
    if (rc == 0 && opt->task) {
        run_task(in, opt, lt_source_name(src), &img, i + 1, pages, r);
        lt_image_free(img);
        return;
    }
    if (rc || lt_analyze_consume(&img, opt->params, &layout, &perr)) {
        lt_page_message(msg, sizeof msg, lt_source_name(src), i + 1, perr.message);
        fail_page(r, opt, in, i + 1, pages, msg);
        lt_image_free(img);
        return;
    }
    lt_image_free(img);
    char *json = opt->format == LT_OUTPUT_PAGE
                     ? lt_layout_to_page_xml(layout, in->path, i + 1, pages, opt->created_utc)
                 : opt->format == LT_OUTPUT_ALTO
                     ? lt_layout_to_alto(layout, in->path, i + 1, pages)
                     : lt_layout_to_json(layout, in->path, i + 1, pages, opt->pretty);
    lt_layout_free(layout);
    if (!json) {
        lt_page_message(msg, sizeof msg, lt_source_name(src), i + 1, "out of memory");
        fail_page(r, opt, in, i + 1, pages, msg);
        return;
    }
    if (emit(r, opt, in, i + 1, pages, json) == 0)
        r->done++;
    else
        r->failed++; /* analysed, but not written */
    free(json);
}

/* ---- the pool ------------------------------------------------------------------------- */

/* An input's state in the pool. Its pages are handed out one by one, in order, to whichever
 * worker is free, so the pages of a multi-page TIFF are analysed in parallel too. */
enum { PAGES_UNKNOWN = -2, PAGES_OPENING = -1 };
typedef struct input_state {
    int pages;      /* PAGES_UNKNOWN, PAGES_OPENING, or the count (0: it did not open) */
    int unfinished; /* pages handed out or not, whose record is not ready yet */
    lt_source *src; /* while pages remain to be read */
    pthread_mutex_t read_lock;
    result *results; /* one per page (one for an input that did not open) */
} input_state;

/* The result slots of an opened input: one per page, one for an input that did not open,
 * none when they could not be allocated. */
static int result_slots(const input_state *st)
{
    return !st->results ? 0 : st->pages > 0 ? st->pages : 1;
}

typedef struct pool {
    const lt_inputs *in;
    const lt_batch_options *opt;
    input_state *inputs;
    int current;   /* the input whose pages are being handed out */
    int next_page; /* its next page */
    int in_flight; /* pages handed out and not yet written */
    int window;    /* bound on in_flight: the pages held in memory at once */
    pthread_mutex_t lock;
    pthread_cond_t changed;
} pool;

/* Opens input k (the caller has marked it PAGES_OPENING; called without the lock). */
static void open_input(pool *p, int k)
{
    input_state *st = &p->inputs[k];
    lt_error err = {0};
    lt_source *src = NULL;
    int pages = 0;
    if (lt_source_open(p->in->items[k].path, p->opt->max_pages, &src, &err) == 0)
        pages = lt_source_pages(src);
    result *results = calloc((size_t)(pages > 0 ? pages : 1), sizeof *results);
    if (results && pages == 0) { /* did not open (an open source has a page): one error record */
        fail_page(&results[0], p->opt, &p->in->items[k], 0, 0, err.message);
        results[0].finished = 1;
    }
    if (!results) pages = 0; /* out of memory: the writer reports the input */
    if (pages == 0) {
        lt_source_free(src);
        src = NULL;
    }
    pthread_mutex_lock(&p->lock);
    st->src = src;
    st->results = results;
    st->unfinished = pages;
    st->pages = pages;
    pthread_mutex_init(&st->read_lock, NULL);
    pthread_cond_broadcast(&p->changed);
    pthread_mutex_unlock(&p->lock);
}

static void *worker(void *arg)
{
    pool *p = arg;
    pthread_mutex_lock(&p->lock);
    for (;;) {
        if (p->current >= p->in->count) break;
        input_state *st = &p->inputs[p->current];
        if (st->pages == PAGES_OPENING || p->in_flight >= p->window) {
            pthread_cond_wait(&p->changed, &p->lock);
            continue;
        }
        if (st->pages == PAGES_UNKNOWN) {
            st->pages = PAGES_OPENING;
            const int k = p->current;
            pthread_mutex_unlock(&p->lock);
            open_input(p, k);
            pthread_mutex_lock(&p->lock);
            continue;
        }
        if (st->pages == 0) { /* it did not open: its one error record is ready */
            p->in_flight++;
            p->current++;
            pthread_cond_broadcast(&p->changed);
            continue;
        }
        const int k = p->current, i = p->next_page++;
        if (p->next_page == st->pages) p->current++, p->next_page = 0;
        p->in_flight++;
        pthread_mutex_unlock(&p->lock);
        process_page(&p->in->items[k], p->opt, st->src, &st->read_lock, i, st->pages,
                     &st->results[i]);
        pthread_mutex_lock(&p->lock);
        st->results[i].finished = 1;
        if (--st->unfinished == 0) { /* the input's last page: nobody reads it any more */
            lt_source_free(st->src);
            st->src = NULL;
        }
        pthread_cond_broadcast(&p->changed);
    }
    pthread_mutex_unlock(&p->lock);
    return NULL;
}

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec + ts.tv_nsec * 1e-9;
}

/* Reports the progress after `inputs_done` of the `inputs`: with opt->progress 2 the live bar
 * (fitted to the terminal's width, so that "\r" returns to its start; a new line under it once
 * every input is done), with 1 a line every 50 pages and at the end. */
static void report_progress(const lt_batch_options *opt, progress_bar *bar,
                            const lt_batch_totals *t, int inputs_done, int inputs, double elapsed_s,
                            long *last_line)
{
    const long pages = t->done + t->failed + t->skipped;
    const double rate = elapsed_s > 0 ? (t->done + t->failed) / elapsed_s : 0;
    if (opt->progress == 2) {
        char counts[160];
        const double eta = inputs_done > 0 ? elapsed_s * (inputs - inputs_done) / inputs_done : 0;
        snprintf(counts, sizeof counts, "%d/%d files, %ld pages, %.1f pages/s, ETA %.0f s",
                 inputs_done, inputs, pages, rate, eta);
        /* the row fits the terminal (a wrapped row would not go back under "\r"): the gauge
         * narrows, then goes, then the counts are cut */
        struct winsize ws;
        const int columns =
            ioctl(STDERR_FILENO, TIOCGWINSZ, &ws) == 0 && ws.ws_col > 1 ? ws.ws_col : 80;
        int gauge = columns - 1 - (int)strlen(counts) - 3;
        gauge = gauge > BAR_GAUGE_MAX ? BAR_GAUGE_MAX : gauge;
        if (gauge >= BAR_GAUGE_MIN) {
            const int filled = inputs ? (int)((long)gauge * inputs_done / inputs) : gauge;
            snprintf(bar->row, sizeof bar->row, "[%.*s%*s] %s", filled,
                     "##############################", gauge - filled, "", counts);
        } else {
            snprintf(bar->row, sizeof bar->row, "%s", counts);
        }
        if ((int)strlen(bar->row) >= columns) bar->row[columns - 1] = '\0';
        fprintf(stderr, "\r%s\033[K", bar->row);
        bar->shown = 1;
        if (inputs_done == inputs) {
            fputc('\n', stderr);
            bar->shown = 0;
        }
    } else if (opt->progress == 1 && (pages / 50 > *last_line / 50 || inputs_done == inputs)) {
        say(NULL, opt->command, "progress: %d/%d files, %ld pages, %.1f pages/s", inputs_done,
            inputs, pages, rate);
        *last_line = pages;
    }
}

/* Copies the file of a page, done or skipped, to the merged stream. 0, or -1 with a message
 * on stderr. */
static int merge_page_file(const lt_batch_options *opt, progress_bar *bar, const lt_input *in,
                           int page, int pages)
{
    char *path = page_file(opt, in->out_name, page, pages);
    text t = {0};
    if (path) read_text_file(path, &t);
    int bad = !path || t.failed || !t.data;
    if (bad)
        say(bar, opt->command, "%s: cannot read back: %s", path ? path : opt->out_dir,
            strerror(errno ? errno : ENOMEM));
    else if (fwrite(t.data, 1, t.len, opt->out) != t.len)
        bad = 1; /* the caller reports the stream */
    free(t.data);
    free(path);
    return bad ? -1 : 0;
}

int lt_batch_run(const lt_inputs *in, const lt_batch_options *opt, lt_batch_totals *totals)
{
    memset(totals, 0, sizeof *totals);
    xmlInitParser(); /* once, before the workers use libxml2 */
    pool p = {in,
              opt,
              calloc((size_t)in->count + 1, sizeof(input_state)),
              0,
              0,
              0,
              2 * opt->jobs,
              PTHREAD_MUTEX_INITIALIZER,
              PTHREAD_COND_INITIALIZER};
    pthread_t *threads = calloc((size_t)opt->jobs, sizeof *threads);
    if (!p.inputs || !threads) {
        free(p.inputs);
        free(threads);
        say(NULL, opt->command, "out of memory");
        return -1;
    }
    for (int k = 0; k < in->count; k++)
        p.inputs[k].pages = PAGES_UNKNOWN;
    int started = 0;
    for (; started < opt->jobs; started++)
        if (pthread_create(&threads[started], NULL, worker, &p)) break;
    if (started == 0) { /* no thread could start: work in this one, everything in memory */
        p.window = INT32_MAX;
        worker(&p);
    }
    const double t0 = now_s();
    long last_line = 0;
    progress_bar bar = {0};
    int stop = 0;
    for (int k = 0; k < in->count && !stop; k++) {
        input_state *st = &p.inputs[k];
        pthread_mutex_lock(&p.lock);
        while (st->pages < 0)
            pthread_cond_wait(&p.changed, &p.lock);
        pthread_mutex_unlock(&p.lock);
        if (!st->results) { /* out of memory when it was opened */
            say(&bar, opt->command, "%s: out of memory", in->items[k].path);
            totals->failed++;
            pthread_mutex_lock(&p.lock);
            p.in_flight--;
            pthread_cond_broadcast(&p.changed);
            pthread_mutex_unlock(&p.lock);
        }
        const int slots = result_slots(st);
        for (int i = 0; i < slots && !stop; i++) {
            result *r = &st->results[i];
            pthread_mutex_lock(&p.lock);
            while (!r->finished)
                pthread_cond_wait(&p.changed, &p.lock);
            pthread_mutex_unlock(&p.lock);
            if (r->records.len && !totals->write_failed &&
                fwrite(r->records.data, 1, r->records.len, opt->out) != r->records.len) {
                totals->write_failed = 1;
                totals->stream_errno = errno ? errno : EIO;
            }
            if (r->records.failed || r->messages.failed) {
                say(&bar, opt->command, "%s: out of memory", in->items[k].path);
                r->failed++;
            }
            if (opt->merge && !r->write_failed && !totals->write_failed &&
                merge_page_file(opt, &bar, &in->items[k], i + 1, st->pages))
                totals->write_failed = 1;
            for (const char *line = r->messages.data; line && *line;) { /* one message a line */
                const size_t len = strcspn(line, "\n");
                say(&bar, opt->command, "%.*s", (int)len, line);
                line += len + (line[len] == '\n');
            }
            totals->done += r->done;
            totals->failed += r->failed;
            totals->skipped += r->skipped;
            totals->write_failed |= r->write_failed;
            free(r->records.data);
            free(r->messages.data);
            r->records.data = r->messages.data = NULL;
            stop = totals->write_failed && !opt->out_dir; /* nowhere to write to */
            pthread_mutex_lock(&p.lock);
            p.in_flight--;
            if (stop) p.current = in->count;
            pthread_cond_broadcast(&p.changed);
            pthread_mutex_unlock(&p.lock);
        }
        if (opt->progress)
            report_progress(opt, &bar, totals, k + 1, in->count, now_s() - t0, &last_line);
    }
    if (bar.shown) fputc('\n', stderr); /* stopped early: what follows starts a row of its own */
    for (int i = 0; i < started; i++)
        pthread_join(threads[i], NULL);
    for (int k = 0; k < in->count; k++) { /* what is left after a write failure */
        input_state *st = &p.inputs[k];
        if (st->pages < 0) continue;
        for (int i = 0; i < result_slots(st); i++) {
            free(st->results[i].records.data);
            free(st->results[i].messages.data);
        }
        free(st->results);
        lt_source_free(st->src);
        pthread_mutex_destroy(&st->read_lock);
    }
    const double elapsed = now_s() - t0;
    if (opt->summary)
        say(NULL, opt->command,
            "%ld pages done, %ld failed, %ld skipped, %.2f pages/s, %d thread%s", totals->done,
            totals->failed, totals->skipped,
            elapsed > 0 ? (totals->done + totals->failed) / elapsed : 0.0, started ? started : 1,
            started > 1 ? "s" : "");
    free(threads);
    free(p.inputs);
    return 0;
}

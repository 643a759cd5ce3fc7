/* batch.h — the analyse command's batch machinery (src/batch.c): the list of inputs
 * (files, folders searched recursively, lists of paths) and the parallel run that writes one
 * record per page, in input order whatever the number of worker threads. */
#ifndef LINEATE_BATCH_H
#define LINEATE_BATCH_H

#include "lineate.h"

#include <stdio.h>

typedef struct lt_input {
    char *path;     /* as given or found */
    char *out_name; /* for --out-dir: relative path without the extension */
} lt_input;

typedef struct lt_inputs {
    lt_input *items;
    int count, cap;
    const char *command; /* begins the messages: "lineate crop"; NULL: "lineate" */
} lt_inputs;

/* Adds a command-line argument: a file (or "-"), or a folder whose image files (by
 * extension, any depth) are added in byte order of their paths. 0, or -1 with a message on
 * stderr. */
int lt_inputs_add_arg(lt_inputs *in, const char *arg);
/* Adds every non-empty line of a list file ("-" reads standard input) as an argument. */
int lt_inputs_add_list(lt_inputs *in, const char *list_path);
void lt_inputs_free(lt_inputs *in);
/* Refuses inputs whose files in the output folder `out_dir` would be one file: two inputs with
 * one output name, or an input named NAME.pN beside an input NAME (whose page N of several is
 * NAME.pN). `suffix` completes a page file's name in the message (".json"). 0, or -1 with a
 * message on stderr naming both inputs. */
int lt_inputs_check_out_names(const lt_inputs *in, const char *out_dir, const char *suffix);

/* Creates the folders leading to `path` (its last component is a file; `path` is changed
 * while it works and restored). 0, or the errno of the step that failed. */
int lt_make_parents(char *path);

/* A page's message: "FILE: page N: reason", or the reason alone when it names the file; a
 * message longer than n - 1 bytes loses the middle of the file name, never the reason. */
void lt_page_message(char *buf, size_t n, const char *name, int page, const char *msg);

/* Output formats of the analyse command (--format). */
enum { LT_OUTPUT_JSON = 0, LT_OUTPUT_PAGE, LT_OUTPUT_ALTO };

/* The work of a command other than the analysis on each decoded page (the crop command's),
 * done by the batch's worker threads, several pages at once. */
typedef struct lt_page_task {
    const char *format_name; /* "format" of the task's error records */
    const char *suffix;      /* ends the name of a page's file in the output folder */
    /* Makes the record of page `page` (from 1) of the `pages` of `in` from its decoded image
     * (*img: the task may free it and set it to NULL): one or more JSON lines, without the
     * last newline, as a new string in *record. Returns 0; -1 when the page failed (a record
     * telling so may still be given, else the batch writes an error record), the reason in
     * err (without the file's name); -2 when an output file could not be written, which
     * makes the run's exit status 3. */
    int (*page_record)(void *ctx, const lt_input *in, int page, int pages, lt_image **img,
                       char **record, lt_error *err);
    /* Whether `content`, the text of a page's file from an earlier run, is a complete record
     * of a page done (for --resume). */
    int (*complete)(void *ctx, const char *content);
    void *ctx;
} lt_page_task;

typedef struct lt_batch_options {
    const lt_params *params;
    long max_pages;
    int pretty;
    int jobs;            /* worker threads, >= 1 */
    FILE *out;           /* the stream of records, when out_dir is NULL */
    const char *out_dir; /* one file per page instead of the stream */
    int resume;          /* with out_dir: skip pages whose complete output exists */
    int progress;        /* 0 none, 1 a line per 50 pages, 2 a live bar (terminal) */
    int summary;         /* print the closing summary line on stderr */
    int format;          /* LT_OUTPUT_*: one JSON record, or one XML document, per page */
    long long created_utc; /* time written into PAGE metadata (seconds since 1970, UTC) */
    const lt_page_task *task; /* NULL: the analysis, written in `format` */
    int merge; /* with out_dir: every page's file also copied to `out`, in input and page order */
    const char *command; /* begins the messages: "lineate crop"; NULL: "lineate" */
} lt_batch_options;

typedef struct lt_batch_totals {
    long done, failed, skipped; /* pages written, failed (or not written), skipped by --resume */
    int write_failed;           /* the stream or a page file could not be written */
    int stream_errno;           /* why the stream could not be written, 0 when it could */
} lt_batch_totals;

/* Analyses every page of every input with opt->jobs threads. Each page gives one record: its
 * layout or an error record (`error` field), in input order; errors are also reported on
 * stderr, one line each, never on the row of the live progress bar (opt->progress 2). In the XML
 * formats a failed page gives no document (its message on stderr and the exit status tell). */
int lt_batch_run(const lt_inputs *in, const lt_batch_options *opt, lt_batch_totals *totals);

/* From now on SIGINT, SIGTERM and SIGHUP end the process only once no page file is half
 * written, after removing the temporary file of the stream named by lt_batch_stream_temp.
 * Call from the main thread before any other thread is started; 0 or -1. */
int lt_batch_guard_signals(void);
/* The stream's temporary file to remove on those signals (NULL: none any more). */
void lt_batch_stream_temp(const char *path);

#endif

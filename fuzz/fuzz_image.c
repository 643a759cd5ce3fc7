/* fuzz_image.c — libFuzzer harness for the image path: open a buffer as an image file, decode
 * its first pages under a small pixel limit, analyse each and write its JSON (coverage-guided
 * fuzzing as in LLVM's libFuzzer; build and run with fuzz/run.sh). Never prints, and fails on
 * anything the library or the decoders under it write to stderr. */
#include "lineate.h"

#include <sanitizer/common_interface_defs.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define FUZZ_MAX_PIXELS (4L * 1000L * 1000L) /* keeps one input fast and small */
#define FUZZ_MAX_PAGES 64L                   /* pages the opener accepts */
#define FUZZ_PAGES_READ 3                    /* pages decoded and analysed per input */

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* ---- stderr capture: while an input runs, file descriptor 2 points to a scratch file ------
 * (run.sh passes -close_fd_mask=2, so libFuzzer's own output and the sanitizers' reports go
 * to a copy of the real stderr and never into it). */
static int stderr_fd = -1;  /* what fd 2 was before the input */
static int scratch_fd = -1; /* the scratch file */

static void capture_begin(void)
{
    if (scratch_fd < 0) {
        FILE *scratch = tmpfile();
        if (!scratch) abort();
        scratch_fd = fileno(scratch);
    }
    fflush(stderr);
    stderr_fd = dup(2);
    if (stderr_fd < 0 || dup2(scratch_fd, 2) < 0) abort();
}

/* A finding when anything reached fd 2 during the input: the first line goes into the
 * sanitizer's report summary, then the harness aborts. */
static void capture_end(void)
{
    fflush(stderr);
    if (dup2(stderr_fd, 2) < 0) abort();
    close(stderr_fd);
    const off_t written = lseek(scratch_fd, 0, SEEK_END);
    if (written <= 0) return;
    char text[200] = "", summary[280];
    ssize_t got = pread(scratch_fd, text, sizeof text - 1, 0);
    text[got > 0 ? got : 0] = '\0';
    text[strcspn(text, "\n")] = '\0';
    snprintf(summary, sizeof summary,
             "SUMMARY: fuzz_image: %lld bytes written to stderr, first line: %s",
             (long long)written, text);
    __sanitizer_report_error_summary(summary);
    abort();
}

/* The error contract of src/lineate.h: a failed call returns a negative LT_E* code, leaves
 * no result behind, and records one line that names the input. Aborts (a finding) if not. */
static void check_failure(int rc, const void *result, const lt_error *err)
{
    if (rc >= 0 || result || err->code != rc || err->message[0] == '\0' ||
        strchr(err->message, '\n') || strncmp(err->message, "fuzz-input", 10) != 0)
        abort();
}

static void run_input(const uint8_t *data, size_t size);

/* One input: every failure is an ordinary outcome (bad input must fail cleanly); only a
 * crash, a sanitizer report, a leak, a hang, an out-of-memory or output on stderr counts as
 * a finding. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    capture_begin();
    run_input(data, size);
    capture_end();
    return 0;
}

static void run_input(const uint8_t *data, size_t size)
{
    lt_error err = {0};
    lt_source *src = NULL;
    int rc = lt_source_open_memory(data, size, "fuzz-input", FUZZ_MAX_PAGES, &src, &err);
    if (rc != 0) {
        check_failure(rc, src, &err);
        return;
    }
    lt_params params;
    lt_params_default(&params);
    params.max_pixels = FUZZ_MAX_PIXELS;
    const int pages = lt_source_pages(src);
    for (int i = 0; i < pages && i < FUZZ_PAGES_READ; i++) {
        lt_error perr = {0};
        lt_image *img = NULL;
        rc = lt_source_read_page(src, i, FUZZ_MAX_PIXELS, &img, &perr);
        if (rc != 0) {
            check_failure(rc, img, &perr);
            continue;
        }
        lt_layout *layout = NULL;
        lt_error aerr = {0};
        rc = lt_analyze(img, &params, &layout, &aerr);
        if (rc != 0 && (layout || aerr.code != rc || aerr.message[0] == '\0')) abort();
        if (rc == 0) {
            char *json = lt_layout_to_json(layout, "fuzz-input", i + 1, pages, i & 1);
            free(json);
        }
        lt_layout_free(layout);
        lt_image_free(img);
    }
    lt_source_free(src);
}

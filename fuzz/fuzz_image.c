/* fuzz_image.c — libFuzzer harness for the image path: open a buffer as an image file, decode
 * its first pages under a small pixel limit, analyse each and write its JSON (coverage-guided
 * fuzzing as in LLVM's libFuzzer; build and run with fuzz/run.sh). Never prints. */
#include "lineate.h"

#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define FUZZ_MAX_PIXELS (4L * 1000L * 1000L) /* keeps one input fast and small */
#define FUZZ_MAX_PAGES 64L                   /* pages the opener accepts */
#define FUZZ_PAGES_READ 3                    /* pages decoded and analysed per input */

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* The error contract of src/lineate.h: a failed call returns a negative LT_E* code, leaves
 * no result behind, and records one line that names the input. Aborts (a finding) if not. */
static void check_failure(int rc, const void *result, const lt_error *err)
{
    if (rc >= 0 || result || err->code != rc || err->message[0] == '\0' ||
        strchr(err->message, '\n') || strncmp(err->message, "fuzz-input", 10) != 0)
        abort();
}

/* One input: every failure is an ordinary outcome (bad input must fail cleanly); only a
 * crash, a sanitizer report, a leak, a hang or an out-of-memory counts as a finding. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    lt_error err = {0};
    lt_source *src = NULL;
    int rc = lt_source_open_memory(data, size, "fuzz-input", FUZZ_MAX_PAGES, &src, &err);
    if (rc != 0) {
        check_failure(rc, src, &err);
        return 0;
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
    return 0;
}

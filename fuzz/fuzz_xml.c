/* fuzz_xml.c — libFuzzer harness for the scorer's PAGE XML and ALTO reader: parse a buffer as
 * one or more XML documents and free the result (coverage-guided fuzzing as in LLVM's
 * libFuzzer; build and run with fuzz/run.sh). Never prints. */
#include "score.h"

#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* One input, parsed from a private copy of exactly `size` bytes with no NUL after them, so
 * that AddressSanitizer reports any read past the end. A parse error is an ordinary outcome;
 * the contract of score.h is checked either way. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char *copy = malloc(size ? size : 1);
    if (!copy) return 0;
    if (size) memcpy(copy, data, size);
    lt_error err = {0};
    lt_scored_page *pages = NULL;
    int npages = 0;
    if (lt_scored_pages_parse_xml(copy, size, "fuzz-input", &pages, &npages, &err) == 0) {
        if (npages < 1 || !pages) abort();
        for (int i = 0; i < npages; i++)
            for (int k = 0; k < pages[i].nlines; k++) {
                const lt_box *b = &pages[i].lines[k].box;
                if (b->right < b->left || b->bottom < b->top) abort();
            }
    } else if (pages || npages != 0 || err.code == 0 || err.message[0] == '\0' ||
               strchr(err.message, '\n') || strncmp(err.message, "fuzz-input", 10) != 0) {
        abort();
    }
    lt_scored_pages_free(pages, npages);
    free(copy);
    return 0;
}

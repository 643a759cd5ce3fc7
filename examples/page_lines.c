/* page_lines.c — an example of liblineate's public API: analyse every page of an image file
 * and print its blocks and their lines in reading order, one record a row:
 *
 *   page P of N: WIDTH x HEIGHT px, DPI dpi, skew DEG deg, L lines, B blocks
 *   block I KIND ROLE LEFT TOP RIGHT BOTTOM (NLINES lines)
 *   line J LEFT TOP RIGHT BOTTOM
 *
 * (boxes in pixels of the image as given, right and bottom exclusive; blocks and lines
 * numbered from 1 in reading order). Errors go to standard error as "page_lines: MESSAGE",
 * and the exit status is 1 when a file or a page could not be read or analysed, 2 on a
 * usage error. Build: cc page_lines.c $(pkg-config --cflags --libs lineate) */
#include <lineate.h>

#include <stdio.h>
#include <stdlib.h>

static const char *kind_name(int kind)
{
    switch (kind) {
    case LT_BLOCK_TEXT: return "text";
    case LT_BLOCK_RULE: return "rule";
    case LT_BLOCK_PICTURE: return "picture";
    case LT_BLOCK_TABLE: return "table";
    default: return "unknown";
    }
}

/* Prints one analysed page; returns 0, or -1 when standard output failed. */
static int print_page(const lt_layout *layout, int page, int pages)
{
    printf("page %d of %d: %d x %d px, %g dpi, skew %.2f deg, %d lines, %d blocks\n", page,
           pages, layout->width, layout->height, layout->dpi, layout->skew_deg, layout->nlines,
           layout->nblocks);
    /* Text blocks come first, in reading order; their lines are consecutive in
     * layout->lines, which is itself in reading order. Non-text blocks follow. */
    for (int i = 0; i < layout->nblocks; i++) {
        const lt_block *b = &layout->blocks[i];
        const char *role = b->kind == LT_BLOCK_TEXT ? lt_role_name(b->role) : "-";
        printf("block %d %s %s %d %d %d %d (%d lines)\n", i + 1, kind_name(b->kind),
               role ? role : "?", b->box.left, b->box.top, b->box.right, b->box.bottom,
               b->nlines);
        for (int j = b->first_line; j < b->first_line + b->nlines; j++) {
            const lt_box *l = &layout->lines[j].box;
            printf("line %d %d %d %d %d\n", j + 1, l->left, l->top, l->right, l->bottom);
        }
    }
    return ferror(stdout) ? -1 : 0;
}

/* Analyses every page of `path`; returns 0 when all went well, else 1 after a message. */
static int analyse_file(const char *path)
{
    lt_error err = {0};
    lt_source *src = NULL;
    if (lt_source_open(path, LT_DEFAULT_MAX_PAGES, &src, &err) != 0) {
        fprintf(stderr, "page_lines: %s\n", err.message);
        return 1;
    }
    lt_params params;
    lt_params_default(&params);
    int status = 0;
    const int pages = lt_source_pages(src);
    for (int i = 0; i < pages; i++) {
        lt_error page_err = {0}; /* an lt_error keeps its first failure: one per page */
        lt_image *img = NULL;
        lt_layout *layout = NULL;
        /* lt_analyze_consume frees the page as soon as it is binarized. */
        if (lt_source_read_page(src, i, params.max_pixels, &img, &page_err) != 0) {
            /* the message names the file and the page */
            fprintf(stderr, "page_lines: %s\n", page_err.message);
            status = 1;
        } else if (lt_analyze_consume(&img, &params, &layout, &page_err) != 0) {
            fprintf(stderr, "page_lines: %s: page %d: %s\n", path, i + 1, page_err.message);
            status = 1;
        } else if (print_page(layout, i + 1, pages) != 0) {
            fprintf(stderr, "page_lines: cannot write to standard output\n");
            status = 1;
        }
        lt_image_free(img);
        lt_layout_free(layout);
    }
    lt_source_free(src);
    return status;
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: page_lines IMAGE...\n");
        return 2;
    }
    int status = 0;
    for (int i = 1; i < argc; i++)
        status |= analyse_file(argv[i]);
    if (fflush(stdout) != 0) {
        fprintf(stderr, "page_lines: cannot write to standard output\n");
        status = 1;
    }
    return status;
}

/* main.c — the lineate command: dispatches to the subcommands in src/cmd_*.c. */
#include "cli.h"

#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

/* The subcommands; any other first argument starts the default analyse command. */
static const struct {
    const char *name;
    int (*run)(int argc, char **argv);
} COMMANDS[] = {{"score", lt_cmd_score}, {"draw", lt_cmd_draw}, {"crop", lt_cmd_crop}};
#define N_COMMANDS (sizeof COMMANDS / sizeof *COMMANDS)

/* Edit distance of a and b with adjacent transpositions counting one (optimal string
 * alignment, Damerau 1964), for words of at most 15 characters; larger for longer ones. */
static int edit_distance(const char *a, const char *b)
{
    const size_t la = strlen(a), lb = strlen(b);
    if (la > 15 || lb > 15) return 99;
    int d[16][16];
    for (size_t i = 0; i <= la; i++)
        d[i][0] = (int)i;
    for (size_t j = 0; j <= lb; j++)
        d[0][j] = (int)j;
    for (size_t i = 1; i <= la; i++)
        for (size_t j = 1; j <= lb; j++) {
            int best = d[i - 1][j - 1] + (a[i - 1] != b[j - 1]);
            if (d[i - 1][j] + 1 < best) best = d[i - 1][j] + 1;
            if (d[i][j - 1] + 1 < best) best = d[i][j - 1] + 1;
            if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] &&
                d[i - 2][j - 2] + 1 < best)
                best = d[i - 2][j - 2] + 1;
            d[i][j] = best;
        }
    return d[la][lb];
}

/* The subcommand `word` is a slip for (at most two edits away), or NULL: only for a first
 * argument that names no file and looks like a word, not a path or an option. */
static const char *mistyped_command(const char *word)
{
    struct stat st;
    if (word[0] == '-' || strpbrk(word, "./") || stat(word, &st) == 0) return NULL;
    for (size_t k = 0; k < N_COMMANDS; k++)
        if (edit_distance(word, COMMANDS[k].name) <= 2) return COMMANDS[k].name;
    return NULL;
}

int main(int argc, char **argv)
{
    /* A closed pipe is a write error reported as such (exit 3), not a silent death. */
    signal(SIGPIPE, SIG_IGN);
#ifdef __GLIBC__
    /* Page buffers (tens of MB) from the heap, and freed memory kept for the next page:
     * returning it to the kernel and faulting it in again cost a fifth of a batch's time. */
    mallopt(M_MMAP_THRESHOLD, 64 * 1024 * 1024);
    mallopt(M_TRIM_THRESHOLD, 512 * 1024 * 1024);
#endif
    for (size_t k = 0; argc >= 2 && k < N_COMMANDS; k++)
        if (strcmp(argv[1], COMMANDS[k].name) == 0) return COMMANDS[k].run(argc - 1, argv + 1);
    const char *meant = argc >= 2 ? mistyped_command(argv[1]) : NULL;
    if (meant) {
        fprintf(stderr, "lineate: unknown command '%s' (did you mean '%s'?)\n", argv[1], meant);
        return LT_EXIT_USAGE;
    }
    return lt_cmd_analyze(argc, argv);
}

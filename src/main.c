/* main.c — the lineate command: dispatches to the subcommands in src/cmd_*.c. */
#include "cli.h"

#include <signal.h>
#include <string.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

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
    if (argc >= 2 && strcmp(argv[1], "score") == 0) return lt_cmd_score(argc - 1, argv + 1);
    if (argc >= 2 && strcmp(argv[1], "draw") == 0) return lt_cmd_draw(argc - 1, argv + 1);
    if (argc >= 2 && strcmp(argv[1], "crop") == 0) return lt_cmd_crop(argc - 1, argv + 1);
    return lt_cmd_analyze(argc, argv);
}

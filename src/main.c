/* main.c — the lineate command: dispatches to the subcommands in src/cmd_*.c. */
#include "cli.h"

#include <signal.h>
#include <string.h>

int main(int argc, char **argv)
{
    /* A closed pipe is a write error reported as such (exit 3), not a silent death. */
    signal(SIGPIPE, SIG_IGN);
    if (argc >= 2 && strcmp(argv[1], "score") == 0) return lt_cmd_score(argc - 1, argv + 1);
    if (argc >= 2 && strcmp(argv[1], "draw") == 0) return lt_cmd_draw(argc - 1, argv + 1);
    if (argc >= 2 && strcmp(argv[1], "crop") == 0) return lt_cmd_crop(argc - 1, argv + 1);
    return lt_cmd_analyze(argc, argv);
}

/* cli.h — subcommands of the lineate command-line tool (src/main.c dispatches to them).
 * Each takes the arguments after the program name (argv[0] is the subcommand name, or the
 * first argument for the default analyse command) and returns the process exit status. */
#ifndef LINEATE_CLI_H
#define LINEATE_CLI_H

/* Exit statuses, documented in man/lineate.1. */
enum {
    LT_EXIT_OK = 0,     /* every input processed */
    LT_EXIT_FAILED = 1, /* at least one input could not be processed (others were) */
    LT_EXIT_USAGE = 2,  /* bad command line */
    LT_EXIT_OUTPUT = 3  /* the output could not be written */
};

/* Parses `text` as a number in [lo, hi] into *out; otherwise prints "PREFIXOPT: 'TEXT' is not
 * a number in [LO, HI]" on stderr and returns -1. */
int lt_cli_number(const char *prefix, const char *opt, const char *text, double lo, double hi,
                  double *out);

#define LT_CLI_MAX_JOBS 256 /* --jobs: more threads than this only cost memory */

/* The default number of worker threads: the CPUs this process may run on (its affinity mask,
 * which a container or a cluster scheduler narrows), at most LT_CLI_MAX_JOBS. */
int lt_cli_default_jobs(void);

int lt_cmd_analyze(int argc, char **argv);
int lt_cmd_score(int argc, char **argv);
int lt_cmd_draw(int argc, char **argv);
int lt_cmd_crop(int argc, char **argv);

#endif

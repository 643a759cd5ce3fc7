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

#include "lineate.h"

#include <getopt.h>

#define LT_CLI_MAX_JOBS 256 /* --jobs: more threads than this only cost memory */

/* The default number of worker threads: the CPUs this process may run on (its affinity mask,
 * which a container or a cluster scheduler narrows), at most LT_CLI_MAX_JOBS. */
int lt_cli_default_jobs(void);

/* The settings of the commands that analyse pages (the analyse command, crop), taken by
 * lt_cli_analysis_option (src/cli_options.c). */
typedef struct lt_cli_analysis {
    lt_params params;
    long max_pages;   /* --max-pages */
    int jobs;         /* -j, --jobs: worker threads */
    int progress;     /* --progress: a line every 50 pages */
    const char *from; /* --from: a list of inputs */
} lt_cli_analysis;

/* getopt_long values of the shared options (above the commands' own, which start at 256). */
enum {
    LT_OPT_FROM = 1000,
    LT_OPT_PROGRESS,
    LT_OPT_DPI,
    LT_OPT_FORCE_DPI,
    LT_OPT_WINDOW,
    LT_OPT_K,
    LT_OPT_MAX_SKEW,
    LT_OPT_RTL,
    LT_OPT_MAX_PIXELS,
    LT_OPT_MAX_PAGES,
    LT_OPT_MAX_COMPONENTS
};

/* The shared long options, for a command's getopt_long table (with "j:" in its short ones),
 * and their lines in the command's --help. */
/* clang-format off */
#define LT_CLI_ANALYSIS_LONGOPTS \
    {"from", required_argument, NULL, LT_OPT_FROM}, \
    {"jobs", required_argument, NULL, 'j'}, \
    {"progress", no_argument, NULL, LT_OPT_PROGRESS}, \
    {"dpi", required_argument, NULL, LT_OPT_DPI}, \
    {"force-dpi", no_argument, NULL, LT_OPT_FORCE_DPI}, \
    {"window", required_argument, NULL, LT_OPT_WINDOW}, \
    {"k", required_argument, NULL, LT_OPT_K}, \
    {"max-skew", required_argument, NULL, LT_OPT_MAX_SKEW}, \
    {"rtl", no_argument, NULL, LT_OPT_RTL}, \
    {"max-pixels", required_argument, NULL, LT_OPT_MAX_PIXELS}, \
    {"max-pages", required_argument, NULL, LT_OPT_MAX_PAGES}, \
    {"max-components", required_argument, NULL, LT_OPT_MAX_COMPONENTS}

#define LT_CLI_ANALYSIS_HELP \
    "      --from FILE       also take the paths listed in FILE, one a line ('-': stdin)\n" \
    "  -j, --jobs N          worker threads (default: the processors this process may use)\n" \
    "      --progress        report progress on standard error, a line every 50 pages\n" \
    "      --dpi N           resolution to assume when a file gives none (default 300)\n" \
    "      --force-dpi       use --dpi even when the file gives a resolution\n" \
    "      --window N        Sauvola window in pixels, odd (default: about 0.17 inch)\n" \
    "      --k K             Sauvola k (default 0.34)\n" \
    "      --max-skew DEG    search skew in -DEG..+DEG (default 15)\n" \
    "      --rtl             columns and the pieces of a row read right to left\n" \
    "      --max-pixels N    refuse pages larger than N pixels (default 200000000)\n" \
    "      --max-pages N     refuse files with more than N pages (default 10000)\n" \
    "      --max-components N  refuse pages with more than N ink components (default 2000000)\n"
/* clang-format on */

/* The defaults: lt_params_default, LT_DEFAULT_MAX_PAGES, lt_cli_default_jobs threads. */
void lt_cli_analysis_default(lt_cli_analysis *a);
/* Takes option `c` (a getopt_long value) with its argument when it is a shared one: 1; 0 when
 * it is not one of them; -1 after printing "PREFIXOPTION: reason" for a bad value. */
int lt_cli_analysis_option(lt_cli_analysis *a, int c, const char *arg, const char *prefix);

int lt_cmd_analyze(int argc, char **argv);
int lt_cmd_score(int argc, char **argv);
int lt_cmd_draw(int argc, char **argv);
int lt_cmd_crop(int argc, char **argv);

#endif

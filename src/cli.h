/* cli.h — subcommands of the lineate command-line tool (src/main.c dispatches to them), and
 * the one option parser they all use (src/cli_options.c). Each subcommand takes the arguments
 * after the program name (argv[0] is the subcommand name, or the first argument for the
 * default analyse command) and returns the process exit status. */
#ifndef LINEATE_CLI_H
#define LINEATE_CLI_H

#include "lineate.h"

#include <getopt.h>

/* Exit statuses, documented in man/lineate.1. */
enum {
    LT_EXIT_OK = 0,     /* every input processed */
    LT_EXIT_FAILED = 1, /* at least one input could not be processed (others were) */
    LT_EXIT_USAGE = 2,  /* bad command line */
    LT_EXIT_OUTPUT = 3  /* the output could not be written */
};

#define LT_CLI_MAX_JOBS 256   /* --jobs: more threads than this only cost memory */
#define LT_CLI_MAX_OPTIONS 40 /* long options of one command, the shared ones included */

/* ---- the option parser ------------------------------------------------------------------- */

/* One option of a command: its long name (without "--"), the value lt_cli_next returns for it
 * (below 256: also its short form, -LETTER; the commands' own long-only options start at 256)
 * and whether it takes a value. */
typedef struct lt_cli_option {
    const char *name;
    int id;
    int takes_value;
} lt_cli_option;

/* A command's command line. Every command also takes -h, --help (prints `help` on standard
 * output) and -V, --version; a command parsed with an lt_cli_analysis also takes the shared
 * analysis options (LT_CLI_ANALYSIS_HELP). */
typedef struct lt_cli_command {
    const char *name;             /* as messages begin and the help hint says: "lineate score" */
    const char *help;             /* the --help text */
    const lt_cli_option *options; /* the command's own, ended by an entry whose name is NULL */
} lt_cli_command;

typedef struct lt_cli_analysis lt_cli_analysis;

/* The state of one parse; filled by lt_cli_begin. */
typedef struct lt_cli_parser {
    const lt_cli_command *command;
    lt_cli_analysis *analysis; /* takes the shared analysis options, or NULL */
    int argc;
    char **argv;
    int status;   /* when lt_cli_next returned -1: the exit status to stop with */
    int operands; /* when lt_cli_next returned 0: the index in argv of the first operand */
    struct option longopts[LT_CLI_MAX_OPTIONS + 1];
    char shortopts[2 * LT_CLI_MAX_OPTIONS + 2];
} lt_cli_parser;

/* Starts parsing argv[1..argc-1] (getopt_long: options and operands in any order, "--" ends
 * the options, a long option may be shortened to any unambiguous prefix, "--opt=value" or
 * "--opt value"). `analysis` (NULL: none) receives the shared analysis options. */
void lt_cli_begin(lt_cli_parser *p, const lt_cli_command *command, lt_cli_analysis *analysis,
                  int argc, char **argv);

/* The next option of the command's own: its id (> 0) with its value in *value (NULL for a
 * flag). 0 when the options are over: the operands are argv[p->operands..argc-1]. -1 when the
 * command must stop with exit status p->status: after --help or --version (0, or 3 when
 * standard output could not be written), or after one line on standard error,
 * "NAME: reason (see NAME --help)", for an unknown option, an ambiguous abbreviation (naming
 * the options it could mean), a missing or unwanted value, or a bad value of a shared
 * analysis option (2). */
int lt_cli_next(lt_cli_parser *p, const char **value);

/* Prints "NAME: MESSAGE (see NAME --help)" as one line on standard error; returns
 * LT_EXIT_USAGE. */
int lt_cli_usage_error(const lt_cli_command *command, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Parses `text`, the value of option `opt`, as a number in [lo, hi] into *out (with `whole`,
 * a whole number); otherwise reports it with lt_cli_usage_error and returns -1. */
int lt_cli_number(const lt_cli_command *command, const char *opt, const char *text, double lo,
                  double hi, int whole, double *out);

/* ---- the options the commands that analyse pages share ---------------------------------- */

/* The default number of worker threads: the CPUs this process may run on (its affinity mask,
 * which a container or a cluster scheduler narrows), at most LT_CLI_MAX_JOBS. */
int lt_cli_default_jobs(void);

/* The settings of the commands that analyse pages (the analyse command, crop). */
struct lt_cli_analysis {
    lt_params params;
    long max_pages;   /* --max-pages */
    int jobs;         /* -j, --jobs: worker threads */
    int progress;     /* --progress: a line every 50 pages */
    const char *from; /* --from: a list of inputs */
};

/* The shared options' lines in a command's --help. */
/* clang-format off */
#define LT_CLI_ANALYSIS_HELP \
    "      --from FILE       also take the paths listed in FILE, one a line ('-': stdin)\n" \
    "  -j, --jobs N          worker threads (default: the processors this process may use)\n" \
    "      --progress        report progress on standard error, a line every 50 pages\n" \
    "      --dpi N           resolution to assume when a file gives none (default 300)\n" \
    "      --force-dpi       use --dpi even when the file gives a resolution\n" \
    "      --window N        Sauvola window in pixels, odd (default: about 0.17 inch)\n" \
    "      --k K             Sauvola k (default 0.34)\n" \
    "      --max-skew DEG    search skew in -DEG..+DEG (default 15)\n" \
    "      --orientation TURN  auto (default): estimate the quarter turn that sets each page\n" \
    "                        upright; 0, 90, 180 or 270: the clockwise turn (0: as given)\n" \
    "      --rtl             columns and the pieces of a row read right to left\n" \
    "      --max-pixels N    refuse pages larger than N pixels (default 200000000)\n" \
    "      --max-pages N     refuse files with more than N pages (default 10000)\n" \
    "      --max-components N  refuse pages with more than N ink components (default 2000000)\n"
/* The lines of -h and -V in every command's --help. */
#define LT_CLI_HELP_VERSION_HELP \
    "  -h, --help            show this help and exit\n" \
    "  -V, --version         show the version and exit\n"
/* clang-format on */

/* The defaults: lt_params_default, LT_DEFAULT_MAX_PAGES, lt_cli_default_jobs threads. */
void lt_cli_analysis_default(lt_cli_analysis *a);

int lt_cmd_analyze(int argc, char **argv);
int lt_cmd_score(int argc, char **argv);
int lt_cmd_draw(int argc, char **argv);
int lt_cmd_crop(int argc, char **argv);

#endif

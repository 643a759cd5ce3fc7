/* cli_options.c — the command line of every lineate command goes through one parser here
 * (getopt_long over a table built from the command's option list, the shared options added),
 * with one wording for help, version and usage errors; and the options the commands that
 * analyse pages (the analyse command and `lineate crop`) share, with the default number of
 * threads. */
#define _GNU_SOURCE /* sched_getaffinity */
#include "cli.h"

#include <assert.h>
#include <errno.h>
#include <math.h>
#include <sched.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* ids of the shared options (above the commands' own, which start at 256) */
enum {
    OPT_FROM = 1000,
    OPT_PROGRESS,
    OPT_DPI,
    OPT_FORCE_DPI,
    OPT_WINDOW,
    OPT_K,
    OPT_MAX_SKEW,
    OPT_RTL,
    OPT_MAX_PIXELS,
    OPT_MAX_PAGES,
    OPT_MAX_COMPONENTS,
    OPT_ORIENTATION
};

static const lt_cli_option HELP_VERSION_OPTIONS[] = {
    {"help", 'h', 0}, {"version", 'V', 0}, {NULL, 0, 0}};

static const lt_cli_option ANALYSIS_OPTIONS[] = {{"from", OPT_FROM, 1},
                                                 {"jobs", 'j', 1},
                                                 {"progress", OPT_PROGRESS, 0},
                                                 {"dpi", OPT_DPI, 1},
                                                 {"force-dpi", OPT_FORCE_DPI, 0},
                                                 {"window", OPT_WINDOW, 1},
                                                 {"k", OPT_K, 1},
                                                 {"max-skew", OPT_MAX_SKEW, 1},
                                                 {"rtl", OPT_RTL, 0},
                                                 {"max-pixels", OPT_MAX_PIXELS, 1},
                                                 {"max-pages", OPT_MAX_PAGES, 1},
                                                 {"max-components", OPT_MAX_COMPONENTS, 1},
                                                 {"orientation", OPT_ORIENTATION, 1},
                                                 {NULL, 0, 0}};

int lt_cli_usage_error(const lt_cli_command *command, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fprintf(stderr, "%s: ", command->name);
    vfprintf(stderr, fmt, ap);
    fprintf(stderr, " (see %s --help)\n", command->name);
    va_end(ap);
    return LT_EXIT_USAGE;
}

int lt_cli_number(const lt_cli_command *command, const char *opt, const char *text, double lo,
                  double hi, int whole, double *out)
{
    char *end = NULL;
    errno = 0;
    double v = strtod(text, &end);
    if (errno || end == text || *end || !(v >= lo && v <= hi) || (whole && v != floor(v))) {
        lt_cli_usage_error(command, "%s: '%s' is not a %s in [%g, %g]", opt, text,
                           whole ? "whole number" : "number", lo, hi);
        return -1;
    }
    *out = v;
    return 0;
}

int lt_cli_default_jobs(void)
{
    cpu_set_t set;
    if (sched_getaffinity(0, sizeof set, &set) == 0 && CPU_COUNT(&set) > 0)
        return CPU_COUNT(&set) < LT_CLI_MAX_JOBS ? CPU_COUNT(&set) : LT_CLI_MAX_JOBS;
    long cpus = sysconf(_SC_NPROCESSORS_ONLN); /* more CPUs than cpu_set_t holds */
    return cpus < 1 ? 1 : cpus < LT_CLI_MAX_JOBS ? (int)cpus : LT_CLI_MAX_JOBS;
}

void lt_cli_analysis_default(lt_cli_analysis *a)
{
    lt_params_default(&a->params);
    a->max_pages = LT_DEFAULT_MAX_PAGES;
    a->jobs = lt_cli_default_jobs();
    a->progress = 0;
    a->from = NULL;
}

/* Takes shared option `id` with its value into `a`: 1; 0 when `id` is not a shared option;
 * -1 after reporting a bad value. */
static int take_analysis_option(const lt_cli_command *cmd, lt_cli_analysis *a, int id,
                                const char *arg)
{
    lt_params *p = &a->params;
    double v;
    switch (id) {
    case 'j':
        if (lt_cli_number(cmd, "--jobs", arg, 1, LT_CLI_MAX_JOBS, 0, &v)) return -1;
        a->jobs = (int)v;
        return 1;
    case OPT_FROM: a->from = arg; return 1;
    case OPT_PROGRESS: a->progress = 1; return 1;
    case OPT_DPI: return lt_cli_number(cmd, "--dpi", arg, 10, 100000, 0, &p->dpi) ? -1 : 1;
    case OPT_FORCE_DPI: p->force_dpi = 1; return 1;
    case OPT_RTL: p->right_to_left = 1; return 1;
    case OPT_WINDOW:
        if (lt_cli_number(cmd, "--window", arg, 3, 10001, 0, &v)) return -1;
        p->sauvola_window_px = (int)v | 1;
        return 1;
    case OPT_K: return lt_cli_number(cmd, "--k", arg, 0, 1, 0, &p->sauvola_k) ? -1 : 1;
    case OPT_MAX_SKEW:
        return lt_cli_number(cmd, "--max-skew", arg, 0, 45, 0, &p->skew_range_deg) ? -1 : 1;
    case OPT_ORIENTATION: {
        static const char *const names[] = {"auto", "0", "90", "180", "270"};
        static const int values[] = {LT_ORIENTATION_AUTO, 0, 90, 180, 270};
        for (size_t i = 0; i < sizeof names / sizeof *names; i++)
            if (strcmp(arg, names[i]) == 0) {
                p->orientation_deg = values[i];
                return 1;
            }
        lt_cli_usage_error(cmd, "--orientation: '%s' is not auto, 0, 90, 180 or 270", arg);
        return -1;
    }
    case OPT_MAX_PIXELS:
        if (lt_cli_number(cmd, "--max-pixels", arg, 1, 4e12, 0, &v)) return -1;
        p->max_pixels = (long)v;
        return 1;
    case OPT_MAX_PAGES:
        if (lt_cli_number(cmd, "--max-pages", arg, 1, 1e9, 0, &v)) return -1;
        a->max_pages = (long)v;
        return 1;
    case OPT_MAX_COMPONENTS:
        if (lt_cli_number(cmd, "--max-components", arg, 1, 1e9, 0, &v)) return -1;
        p->max_components = (long)v;
        return 1;
    default: return 0;
    }
}

/* Appends `list` to the parser's getopt_long tables. */
static void add_options(lt_cli_parser *p, int *n, const lt_cli_option *list)
{
    for (; list->name; list++) {
        assert(*n < LT_CLI_MAX_OPTIONS);
        p->longopts[(*n)++] = (struct option){
            list->name, list->takes_value ? required_argument : no_argument, NULL, list->id};
        if (list->id < 256) {
            size_t len = strlen(p->shortopts);
            p->shortopts[len++] = (char)list->id;
            if (list->takes_value) p->shortopts[len++] = ':';
            p->shortopts[len] = '\0';
        }
    }
}

void lt_cli_begin(lt_cli_parser *p, const lt_cli_command *command, lt_cli_analysis *analysis,
                  int argc, char **argv)
{
    memset(p, 0, sizeof *p);
    p->command = command;
    p->analysis = analysis;
    p->argc = argc;
    p->argv = argv;
    p->shortopts[0] = ':'; /* a missing value returned as ':', told apart from an unknown option */
    int n = 0;
    add_options(p, &n, command->options);
    if (analysis) add_options(p, &n, ANALYSIS_OPTIONS);
    add_options(p, &n, HELP_VERSION_OPTIONS);
    p->longopts[n] = (struct option){NULL, 0, NULL, 0};
    opterr = 0;
    optind = 1;
}

/* The long option whose id is `id`, or NULL. */
static const char *long_name(const lt_cli_parser *p, int id)
{
    for (const struct option *o = p->longopts; o->name; o++)
        if (o->val == id) return o->name;
    return NULL;
}

static int is_option_id(const lt_cli_parser *p, int id)
{
    return long_name(p, id) != NULL;
}

/* Reports the long option argument `arg` ("--NAME" or "--NAME=VALUE") that getopt_long
 * refused: ambiguous (the options it could mean), unknown, or given a value it takes none. */
static int long_option_error(const lt_cli_parser *p, const char *arg)
{
    const char *name = arg + 2;
    const size_t len = strcspn(name, "=");
    char candidates[LT_CLI_MAX_OPTIONS * 24] = "";
    int count = 0;
    for (const struct option *o = p->longopts; len > 0 && o->name; o++) {
        if (strncmp(o->name, name, len) != 0) continue;
        if (o->name[len] == '\0') { /* the whole name: none other is meant */
            snprintf(candidates, sizeof candidates, "--%s", o->name);
            count = 1;
            break;
        }
        size_t used = strlen(candidates);
        snprintf(candidates + used, sizeof candidates - used, "%s--%s", count ? ", " : "", o->name);
        count++;
    }
    if (count > 1)
        return lt_cli_usage_error(p->command, "option '%.*s' is ambiguous: %s", (int)len + 2, arg,
                                  candidates);
    if (count == 1 && name[len] == '=')
        return lt_cli_usage_error(p->command, "option '%s' takes no value", candidates);
    return lt_cli_usage_error(p->command, "unknown option '%.*s'", len ? (int)len + 2 : -1, arg);
}

/* Prints `text` on standard output for --help or --version: 0, or 3 when it could not be
 * written. */
static int print_and_stop(const char *text)
{
    fputs(text, stdout);
    return fflush(stdout) == 0 && !ferror(stdout) ? LT_EXIT_OK : LT_EXIT_OUTPUT;
}

int lt_cli_next(lt_cli_parser *p, const char **value)
{
    for (;;) {
        const int c = getopt_long(p->argc, p->argv, p->shortopts, p->longopts, NULL);
        *value = optarg;
        const char *arg = optind > 0 && optind <= p->argc ? p->argv[optind - 1] : "";
        const int is_long = strncmp(arg, "--", 2) == 0;
        int taken;
        switch (c) {
        case -1: p->operands = optind; return 0;
        case 'h': p->status = print_and_stop(p->command->help); return -1;
        case 'V': {
            char version[64];
            snprintf(version, sizeof version, "lineate %s\n", lt_version());
            p->status = print_and_stop(version);
            return -1;
        }
        case ':':
            if (is_long)
                p->status = lt_cli_usage_error(p->command, "option '--%s' needs a value",
                                               long_name(p, optopt));
            else
                p->status = lt_cli_usage_error(p->command, "option '-%c' needs a value", optopt);
            return -1;
        case '?':
            /* optopt: 0 for a long option unknown or ambiguous, the option's id for one given
             * a value it takes none, the letter of an unknown short option */
            if (optopt == 0 || is_option_id(p, optopt))
                p->status = long_option_error(p, arg);
            else
                p->status = lt_cli_usage_error(p->command, "unknown option '-%c'", optopt);
            return -1;
        default:
            taken = p->analysis ? take_analysis_option(p->command, p->analysis, c, optarg) : 0;
            if (taken < 0) {
                p->status = LT_EXIT_USAGE;
                return -1;
            }
            if (taken == 0) return c;
        }
    }
}

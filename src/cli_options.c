/* cli_options.c — what the commands that analyse pages (the analyse command and `lineate
 * crop`) share on their command lines: the analysis options, the batch options and the
 * default number of threads. */
#define _GNU_SOURCE /* sched_getaffinity */
#include "cli.h"

#include <errno.h>
#include <sched.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

int lt_cli_number(const char *prefix, const char *opt, const char *text, double lo, double hi,
                  double *out)
{
    char *end = NULL;
    errno = 0;
    double v = strtod(text, &end);
    if (errno || end == text || *end || !(v >= lo && v <= hi)) {
        fprintf(stderr, "%s%s: '%s' is not a number in [%g, %g]\n", prefix, opt, text, lo, hi);
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

int lt_cli_analysis_option(lt_cli_analysis *a, int c, const char *arg, const char *prefix)
{
    lt_params *p = &a->params;
    double v;
    switch (c) {
    case 'j':
        if (lt_cli_number(prefix, "--jobs", arg, 1, LT_CLI_MAX_JOBS, &v)) return -1;
        a->jobs = (int)v;
        return 1;
    case LT_OPT_FROM: a->from = arg; return 1;
    case LT_OPT_PROGRESS: a->progress = 1; return 1;
    case LT_OPT_DPI: return lt_cli_number(prefix, "--dpi", arg, 10, 100000, &p->dpi) ? -1 : 1;
    case LT_OPT_FORCE_DPI: p->force_dpi = 1; return 1;
    case LT_OPT_RTL: p->right_to_left = 1; return 1;
    case LT_OPT_WINDOW:
        if (lt_cli_number(prefix, "--window", arg, 3, 10001, &v)) return -1;
        p->sauvola_window_px = (int)v | 1;
        return 1;
    case LT_OPT_K: return lt_cli_number(prefix, "--k", arg, 0, 1, &p->sauvola_k) ? -1 : 1;
    case LT_OPT_MAX_SKEW:
        return lt_cli_number(prefix, "--max-skew", arg, 0, 45, &p->skew_range_deg) ? -1 : 1;
    case LT_OPT_MAX_PIXELS:
        if (lt_cli_number(prefix, "--max-pixels", arg, 1, 4e12, &v)) return -1;
        p->max_pixels = (long)v;
        return 1;
    case LT_OPT_MAX_PAGES:
        if (lt_cli_number(prefix, "--max-pages", arg, 1, 1e9, &v)) return -1;
        a->max_pages = (long)v;
        return 1;
    case LT_OPT_MAX_COMPONENTS:
        if (lt_cli_number(prefix, "--max-components", arg, 1, 1e9, &v)) return -1;
        p->max_components = (long)v;
        return 1;
    default: return 0;
    }
}

/* cmd_analyze.c — `lineate [OPTIONS] IMAGE...`: options of the analyse command, and its
 * output: one record per page, one per line, to stdout, to -o FILE (written to a temporary
 * name and renamed into place, so a failed run leaves no partial file) or, with --out-dir,
 * to one file per page. The work itself is src/batch.c. */
#define _GNU_SOURCE /* sched_getaffinity */
#include "batch.h"
#include "cli.h"

#include <sched.h>
#include <errno.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

static const char usage_text[] =
    "Usage: lineate [OPTIONS] IMAGE|FOLDER...\n"
    "       lineate score [OPTIONS] TRUTH PRED\n"
    "       lineate draw [OPTIONS] IMAGE [LAYOUT] -o OUT.png\n"
    "       lineate crop [OPTIONS] IMAGE|FOLDER... --out-dir DIR\n"
    "Find the skew, text lines, blocks and reading order of page images (PNG, TIFF, JPEG,\n"
    "PNM; '-' reads standard input; folders are searched for images at any depth) and write\n"
    "one JSON object per page: its layout, or an error record when the page failed.\n"
    "\n"
    "Options:\n"
    "  -o, --output FILE     write to FILE instead of standard output\n"
    "      --out-dir DIR     write each page to its own file in DIR instead\n"
    "      --resume          with --out-dir: skip pages whose output is already complete\n"
    "      --from FILE       also analyse the paths listed in FILE, one a line ('-': stdin)\n"
    "  -j, --jobs N          worker threads (default: the processors this process may use)\n"
    "      --progress        report progress on standard error, a line every 50 pages\n"
    "      --pretty          indent the JSON for reading (one object spans many lines)\n"
    "      --format FORMAT   json (the default), page (PAGE XML) or alto (ALTO 4.4): one\n"
    "                        document per page; files NAME.json, NAME.page.xml, NAME.alto.xml\n"
    "      --dpi N           resolution to assume when a file gives none (default 300)\n"
    "      --force-dpi       use --dpi even when the file gives a resolution\n"
    "      --window N        Sauvola window in pixels, odd (default: about 0.17 inch)\n"
    "      --k K             Sauvola k (default 0.34)\n"
    "      --max-skew DEG    search skew in -DEG..+DEG (default 15)\n"
    "      --rtl             columns and the pieces of a row read right to left\n"
    "      --max-pixels N    refuse pages larger than N pixels (default 200000000)\n"
    "      --max-pages N     refuse files with more than N pages (default 10000)\n"
    "      --max-components N  refuse pages with more than N ink components (default 2000000)\n"
    "  -h, --help            show this help and exit\n"
    "  -V, --version         show the version and exit\n"
    "\n"
    "Exit status: 0 all pages analysed, 1 some input failed (the others are written),\n"
    "2 bad command line, 3 the output could not be written.\n";

enum {
    OPT_PRETTY = 256,
    OPT_DPI,
    OPT_FORCE_DPI,
    OPT_WINDOW,
    OPT_K,
    OPT_MAX_SKEW,
    OPT_MAX_PIXELS,
    OPT_MAX_PAGES,
    OPT_MAX_COMPONENTS,
    OPT_OUT_DIR,
    OPT_RESUME,
    OPT_FROM,
    OPT_PROGRESS,
    OPT_RTL,
    OPT_FORMAT
};

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

/* The time written into PAGE metadata: SOURCE_DATE_EPOCH when set (reproducible output, as
 * the reproducible-builds convention has it), else now. */
static long long creation_time(void)
{
    const char *fixed = getenv("SOURCE_DATE_EPOCH");
    char *end = NULL;
    long long t = fixed ? strtoll(fixed, &end, 10) : -1;
    if (fixed && end != fixed && *end == '\0' && t >= 0) return t;
    return (long long)time(NULL);
}

int lt_cli_default_jobs(void)
{
    cpu_set_t set;
    if (sched_getaffinity(0, sizeof set, &set) == 0 && CPU_COUNT(&set) > 0)
        return CPU_COUNT(&set) < LT_CLI_MAX_JOBS ? CPU_COUNT(&set) : LT_CLI_MAX_JOBS;
    long cpus = sysconf(_SC_NPROCESSORS_ONLN); /* more CPUs than cpu_set_t holds */
    return cpus < 1 ? 1 : cpus < LT_CLI_MAX_JOBS ? (int)cpus : LT_CLI_MAX_JOBS;
}

int lt_cmd_analyze(int argc, char **argv)
{
    static const struct option longopts[] = {
        {"output", required_argument, NULL, 'o'},
        {"pretty", no_argument, NULL, OPT_PRETTY},
        {"dpi", required_argument, NULL, OPT_DPI},
        {"force-dpi", no_argument, NULL, OPT_FORCE_DPI},
        {"window", required_argument, NULL, OPT_WINDOW},
        {"k", required_argument, NULL, OPT_K},
        {"max-skew", required_argument, NULL, OPT_MAX_SKEW},
        {"max-pixels", required_argument, NULL, OPT_MAX_PIXELS},
        {"max-pages", required_argument, NULL, OPT_MAX_PAGES},
        {"max-components", required_argument, NULL, OPT_MAX_COMPONENTS},
        {"out-dir", required_argument, NULL, OPT_OUT_DIR},
        {"resume", no_argument, NULL, OPT_RESUME},
        {"from", required_argument, NULL, OPT_FROM},
        {"jobs", required_argument, NULL, 'j'},
        {"progress", no_argument, NULL, OPT_PROGRESS},
        {"rtl", no_argument, NULL, OPT_RTL},
        {"format", required_argument, NULL, OPT_FORMAT},
        {"help", no_argument, NULL, 'h'},
        {"version", no_argument, NULL, 'V'},
        {NULL, 0, NULL, 0}};
    lt_params params;
    lt_params_default(&params);
    const char *output = NULL, *out_dir = NULL, *from = NULL;
    int pretty = 0, resume = 0, progress = 0, format = LT_OUTPUT_JSON, c;
    double v, max_pages = LT_DEFAULT_MAX_PAGES, jobs = lt_cli_default_jobs();
    opterr = 0;
    while ((c = getopt_long(argc, argv, ":o:j:hV", longopts, NULL)) != -1) {
        switch (c) {
        case 'o': output = optarg; break;
        case OPT_OUT_DIR: out_dir = optarg; break;
        case OPT_RESUME: resume = 1; break;
        case OPT_FROM: from = optarg; break;
        case OPT_PROGRESS: progress = 1; break;
        case 'j':
            if (lt_cli_number("lineate: ", "--jobs", optarg, 1, LT_CLI_MAX_JOBS, &jobs)) return LT_EXIT_USAGE;
            break;
        case OPT_PRETTY: pretty = 1; break;
        case OPT_FORMAT:
            if (strcmp(optarg, "json") == 0)
                format = LT_OUTPUT_JSON;
            else if (strcmp(optarg, "page") == 0)
                format = LT_OUTPUT_PAGE;
            else if (strcmp(optarg, "alto") == 0)
                format = LT_OUTPUT_ALTO;
            else {
                fprintf(stderr, "lineate: --format: '%s' is not json, page or alto\n", optarg);
                return LT_EXIT_USAGE;
            }
            break;
        case OPT_DPI:
            if (lt_cli_number("lineate: ", "--dpi", optarg, 10, 100000, &params.dpi))
                return LT_EXIT_USAGE;
            break;
        case OPT_FORCE_DPI: params.force_dpi = 1; break;
        case OPT_RTL: params.right_to_left = 1; break;
        case OPT_WINDOW:
            if (lt_cli_number("lineate: ", "--window", optarg, 3, 10001, &v)) return LT_EXIT_USAGE;
            params.sauvola_window_px = (int)v | 1;
            break;
        case OPT_K:
            if (lt_cli_number("lineate: ", "--k", optarg, 0, 1, &params.sauvola_k))
                return LT_EXIT_USAGE;
            break;
        case OPT_MAX_SKEW:
            if (lt_cli_number("lineate: ", "--max-skew", optarg, 0, 45, &params.skew_range_deg))
                return LT_EXIT_USAGE;
            break;
        case OPT_MAX_PIXELS:
            if (lt_cli_number("lineate: ", "--max-pixels", optarg, 1, 4e12, &v))
                return LT_EXIT_USAGE;
            params.max_pixels = (long)v;
            break;
        case OPT_MAX_PAGES:
            if (lt_cli_number("lineate: ", "--max-pages", optarg, 1, 1e9, &max_pages))
                return LT_EXIT_USAGE;
            break;
        case OPT_MAX_COMPONENTS:
            if (lt_cli_number("lineate: ", "--max-components", optarg, 1, 1e9, &v))
                return LT_EXIT_USAGE;
            params.max_components = (long)v;
            break;
        case 'h': fputs(usage_text, stdout); return LT_EXIT_OK;
        case 'V': printf("lineate %s\n", lt_version()); return LT_EXIT_OK;
        case ':':
            fprintf(stderr, "lineate: option '%s' needs a value (see lineate --help)\n",
                    argv[optind - 1]);
            return LT_EXIT_USAGE;
        default:
            fprintf(stderr, "lineate: unknown option '%s' (see lineate --help)\n",
                    argv[optind - 1]);
            return LT_EXIT_USAGE;
        }
    }
    if (optind >= argc && !from) {
        fprintf(stderr, "lineate: no input image (see lineate --help)\n");
        return LT_EXIT_USAGE;
    }
    if (out_dir && output) {
        fprintf(stderr, "lineate: -o and --out-dir exclude each other (see lineate --help)\n");
        return LT_EXIT_USAGE;
    }
    if (resume && !out_dir) {
        fprintf(stderr, "lineate: --resume needs --out-dir (see lineate --help)\n");
        return LT_EXIT_USAGE;
    }
    lt_inputs inputs = {0};
    int status = LT_EXIT_OK;
    for (int i = optind; i < argc; i++)
        if (lt_inputs_add_arg(&inputs, argv[i])) status = LT_EXIT_FAILED;
    if (from && lt_inputs_add_list(&inputs, from)) status = LT_EXIT_FAILED;
    if (out_dir && lt_inputs_check_out_names(&inputs, out_dir,
                                              format == LT_OUTPUT_PAGE   ? ".page.xml"
                                              : format == LT_OUTPUT_ALTO ? ".alto.xml"
                                                                         : ".json")) {
        lt_inputs_free(&inputs);
        return LT_EXIT_USAGE;
    }
    struct stat st;
    if (out_dir && ((mkdir(out_dir, 0777) != 0 && errno != EEXIST) || stat(out_dir, &st) != 0 ||
                    (!S_ISDIR(st.st_mode) && (errno = ENOTDIR)))) {
        fprintf(stderr, "lineate: %s: %s\n", out_dir, strerror(errno));
        lt_inputs_free(&inputs);
        return LT_EXIT_OUTPUT;
    }
    if (lt_batch_guard_signals()) {
        fprintf(stderr, "lineate: cannot set up the signal handling\n");
        lt_inputs_free(&inputs);
        return LT_EXIT_FAILED;
    }
    FILE *out = stdout;
    char *tmp_path = NULL;
    if (output && strcmp(output, "-") != 0 && stat(output, &st) == 0 && !S_ISREG(st.st_mode)) {
        out = fopen(output, "wb"); /* a device or pipe: written in place, never replaced */
    } else if (output && strcmp(output, "-") != 0) {
        /* PATH.tmp, renamed into place at the end; removed on SIGINT, SIGTERM and SIGHUP, and
         * replaced by the next run if something harder stopped this one */
        size_t n = strlen(output) + 8;
        tmp_path = malloc(n);
        if (tmp_path) {
            snprintf(tmp_path, n, "%s.tmp", output);
            lt_batch_stream_temp(tmp_path);
            out = fopen(tmp_path, "wb");
        }
    }
    if (!out) {
        fprintf(stderr, "lineate: %s: %s\n", output, strerror(tmp_path ? errno : ENOMEM));
        lt_batch_stream_temp(NULL);
        free(tmp_path);
        lt_inputs_free(&inputs);
        return LT_EXIT_OUTPUT;
    }
    lt_batch_options opt = {&params,
                            (long)max_pages,
                            pretty,
                            (int)jobs,
                            out,
                            out_dir,
                            resume,
                            progress                        ? 1
                            : isatty(2) && inputs.count > 1 ? 2
                                                            : 0,
                            out_dir != NULL || progress || (isatty(2) && inputs.count > 1),
                            format,
                            creation_time()};
    lt_batch_totals totals;
    if (lt_batch_run(&inputs, &opt, &totals) != 0) status = LT_EXIT_FAILED;
    lt_inputs_free(&inputs);
    if (totals.failed) status = LT_EXIT_FAILED;
    /* The stream's failure, told with the errno of the call that failed (page files that
     * could not be written were reported as they failed). */
    int stream_errno = totals.stream_errno;
    errno = 0;
    if (!stream_errno && (fflush(out) != 0 || ferror(out))) stream_errno = errno ? errno : EIO;
    if (out != stdout && fclose(out) != 0 && !stream_errno) stream_errno = errno ? errno : EIO;
    if (tmp_path && !stream_errno && rename(tmp_path, output) != 0) stream_errno = errno;
    if (stream_errno)
        fprintf(stderr, "lineate: %s: %s\n", out == stdout ? "standard output" : output,
                strerror(stream_errno));
    if (tmp_path) {
        if (stream_errno) remove(tmp_path);
        lt_batch_stream_temp(NULL);
        free(tmp_path);
    }
    return stream_errno || totals.write_failed ? LT_EXIT_OUTPUT : status;
}

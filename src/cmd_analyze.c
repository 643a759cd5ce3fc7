/* cmd_analyze.c — `lineate [OPTIONS] IMAGE...`: options of the analyse command, and its
 * output: one record per page, one per line, to stdout, to -o FILE (written to a temporary
 * name and renamed into place, so a failed run leaves no partial file) or, with --out-dir,
 * to one file per page. The work itself is src/batch.c. */
#include "batch.h"
#include "cli.h"

#include <errno.h>
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
    "      --pretty          indent the JSON for reading (one object spans many lines)\n"
    "      --format FORMAT   json (the default), page (PAGE XML) or alto (ALTO 4.4): one\n"
    "                        document per page; files NAME.json, NAME.page.xml, NAME.alto.xml\n"
    LT_CLI_ANALYSIS_HELP
    LT_CLI_HELP_VERSION_HELP
    "\n"
    "Each command takes --help: lineate score --help, lineate draw --help, lineate crop --help.\n"
    "Exit status: 0 all pages analysed, 1 some input failed (the others are written),\n"
    "2 bad command line, 3 the output could not be written.\n";

enum { OPT_PRETTY = 256, OPT_OUT_DIR, OPT_RESUME, OPT_FORMAT };

static const lt_cli_option analyze_options[] = {{"output", 'o', 1},
                                                {"pretty", OPT_PRETTY, 0},
                                                {"out-dir", OPT_OUT_DIR, 1},
                                                {"resume", OPT_RESUME, 0},
                                                {"format", OPT_FORMAT, 1},
                                                {NULL, 0, 0}};
static const lt_cli_command analyze_command = {"lineate", usage_text, analyze_options};

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

int lt_cmd_analyze(int argc, char **argv)
{
    lt_cli_analysis an;
    lt_cli_analysis_default(&an);
    const char *output = NULL, *out_dir = NULL, *arg;
    int pretty = 0, resume = 0, format = LT_OUTPUT_JSON, c;
    lt_cli_parser p;
    lt_cli_begin(&p, &analyze_command, &an, argc, argv);
    while ((c = lt_cli_next(&p, &arg)) > 0) {
        switch (c) {
        case 'o': output = arg; break;
        case OPT_OUT_DIR: out_dir = arg; break;
        case OPT_RESUME: resume = 1; break;
        case OPT_PRETTY: pretty = 1; break;
        case OPT_FORMAT:
            if (strcmp(arg, "json") == 0)
                format = LT_OUTPUT_JSON;
            else if (strcmp(arg, "page") == 0)
                format = LT_OUTPUT_PAGE;
            else if (strcmp(arg, "alto") == 0)
                format = LT_OUTPUT_ALTO;
            else
                return lt_cli_usage_error(&analyze_command,
                                          "--format: '%s' is not json, page or alto", arg);
            break;
        }
    }
    if (c < 0) return p.status;
    const int first = p.operands;
    if (first >= argc && !an.from) return lt_cli_usage_error(&analyze_command, "no input image");
    if (out_dir && output)
        return lt_cli_usage_error(&analyze_command, "-o and --out-dir exclude each other");
    if (resume && !out_dir) return lt_cli_usage_error(&analyze_command, "--resume needs --out-dir");
    lt_inputs inputs = {0};
    int status = LT_EXIT_OK;
    for (int i = first; i < argc; i++)
        if (lt_inputs_add_arg(&inputs, argv[i])) status = LT_EXIT_FAILED;
    if (an.from && lt_inputs_add_list(&inputs, an.from)) status = LT_EXIT_FAILED;
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
        out = NULL; /* without the name, reported below: never written to stdout instead */
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
    lt_batch_options opt = {&an.params,
                            an.max_pages,
                            pretty,
                            an.jobs,
                            out,
                            out_dir,
                            resume,
                            an.progress                     ? 1
                            : isatty(2) && inputs.count > 1 ? 2
                                                            : 0,
                            out_dir != NULL || an.progress || (isatty(2) && inputs.count > 1),
                            format,
                            creation_time(),
                            NULL,
                            0,
                            analyze_command.name};
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

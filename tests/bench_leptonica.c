/* bench_leptonica.c — a layout pipeline composed only of leptonica's own functions, timed for
 * `make bench` beside lineate's analysis of the same page: Sauvola binarization, skew by
 * projection-profile sweep and search, deskew, page segmentation and word boxes in text lines.
 *   bench_leptonica IN [REPEAT]   prints best-of-REPEAT times in ms and what was found */
#include <leptonica/allheaders.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

/* Parameters, chosen to match lineate's defaults where the two methods share one:
 * Sauvola window 51 px (lineate's 0.17 inch at 300 dpi) as leptonica's half-width 25, and
 * k = 0.34 (lineate's default); leptonica fixes R = 128, as lineate does by default. */
#define SAUVOLA_HALF_WINDOW_PX 25
#define SAUVOLA_K 0.34f
/* 2 x 2 tiles: on 300 dpi pages the untiled call (one tile) measured about 7 times slower
 * (its whole-page mean-square image), 2 x 2 the fastest of 1..8 tiles a side. */
#define SAUVOLA_TILES 2
/* Skew: sweep +-15 degrees as lineate does. Sweep at 4x reduction in 1 degree steps, binary
 * search at 2x down to 0.01 degree: leptonica's own defaults for pixFindSkew (from memory). */
#define SKEW_RANGE_DEG 15.0f
#define SKEW_SWEEP_DELTA_DEG 1.0f
#define SKEW_MIN_SEARCH_DELTA_DEG 0.01f
/* Deskew only an estimate that is confident (leptonica's pixDeskew uses 3.0, from memory)
 * and at least 0.05 degree (lineate's deskew_min_deg). */
#define DESKEW_MIN_CONFIDENCE 3.0f
#define DESKEW_MIN_DEG 0.05f
#define RAD_PER_DEG (3.14159265358979323846 / 180)
/* Word boxes want 75..150 ppi input (leptonica's documentation of pixGetWordBoxesInTextlines,
 * from memory): the 300 ppi page is reduced 2x. Size limits of kept words at 150 ppi. */
#define WORD_MIN_W_PX 5
#define WORD_MIN_H_PX 3
#define WORD_MAX_W_PX 500
#define WORD_MAX_H_PX 100

enum { ST_SAUVOLA, ST_SKEW, ST_ROTATE, ST_REGIONS, ST_WORDS, ST_COUNT };
static const char *const stage_names[ST_COUNT] = {"sauvola", "skew", "rotate", "regions", "words"};

static double now_ms(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec * 1e3 + ts.tv_nsec / 1e6;
}

typedef struct found {
    double skew_deg; /* leptonica's sign: as pixFindSkew reports it */
    double skew_confidence;
    int textlines, words, text_blocks;
} found;

/* One run of the pipeline on an 8 bpp page: adds each stage's time in ms to stage_ms[] and
 * fills *f. Returns 0, or 1 when a leptonica function failed (it names itself on stderr). */
static int run_pipeline(PIX *gray, double stage_ms[ST_COUNT], found *f)
{
    PIX *bin = NULL, *level = NULL, *half = NULL, *hm = NULL, *tm = NULL, *tb = NULL;
    BOXA *words = NULL;
    NUMA *line_of = NULL;
    int bad = 1;
    double t = now_ms(), t_next;
    if (pixSauvolaBinarizeTiled(gray, SAUVOLA_HALF_WINDOW_PX, SAUVOLA_K, SAUVOLA_TILES,
                                SAUVOLA_TILES, NULL, &bin))
        goto done;
    t_next = now_ms();
    stage_ms[ST_SAUVOLA] += t_next - t;
    t = t_next;
    l_float32 angle_deg = 0, conf = 0;
    if (pixFindSkewSweepAndSearch(bin, &angle_deg, &conf, 4, 2, SKEW_RANGE_DEG,
                                  SKEW_SWEEP_DELTA_DEG, SKEW_MIN_SEARCH_DELTA_DEG))
        angle_deg = conf = 0; /* no estimate: leptonica reports it as a failure */
    t_next = now_ms();
    stage_ms[ST_SKEW] += t_next - t;
    t = t_next;
    if (conf >= DESKEW_MIN_CONFIDENCE && fabsf(angle_deg) >= DESKEW_MIN_DEG)
        level = pixRotate(bin, (l_float32)(angle_deg * RAD_PER_DEG), L_ROTATE_SAMPLING,
                          L_BRING_IN_WHITE, 0, 0);
    else
        level = pixClone(bin);
    if (!level) goto done;
    t_next = now_ms();
    stage_ms[ST_ROTATE] += t_next - t;
    t = t_next;
    if (pixGetRegionsBinary(level, &hm, &tm, &tb, NULL)) goto done;
    t_next = now_ms();
    stage_ms[ST_REGIONS] += t_next - t;
    t = t_next;
    half = pixReduceRankBinary2(level, 1, NULL);
    if (!half || pixGetWordBoxesInTextlines(half, WORD_MIN_W_PX, WORD_MIN_H_PX, WORD_MAX_W_PX,
                                            WORD_MAX_H_PX, &words, &line_of))
        goto done;
    stage_ms[ST_WORDS] += now_ms() - t;
    /* What was found, outside the timed part. */
    f->skew_deg = angle_deg;
    f->skew_confidence = conf;
    f->words = boxaGetCount(words);
    l_float32 max_line = -1;
    if (numaGetCount(line_of) > 0) numaGetMax(line_of, &max_line, NULL);
    f->textlines = (int)max_line + 1;
    l_int32 blocks = 0;
    if (tb) pixCountConnComp(tb, 8, &blocks);
    f->text_blocks = blocks;
    bad = 0;
done:
    pixDestroy(&bin);
    pixDestroy(&level);
    pixDestroy(&half);
    pixDestroy(&hm);
    pixDestroy(&tm);
    pixDestroy(&tb);
    boxaDestroy(&words);
    numaDestroy(&line_of);
    return bad;
}

/* Reads IN (any format leptonica reads) as 8 bpp gray, runs the pipeline REPEAT times and
 * prints "decode_ms X sauvola_ms X skew_ms X rotate_ms X regions_ms X words_ms X total_ms X"
 * (each the best of the runs; total the best whole run) and what the last run found. */
int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: bench_leptonica IN [REPEAT]\n");
        return 2;
    }
    const int repeat = argc >= 3 && atoi(argv[2]) > 0 ? atoi(argv[2]) : 3;
    setMsgSeverity(L_SEVERITY_NONE); /* failures are reported here, once */
    double best[ST_COUNT], best_total = 1e300, best_decode = 1e300;
    for (int s = 0; s < ST_COUNT; s++)
        best[s] = 1e300;
    found f = {0};
    for (int r = 0; r < repeat; r++) {
        double t0 = now_ms();
        PIX *pix = pixRead(argv[1]);
        PIX *gray = !pix ? NULL : pixGetDepth(pix) != 8 ? pixConvertTo8(pix, 0) : pixClone(pix);
        double decode_ms = now_ms() - t0;
        pixDestroy(&pix);
        if (!gray) {
            fprintf(stderr, "bench_leptonica: %s: cannot read as an 8-bit page\n", argv[1]);
            return 1;
        }
        double stage_ms[ST_COUNT] = {0};
        int bad = run_pipeline(gray, stage_ms, &f);
        pixDestroy(&gray);
        if (bad) {
            fprintf(stderr, "bench_leptonica: %s: the leptonica pipeline failed\n", argv[1]);
            return 1;
        }
        double total_ms = 0;
        for (int s = 0; s < ST_COUNT; s++) {
            total_ms += stage_ms[s];
            if (stage_ms[s] < best[s]) best[s] = stage_ms[s];
        }
        if (total_ms < best_total) best_total = total_ms;
        if (decode_ms < best_decode) best_decode = decode_ms;
    }
    printf("decode_ms %.1f ", best_decode);
    for (int s = 0; s < ST_COUNT; s++)
        printf("%s_ms %.1f ", stage_names[s], best[s]);
    printf("total_ms %.1f skew_deg %.3f skew_conf %.2f textlines %d words %d blocks %d\n",
           best_total, f.skew_deg, f.skew_confidence, f.textlines, f.words, f.text_blocks);
    return 0;
}

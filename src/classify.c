/* classify.c — measures the page's text height (the mode of character heights, O'Gorman's
 * docstrum uses the same statistic for its size classes) and sorts every component into
 * text, speckle, rule or picture by its size in units of that height. */
#include "internal.h"

#include <math.h>
#include <stdlib.h>

double lt_text_height(const lt_components *c, double dpi)
{
    if (!c || c->count == 0) return 0;
    if (!lt_dpi_plausible(dpi)) dpi = 300; /* keeps the sizes below in range */
    /* Plausible characters: from 1/50 inch (the x-height of 5 pt type) up to a third of an
     * inch tall, not long and thin. Each counts with its width, so that the mass of text,
     * not the many dots and specks, decides. */
    const int min_h = dpi / 50 > 3 ? (int)(dpi / 50) : 3;
    const int max_h = (int)(dpi / 3) > min_h + 1 ? (int)(dpi / 3) : min_h + 1;
    int *hist = calloc((size_t)max_h + 2, sizeof *hist);
    if (!hist) return -1;
    int n = 0;
    for (int i = 0; i < c->count; i++) {
        const lt_box *b = &c->items[i].box;
        int w = b->right - b->left, h = b->bottom - b->top;
        if (h < min_h || h > max_h || w > 3 * h || w * 8 < h) continue;
        hist[h] += w;
        n++;
    }
    double mode = 0;
    if (n > 0) {
        /* Mode of the histogram smoothed over three bins, refined to the mean of those bins. */
        int best = min_h;
        long best_sum = -1;
        for (int h = min_h; h <= max_h; h++) {
            long s = (long)hist[h - 1] + hist[h] + hist[h + 1];
            if (s > best_sum) {
                best_sum = s;
                best = h;
            }
        }
        double wsum = (double)(best - 1) * hist[best - 1] + (double)best * hist[best] +
                      (double)(best + 1) * hist[best + 1];
        mode = best_sum > 0 ? wsum / best_sum : best;
    }
    free(hist);
    return mode;
}

void lt_classify_components(lt_components *c, double text_height_px, const lt_params *p)
{
    if (!c) return;
    const double th = text_height_px > 0 ? text_height_px : 20;
    const double speckle = fmax(1.0, p->speckle_max * th);
    const double long_rule = 3 * th, picture = p->picture_min_height * th;
    for (int i = 0; i < c->count; i++) {
        lt_component *k = &c->items[i];
        const double w = k->box.right - k->box.left, h = k->box.bottom - k->box.top;
        if (w <= speckle && h <= speckle)
            k->kind = LT_COMP_SPECKLE;
        else if ((w >= long_rule && w >= p->rule_min_aspect * h) ||
                 (h >= long_rule && h >= p->rule_min_aspect * w))
            k->kind = LT_COMP_RULE;
        else if (h > picture || (w > picture && h > 2 * th))
            k->kind = LT_COMP_PICTURE;
        else
            k->kind = LT_COMP_TEXT;
    }
}

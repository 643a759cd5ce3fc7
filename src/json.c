/* json.c — writes a page layout as one JSON object (cJSON), the format described by
 * schema/lineate-layout.schema.json. Coordinates are rounded to 1/100 pixel. */
#include "internal.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Length of the valid UTF-8 sequence at s (RFC 3629: no overlong forms, no surrogates,
 * nothing above U+10FFFF), 0 when the byte at s does not start one. */
static size_t utf8_sequence(const unsigned char *s)
{
    const unsigned c = s[0];
    if (c < 0x80) return 1;
    size_t n = c >= 0xc2 && c <= 0xdf   ? 2
               : c >= 0xe0 && c <= 0xef ? 3
               : c >= 0xf0 && c <= 0xf4 ? 4
                                        : 0;
    if (n == 0) return 0;
    /* the second byte's range depends on the first (RFC 3629, section 4) */
    const unsigned lo = c == 0xe0 ? 0xa0 : c == 0xf0 ? 0x90 : 0x80;
    const unsigned hi = c == 0xed ? 0x9f : c == 0xf4 ? 0x8f : 0xbf;
    if (s[1] < lo || s[1] > hi) return 0;
    for (size_t i = 2; i < n; i++)
        if ((s[i] & 0xc0) != 0x80) return 0;
    return n;
}

char *lt_utf8_clean(const char *text)
{
    const unsigned char *s = (const unsigned char *)text;
    size_t n = 0;
    for (size_t i = 0, k; s[i]; i += k ? k : 1)
        n += (k = utf8_sequence(s + i)) ? k : 3;
    char *out = malloc(n + 1), *o = out;
    if (!out) return NULL;
    for (size_t i = 0, k; s[i]; i += k ? k : 1) {
        if ((k = utf8_sequence(s + i))) {
            memcpy(o, s + i, k);
            o += k;
        } else {
            memcpy(o, "\xef\xbf\xbd", 3); /* U+FFFD REPLACEMENT CHARACTER */
            o += 3;
        }
    }
    *o = '\0';
    return out;
}

int lt_json_add_source(struct cJSON *o, const char *source)
{
    char *clean = lt_utf8_clean(source);
    if (!clean) return -1;
    const int exact = strcmp(clean, source) == 0;
    int bad = !cJSON_AddStringToObject(o, "source", clean);
    free(clean);
    if (exact || bad) return bad ? -1 : 0;
    const unsigned char *s = (const unsigned char *)source;
    char *bytes = malloc(3 * strlen(source) + 1), *b = bytes;
    if (!bytes) return -1;
    for (; *s; s++) {
        if (*s < 0x20 || *s >= 0x7f || *s == '%')
            b += sprintf(b, "%%%02X", *s);
        else
            *b++ = (char)*s;
    }
    *b = '\0';
    bad = !cJSON_AddStringToObject(o, "source_bytes", bytes);
    free(bytes);
    return bad ? -1 : 0;
}

char *lt_source_bytes_decode(const char *text)
{
    char *out = malloc(strlen(text) + 1), *o = out;
    if (!out) return NULL;
    for (const char *s = text; *s; s++) {
        unsigned byte;
        if (*s == '%' && sscanf(s + 1, "%2X", &byte) == 1 && isxdigit((unsigned char)s[1]) &&
            isxdigit((unsigned char)s[2]) && byte != 0) {
            *o++ = (char)byte;
            s += 2;
        } else {
            *o++ = *s;
        }
    }
    *o = '\0';
    return out;
}

static double round2(double v)
{
    double r = round(v * 100.0) / 100.0;
    return r == 0 ? 0 : r; /* no "-0" */
}

static cJSON *box_json(const lt_box *b)
{
    const int v[4] = {b->left, b->top, b->right, b->bottom};
    return cJSON_CreateIntArray(v, 4);
}

/* Appends item to the array a; where item is NULL (not created) or cannot be added, frees it
 * and sets *failed: a document with a member missing is never written. */
static void append(cJSON *a, cJSON *item, int *failed)
{
    if (!item || !cJSON_AddItemToArray(a, item)) {
        cJSON_Delete(item);
        *failed = 1;
    }
}

/* The same for the member `name` of the object o. */
static void attach(cJSON *o, const char *name, cJSON *item, int *failed)
{
    if (!item || !cJSON_AddItemToObject(o, name, item)) {
        cJSON_Delete(item);
        *failed = 1;
    }
}

/* Sets *failed where a cJSON_Add*ToObject call returned NULL (out of memory). */
static void need(const cJSON *added, int *failed)
{
    if (!added) *failed = 1;
}

static cJSON *point_json(lt_point p)
{
    cJSON *a = cJSON_CreateArray();
    int failed = 0;
    if (!a) return NULL;
    append(a, cJSON_CreateNumber(round2(p.x)), &failed);
    append(a, cJSON_CreateNumber(round2(p.y)), &failed);
    if (!failed) return a;
    cJSON_Delete(a);
    return NULL;
}

static cJSON *points_json(const lt_point *p, int n)
{
    cJSON *a = cJSON_CreateArray();
    int failed = 0;
    for (int i = 0; a && i < n; i++)
        append(a, point_json(p[i]), &failed);
    if (!failed) return a;
    cJSON_Delete(a);
    return NULL;
}

static const char *block_kind_name(int kind)
{
    switch (kind) {
    case LT_BLOCK_RULE: return "rule";
    case LT_BLOCK_PICTURE: return "picture";
    case LT_BLOCK_TABLE: return "table";
    default: return "text";
    }
}

char *lt_layout_to_json(const lt_layout *l, const char *source, int page, int pages, int pretty)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    int failed = 0;
    need(cJSON_AddStringToObject(o, "format", LT_FORMAT_NAME), &failed);
    if (failed || lt_json_add_source(o, source ? source : "")) {
        cJSON_Delete(o);
        return NULL;
    }
    need(cJSON_AddNumberToObject(o, "page", page), &failed);
    need(cJSON_AddNumberToObject(o, "pages", pages), &failed);
    need(cJSON_AddNumberToObject(o, "width", l->width), &failed);
    need(cJSON_AddNumberToObject(o, "height", l->height), &failed);
    need(cJSON_AddNumberToObject(o, "dpi", round2(l->dpi)), &failed);
    need(cJSON_AddStringToObject(o, "dpi_source",
                                 l->dpi_from_file  ? "file"
                                 : l->dpi_rejected ? "assumed-file-implausible"
                                                   : "assumed"),
         &failed);
    need(cJSON_AddNumberToObject(o, "orientation_deg", l->orientation_deg), &failed);
    need(cJSON_AddNumberToObject(o, "orientation_confidence", round2(l->orientation_confidence)),
         &failed);
    need(cJSON_AddNumberToObject(o, "skew_deg", round(l->skew_deg * 1000) / 1000 + 0.0), &failed);
    need(cJSON_AddNumberToObject(o, "skew_confidence", round2(l->skew_confidence)), &failed);
    need(cJSON_AddNumberToObject(o, "text_height_px", round2(l->text_height_px)), &failed);
    need(cJSON_AddNumberToObject(o, "components", l->ncomponents), &failed);
    cJSON *review = cJSON_AddObjectToObject(o, "order_review");
    need(review, &failed);
    if (review) {
        need(cJSON_AddBoolToObject(review, "needed", l->order_doubts != 0), &failed);
        cJSON *reasons = cJSON_AddArrayToObject(review, "reasons");
        need(reasons, &failed);
        for (int bit = 1; reasons && bit <= LT_DOUBT_BRIDGED; bit <<= 1)
            if (l->order_doubts & bit)
                append(reasons, cJSON_CreateString(lt_doubt_text(bit)), &failed);
    }
    cJSON *lines = cJSON_AddArrayToObject(o, "lines");
    need(lines, &failed);
    for (int i = 0; lines && !failed && i < l->nlines; i++) {
        const lt_line *ln = &l->lines[i];
        cJSON *j = cJSON_CreateObject();
        if (!j) {
            failed = 1;
            break;
        }
        attach(j, "box", box_json(&ln->box), &failed);
        attach(j, "quad", points_json(ln->quad, 4), &failed);
        attach(j, "baseline", points_json(ln->baseline, 2), &failed);
        if (ln->npolygon > 0)
            attach(j, "polygon", points_json(ln->polygon, ln->npolygon), &failed);
        need(cJSON_AddNumberToObject(j, "xheight_px", round2(ln->xheight_px)), &failed);
        need(cJSON_AddNumberToObject(j, "block", ln->block), &failed);
        if (ln->light_on_dark) need(cJSON_AddTrueToObject(j, "light_on_dark"), &failed);
        append(lines, j, &failed);
    }
    cJSON *blocks = cJSON_AddArrayToObject(o, "blocks");
    need(blocks, &failed);
    for (int i = 0; blocks && !failed && i < l->nblocks; i++) {
        const lt_block *b = &l->blocks[i];
        cJSON *j = cJSON_CreateObject();
        if (!j) {
            failed = 1;
            break;
        }
        need(cJSON_AddStringToObject(j, "kind", block_kind_name(b->kind)), &failed);
        if (b->kind == LT_BLOCK_TEXT) {
            need(cJSON_AddStringToObject(j, "role", lt_role_name(b->role)), &failed);
            if (b->table >= 0) need(cJSON_AddNumberToObject(j, "table", b->table), &failed);
        }
        attach(j, "box", box_json(&b->box), &failed);
        attach(j, "quad", points_json(b->quad, 4), &failed);
        cJSON *members = cJSON_AddArrayToObject(j, "lines");
        need(members, &failed);
        for (int k = 0; members && k < b->nlines; k++)
            append(members, cJSON_CreateNumber(b->first_line + k), &failed);
        append(blocks, j, &failed);
    }
    char *text = failed ? NULL : pretty ? cJSON_Print(o) : cJSON_PrintUnformatted(o);
    cJSON_Delete(o);
    return text;
}

/* xmlread.c — reads layouts and ground truth in the open standards, PAGE XML (any version of
 * the PAGE content schema) and ALTO (pixel units), into lt_scored_page arrays for the scorer,
 * with libxml2 (no network, no external entities, no DTD). Text lines come from their
 * polygons or positions; the reading order from the standard's ReadingOrder element where
 * there is one (lines of regions it does not reach, or reaches only through an unordered
 * group, have no place in the order), else from document order. */
#include "score.h"

#include <libxml/SAX2.h>
#include <libxml/parser.h>
#include <libxml/parserInternals.h>
#include <libxml/tree.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_GROUP_DEPTH 64 /* nesting of reading-order groups; deeper is not a real page */

/* ---- helpers --------------------------------------------------------------------------- */

static int is_named(const xmlNode *n, const char *name)
{
    return n && n->type == XML_ELEMENT_NODE && strcmp((const char *)n->name, name) == 0;
}

static xmlNodePtr first_child(xmlNodePtr n, const char *name)
{
    for (xmlNodePtr c = n ? n->children : NULL; c; c = c->next)
        if (is_named(c, name)) return c;
    return NULL;
}

/* Attribute value (owned by the caller, xmlFree) or NULL. */
static char *attr(xmlNodePtr n, const char *name)
{
    return (char *)xmlGetProp(n, BAD_CAST name);
}

/* Reads attribute `name` as a finite number; 1 and *out set, 0 when absent, -1 when not a
 * number. */
static int attr_number(xmlNodePtr n, const char *name, double *out)
{
    char *s = attr(n, name);
    if (!s) return 0;
    char *end;
    double v = strtod(s, &end);
    while (*end == ' ')
        end++;
    int ok = end != s && *end == '\0' && isfinite(v);
    xmlFree(s);
    if (!ok) return -1;
    *out = v;
    return 1;
}

/* ---- one document ------------------------------------------------------------------------ */

typedef struct xline {
    int page; /* index of its page in the document */
    lt_box box;
    lt_point quad[4];
    int has_quad;
    int placed; /* already put into the reading order */
} xline;

typedef struct idref {
    char *id;       /* the element's id */
    int first, end; /* the lines of its subtree: lines[first .. end) */
} idref;

typedef struct reader {
    const char *name; /* file name for messages */
    int doc;          /* document number in the file, from 1 */
    int is_alto;
    xline *lines;
    int nlines, cap;
    idref *ids;
    int nids, idcap;
    int *order; /* line indices in reading order */
    char *in_order;
    int norder;
    lt_error *err;
} reader;

static int fail(reader *r, int code, const char *why, const char *what)
{
    return lt_error_set(r->err, code, "%s: document %d: %s%s", r->name, r->doc, why,
                        what ? what : "");
}

/* Box (and, for four points, quad) of a list of points "x,y x,y ..." (or "x y x y ...").
 * `skew_deg` != 0 gives a polygon of more points the rectangle at that angle that holds it,
 * as its quad. Returns 0, or a negative code with the message set. */
static int parse_points(reader *r, const char *s, double skew_deg, xline *ln)
{
    double x0 = INFINITY, y0 = INFINITY, x1 = -INFINITY, y1 = -INFINITY;
    double u0 = INFINITY, v0 = INFINITY, u1 = -INFINITY, v1 = -INFINITY; /* level frame */
    const double a = skew_deg * 3.14159265358979323846 / 180.0, c = cos(a), sn = sin(a);
    int n = 0;
    const char *p = s;
    for (;;) {
        double xy[2];
        for (int k = 0; k < 2; k++) {
            while (*p == ' ' || *p == '\t' || *p == '\n' || *p == '\r' || (k == 1 && *p == ','))
                p++;
            if (*p == '\0' && k == 0) goto done;
            char *end;
            xy[k] = strtod(p, &end);
            if (end == p || !isfinite(xy[k]) || fabs(xy[k]) > LT_SCORE_MAX_COORD)
                return fail(r, LT_EPARSE, "a points list is not pairs of numbers in range: ", s);
            p = end;
        }
        if (n < 4) ln->quad[n] = (lt_point){xy[0], xy[1]};
        n++;
        x0 = fmin(x0, xy[0]);
        y0 = fmin(y0, xy[1]);
        x1 = fmax(x1, xy[0]);
        y1 = fmax(y1, xy[1]);
        const double u = xy[0] * c - xy[1] * sn, v = xy[0] * sn + xy[1] * c;
        u0 = fmin(u0, u);
        v0 = fmin(v0, v);
        u1 = fmax(u1, u);
        v1 = fmax(v1, v);
    }
done:
    if (n == 0) return fail(r, LT_EPARSE, "a line has an empty points list", NULL);
    ln->box = (lt_box){(int)floor(x0), (int)floor(y0), (int)ceil(x1), (int)ceil(y1)};
    ln->has_quad = n == 4;
    if (n > 4 && skew_deg != 0) { /* the level rectangle's corners, turned back */
        const double us[4] = {u0, u1, u1, u0}, vs[4] = {v0, v0, v1, v1};
        for (int k = 0; k < 4; k++)
            ln->quad[k] = (lt_point){us[k] * c + vs[k] * sn, -us[k] * sn + vs[k] * c};
        ln->has_quad = 1;
    }
    return 0;
}

static int add_line(reader *r, const xline *ln)
{
    if (r->nlines >= LT_SCORE_MAX_LINES)
        return lt_error_set(r->err, LT_ELIMIT,
                            "%s: document %d: more than %d text lines, the limit of one document",
                            r->name, r->doc, LT_SCORE_MAX_LINES);
    if (r->nlines == r->cap) {
        int ncap = r->cap ? 2 * r->cap : 256;
        xline *n = realloc(r->lines, (size_t)ncap * sizeof *n);
        if (!n) return fail(r, LT_ENOMEM, "out of memory", NULL);
        r->lines = n;
        r->cap = ncap;
    }
    r->lines[r->nlines++] = *ln;
    return 0;
}

/* A PAGE TextLine: Coords/@points, or the Point children of older versions. */
static int page_line(reader *r, xmlNodePtr tl, int page, double skew_deg)
{
    xline ln = {.page = page};
    xmlNodePtr coords = first_child(tl, "Coords");
    if (!coords) return fail(r, LT_EPARSE, "a TextLine has no Coords", NULL);
    char *pts = attr(coords, "points");
    if (!pts) { /* <Point x= y=/> children (PAGE 2010 and 2013) */
        size_t cap = 64, len = 0;
        pts = xmlMalloc(cap);
        if (!pts) return fail(r, LT_ENOMEM, "out of memory", NULL);
        pts[0] = '\0';
        for (xmlNodePtr pt = coords->children; pt; pt = pt->next) {
            if (!is_named(pt, "Point")) continue;
            double x, y;
            if (attr_number(pt, "x", &x) != 1 || attr_number(pt, "y", &y) != 1) {
                xmlFree(pts);
                return fail(r, LT_EPARSE, "a Point lacks a numeric x or y", NULL);
            }
            if (len + 64 > cap) {
                char *n = xmlRealloc(pts, cap * 2);
                if (!n) {
                    xmlFree(pts);
                    return fail(r, LT_ENOMEM, "out of memory", NULL);
                }
                pts = n;
                cap *= 2;
            }
            len += (size_t)snprintf(pts + len, cap - len, "%.17g,%.17g ", x, y);
        }
    }
    int rc = parse_points(r, pts, skew_deg, &ln);
    xmlFree(pts);
    return rc ? rc : add_line(r, &ln);
}

/* An ALTO TextLine: HPOS, VPOS, WIDTH, HEIGHT for the box, Shape/Polygon for the quad (and for
 * the box when the position is missing). */
static int alto_line(reader *r, xmlNodePtr tl, int page, double skew_deg)
{
    xline ln = {.page = page};
    xmlNodePtr poly = first_child(first_child(tl, "Shape"), "Polygon");
    char *pts = poly ? attr(poly, "POINTS") : NULL;
    int rc = 0;
    if (pts) rc = parse_points(r, pts, skew_deg, &ln);
    xmlFree(pts);
    if (rc) return rc;
    double v[4];
    static const char *const keys[4] = {"HPOS", "VPOS", "WIDTH", "HEIGHT"};
    int have = 0;
    for (int k = 0; k < 4; k++) {
        int got = attr_number(tl, keys[k], &v[k]);
        if (got < 0 || (got && fabs(v[k]) > LT_SCORE_MAX_COORD))
            return fail(r, LT_EPARSE,
                        "a TextLine has a position that is not a number in range: ", keys[k]);
        have += got;
    }
    if (have == 4 && v[2] >= 0 && v[3] >= 0)
        ln.box = (lt_box){(int)floor(v[0]), (int)floor(v[1]), (int)ceil(v[0] + v[2]),
                          (int)ceil(v[1] + v[3])};
    else if (!pts)
        return fail(r, LT_EPARSE, "a TextLine has neither HPOS, VPOS, WIDTH, HEIGHT nor a Polygon",
                    NULL);
    return add_line(r, &ln);
}

/* Notes the identifier of element n, if it has one, with the lines it holds: lines[first ..
 * nlines). */
static int note_id(reader *r, xmlNodePtr n, int first)
{
    xmlAttrPtr id = xmlHasProp(n, BAD_CAST(r->is_alto ? "ID" : "id"));
    if (!id || !id->children || !id->children->content) return 0;
    if (r->nids == r->idcap) {
        int ncap = r->idcap ? 2 * r->idcap : 256;
        idref *ni = realloc(r->ids, (size_t)ncap * sizeof *ni);
        if (!ni) return fail(r, LT_ENOMEM, "out of memory", NULL);
        r->ids = ni;
        r->idcap = ncap;
    }
    char *copy = strdup((const char *)id->children->content);
    if (!copy) return fail(r, LT_ENOMEM, "out of memory", NULL);
    r->ids[r->nids++] = (idref){copy, first, r->nlines};
    return 0;
}

/* ---- reading while parsing ------------------------------------------------------------------
 * The document is not kept whole. libxml2 builds the tree through its SAX2 handlers, and as an
 * element inside a page ends, what it brings is taken and the element freed: a TextLine read as
 * a line (from its subtree, freed with it), an identifier noted with the lines it holds. What
 * is read after the parse stays: the root, the pages' elements (PAGE's first Page, the Page
 * elements of ALTO's first Layout) and, whole, the first ReadingOrder and ALTO's first
 * Description; text only inside these two. A tree took about 15 times the document; now memory
 * is the lines and what stays. Lines are taken in document order, as a walk of the tree would
 * take them, and the first failure is kept with the page where it happened, to be told when
 * that page is read after the parse (after the checks of the page's own attributes). */

typedef struct open_element {
    int first_line; /* the reader's line count when it started */
    int kept;       /* it stays in the tree */
} open_element;

typedef struct stream {
    reader *r;
    int kind;           /* of the root: 1 PAGE (PcGts), 2 ALTO (alto), 0 neither */
    lt_error error;     /* the first failure while reading lines */
    int error_page;     /* the page it happened on */
    open_element *open; /* the open elements, from the root (depth 1) */
    int depth, cap;
    int layout_depth; /* ALTO: depth of the first Layout while it is open, else 0 */
    int page_depth;   /* depth of the page element being read, else 0 */
    int page;         /* that page's index in the document */
    double skew_deg;  /* its angle (0 when it has none or not a valid one) */
    int npages;       /* page elements started */
    int max_pages;    /* more stop the parse */
    int line_depth;   /* depth of the TextLine being read, else 0 */
    int keep_depth;   /* depth of the subtree kept whole that is open, else 0 */
    int seen_page, seen_layout, seen_description, seen_order; /* the first of each found */
} stream;

/* The page's angle attribute `key` as page_skew reads it; 0 when absent or not valid (which
 * page_skew reports after the parse). */
static double page_angle(xmlNodePtr page, const char *key)
{
    double a;
    return attr_number(page, key, &a) == 1 && fabs(a) <= LT_SCORE_MAX_SKEW_DEG ? a : 0;
}

/* Records a failure of the stream itself (out of memory) and stops the parse. */
static void stream_stop(xmlParserCtxtPtr ctxt, stream *st)
{
    if (!st->error.code) {
        fail(st->r, LT_ENOMEM, "out of memory", NULL);
        st->error_page = st->page;
    }
    xmlStopParser(ctxt);
}

/* Whether the element `name` that starts at depth d (> 1, outside the subtrees kept whole)
 * stays in the tree; notes the pages and kept subtrees it starts. -1 for a page past
 * st->max_pages. */
static int starts_kept(stream *st, xmlNodePtr node, const char *name, int d)
{
    const int page = st->kind == 1, alto = st->kind == 2;
    if (page && d == 2 && !st->seen_page && strcmp(name, "Page") == 0) {
        st->seen_page = 1;
        st->page_depth = d;
        st->page = st->npages++;
        st->skew_deg = page_angle(node, "orientation");
    } else if (alto && d == 3 && st->layout_depth == 2 && strcmp(name, "Page") == 0) {
        if (st->npages == st->max_pages) return -1;
        st->page_depth = d;
        st->page = st->npages++;
        st->skew_deg = page_angle(node, "ROTATION");
    } else if (alto && d == 2 && !st->seen_layout && strcmp(name, "Layout") == 0) {
        st->seen_layout = 1;
        st->layout_depth = d;
    } else if (((page && d == 3 && st->page_depth == 2) || (alto && d == 2)) && !st->seen_order &&
               strcmp(name, "ReadingOrder") == 0) {
        st->seen_order = 1;
        st->keep_depth = d;
    } else if (alto && d == 2 && !st->seen_description && strcmp(name, "Description") == 0) {
        st->seen_description = 1;
        st->keep_depth = d;
    } else {
        return 0;
    }
    return 1;
}

static void stream_start(void *ctx, const xmlChar *localname, const xmlChar *prefix,
                         const xmlChar *uri, int nb_namespaces, const xmlChar **namespaces,
                         int nb_attributes, int nb_defaulted, const xmlChar **attributes)
{
    xmlParserCtxtPtr ctxt = ctx;
    stream *st = ctxt->_private;
    xmlNodePtr parent = ctxt->node;
    xmlSAX2StartElementNs(ctx, localname, prefix, uri, nb_namespaces, namespaces, nb_attributes,
                          nb_defaulted, attributes);
    xmlNodePtr node = ctxt->node;
    if (node == parent) return; /* libxml2 ran out of memory and stops */
    if (st->depth == st->cap) {
        const int ncap = st->cap ? 2 * st->cap : 64;
        open_element *grown = realloc(st->open, (size_t)ncap * sizeof *grown);
        if (!grown) {
            stream_stop(ctxt, st);
            return;
        }
        st->open = grown;
        st->cap = ncap;
    }
    const int d = ++st->depth;
    const char *name = (const char *)localname;
    int kept = 1;
    if (d == 1) {
        st->kind = strcmp(name, "PcGts") == 0 ? 1 : strcmp(name, "alto") == 0 ? 2 : 0;
        st->r->is_alto = st->kind == 2;
    } else if (!st->keep_depth) {
        kept = starts_kept(st, node, name, d);
    }
    if (kept < 0) {
        lt_error_set(&st->error, LT_ELIMIT, "%s: more than %d pages, the limit of one file",
                     st->r->name, LT_SCORE_MAX_PAGES);
        xmlStopParser(ctxt);
        return;
    }
    if (st->page_depth && d > st->page_depth && !st->line_depth && strcmp(name, "TextLine") == 0)
        st->line_depth = d;
    st->open[d - 1] = (open_element){st->r->nlines, kept};
}

static void stream_end(void *ctx, const xmlChar *localname, const xmlChar *prefix,
                       const xmlChar *uri)
{
    xmlParserCtxtPtr ctxt = ctx;
    stream *st = ctxt->_private;
    xmlNodePtr node = ctxt->node;
    xmlSAX2EndElementNs(ctx, localname, prefix, uri);
    if (st->depth < 1 || !node) return; /* cannot happen: every end has its start */
    const int d = st->depth--;
    const open_element e = st->open[d - 1];
    reader *r = st->r;
    /* inside a page, an element not inside a TextLine: its line, if it is one, and its id */
    if (st->page_depth && d > st->page_depth && (!st->line_depth || d == st->line_depth) &&
        !st->error.code) {
        int rc = 0;
        if (d == st->line_depth)
            rc = r->is_alto ? alto_line(r, node, st->page, st->skew_deg)
                            : page_line(r, node, st->page, st->skew_deg);
        if (!rc) rc = note_id(r, node, e.first_line);
        if (rc) {
            st->error_page = st->page;
            if (rc == LT_ELIMIT || rc == LT_ENOMEM) xmlStopParser(ctxt);
        }
    }
    if (d == st->line_depth) st->line_depth = 0;
    if (d == st->page_depth) st->page_depth = 0;
    if (d == st->layout_depth) st->layout_depth = 0;
    if (d == st->keep_depth) st->keep_depth = 0;
    if (!e.kept && !(st->line_depth && d > st->line_depth)) {
        xmlUnlinkNode(node);
        xmlFreeNode(node);
    }
}

/* Text is kept only inside the subtrees kept whole: it is read nowhere else. */
static void stream_characters(void *ctx, const xmlChar *ch, int len)
{
    xmlParserCtxtPtr ctxt = ctx;
    const stream *st = ctxt->_private;
    if (st->keep_depth) xmlSAX2Characters(ctx, ch, len);
}

/* The lines of page `page` read while parsing: 0, or the failure that happened on it. */
static int stream_page(reader *r, const stream *st, int page)
{
    if (!st->error.code || st->error_page != page) return 0;
    return lt_error_set(r->err, st->error.code, "%s", st->error.message);
}

static int cmp_idref(const void *a, const void *b)
{
    return strcmp(((const idref *)a)->id, ((const idref *)b)->id);
}

/* bsearch's comparison of an identifier with an idref. */
static int cmp_id_idref(const void *id, const void *ref)
{
    return strcmp(id, ((const idref *)ref)->id);
}

/* Places the lines of the element with identifier `id` that are not placed yet. */
static int place(reader *r, const char *id, int in_order)
{
    const idref *e =
        r->nids > 0 ? bsearch(id, r->ids, (size_t)r->nids, sizeof *r->ids, cmp_id_idref) : NULL;
    if (!e) return fail(r, LT_EPARSE, "the reading order refers to a missing element: ", id);
    for (int i = e->first; i < e->end; i++) {
        if (r->lines[i].placed) continue;
        r->lines[i].placed = 1;
        r->order[r->norder] = i;
        r->in_order[r->norder++] = (char)in_order;
    }
    return 0;
}

/* Places every identifier of a space-separated list (IDREFS). */
static int place_list(reader *r, const char *list, int in_order)
{
    char *copy = strdup(list);
    if (!copy) return fail(r, LT_ENOMEM, "out of memory", NULL);
    int rc = 0;
    char *save = NULL;
    for (char *tok = strtok_r(copy, " \t\r\n", &save); tok && !rc;
         tok = strtok_r(NULL, " \t\r\n", &save))
        rc = place(r, tok, in_order);
    free(copy);
    return rc;
}

typedef struct indexed_child {
    xmlNodePtr node;
    long index, seq;
} indexed_child;

static int cmp_indexed(const void *a, const void *b)
{
    const indexed_child *x = a, *y = b;
    if (x->index != y->index) return x->index < y->index ? -1 : 1;
    return (x->seq > y->seq) - (x->seq < y->seq);
}

/* Walks a reading-order group: the members of an ordered group by their @index (PAGE) or in
 * document order (ALTO); the members of an unordered group, at any depth, have no place in
 * the order. */
static int walk_group(reader *r, xmlNodePtr g, int unordered, int depth)
{
    if (depth > MAX_GROUP_DEPTH)
        return fail(r, LT_ELIMIT, "reading-order groups nested too deeply", NULL);
    long n = 0;
    for (xmlNodePtr c = g->children; c; c = c->next)
        n += c->type == XML_ELEMENT_NODE;
    indexed_child *kids = malloc((size_t)(n > 0 ? n : 1) * sizeof *kids);
    if (!kids) return fail(r, LT_ENOMEM, "out of memory", NULL);
    long k = 0;
    for (xmlNodePtr c = g->children; c; c = c->next) {
        if (c->type != XML_ELEMENT_NODE) continue;
        double index = (double)k;
        if (attr_number(c, "index", &index) < 0) {
            free(kids);
            return fail(r, LT_EPARSE, "a reading-order member has an index that is not a number",
                        NULL);
        }
        kids[k] = (indexed_child){c, (long)fmax(fmin(index, 1e15), -1e15), k};
        k++;
    }
    if (!unordered) qsort(kids, (size_t)n, sizeof *kids, cmp_indexed);
    int rc = 0;
    for (long i = 0; i < n && !rc; i++) {
        xmlNodePtr c = kids[i].node;
        const char *name = (const char *)c->name;
        char *ref = attr(c, r->is_alto ? "REF" : "regionRef");
        if (ref) rc = place_list(r, ref, !unordered);
        xmlFree(ref);
        if (!rc && strstr(name, "Group"))
            rc = walk_group(r, c, unordered || strncmp(name, "Unordered", 9) == 0, depth + 1);
    }
    free(kids);
    return rc;
}

/* Fills pages[0..npages) from the collected lines and the reading order `ro` (may be NULL). */
static int finish_pages(reader *r, xmlNodePtr ro, lt_scored_page *pages, int npages)
{
    r->order = malloc((size_t)(r->nlines > 0 ? r->nlines : 1) * sizeof *r->order);
    r->in_order = malloc((size_t)(r->nlines > 0 ? r->nlines : 1));
    if (!r->order || !r->in_order) return fail(r, LT_ENOMEM, "out of memory", NULL);
    if (r->nids > 1) qsort(r->ids, (size_t)r->nids, sizeof *r->ids, cmp_idref);
    if (ro) {
        int rc = walk_group(r, ro, 0, 0);
        if (rc) return rc;
    }
    for (int i = 0; i < r->nlines; i++)
        if (!r->lines[i].placed) {
            r->order[r->norder] = i;
            r->in_order[r->norder++] = ro == NULL;
        }
    for (int p = 0; p < npages; p++) {
        int n = 0;
        for (int i = 0; i < r->nlines; i++)
            n += r->lines[i].page == p;
        pages[p].lines = malloc((size_t)(n > 0 ? n : 1) * sizeof *pages[p].lines);
        if (!pages[p].lines) return fail(r, LT_ENOMEM, "out of memory", NULL);
        for (int k = 0; k < r->norder; k++) {
            const xline *ln = &r->lines[r->order[k]];
            if (ln->page != p) continue;
            lt_scored_line *out = &pages[p].lines[pages[p].nlines++];
            memset(out, 0, sizeof *out);
            out->box = ln->box;
            out->in_order = r->in_order[k];
            out->has_quad = ln->has_quad;
            memcpy(out->quad, ln->quad, sizeof out->quad);
        }
    }
    return 0;
}

/* Width and height attributes of a page: whole numbers in 1..LT_SCORE_MAX_COORD. */
static int page_size(reader *r, xmlNodePtr n, const char *wkey, const char *hkey,
                     lt_scored_page *pg)
{
    double w = 0, h = 0;
    if (attr_number(n, wkey, &w) != 1 || attr_number(n, hkey, &h) != 1 || w < 1 || h < 1 ||
        w > LT_SCORE_MAX_COORD || h > LT_SCORE_MAX_COORD)
        return lt_error_set(r->err, LT_EPARSE,
                            "%s: document %d: the page has no %s and %s in 1..%d", r->name, r->doc,
                            wkey, hkey, LT_SCORE_MAX_COORD);
    pg->width = (int)ceil(w);
    pg->height = (int)ceil(h);
    return 0;
}

/* Optional skew attribute: into pg->skew_deg (sign as lineate's) and has_skew. */
static int page_skew(reader *r, xmlNodePtr n, const char *key, lt_scored_page *pg)
{
    double a;
    int got = attr_number(n, key, &a);
    if (got < 0 || (got && fabs(a) > LT_SCORE_MAX_SKEW_DEG))
        return fail(r, LT_EPARSE, "the page's angle is not a number in -180..180: ", key);
    if (got) {
        pg->skew_deg = a;
        pg->has_skew = 1;
    }
    return 0;
}

static int dup_source(reader *r, const char *s, lt_scored_page *pg)
{
    pg->source = strdup(s ? s : "");
    return pg->source ? 0 : fail(r, LT_ENOMEM, "out of memory", NULL);
}

/* A PAGE document (root PcGts): one page; its lines were read while parsing (st). */
static int read_page_doc(reader *r, const stream *st, xmlNodePtr root, lt_scored_page **pages,
                         int *npages)
{
    xmlNodePtr page = first_child(root, "Page");
    if (!page) return fail(r, LT_EPARSE, "PcGts has no Page", NULL);
    lt_scored_page *pg = calloc(1, sizeof *pg);
    if (!pg) return fail(r, LT_ENOMEM, "out of memory", NULL);
    *pages = pg;
    *npages = 1;
    pg->page = 1;
    char *file = attr(page, "imageFilename");
    int rc = dup_source(r, file, pg);
    xmlFree(file);
    /* orientation: degrees clockwise that correct the skew, the same sign as skew_deg */
    if (!rc) rc = page_size(r, page, "imageWidth", "imageHeight", pg);
    if (!rc) rc = page_skew(r, page, "orientation", pg);
    if (!rc) rc = stream_page(r, st, 0);
    xmlNodePtr ro = first_child(page, "ReadingOrder");
    if (!rc) rc = finish_pages(r, ro, pg, 1);
    return rc;
}

/* An ALTO document: each Layout/Page is a page; their lines were read while parsing (st). */
static int read_alto_doc(reader *r, const stream *st, xmlNodePtr root, lt_scored_page **pages,
                         int *npages)
{
    xmlNodePtr desc = first_child(root, "Description");
    xmlChar *unit = xmlNodeGetContent(first_child(desc, "MeasurementUnit"));
    int pixel = unit && strcmp((const char *)unit, "pixel") == 0;
    if (!pixel) {
        int rc = fail(r, LT_EPARSE,
                      "ALTO measurement unit is not pixel: ", unit ? (const char *)unit : "(none)");
        xmlFree(unit);
        return rc;
    }
    xmlFree(unit);
    xmlChar *file =
        xmlNodeGetContent(first_child(first_child(desc, "sourceImageInformation"), "fileName"));
    xmlNodePtr layout = first_child(root, "Layout");
    int n = 0;
    for (xmlNodePtr c = layout ? layout->children : NULL; c; c = c->next)
        n += is_named(c, "Page");
    if (n == 0) {
        xmlFree(file);
        return fail(r, LT_EPARSE, "ALTO without Layout/Page", NULL);
    }
    lt_scored_page *pg = calloc((size_t)n, sizeof *pg);
    if (!pg) {
        xmlFree(file);
        return fail(r, LT_ENOMEM, "out of memory", NULL);
    }
    *pages = pg;
    *npages = n;
    int rc = 0, k = 0;
    for (xmlNodePtr c = layout->children; c && !rc; c = c->next) {
        if (!is_named(c, "Page")) continue;
        double nr = k + 1;
        if (attr_number(c, "PHYSICAL_IMG_NR", &nr) < 0 || nr < 1 || nr > INT32_MAX) nr = k + 1;
        pg[k].page = (int)nr;
        rc = dup_source(r, (const char *)file, &pg[k]);
        if (!rc) rc = page_size(r, c, "WIDTH", "HEIGHT", &pg[k]);
        if (!rc) rc = page_skew(r, c, "ROTATION", &pg[k]); /* counter-clockwise, as skew_deg */
        if (!rc) rc = stream_page(r, st, k);
        k++;
    }
    xmlFree(file);
    if (!rc) rc = finish_pages(r, first_child(root, "ReadingOrder"), pg, n);
    return rc;
}

/* Parses one XML document of `size` bytes, of at most max_pages pages, into *pages /
 * *npages. */
static int read_document(const char *data, size_t size, const char *name, int doc, int max_pages,
                         lt_scored_page **pages, int *npages, lt_error *err)
{
    *pages = NULL;
    *npages = 0;
    if (size > (size_t)INT32_MAX)
        return lt_error_set(err, LT_ELIMIT, "%s: document %d is too large", name, doc);
    xmlParserCtxtPtr ctxt = xmlCreateMemoryParserCtxt(data, (int)size);
    if (!ctxt) return lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
    xmlCtxtUseOptions(ctxt, XML_PARSE_NONET | XML_PARSE_NOERROR | XML_PARSE_NOWARNING |
                                XML_PARSE_NOCDATA);
    reader r = {.name = name, .doc = doc, .err = err};
    stream st = {.r = &r, .max_pages = max_pages};
    r.err = &st.error; /* failures while parsing are told when their page is read */
    ctxt->_private = &st;
    ctxt->sax->startElementNs = stream_start;
    ctxt->sax->endElementNs = stream_end;
    ctxt->sax->characters = stream_characters;
    ctxt->sax->ignorableWhitespace = stream_characters;
    ctxt->sax->comment = NULL;
    ctxt->sax->processingInstruction = NULL;
    xmlParseDocument(ctxt);
    r.err = err;
    xmlDocPtr xdoc = ctxt->myDoc;
    ctxt->myDoc = NULL;
    if (xdoc && !ctxt->wellFormed) {
        xmlFreeDoc(xdoc);
        xdoc = NULL;
    }
    int rc;
    if (st.error.code == LT_ELIMIT || st.error.code == LT_ENOMEM) { /* the parse was stopped */
        rc = lt_error_set(err, st.error.code, "%s", st.error.message);
    } else if (!xdoc && ctxt->errNo == XML_ERR_NO_MEMORY) {
        rc = lt_error_set(err, LT_ENOMEM, "%s: document %d: out of memory", name, doc);
    } else if (!xdoc) {
        const xmlError *e = xmlCtxtGetLastError(ctxt);
        char msg[200] = "not well-formed XML";
        if (e && e->message) {
            snprintf(msg, sizeof msg, "%s", e->message);
            size_t len = strlen(msg);
            while (len > 0 && (msg[len - 1] == '\n' || msg[len - 1] == ' '))
                msg[--len] = '\0';
        }
        rc = lt_error_set(err, LT_EPARSE, "%s: document %d, line %d: not valid XML: %s", name, doc,
                          e ? e->line : 0, msg);
    } else {
        xmlNodePtr root = xmlDocGetRootElement(xdoc);
        if (st.kind == 1) {
            rc = read_page_doc(&r, &st, root, pages, npages);
        } else if (st.kind == 2) {
            rc = read_alto_doc(&r, &st, root, pages, npages);
        } else {
            rc = lt_error_set(err, LT_EPARSE,
                              "%s: document %d: root element <%.40s> is neither PAGE (PcGts) nor "
                              "ALTO (alto)",
                              name, doc, root ? (const char *)root->name : "");
        }
    }
    free(r.lines);
    for (int i = 0; i < r.nids; i++)
        free(r.ids[i].id);
    free(r.ids);
    free(r.order);
    free(r.in_order);
    free(st.open);
    xmlFreeDoc(xdoc);
    xmlFreeParserCtxt(ctxt);
    if (rc) {
        lt_scored_pages_free(*pages, *npages);
        *pages = NULL;
        *npages = 0;
    }
    return rc;
}

static int parse_documents(const char *data, size_t size, const char *name, lt_scored_page **pages,
                           int *npages, lt_error *err);

/* libxml2's generic error handler while a file is read: the library never prints. */
static void silent(void *ctx, const char *fmt, ...)
{
    (void)ctx;
    (void)fmt;
}

int lt_scored_pages_parse_xml(const char *data, size_t size, const char *name,
                              lt_scored_page **pages, int *npages, lt_error *err)
{
    /* the handler is the calling thread's; the caller's is put back before return */
    xmlGenericErrorFunc caller_handler = xmlGenericError;
    void *caller_context = xmlGenericErrorContext;
    xmlSetGenericErrorFunc(NULL, silent);
    int rc = parse_documents(data, size, name, pages, npages, err);
    xmlSetGenericErrorFunc(caller_context, caller_handler);
    return rc;
}

/* lt_scored_pages_parse_xml without the handler. */
static int parse_documents(const char *data, size_t size, const char *name, lt_scored_page **pages,
                           int *npages, lt_error *err)
{
    *pages = NULL;
    *npages = 0;
    if (!name) name = "input";
    if (!data) return lt_error_set(err, LT_EINVAL, "%s: no data", name);
    lt_scored_page *all = NULL;
    int n = 0, ndoc = 0, rc = 0;
    /* Documents one after the other (as lineate writes them on standard output): a new one
     * starts at every XML declaration that opens a line, which cannot occur inside one. */
    size_t start = 0;
    while (start < size && !rc) {
        const char *next = NULL;
        for (const char *p = data + start + 1; p && p < data + size;) {
            p = memchr(p, '\n', (size_t)(data + size - p));
            if (!p) break;
            p++;
            if ((size_t)(data + size - p) >= 5 && memcmp(p, "<?xml", 5) == 0) {
                next = p;
                break;
            }
        }
        size_t end = next ? (size_t)(next - data) : size;
        if (n == LT_SCORE_MAX_PAGES) { /* every document holds a page at least */
            rc = lt_error_set(err, LT_ELIMIT, "%s: more than %d pages, the limit of one file", name,
                              LT_SCORE_MAX_PAGES);
            break;
        }
        lt_scored_page *pg;
        int np;
        rc = read_document(data + start, end - start, name, ++ndoc, LT_SCORE_MAX_PAGES - n, &pg,
                           &np, err);
        if (!rc) {
            lt_scored_page *grown = realloc(all, (size_t)(n + np) * sizeof *grown);
            if (!grown) {
                lt_scored_pages_free(pg, np);
                rc = lt_error_set(err, LT_ENOMEM, "%s: out of memory", name);
                break;
            }
            all = grown;
            memcpy(all + n, pg, (size_t)np * sizeof *pg);
            free(pg);
            n += np;
        }
        start = end;
    }
    if (!rc && n == 0)
        rc = lt_error_set(err, LT_EPARSE, "%s: no XML document (the file is empty)", name);
    if (rc) {
        lt_scored_pages_free(all, n);
        return rc;
    }
    *pages = all;
    *npages = n;
    return 0;
}

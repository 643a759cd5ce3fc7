/* xmlout.c — writes a page layout in the two open layout standards, built with libxml2's tree
 * API: PAGE XML (PAGE content schema 2019-07-15, Pletschacher & Antonacopoulos 2010) and
 * ALTO 4.4. Points are the continuous pixel coordinates of lineate's JSON, rounded to whole
 * pixels and kept inside the image: "0,0" is the image's top-left corner and "width,height"
 * its bottom-right one, as the PAGE schema defines them. */
#include "internal.h"

#include <libxml/tree.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define PAGE_NS "http://schema.primaresearch.org/PAGE/gts/pagecontent/2019-07-15"
#define PAGE_SCHEMA_URL PAGE_NS "/pagecontent.xsd"
#define ALTO_NS "http://www.loc.gov/standards/alto/ns-v4#"
#define ALTO_SCHEMA_URL "http://www.loc.gov/standards/alto/v4/alto-4-4.xsd"
#define XSI_NS "http://www.w3.org/2001/XMLSchema-instance"

/* PAGE region type of each role (TextTypeSimpleType). The standard has no list item: list
 * items are paragraphs, and keep their role in the region's `custom` attribute. */
/* The clockwise turn that sets the page upright and level, in (-180, 180]: the quarter turn
 * plus the skew (lines rising to the right, a positive skew, are levelled by turning the page
 * clockwise). PAGE's Page/@orientation is this correction; ALTO's Page/@ROTATION, the
 * content's rotation counter-clockwise, is the same number. */
static double correction_deg(const lt_layout *l)
{
    double deg = fmod(l->orientation_deg + l->skew_deg, 360.0);
    if (deg > 180) deg -= 360;
    if (deg <= -180) deg += 360;
    return deg;
}

static const char *page_text_type(int role)
{
    switch (role) {
    case LT_ROLE_HEADING: return "heading";
    case LT_ROLE_PAGE_HEADER: return "header";
    case LT_ROLE_PAGE_FOOTER: return "footer";
    case LT_ROLE_PAGE_NUMBER: return "page-number";
    case LT_ROLE_CAPTION: return "caption";
    case LT_ROLE_FOOTNOTE: return "footnote";
    case LT_ROLE_MARGIN_NOTE: return "marginalia";
    default: return "paragraph";
    }
}

/* ---- small helpers --------------------------------------------------------------------- */

/* A copy of `s` that XML 1.0 can hold: bytes that are not valid UTF-8, and control
 * characters other than tab, line feed and carriage return, become '?'. NULL when out of
 * memory. */
static char *xml_safe_copy(const char *s)
{
    size_t n = strlen(s);
    char *out = malloc(n + 1);
    if (!out) return NULL;
    size_t i = 0;
    while (i < n) {
        int len = (int)(n - i > 4 ? 4 : n - i);
        int c = xmlGetUTF8Char((const unsigned char *)s + i, &len);
        if (c < 0 || (c < 0x20 && c != '\t' && c != '\n' && c != '\r') || c == 0xFFFE ||
            c == 0xFFFF) {
            out[i++] = '?';
            continue;
        }
        memcpy(out + i, s + i, (size_t)len);
        i += (size_t)len;
    }
    out[n] = '\0';
    return out;
}

/* Set when an attribute could not be added (out of memory) while this thread builds a
 * document; the document is then dropped, not written without it. */
static _Thread_local int attr_failed;

static void set_attr(xmlNodePtr node, const char *name, const char *value)
{
    if (!xmlNewProp(node, BAD_CAST name, BAD_CAST value)) attr_failed = 1;
}

static void set_attr_int(xmlNodePtr node, const char *name, long value)
{
    char buf[32];
    snprintf(buf, sizeof buf, "%ld", value);
    set_attr(node, name, buf);
}

/* A number with at most 3 decimals and no trailing zeros ("1.5", "-0.25", "0"). */
static void set_attr_num(xmlNodePtr node, const char *name, double value)
{
    char buf[48];
    double r = round(value * 1000.0) / 1000.0;
    snprintf(buf, sizeof buf, "%.3f", r == 0 ? 0.0 : r);
    char *end = buf + strlen(buf) - 1;
    while (*end == '0')
        *end-- = '\0';
    if (*end == '.') *end = '\0';
    set_attr(node, name, buf);
}

static void set_attr_id(xmlNodePtr node, const char *name, const char *prefix, int number)
{
    char buf[32];
    snprintf(buf, sizeof buf, "%s%d", prefix, number);
    set_attr(node, name, buf);
}

static xmlNodePtr child(xmlNodePtr parent, xmlNsPtr ns, const char *name, const char *text)
{
    return xmlNewTextChild(parent, ns, BAD_CAST name, text ? BAD_CAST text : NULL);
}

/* v to a whole pixel inside [0, limit]: rounded down when `down`, else up. */
static long clamp_pixel(double v, int down, int limit)
{
    if (!(v > 0)) return 0; /* also NaN */
    if (v >= limit) return limit;
    return (long)(down ? floor(v + 1e-6) : ceil(v - 1e-6)); /* the tolerance of geom.c */
}

/* "x1,y1 x2,y2 ..." of n points in whole pixels inside the image; the caller frees it. An
 * outline (`outward`) has each coordinate rounded away from the outline's centre, so that the
 * box of the written points is the box of the outline (the floor / ceil hull, as the JSON
 * box is); other points are rounded to the nearest pixel. */
static char *points_text(const lt_point *p, int n, int outward, int width, int height)
{
    double cx = 0, cy = 0;
    for (int i = 0; i < n; i++) {
        cx += p[i].x / n;
        cy += p[i].y / n;
    }
    size_t cap = (size_t)n * 24 + 1;
    char *s = lt_alloc_array(cap, 1);
    if (!s) return NULL;
    size_t len = 0;
    s[0] = '\0';
    for (int i = 0; i < n; i++) {
        long x =
            outward ? clamp_pixel(p[i].x, p[i].x < cx, width) : clamp_pixel(p[i].x + 0.5, 1, width);
        long y = outward ? clamp_pixel(p[i].y, p[i].y < cy, height)
                         : clamp_pixel(p[i].y + 0.5, 1, height);
        len += (size_t)snprintf(s + len, cap - len, "%s%ld,%ld", i ? " " : "", x, y);
    }
    return s;
}

/* Sets attribute `name` to the points (see points_text); 0, or -1 when out of memory. */
static int set_points(xmlNodePtr node, const char *name, const lt_point *p, int n, int outward,
                      int width, int height)
{
    char *s = points_text(p, n, outward, width, height);
    if (!s) return -1;
    set_attr(node, name, s);
    free(s);
    return 0;
}

/* The outline of a line: its polygon when it has one, else its quad. */
static const lt_point *line_outline(const lt_line *ln, int *n)
{
    if (ln->npolygon >= 3 && ln->polygon) {
        *n = ln->npolygon;
        return ln->polygon;
    }
    *n = 4;
    return ln->quad;
}

/* Serialises the document into a malloc'd NUL-terminated string, or NULL when building it
 * failed anywhere; frees the document. */
static char *finish(xmlDocPtr doc, int failed)
{
    xmlChar *mem = NULL;
    int size = 0;
    if (!failed && !attr_failed) xmlDocDumpFormatMemoryEnc(doc, &mem, &size, "UTF-8", 1);
    xmlFreeDoc(doc);
    if (!mem) return NULL;
    char *out = malloc((size_t)size + 1);
    if (out) {
        memcpy(out, mem, (size_t)size);
        out[size] = '\0';
        /* no trailing newline: the writer adds one, as for JSON records */
        while (size > 0 && out[size - 1] == '\n')
            out[--size] = '\0';
    }
    xmlFree(mem);
    return out;
}

/* The root element of a new document in namespace `ns_uri`, with its schema location. */
static xmlNodePtr new_root(xmlDocPtr doc, const char *name, const char *ns_uri,
                           const char *schema_url, xmlNsPtr *ns)
{
    xmlNodePtr root = xmlNewDocNode(doc, NULL, BAD_CAST name, NULL);
    if (!root) return NULL;
    xmlDocSetRootElement(doc, root);
    *ns = xmlNewNs(root, BAD_CAST ns_uri, NULL);
    xmlNsPtr xsi = xmlNewNs(root, BAD_CAST XSI_NS, BAD_CAST "xsi");
    if (!*ns || !xsi) return NULL;
    xmlSetNs(root, *ns);
    char loc[256];
    snprintf(loc, sizeof loc, "%s %s", ns_uri, schema_url);
    if (!xmlNewNsProp(root, xsi, BAD_CAST "schemaLocation", BAD_CAST loc)) return NULL;
    return root;
}

/* ---- PAGE ------------------------------------------------------------------------------ */

static int page_coords(xmlNodePtr parent, xmlNsPtr ns, const lt_point *p, int n, int w, int h)
{
    xmlNodePtr c = child(parent, ns, "Coords", NULL);
    return c ? set_points(c, "points", p, n, 1, w, h) : -1;
}

/* A TextRegion for text block k with its lines, under `parent`. */
static int page_text_region(xmlNodePtr parent, xmlNsPtr ns, const lt_layout *l, int k)
{
    const lt_block *b = &l->blocks[k];
    xmlNodePtr r = child(parent, ns, "TextRegion", NULL);
    if (!r) return -1;
    set_attr_id(r, "id", "r", k + 1);
    set_attr(r, "type", page_text_type(b->role));
    if (b->role == LT_ROLE_LIST_ITEM) set_attr(r, "custom", "role:list-item");
    if (page_coords(r, ns, b->quad, 4, l->width, l->height)) return -1;
    for (int i = b->first_line; i < b->first_line + b->nlines; i++) {
        const lt_line *ln = &l->lines[i];
        xmlNodePtr t = child(r, ns, "TextLine", NULL);
        if (!t) return -1;
        set_attr_id(t, "id", "l", i + 1);
        int n;
        const lt_point *outline = line_outline(ln, &n);
        if (page_coords(t, ns, outline, n, l->width, l->height)) return -1;
        xmlNodePtr base = child(t, ns, "Baseline", NULL);
        if (!base || set_points(base, "points", ln->baseline, 2, 0, l->width, l->height)) return -1;
        if (ln->light_on_dark) { /* printed light on a dark ground */
            xmlNodePtr style = child(t, ns, "TextStyle", NULL);
            if (!style) return -1;
            set_attr(style, "reverseVideo", "true");
        }
    }
    return 0;
}

char *lt_layout_to_page_xml(const lt_layout *l, const char *source, int page, int pages,
                            long long created_utc)
{
    attr_failed = 0;
    xmlDocPtr doc = xmlNewDoc(BAD_CAST "1.0");
    if (!doc) return NULL;
    xmlNsPtr ns;
    xmlNodePtr root = new_root(doc, "PcGts", PAGE_NS, PAGE_SCHEMA_URL, &ns);
    if (!root) return finish(doc, 1);
    int bad = 0;
    xmlNodePtr meta = child(root, ns, "Metadata", NULL);
    bad |= !meta;
    if (meta) {
        char when[32] = "1970-01-01T00:00:00Z";
        time_t t = (time_t)created_utc;
        struct tm tm;
        if (gmtime_r(&t, &tm)) strftime(when, sizeof when, "%Y-%m-%dT%H:%M:%SZ", &tm);
        char comment[96];
        snprintf(comment, sizeof comment, "page %d of %d; resolution %.6g dpi (%s)", page, pages,
                 l->dpi, l->dpi_from_file ? "from the file" : "assumed");
        bad |= !child(meta, ns, "Creator", "lineate " LT_VERSION_STRING);
        bad |= !child(meta, ns, "Created", when);
        bad |= !child(meta, ns, "LastChange", when);
        bad |= !child(meta, ns, "Comments", comment);
    }
    xmlNodePtr pg = child(root, ns, "Page", NULL);
    if (bad || !pg) return finish(doc, 1);
    char *image = xml_safe_copy(source ? source : "");
    if (!image) return finish(doc, 1);
    set_attr(pg, "imageFilename", image);
    free(image);
    set_attr_int(pg, "imageWidth", l->width);
    set_attr_int(pg, "imageHeight", l->height);
    set_attr_num(pg, "imageXResolution", l->dpi);
    set_attr_num(pg, "imageYResolution", l->dpi);
    set_attr(pg, "imageResolutionUnit", "PPI");
    set_attr_num(pg, "orientation", correction_deg(l));

    int ntext = 0;
    for (int k = 0; k < l->nblocks; k++)
        ntext += l->blocks[k].kind == LT_BLOCK_TEXT && l->blocks[k].nlines > 0;
    if (ntext > 0) {
        xmlNodePtr ro = child(pg, ns, "ReadingOrder", NULL);
        xmlNodePtr og = ro ? child(ro, ns, "OrderedGroup", NULL) : NULL;
        if (!og) return finish(doc, 1);
        set_attr(og, "id", "ro1");
        int index = 0;
        for (int k = 0; k < l->nblocks; k++) {
            const lt_block *b = &l->blocks[k];
            if (b->kind != LT_BLOCK_TEXT || b->nlines == 0) continue;
            xmlNodePtr ref = child(og, ns, "RegionRefIndexed", NULL);
            if (!ref) return finish(doc, 1);
            set_attr_int(ref, "index", index++);
            set_attr_id(ref, "regionRef", "r", k + 1);
        }
    }
    /* Regions: text blocks in reading order, the cells of a table inside its TableRegion
     * (created where its first cell comes), then rules and pictures. */
    xmlNodePtr *table_node = calloc((size_t)l->nblocks + 1, sizeof *table_node);
    if (!table_node) return finish(doc, 1);
    for (int k = 0; k < l->nblocks && !bad; k++) {
        const lt_block *b = &l->blocks[k];
        if (b->kind == LT_BLOCK_TEXT) {
            if (b->nlines == 0) continue;
            xmlNodePtr parent = pg;
            int t = b->table;
            if (t >= 0 && t < l->nblocks && l->blocks[t].kind == LT_BLOCK_TABLE) {
                if (!table_node[t]) {
                    table_node[t] = child(pg, ns, "TableRegion", NULL);
                    if (!table_node[t]) {
                        bad = 1;
                        break;
                    }
                    set_attr_id(table_node[t], "id", "r", t + 1);
                    bad |=
                        page_coords(table_node[t], ns, l->blocks[t].quad, 4, l->width, l->height);
                }
                parent = table_node[t];
            }
            bad |= page_text_region(parent, ns, l, k);
            continue;
        }
        if (b->kind == LT_BLOCK_TABLE && table_node[k]) continue;
        static const char *const element[] = {"TextRegion", "SeparatorRegion", "ImageRegion",
                                              "TableRegion"};
        xmlNodePtr r = child(pg, ns, element[b->kind], NULL);
        if (!r) {
            bad = 1;
            break;
        }
        set_attr_id(r, "id", "r", k + 1);
        bad |= page_coords(r, ns, b->quad, 4, l->width, l->height);
    }
    free(table_node);
    return finish(doc, bad);
}

/* ---- ALTO ------------------------------------------------------------------------------- */

/* HPOS, VPOS, WIDTH, HEIGHT of a box, in pixels. */
static void alto_position(xmlNodePtr node, const lt_box *b)
{
    set_attr_int(node, "HPOS", b->left);
    set_attr_int(node, "VPOS", b->top);
    set_attr_int(node, "WIDTH", (long)b->right - b->left);
    set_attr_int(node, "HEIGHT", (long)b->bottom - b->top);
}

static int alto_shape(xmlNodePtr parent, xmlNsPtr ns, const lt_point *p, int n, int w, int h)
{
    xmlNodePtr shape = child(parent, ns, "Shape", NULL);
    xmlNodePtr poly = shape ? child(shape, ns, "Polygon", NULL) : NULL;
    return poly ? set_points(poly, "POINTS", p, n, 1, w, h) : -1;
}

/* A TextBlock for text block k with its lines, under `parent`. */
static int alto_text_block(xmlNodePtr parent, xmlNsPtr ns, const lt_layout *l, int k)
{
    const lt_block *b = &l->blocks[k];
    xmlNodePtr tb = child(parent, ns, "TextBlock", NULL);
    if (!tb) return -1;
    set_attr_id(tb, "ID", "b", k + 1);
    if (b->role > 0 && b->role < LT_ROLE_COUNT) {
        char tag[32];
        snprintf(tag, sizeof tag, "role-%s", lt_role_name(b->role));
        set_attr(tb, "TAGREFS", tag);
    }
    alto_position(tb, &b->box);
    for (int i = b->first_line; i < b->first_line + b->nlines; i++) {
        const lt_line *ln = &l->lines[i];
        xmlNodePtr t = child(tb, ns, "TextLine", NULL);
        if (!t) return -1;
        set_attr_id(t, "ID", "l", i + 1);
        alto_position(t, &ln->box);
        if (set_points(t, "BASELINE", ln->baseline, 2, 0, l->width, l->height)) return -1;
        int n;
        const lt_point *outline = line_outline(ln, &n);
        if (alto_shape(t, ns, outline, n, l->width, l->height)) return -1;
        /* The schema wants a String in every line; the text is not recognised here. */
        xmlNodePtr s = child(t, ns, "String", NULL);
        if (!s) return -1;
        set_attr(s, "CONTENT", "");
        alto_position(s, &ln->box);
    }
    return 0;
}

char *lt_layout_to_alto(const lt_layout *l, const char *source, int page, int pages)
{
    attr_failed = 0;
    (void)pages;
    xmlDocPtr doc = xmlNewDoc(BAD_CAST "1.0");
    if (!doc) return NULL;
    xmlNsPtr ns;
    xmlNodePtr root = new_root(doc, "alto", ALTO_NS, ALTO_SCHEMA_URL, &ns);
    if (!root) return finish(doc, 1);
    set_attr(root, "SCHEMAVERSION", "4.4");
    int bad = 0;
    xmlNodePtr desc = child(root, ns, "Description", NULL);
    bad |= !desc || !child(desc, ns, "MeasurementUnit", "pixel");
    xmlNodePtr info = desc ? child(desc, ns, "sourceImageInformation", NULL) : NULL;
    char *image = xml_safe_copy(source ? source : "");
    bad |= !info || !image || !child(info, ns, "fileName", image);
    free(image);
    xmlNodePtr proc = desc ? child(desc, ns, "Processing", NULL) : NULL;
    if (bad || !proc) return finish(doc, 1);
    set_attr(proc, "ID", "proc1");
    char settings[192];
    snprintf(settings, sizeof settings,
             "resolution %.6g dpi (%s); turned %d deg clockwise to read upright (confidence "
             "%.2f); skew %.3f deg",
             l->dpi, l->dpi_from_file ? "from the file" : "assumed", l->orientation_deg,
             l->orientation_confidence, l->skew_deg);
    bad |= !child(proc, ns, "processingCategory", "contentGeneration");
    bad |= !child(proc, ns, "processingStepSettings", settings);
    xmlNodePtr sw = child(proc, ns, "processingSoftware", NULL);
    bad |= !sw || !child(sw, ns, "softwareName", "lineate") ||
           !child(sw, ns, "softwareVersion", LT_VERSION_STRING);

    /* One role tag for each role that occurs. */
    int used[LT_ROLE_COUNT] = {0};
    for (int k = 0; k < l->nblocks; k++)
        if (l->blocks[k].kind == LT_BLOCK_TEXT && l->blocks[k].role > 0 &&
            l->blocks[k].role < LT_ROLE_COUNT)
            used[l->blocks[k].role] = 1;
    xmlNodePtr tags = NULL;
    for (int r = 1; r < LT_ROLE_COUNT && !bad; r++) {
        if (!used[r]) continue;
        if (!tags && !(tags = child(root, ns, "Tags", NULL))) return finish(doc, 1);
        xmlNodePtr tag = child(tags, ns, "RoleTag", NULL);
        if (!tag) return finish(doc, 1);
        char id[32];
        snprintf(id, sizeof id, "role-%s", lt_role_name(r));
        set_attr(tag, "ID", id);
        set_attr(tag, "LABEL", lt_role_name(r));
    }
    xmlNodePtr layout = child(root, ns, "Layout", NULL);
    xmlNodePtr pg = layout ? child(layout, ns, "Page", NULL) : NULL;
    if (bad || !pg) return finish(doc, 1);
    set_attr_id(pg, "ID", "page", page);
    set_attr_int(pg, "PHYSICAL_IMG_NR", page);
    set_attr_int(pg, "WIDTH", l->width);
    set_attr_int(pg, "HEIGHT", l->height);
    set_attr_num(pg, "ROTATION", correction_deg(l)); /* the content's, counter-clockwise */
    xmlNodePtr space = child(pg, ns, "PrintSpace", NULL);
    if (!space) return finish(doc, 1);
    const lt_box whole = {0, 0, l->width, l->height};
    alto_position(space, &whole);

    /* Blocks in reading order (document order is the reading order); the consecutive cells of
     * a table inside one ComposedBlock; then rules, pictures and tables without cells. */
    uint8_t *has_cells = calloc((size_t)l->nblocks + 1, 1);
    if (!has_cells) return finish(doc, 1);
    for (int k = 0; k < l->nblocks; k++) {
        int t = l->blocks[k].table;
        if (l->blocks[k].kind == LT_BLOCK_TEXT && t >= 0 && t < l->nblocks &&
            l->blocks[t].kind == LT_BLOCK_TABLE)
            has_cells[t] = 1;
    }
    xmlNodePtr open_table = NULL;
    int open_table_index = -1, ncomposed = 0;
    for (int k = 0; k < l->nblocks && !bad; k++) {
        const lt_block *b = &l->blocks[k];
        xmlNodePtr e = NULL;
        if (b->kind == LT_BLOCK_TEXT) {
            if (b->nlines == 0) continue;
            int t = b->table;
            xmlNodePtr parent = space;
            if (t >= 0 && t < l->nblocks && has_cells[t]) {
                if (open_table_index != t || space->last != open_table) {
                    open_table = child(space, ns, "ComposedBlock", NULL);
                    if (!open_table) {
                        bad = 1;
                        break;
                    }
                    set_attr_id(open_table, "ID", "t", ++ncomposed);
                    set_attr(open_table, "TYPE", "table");
                    alto_position(open_table, &l->blocks[t].box);
                    open_table_index = t;
                }
                parent = open_table;
            }
            bad |= alto_text_block(parent, ns, l, k);
            continue;
        }
        if (b->kind == LT_BLOCK_TABLE && has_cells[k]) continue;
        if (b->kind == LT_BLOCK_PICTURE) {
            e = child(space, ns, "Illustration", NULL);
        } else if (b->kind == LT_BLOCK_TABLE) {
            e = child(space, ns, "ComposedBlock", NULL);
            if (e) set_attr(e, "TYPE", "table");
        } else {
            e = child(space, ns, "GraphicalElement", NULL);
        }
        if (!e) {
            bad = 1;
            break;
        }
        set_attr_id(e, "ID", "b", k + 1);
        alto_position(e, &b->box);
    }
    free(has_cells);
    return finish(doc, bad);
}

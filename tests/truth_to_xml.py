#!/usr/bin/env python3
"""Converts ground truth in the corpus format (lineseg-gt-1, one JSON object) to PAGE XML
(2019-07-15) or ALTO 4.4, written with Python's xml.etree, for the scorer's tests.

usage: truth_to_xml.py page|alto TRUTH.gt.json OUT.xml

A text region (PAGE) or text block (ALTO) is a run of consecutive lines of the same truth
block and the same in_order flag, so that document order is the truth's order. The reading
order is an ordered group of these regions; a run of lines that are not in_order stands in it
as an unordered group, so it keeps its place without one in the order. A PAGE line's polygon is its
quad in whole pixels (PAGE points are integers) with the line's box as its hull (see
line_polygon); an ALTO line has its box as HPOS, VPOS, WIDTH, HEIGHT and its quad, as the
truth gives it, as its Shape/Polygon. The skew goes to Page/@orientation (PAGE) or Page/@ROTATION (ALTO).
"""
import json
import math
import re
import sys
import xml.etree.ElementTree as ET

PAGE_NS = "http://schema.primaresearch.org/PAGE/gts/pagecontent/2019-07-15"
ALTO_NS = "http://www.loc.gov/standards/alto/ns-v4#"


def outward(quad):
    cx = sum(p[0] for p in quad) / 4.0
    cy = sum(p[1] for p in quad) / 4.0
    out = []
    for x, y in quad:
        rx = math.floor(x) if x < cx else math.ceil(x)
        ry = math.floor(y) if y < cy else math.ceil(y)
        out.append((max(0, rx), max(0, ry)))
    return out


def xml_text(s):
    """s with the characters XML 1.0 cannot hold (C0 controls but tab, LF, CR) as '?'."""
    return re.sub("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]", "?", s)


def points(pts):
    return " ".join("%d,%d" % p for p in pts)


def runs(truth):
    """Lists of line indices: consecutive lines of one block and one in_order flag."""
    out = []
    for i, line in enumerate(truth["lines"]):
        key = (line.get("block"), line.get("in_order", True))
        if out and out[-1][0] == key:
            out[-1][1].append(i)
        else:
            out.append((key, [i]))
    return [(key[1], members) for key, members in out]


def hull(truth, members):
    boxes = [truth["lines"][i]["box"] for i in members]
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def line_polygon(line):
    """The quad in whole pixels whose hull is exactly the line's box: rounded outward, kept
    inside the box, and its extreme points moved onto the box's edges (the truth's boxes were
    computed before its quads were rounded to 0.01 pixel, so they can differ by a pixel)."""
    l, t, r, b = line["box"]
    quad = outward(line.get("quad") or [(l, t), (r, t), (r, b), (l, b)])
    xs = [p[0] for p in quad]
    ys = [p[1] for p in quad]
    out = []
    for x, y in quad:
        x = l if x == min(xs) else r if x == max(xs) else min(max(x, l), r)
        y = t if y == min(ys) else b if y == max(ys) else min(max(y, t), b)
        out.append((x, y))
    return out


def to_page(truth):
    ET.register_namespace("", PAGE_NS)
    q = lambda name: "{%s}%s" % (PAGE_NS, name)
    root = ET.Element(q("PcGts"))
    meta = ET.SubElement(root, q("Metadata"))
    ET.SubElement(meta, q("Creator")).text = "truth_to_xml.py"
    ET.SubElement(meta, q("Created")).text = "2024-01-01T00:00:00Z"
    ET.SubElement(meta, q("LastChange")).text = "2024-01-01T00:00:00Z"
    page = ET.SubElement(root, q("Page"), imageFilename=truth["image"],
                         imageWidth=str(truth["width"]), imageHeight=str(truth["height"]),
                         orientation=repr(float(truth.get("skew_deg", 0.0))))
    groups = runs(truth)
    if groups:
        order = ET.SubElement(ET.SubElement(page, q("ReadingOrder")), q("OrderedGroup"), id="ro")
        for k, (in_order, members) in enumerate(groups):
            if in_order:
                ET.SubElement(order, q("RegionRefIndexed"), index=str(k), regionRef="r%d" % k)
            else:
                un = ET.SubElement(order, q("UnorderedGroupIndexed"), id="ug%d" % k, index=str(k))
                ET.SubElement(un, q("RegionRef"), regionRef="r%d" % k)
    for k, (in_order, members) in enumerate(groups):
        region = ET.SubElement(page, q("TextRegion"), id="r%d" % k, type="paragraph")
        l, t, r, b = hull(truth, members)
        ET.SubElement(region, q("Coords"), points=points([(l, t), (r, t), (r, b), (l, b)]))
        for i in members:
            tl = ET.SubElement(region, q("TextLine"), id="l%d" % i)
            ET.SubElement(tl, q("Coords"), points=points(line_polygon(truth["lines"][i])))
    return ET.ElementTree(root)


def to_alto(truth):
    ET.register_namespace("", ALTO_NS)
    q = lambda name: "{%s}%s" % (ALTO_NS, name)
    root = ET.Element(q("alto"), SCHEMAVERSION="4.4")
    desc = ET.SubElement(root, q("Description"))
    ET.SubElement(desc, q("MeasurementUnit")).text = "pixel"
    info = ET.SubElement(desc, q("sourceImageInformation"))
    ET.SubElement(info, q("fileName")).text = truth["image"]
    groups = runs(truth)
    if groups:
        order = ET.SubElement(ET.SubElement(root, q("ReadingOrder")), q("OrderedGroup"), ID="ro")
        for k, (in_order, members) in enumerate(groups):
            parent = order
            if not in_order:
                parent = ET.SubElement(order, q("UnorderedGroup"), ID="ug%d" % k)
            ET.SubElement(parent, q("ElementRef"), ID="ref%d" % k, REF="b%d" % k)
    layout = ET.SubElement(root, q("Layout"))
    page = ET.SubElement(layout, q("Page"), ID="p1", PHYSICAL_IMG_NR="1",
                         WIDTH=str(truth["width"]), HEIGHT=str(truth["height"]),
                         ROTATION=repr(float(truth.get("skew_deg", 0.0))))
    space = ET.SubElement(page, q("PrintSpace"), HPOS="0", VPOS="0", WIDTH=str(truth["width"]),
                          HEIGHT=str(truth["height"]))

    def position(node, box):
        l, t, r, b = box
        node.set("HPOS", str(l))
        node.set("VPOS", str(t))
        node.set("WIDTH", str(r - l))
        node.set("HEIGHT", str(b - t))

    for k, (in_order, members) in enumerate(groups):
        block = ET.SubElement(space, q("TextBlock"), ID="b%d" % k)
        position(block, hull(truth, members))
        for i in members:
            line = truth["lines"][i]
            tl = ET.SubElement(block, q("TextLine"), ID="l%d" % i)
            position(tl, line["box"])
            shape = ET.SubElement(tl, q("Shape"))
            # ALTO points may be fractional: the quad as the truth gives it
            quad = line.get("quad") or line_polygon(line)
            ET.SubElement(shape, q("Polygon"), POINTS=" ".join("%r,%r" % (float(x), float(y)) for x, y in quad))
            string = ET.SubElement(tl, q("String"), CONTENT=xml_text(line.get("text", "")))
            position(string, line["box"])
    return ET.ElementTree(root)


def main():
    if len(sys.argv) != 4 or sys.argv[1] not in ("page", "alto"):
        sys.exit("usage: truth_to_xml.py page|alto TRUTH.gt.json OUT.xml")
    truth = json.load(open(sys.argv[2], encoding="utf-8"))
    tree = to_page(truth) if sys.argv[1] == "page" else to_alto(truth)
    tree.write(sys.argv[3], encoding="UTF-8", xml_declaration=True)


if __name__ == "__main__":
    main()

#!/usr/bin/python3
"""hard_pages.py: checks lineate's reading order, roles and non-text regions on the built
pages of testdata/ (hard-2col, hard-3col: see testdata/make-hard-pages.py), whose truth is known
by construction: the lines were drawn with python3-pil at known places, in a known order, as
parts of blocks of known role.

For each page: every truth line is matched one to one by a predicted line (box IoU >= 0.5),
with no predicted line left over; the predicted reading order of the lines is the truth order
exactly; the block of every line has the truth role; every drawn picture is reported as one
picture block (IoU >= 0.9) and no text line lies on it; the page is not flagged for review.
Then the page is mirrored left to right with PIL (ImageOps.mirror, an exact transformation):
analysed with --rtl, its order must be the mirror of the truth order (the same lines, read in
the same sequence) with the same roles; analysed without --rtl it must differ.

Usage: hard_pages.py LINEATE TESTDATA_DIR TMP_DIR   (exit 0 when all checks pass)
"""
import json
import os
import subprocess
import sys

from PIL import Image, ImageOps

lineate, testdata, tmp = sys.argv[1:4]
failures = 0


def check(ok, what):
    global failures
    print("%s %s" % ("ok  " if ok else "FAIL", what))
    failures += not ok


def iou(a, b):
    ix = max(0, min(a[2], b[2]) - max(a[0], b[0]))
    iy = max(0, min(a[3], b[3]) - max(a[1], b[1]))
    inter = ix * iy
    union = (a[2] - a[0]) * (a[3] - a[1]) + (b[2] - b[0]) * (b[3] - b[1]) - inter
    return inter / union if union > 0 else 0.0


def analyse(path, *opts):
    out = subprocess.run([lineate, *opts, path], capture_output=True, text=True, check=True)
    return json.loads(out.stdout)


def match(truth_boxes, page):
    """Greedy one-to-one matching by decreasing IoU >= 0.5: truth index -> predicted index."""
    pairs = sorted(((iou(t, p["box"]), i, j) for i, t in enumerate(truth_boxes)
                    for j, p in enumerate(page["lines"])), reverse=True)
    m, used = {}, set()
    for v, i, j in pairs:
        if v < 0.5:
            break
        if i not in m and j not in used:
            m[i] = j
            used.add(j)
    return m


def check_page(name, truth, boxes, page, what):
    m = match(boxes, page)
    n = len(boxes)
    check(len(m) == n, "%s %s: all %d truth lines matched (got %d)" % (name, what, n, len(m)))
    check(len(page["lines"]) == n,
          "%s %s: no extra lines (%d predicted)" % (name, what, len(page["lines"])))
    order = [m[i] for i in range(n) if i in m]
    check(order == sorted(order), "%s %s: reading order is the truth order" % (name, what))
    if order != sorted(order):
        print("     predicted positions in truth order: %s" % order)
    wrong = [(truth["lines"][i]["text"][:30], truth["lines"][i]["role"],
              page["blocks"][page["lines"][j]["block"]].get("role")) for i, j in m.items()
             if page["blocks"][page["lines"][j]["block"]].get("role") != truth["lines"][i]["role"]]
    check(not wrong, "%s %s: every line's block has the truth role" % (name, what))
    for w in wrong:
        print("     %r: truth %s, got %s" % w)
    return m


for name in ("hard-2col", "hard-3col"):
    png = os.path.join(testdata, name + ".png")
    truth = json.load(open(os.path.join(testdata, name + ".truth.json")))
    page = analyse(png)
    boxes = [l["box"] for l in truth["lines"]]
    check_page(name, truth, boxes, page, "as drawn")
    pictures = [b for b in page["blocks"] if b["kind"] == "picture"]
    for pic in truth["pictures"]:
        best = max((iou(pic, b["box"]) for b in pictures), default=0)
        check(best >= 0.9, "%s: the picture at %s is a picture block (IoU %.3f)" % (name, pic, best))
        on_it = [l["box"] for l in page["lines"]
                 if iou(l["box"], pic) > 0 or
                 (max(0, min(l["box"][2], pic[2]) - max(l["box"][0], pic[0])) *
                  max(0, min(l["box"][3], pic[3]) - max(l["box"][1], pic[1]))) > 0]
        check(not on_it, "%s: no text line on the picture (%d)" % (name, len(on_it)))
    check(not page["order_review"]["needed"],
          "%s: not flagged for review (%s)" % (name, page["order_review"]["reasons"]))

    # The mirrored page, right to left.
    mirrored = os.path.join(tmp, name + "-mirrored.png")
    ImageOps.mirror(Image.open(png)).save(mirrored, dpi=(300, 300))
    w = truth["width"]
    mboxes = [[w - b[2], b[1], w - b[0], b[3]] for b in boxes]
    rtl = analyse(mirrored, "--rtl")
    check_page(name, truth, mboxes, rtl, "mirrored, --rtl")
    ltr = analyse(mirrored)
    m = match(mboxes, ltr)
    order = [m[i] for i in range(len(mboxes)) if i in m]
    check(order != sorted(order), "%s mirrored, left to right: an order other than the truth" % name)

print("hard_pages: %d failed" % failures)
sys.exit(1 if failures else 0)

#!/usr/bin/python3
"""ref_poppler.py: checks lineate's text lines on born-digital pages against poppler's text layer.

Reference: poppler's `pdftotext -bbox-layout` (Debian package poppler-utils) run on the PDF at test
time gives the text lines of the page with boxes from the font metrics, in PDF points; scaled by
300/72 they are boxes in pixels of the 300 dpi render that lineate reads. The reading order of
reference is the typesetting order, taken from `pdftotext -raw -bbox`, which lists the words in
the order the PDF's content stream draws them. The test asserts floors on recall, precision
and the Kendall tau of the reading order of matched lines, and validates lineate's JSON output
for every page in testdata/ against schema/lineate-layout.schema.json (JSON Schema 2020-12, with
python3-jsonschema's Draft202012Validator).

Usage: ref_poppler.py LINEATE PDFTOTEXT SRCDIR
Exit status: 0 pass, 1 fail, 77 skip (jsonschema or numpy/PIL missing).
"""

import glob
import json
import os
import re
import subprocess
import sys
import xml.etree.ElementTree as ET

try:
    import numpy as np
    from PIL import Image
    from jsonschema import Draft202012Validator
except ImportError as exc:  # the .sh driver checks this too; keep the script usable alone
    print("SKIP: %s" % exc)
    sys.exit(77)

PAGES = ("newsletter", "minutes", "bulletin")  # testdata/NAME.pdf and its render NAME.png
RENDER_DPI = 300.0
PT_PER_INCH = 72.0  # default PDF user space unit, 1/72 inch (ISO 32000-1 8.3.2.3, from memory)

MIN_RECALL = 0.95
MIN_PRECISION = 0.95
MIN_KENDALL_TAU = 0.95

XHTML = "{http://www.w3.org/1999/xhtml}"
RUN_TIMEOUT_S = 300

# ---- matching ---------------------------------------------------------------------------------
# poppler's line box spans the font's ascent to its descent (for these groff pages exactly one
# font size tall) and each word's advance widths, so it is taller than the ink of the line and a
# little wider (side bearings). Measured on the three pages while writing this test, taking the
# ink (gray < 128) inside each poppler box: median IoU 0.88-0.89, 5th percentile 0.67, minimum
# 0.36 (the lone page number "1", whose ink is half its advance width). So a plain IoU >= 0.5
# would reject correct lines. Instead a lineate line L and a poppler line P are the same line
# when all of these hold (h = height of P, about the font size in pixels):
#   - vertical centres within h/2: a line merged with its neighbour has its centre half a line
#     pitch (0.59-0.61 h on these pages) away from both;
#   - L at most 1.5 h tall: the ink of one line is at most about 1 h tall;
#   - horizontally, the overlap covers >= 80% of the wider of the two boxes, or both ends lie
#     within h/2 of P's ends (side bearings of short lines such as a page number): a line split
#     in two, or run across a column gutter, fails both.
# Among the pairs that pass, the one-to-one matching is greedy by decreasing IoU.
# The test checks its own matcher on every page (see matcher_self_check): the ink boxes of the
# reference lines must all match, and the left halves of those boxes (split lines) and the
# unions of consecutive lines (merged lines) must not.
CENTRE_TOL = 0.5
MAX_HEIGHT = 1.5
MIN_X_OVERLAP = 0.8
END_TOL = 0.5


def iou(a, b):
    """Intersection over union of two [left, top, right, bottom) boxes."""
    iw = min(a[2], b[2]) - max(a[0], b[0])
    ih = min(a[3], b[3]) - max(a[1], b[1])
    if iw <= 0 or ih <= 0:
        return 0.0
    inter = iw * ih
    union = (a[2] - a[0]) * (a[3] - a[1]) + (b[2] - b[0]) * (b[3] - b[1]) - inter
    return inter / union if union > 0 else 0.0


def same_line(lin, ref):
    """True when lineate box `lin` and poppler box `ref` (pixels) are the same text line under
    the tolerances explained above."""
    h = ref[3] - ref[1]
    if h <= 0 or lin[2] <= lin[0] or lin[3] <= lin[1]:
        return False
    if abs((lin[1] + lin[3]) / 2.0 - (ref[1] + ref[3]) / 2.0) > CENTRE_TOL * h:
        return False
    if lin[3] - lin[1] > MAX_HEIGHT * h:
        return False
    overlap = min(lin[2], ref[2]) - max(lin[0], ref[0])
    if overlap >= MIN_X_OVERLAP * max(lin[2] - lin[0], ref[2] - ref[0]):
        return True
    return abs(lin[0] - ref[0]) <= END_TOL * h and abs(lin[2] - ref[2]) <= END_TOL * h


def match_lines(lin_boxes, ref_boxes):
    """One-to-one matching: among pairs for which same_line holds, greedy by decreasing IoU
    (ties broken by index). Returns a dict lineate index -> reference index."""
    pairs = []
    for i, lb in enumerate(lin_boxes):
        for j, rb in enumerate(ref_boxes):
            if same_line(lb, rb):
                pairs.append((-iou(lb, rb), i, j))
    pairs.sort()
    used_lin, used_ref, match = set(), set(), {}
    for _, i, j in pairs:
        if i not in used_lin and j not in used_ref:
            used_lin.add(i)
            used_ref.add(j)
            match[i] = j
    return match


def kendall_tau(ranks):
    """Kendall's tau (Kendall 1938, Biometrika 30:81-93) between the order of `ranks` as given
    and their sorted order: (concordant - discordant) / (n (n - 1) / 2). The ranks are distinct,
    so this is tau-a = tau-b. 1.0 for fewer than two items."""
    n = len(ranks)
    if n < 2:
        return 1.0
    concordant = discordant = 0
    for a in range(n):
        for b in range(a + 1, n):
            if ranks[b] > ranks[a]:
                concordant += 1
            elif ranks[b] < ranks[a]:
                discordant += 1
    return (concordant - discordant) / (n * (n - 1) / 2.0)


# ---- poppler ----------------------------------------------------------------------------------
def run(cmd):
    proc = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                          timeout=RUN_TIMEOUT_S)
    if proc.returncode != 0:
        raise RuntimeError("%s exited with %d: %s" %
                           (" ".join(cmd), proc.returncode,
                            proc.stderr.decode("utf-8", "replace").strip()[:300]))
    return proc.stdout


def parse_xhtml(data):
    """pdftotext's -bbox output is XHTML with a DOCTYPE naming an external DTD; drop it so that
    the XML parser needs nothing from outside."""
    text = re.sub(r"<!DOCTYPE[^>]*>", "", data.decode("utf-8"), count=1)
    return ET.fromstring(text)


def box_of(elem):
    return tuple(float(elem.get(k)) for k in ("xMin", "yMin", "xMax", "yMax"))


def word_key(elem):
    """Identifies a word across the two pdftotext runs: its text and its box to 1/100 pt."""
    return (elem.text or "",) + tuple(round(v, 2) for v in box_of(elem))


def poppler_lines(pdftotext, pdf):
    """Returns (page_width_pt, page_height_pt, lines) where lines is a list of
    (box_pt, text, stream_index) in pdftotext -bbox-layout's own order; stream_index is the
    position of the line's first-drawn word in the content stream (pdftotext -raw -bbox)."""
    layout = parse_xhtml(run([pdftotext, "-bbox-layout", pdf, "-"]))
    raw = parse_xhtml(run([pdftotext, "-raw", "-bbox", pdf, "-"]))
    pages = layout.findall(".//%spage" % XHTML)
    if len(pages) != 1:
        raise RuntimeError("%s: %d pages in the text layer, expected 1" % (pdf, len(pages)))
    page_w, page_h = float(pages[0].get("width")), float(pages[0].get("height"))
    stream = {}
    for idx, word in enumerate(raw.iter("%sword" % XHTML)):
        stream.setdefault(word_key(word), idx)
    lines = []
    for line in pages[0].iter("%sline" % XHTML):
        words = line.findall("%sword" % XHTML)
        indices = [stream.get(word_key(w)) for w in words]
        if not words or None in indices:
            raise RuntimeError("%s: a line of -bbox-layout has words missing from -raw -bbox"
                               % pdf)
        lines.append((box_of(line), " ".join(w.text or "" for w in words), min(indices)))
    return page_w, page_h, lines


# ---- lineate ----------------------------------------------------------------------------------
def lineate_pages(lineate, png, validator):
    """Runs `lineate PNG`; returns (list of page objects, list of schema error strings)."""
    out = run([lineate, png]).decode("utf-8")
    pages, errors = [], []
    for n, text in enumerate(out.splitlines(), 1):
        if not text.strip():
            continue
        try:
            obj = json.loads(text)
        except ValueError as exc:
            errors.append("output line %d is not JSON: %s" % (n, exc))
            continue
        pages.append(obj)
        for err in validator.iter_errors(obj):
            path = "/".join(str(p) for p in err.absolute_path)
            errors.append("page %d: /%s: %s" % (len(pages), path, err.message[:200]))
    if not pages:
        errors.append("no JSON object on standard output")
    return pages, errors


# ---- self-check of the matcher ----------------------------------------------------------------
def ink_boxes(png, ref_px):
    """Bounding box of the ink (gray < 128) inside each reference box grown by 10% of its
    height on every side: what a perfect line finder would report for that line."""
    gray = np.asarray(Image.open(png))
    ink = gray < 128
    height, width = ink.shape
    boxes = []
    for box in ref_px:
        pad = 0.1 * (box[3] - box[1])
        x0, y0 = max(0, int(box[0] - pad)), max(0, int(box[1] - pad))
        x1, y1 = min(width, int(box[2] + pad) + 1), min(height, int(box[3] + pad) + 1)
        sub = ink[y0:y1, x0:x1]
        rows, cols = np.flatnonzero(sub.any(axis=1)), np.flatnonzero(sub.any(axis=0))
        if rows.size == 0:
            boxes.append(None)
        else:
            boxes.append((x0 + cols[0], y0 + rows[0], x0 + cols[-1] + 1, y0 + rows[-1] + 1))
    return boxes


def matcher_self_check(png, ref_px, order):
    """Returns a list of problems (empty when the matcher behaves): every ink box must match its
    own reference line, no left half of a line may match anything, and no union of two lines
    that follow each other in the same column may match anything."""
    problems = []
    ideal = ink_boxes(png, ref_px)
    for j, box in enumerate(ideal):
        if box is None:
            problems.append("reference line %d has no ink in the render" % j)
    if problems:
        return problems
    match = match_lines(ideal, ref_px)
    wrong = [i for i in range(len(ideal)) if match.get(i) != i]
    if wrong:
        problems.append("ink boxes of %d reference line(s) do not match their own line, "
                        "first: %d" % (len(wrong), wrong[0]))
    # Halves of lines at least 2 h wide: halving a shorter one (a page number) moves its end by
    # less than END_TOL h, which the matcher forgives on purpose.
    halves = [(b[0], b[1], (b[0] + b[2]) // 2, b[3]) for b, r in zip(ideal, ref_px)
              if b[2] - b[0] >= 2 * (r[3] - r[1])]
    if any(same_line(h, r) for h in halves for r in ref_px):
        problems.append("a half line matches a reference line")
    merged = []
    for a, b in zip(order, order[1:]):
        A, B = ideal[a], ideal[b]
        if min(A[2], B[2]) - max(A[0], B[0]) > 0 and B[1] > A[1]:  # same column, B below A
            merged.append((min(A[0], B[0]), A[1], max(A[2], B[2]), B[3]))
    if any(same_line(m, r) for m in merged for r in ref_px):
        problems.append("two merged lines match a reference line")
    if not merged:
        problems.append("no consecutive lines to build merged-line cases from")
    return problems


def check_page(name, lineate, pdftotext, srcdir, validator):
    """Compares lineate with poppler on testdata/NAME; returns a list of failures."""
    pdf = os.path.join(srcdir, "testdata", name + ".pdf")
    png = os.path.join(srcdir, "testdata", name + ".png")
    scale = RENDER_DPI / PT_PER_INCH
    page_w, page_h, lines = poppler_lines(pdftotext, pdf)
    with Image.open(png) as im:
        png_w, png_h = im.size
    if (png_w, png_h) != (round(page_w * scale), round(page_h * scale)):
        return ["%s: render is %dx%d, the PDF page at 300 dpi is %dx%d" %
                (name, png_w, png_h, round(page_w * scale), round(page_h * scale))]
    ref_px = [tuple(v * scale for v in box) for box, _, _ in lines]
    # Reference reading order: typesetting order (content stream), line by line.
    order = sorted(range(len(lines)), key=lambda j: lines[j][2])
    ref_rank = {j: r for r, j in enumerate(order)}
    # How far poppler's own layout order is from the typesetting order (information only: for
    # multi-column pages poppler's block order interleaves columns, see testdata/README.md).
    poppler_tau = kendall_tau([ref_rank[j] for j in range(len(lines))])

    failures = ["%s: matcher self-check: %s" % (name, p)
                for p in matcher_self_check(png, ref_px, order)]

    pages, errors = lineate_pages(lineate, png, validator)
    failures += ["%s.png: schema: %s" % (name, e) for e in errors]
    if len(pages) != 1:
        failures.append("%s.png: lineate printed %d pages, expected 1" % (name, len(pages)))
        return failures
    lin_boxes = []
    for line in pages[0].get("lines", []):
        box = line.get("box") if isinstance(line, dict) else None
        if isinstance(box, list) and len(box) == 4:
            lin_boxes.append(tuple(float(v) for v in box))
    match = match_lines(lin_boxes, ref_px)
    recall = len(match) / len(ref_px) if ref_px else 0.0
    precision = len(match) / len(lin_boxes) if lin_boxes else 0.0
    tau = kendall_tau([ref_rank[match[i]] for i in sorted(match)])
    if len(match) >= 2:
        try:  # cross-check the formula against SciPy's implementation where it is installed
            from scipy.stats import kendalltau
            scipy_tau = kendalltau(sorted(match), [ref_rank[match[i]] for i in sorted(match)])[0]
            if abs(scipy_tau - tau) > 1e-9:
                failures.append("%s: Kendall tau %.6f differs from scipy's %.6f" %
                                (name, tau, scipy_tau))
        except ImportError:
            pass
    mean_iou = (sum(iou(lin_boxes[i], ref_px[j]) for i, j in match.items()) / len(match)
                if match else 0.0)
    skew_deg = pages[0].get("skew_deg")
    print("%-11s %5d %7d %7d %7.3f %9.3f %7.3f %8.3f %7s %11.3f %6s" %
          (name, len(ref_px), len(lin_boxes), len(match), recall, precision, tau, mean_iou,
           "%.2f" % skew_deg if isinstance(skew_deg, (int, float)) else "?", poppler_tau,
           "ok" if not errors else "FAIL"))
    unmatched_ref = sorted(set(range(len(ref_px))) - set(match.values()), key=ref_rank.get)
    for j in unmatched_ref[:5]:
        print("    missed: [%d %d %d %d] %s" %
              (tuple(int(round(v)) for v in ref_px[j]) + (lines[j][1][:50],)))
    for i in [i for i in range(len(lin_boxes)) if i not in match][:5]:
        print("    extra:  [%d %d %d %d]" % tuple(int(v) for v in lin_boxes[i]))
    if recall < MIN_RECALL:
        failures.append("%s: recall %.3f < %.2f" % (name, recall, MIN_RECALL))
    if precision < MIN_PRECISION:
        failures.append("%s: precision %.3f < %.2f" % (name, precision, MIN_PRECISION))
    if tau < MIN_KENDALL_TAU:
        failures.append("%s: reading order Kendall tau %.3f < %.2f" %
                        (name, tau, MIN_KENDALL_TAU))
    return failures


def main(argv):
    if len(argv) != 4:
        print("usage: ref_poppler.py LINEATE PDFTOTEXT SRCDIR", file=sys.stderr)
        return 2
    lineate, pdftotext, srcdir = argv[1:]
    with open(os.path.join(srcdir, "schema", "lineate-layout.schema.json")) as f:
        schema = json.load(f)
    Draft202012Validator.check_schema(schema)
    validator = Draft202012Validator(schema)

    failures = []
    # skew: lineate's estimate in degrees (these pages are level, so the truth is 0; a false
    # skew tilts every quad and inflates the boxes). poppler tau: poppler's own line order
    # against the typesetting order, for information.
    print("%-11s %5s %7s %7s %7s %9s %7s %8s %7s %11s %6s" %
          ("page", "ref", "lineate", "matched", "recall", "precision", "tau", "mean IoU",
           "skew", "poppler tau", "schema"))
    for name in PAGES:
        try:
            failures += check_page(name, lineate, pdftotext, srcdir, validator)
        except (RuntimeError, OSError, ValueError, ET.ParseError,
                subprocess.TimeoutExpired) as exc:
            failures.append("%s: %s" % (name, exc))

    # Schema validation of lineate's output for every other page image in testdata/.
    others = sorted(set(glob.glob(os.path.join(srcdir, "testdata", "*.png")) +
                        glob.glob(os.path.join(srcdir, "testdata", "corpus", "*.png"))) -
                    {os.path.join(srcdir, "testdata", n + ".png") for n in PAGES})
    for png in others:
        rel = os.path.relpath(png, os.path.join(srcdir, "testdata"))
        try:
            pages, errors = lineate_pages(lineate, png, validator)
        except (RuntimeError, OSError, subprocess.TimeoutExpired) as exc:
            failures.append("%s: %s" % (rel, exc))
            continue
        failures += ["%s: schema: %s" % (rel, e) for e in errors]
        print("schema %-50s %s" % (rel, "ok" if not errors else "FAIL"))

    print("floors: recall >= %.2f, precision >= %.2f, Kendall tau >= %.2f on each page" %
          (MIN_RECALL, MIN_PRECISION, MIN_KENDALL_TAU))
    for f in failures:
        print("FAIL " + f)
    if failures:
        print("ref_poppler: %d failure(s)" % len(failures))
        return 1
    print("ref_poppler: all checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))

#!/usr/bin/python3
"""pale_pages.py: pale, light, gray and negative print must give the lines of the page in black.

Known transformations (Python's PIL and numpy, applied to the gray page g, 0 = black):
  pale   the gray range mapped linearly onto [170, 235]: 170 + g * 65 / 255 (faded print on
         toned paper, a carbon copy)
  light  the gray range mapped linearly onto [150, 255]: 150 + g * 105 / 255 (a light copy)
  gray   the text lightened to gray 170 on white: 170 + g * 85 / 255
  tint   as gray, and the middle third of the page's rows on a tint of 235 (a code listing's
         background): 170 + g * 65 / 255 there
each at 300 dpi and resampled to 200 dpi (PIL Image.resize, Lanczos, 2/3 of each side), and at
300 dpi
  negative  the whole page inverted: 255 - g
  box       a box inverted (white text on black): between the blank rows nearest to a third
            and to two thirds of the height, and across the ink between them with a margin
            of 24 px
lineate's lines on every variant are scored (`lineate score`, IoU >= 0.5) against its lines on
the untouched page at the same resolution, which must match at F1 >= FLOOR (0.98); on the
negative every line, in the box variant exactly the lines whose centre lies in the box, must be
marked "light_on_dark".

Usage: pale_pages.py [--floor F] [--only pale|negative] LINEATE WORK_DIR PAGE.png...
  --floor F   fail when a variant scores below F (default: report only)
  --only KIND only the pale, light, gray and tint variants, or only the negative and box
Prints one row per page and variant, then the mean F1 and the count below 0.98 per variant.
Exit status: 0 pass, 1 fail, 77 skip (numpy or PIL missing).
"""

import json
import os
import subprocess
import sys

try:
    import numpy as np
    from PIL import Image
except ImportError as exc:
    print("SKIP: %s" % exc)
    sys.exit(77)

INK_GRAY = 170     # the darkest ink of the pale variants
LIGHT_INK_GRAY = 150  # the darkest ink of the light copy (on white)
PAPER_PALE = 235   # toned paper of the pale page, and the tint
TARGET_F1 = 0.98   # the F1 the report counts pages against
LOW_DPI = 200
BLANK_RANGE = 32   # gray levels: a row whose pixels span no more holds no ink
BOX_MARGIN = 24    # px of ground left around the ink of the inverted box
BLANK_ROWS = 12    # rows of a blank run the inverted box's edges lie in (6 px from the ink)


def variants(gray):
    """The transformed pages of a gray page (float arrays), by name."""
    g = gray.astype(np.float64)
    pale = INK_GRAY + g * (PAPER_PALE - INK_GRAY) / 255.0
    on_white = INK_GRAY + g * (255 - INK_GRAY) / 255.0
    light = LIGHT_INK_GRAY + g * (255 - LIGHT_INK_GRAY) / 255.0
    tint = on_white.copy()
    third = g.shape[0] // 3
    tint[third:2 * third] = pale[third:2 * third]
    return {"pale": pale, "light": light, "gray": on_white, "tint": tint}


def white_row(gray, near, reach=300):
    """The middle of the run of at least BLANK_ROWS blank rows (no pixel more than BLANK_RANGE
    below the row's lightest: shaded paper counts) nearest to row `near`."""
    part = gray[near - reach:near + reach].astype(np.int64)
    rows = part.max(axis=1) - part.min(axis=1) <= BLANK_RANGE
    runs, i = [], 0
    while i < len(rows):
        if rows[i]:
            j = i
            while j < len(rows) and rows[j]:
                j += 1
            if j - i >= BLANK_ROWS:
                runs.append((i + j) // 2)
            i = j
        else:
            i += 1
    if not runs:
        return None
    return near - reach + min(runs, key=lambda r: abs(r - reach))


def negatives(gray):
    """The negative page, and the page with a box inverted; the box (left, top, right,
    bottom). Without the box when no run of blank rows lies near a third or two thirds of the
    height."""
    g = gray.astype(np.float64)
    h, w = g.shape
    top, bottom = white_row(gray, h // 3), white_row(gray, 2 * h // 3)
    if top is None or bottom is None:
        print("%-40s %-9s no run of %d blank rows for its edges" % ("", "box", BLANK_ROWS))
        return {"negative": 255 - g}, None
    band = gray[top:bottom].astype(np.int64)
    columns = np.nonzero((band.max(axis=0) - band.min(axis=0)) > BLANK_RANGE)[0]
    box = (max(1, int(columns[0]) - BOX_MARGIN), top,
           min(w - 1, int(columns[-1]) + 1 + BOX_MARGIN), bottom)
    boxed = g.copy()
    boxed[box[1]:box[3], box[0]:box[2]] = 255 - boxed[box[1]:box[3], box[0]:box[2]]
    return {"negative": 255 - g, "box": boxed}, box


def light_on_dark_errors(layout_path, box):
    """Lines whose "light_on_dark" mark disagrees with their centre lying in `box` (None: the
    whole page)."""
    with open(layout_path) as f:
        lines = json.load(f)["lines"]
    wrong = 0
    for line in lines:
        left, top, right, bottom = line["box"]
        cx, cy = (left + right) / 2, (top + bottom) / 2
        inside = box is None or (box[0] <= cx < box[2] and box[1] <= cy < box[3])
        wrong += inside != bool(line.get("light_on_dark"))
    return wrong, len(lines)


def save(array, path, dpi):
    Image.fromarray(np.clip(np.round(array), 0, 255).astype(np.uint8), "L").save(
        path, dpi=(dpi, dpi))


def downsample(path, out_path):
    """The page at LOW_DPI (the pages are 300 dpi), Lanczos."""
    im = Image.open(path)
    w, h = im.size
    im.resize((round(w * LOW_DPI / 300), round(h * LOW_DPI / 300)), Image.LANCZOS).save(
        out_path, dpi=(LOW_DPI, LOW_DPI))


def analyse(lineate, png):
    out = png[:-4] + ".json"
    subprocess.run([lineate, "-o", out, png], check=True, timeout=300)
    return out


def f1(lineate, truth_json, pred_json):
    proc = subprocess.run([lineate, "score", "--json", truth_json, pred_json], check=True,
                          stdout=subprocess.PIPE, timeout=300)
    return json.loads(proc.stdout)["summary"]["f1_50"]


def main(argv):
    floor, only = None, None
    while len(argv) > 2 and argv[1] in ("--floor", "--only"):
        if argv[1] == "--floor":
            floor = float(argv[2])
        else:
            only = argv[2]
        argv = argv[:1] + argv[3:]
    if len(argv) < 4:
        print(__doc__.split("\n\n")[2], file=sys.stderr)
        return 2
    lineate, work, pages = argv[1], argv[2], argv[3:]
    scores = {}
    failures = 0
    print("%-40s %-9s %6s" % ("page", "variant", "F1"))
    for page in pages:
        name = os.path.splitext(os.path.basename(page))[0]
        gray = np.asarray(Image.open(page).convert("L"))
        base = os.path.join(work, name)
        paths = {"original": base + ".png"}
        save(gray, paths["original"], 300)
        if only != "negative":
            for vname, array in variants(gray).items():
                paths[vname] = "%s-%s.png" % (base, vname)
                save(array, paths[vname], 300)
            for vname in list(paths):
                paths[vname + "-200"] = paths[vname][:-4] + "-200.png"
                downsample(paths[vname], paths[vname + "-200"])
        inverted, box = negatives(gray) if only != "pale" else ({}, None)
        for vname, array in inverted.items():
            paths[vname] = "%s-%s.png" % (base, vname)
            save(array, paths[vname], 300)
        layouts = {v: analyse(lineate, p) for v, p in paths.items()}
        for vname in sorted(layouts):
            if vname.startswith("original"):
                continue
            reference = "original-200" if vname.endswith("-200") else "original"
            score = f1(lineate, layouts[reference], layouts[vname])
            scores.setdefault(vname, []).append(score)
            bad = floor is not None and score < floor
            note = ""
            if vname in inverted:
                wrong, n = light_on_dark_errors(layouts[vname], box if vname == "box" else None)
                note = "  light_on_dark wrong on %d of %d lines" % (wrong, n)
                bad = bad or (floor is not None and wrong > 0)
            failures += bad
            print("%-40s %-9s %6.3f%s%s" % (name, vname, score, note, "  FAIL" if bad else ""))
        for p in paths.values():
            os.remove(p)
            os.remove(p[:-4] + ".json")
    for vname in sorted(scores):
        v = scores[vname]
        print("summary %-9s pages %d  mean F1 %.4f  below %.2f: %d" %
              (vname, len(v), sum(v) / len(v), TARGET_F1, sum(s < TARGET_F1 for s in v)))
    if failures:
        print("pale_pages: %d variant(s) below F1 %.2f" % (failures, floor))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))

"""Orientation by known transformation: every page of a folder turned by a quarter, a half
and three quarters (PIL's lossless Image.transpose), analysed by lineate; each turned page
must report the turn that makes it upright, with a confidence above 0, and its lines must be
the upright page's lines carried through the same turn (line F1 at IoU 0.5 by `lineate
score`, the upright output turned as truth). Upright pages must stay as they are.

usage: orient_check.py LINEATE DIR WORK [MIN_RATE MIN_F1]
Prints one line per miss and a summary; exits 1 when the share of turned pages estimated
right is under MIN_RATE (default 0.99), when any page's F1 is under MIN_F1 (default 0.99),
or when an upright page is turned; 2 on bad usage.
"""
import glob
import json
import math
import os
import subprocess
import sys

from PIL import Image

# A page named by its turn N needs turning clockwise by N to read upright: it is the upright
# page turned counter-clockwise by N (PIL's ROTATE_90 turns counter-clockwise).
TURNS = {90: Image.Transpose.ROTATE_90, 180: Image.Transpose.ROTATE_180,
         270: Image.Transpose.ROTATE_270}


def carry(point, turn, w, h):
    """A point of the upright page (w x h) in the page turned counter-clockwise by `turn`."""
    x, y = point
    if turn == 90:
        return [y, w - x]
    if turn == 180:
        return [w - x, h - y]
    if turn == 270:
        return [h - y, x]
    return [x, y]


def carry_record(rec, turn):
    """The upright page's layout as it stands on the turned page."""
    w, h = rec["width"], rec["height"]
    out = dict(rec)
    if turn % 180:
        out["width"], out["height"] = h, w

    def item(it):
        it = dict(it)
        it["quad"] = [carry(p, turn, w, h) for p in it["quad"]]
        xs = [p[0] for p in it["quad"]]
        ys = [p[1] for p in it["quad"]]
        it["box"] = [math.floor(min(xs) + 1e-6), math.floor(min(ys) + 1e-6),
                     math.ceil(max(xs) - 1e-6), math.ceil(max(ys) - 1e-6)]
        for key in ("baseline", "polygon"):
            if key in it:
                it[key] = [carry(p, turn, w, h) for p in it[key]]
        return it

    out["lines"] = [item(ln) for ln in rec["lines"]]
    out["blocks"] = [item(b) for b in rec["blocks"]]
    return out


def run_lineate(lineate, files, out_path):
    with open(out_path, "w") as out:
        subprocess.run([lineate, "-j", "2", "--"] + files, stdout=out, check=True)
    return [json.loads(line) for line in open(out_path)]


def main():
    if len(sys.argv) not in (4, 6):
        print(__doc__.strip().split("\n\n")[1], file=sys.stderr)
        return 2
    lineate, folder, work = sys.argv[1:4]
    min_rate = float(sys.argv[4]) if len(sys.argv) == 6 else 0.99
    min_f1 = float(sys.argv[5]) if len(sys.argv) == 6 else 0.99
    pages = sorted(glob.glob(os.path.join(folder, "*.png")))
    if not pages:
        print("orient_check: no *.png in %s" % folder, file=sys.stderr)
        return 2
    os.makedirs(work, exist_ok=True)
    turned = []  # (page, turn, file)
    for page in pages:
        im = Image.open(page)
        name = os.path.splitext(os.path.basename(page))[0]
        for turn, how in TURNS.items():
            path = os.path.join(work, "%s.t%d.png" % (name, turn))
            im.transpose(how).save(path, compress_level=1, **({"dpi": im.info["dpi"]} if "dpi" in im.info else {}))
            turned.append((name, turn, path))
    upright = run_lineate(lineate, pages, os.path.join(work, "upright.jsonl"))
    results = run_lineate(lineate, [t[2] for t in turned], os.path.join(work, "turned.jsonl"))
    by_name = {os.path.splitext(os.path.basename(p))[0]: rec for p, rec in zip(pages, upright)}
    failures = 0
    wrong_upright = [n for n, rec in by_name.items() if rec["orientation_deg"] != 0]
    for n in wrong_upright:
        print("upright page turned: %s -> %d (confidence %.2f)"
              % (n, by_name[n]["orientation_deg"], by_name[n]["orientation_confidence"]))
    failures += len(wrong_upright)
    right = 0
    with open(os.path.join(work, "truth.jsonl"), "w") as truth:
        for (name, turn, _), rec in zip(turned, results):
            ok = rec["orientation_deg"] == turn and rec["orientation_confidence"] > 0
            right += ok
            if not ok:
                print("miss: %s turned %d -> %d (confidence %.2f)"
                      % (name, turn, rec["orientation_deg"], rec["orientation_confidence"]))
            truth.write(json.dumps(carry_record(by_name[name], turn)) + "\n")
    rate = right / len(turned)
    score = subprocess.run([lineate, "score", "--json", "--per-page",
                            os.path.join(work, "truth.jsonl"), os.path.join(work, "turned.jsonl")],
                           capture_output=True, text=True, check=True)
    per_page = json.loads(score.stdout)["pages"]
    # a page without lines in either output agrees with itself
    f1s = [p["f1_50"] if p.get("f1_50") is not None
           else float(p.get("truth_lines", 0) == 0 and p.get("pred_lines", 0) == 0)
           for p in per_page]
    low = [(t[0], t[1], f) for t, f in zip(turned, f1s) if f < min_f1]
    for name, turn, f in low:
        print("lines differ: %s turned %d: F1 %.3f" % (name, turn, f))
    summary = json.loads(score.stdout)["summary"]
    conf = sorted(r["orientation_confidence"] for r in results)
    print("orientation: %d of %d turned pages right and confident (%.1f %%), %d of %d upright "
          "pages left upright; confidence median %.2f, lowest %.2f"
          % (right, len(turned), 100 * rate, len(pages) - len(wrong_upright), len(pages),
             conf[len(conf) // 2], conf[0]))
    print("lines against the upright output turned: F1 %.4f overall, lowest page %.3f, "
          "%d page(s) under %.2f" % (summary["f1_50"], min(f1s), len(low), min_f1))
    return 1 if failures or rate < min_rate or low else 0


if __name__ == "__main__":
    sys.exit(main())

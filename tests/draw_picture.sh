#!/bin/sh
# draw_picture.sh: automake test of what a reader of the audit picture of `lineate draw` sees:
# the legend beside the page and never over it, role tints that stay apart for readers with the
# common colour-vision deficiencies, and letters that are antialiased and legible at scales 0.3
# and 1. Pages: the newsletter and three corpus pages of testdata/corpus.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3, LT_FONT_FILE (the font
# lineate was built with). Exit status: 0 pass, 1 fail, 77 skip (no python3 with PIL, numpy
# and colorspacious).
#
# References outside lineate:
# - PIL (python3-pil) decodes every PNG, reduces the page by box averaging (Image.reduce) and
#   renders the legend's words with FreeType from the same font file (ImageFont.truetype), the
#   reference the letters in the picture are compared with.
# - Colour-vision deficiency simulation: Machado, Oliveira & Fernandes, "A Physiologically-based
#   Model for Simulation of Color Vision Deficiency", IEEE TVCG 15(6), 2009, severity 1.0, with
#   the matrices as python3-colorspacious ships them (taken from the authors' supplementary
#   data; colorspacious applies them to linear sRGB). CIELab (D65) from colorspacious too, and
#   distances are CIE76 colour differences (Euclidean distance in CIELab).
# - Floors, this project's choice: CIE76 2.3 is about one just-noticeable difference (Sharma,
#   "Digital Color Imaging Handbook", 2003, from memory); tints of two roles must differ by at
#   least 10 (about four such steps) under deuteranopia, protanopia and tritanopia simulation,
#   and by 15 for normal colour vision; the two arrow colours by 30 under every simulation.
#   Measured on this build: see the "note:" lines of the log.

test_name=draw_picture test_modules="PIL.Image, numpy, colorspacious" test_timeout=120
. "$(cd "${top_srcdir:-.}" && pwd)/tests/harness.sh"
font=${LT_FONT_FILE:-/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf}
pages="$testdata/newsletter.png $testdata/corpus/linguex_linguex-doc_p001-d.png
$testdata/corpus/mnras_mnras_guide_p002.png $testdata/corpus/onrannual_skeleton_p001-d.png"

cat >check.py <<'EOF'
import itertools, json, sys
import numpy as np
from PIL import Image, ImageDraw, ImageFont
from colorspacious import cspace_convert

RIM, PANEL, TEXT = (136, 136, 136), (238, 238, 238), (34, 34, 34)
STEP, JUMP = (0, 114, 178), (213, 94, 0)
ROLES = ["body", "heading", "page-header", "page-footer", "page-number", "list-item",
         "caption", "footnote", "margin-note"]
LABELS = ROLES + ["rule", "picture", "table", "text line", "next line", "order jump"]

def die(msg):
    print(msg)
    sys.exit(1)

def rgb(path):
    return np.asarray(Image.open(path).convert("RGB"), dtype=np.int32)

def page_width(a):
    rim = np.all(np.all(a == RIM, axis=2), axis=0)
    if not rim.any():
        die("no legend panel edge found")
    return int(np.argmax(rim))

def cmd_beside(png, source, scale):
    """The page area is round(scale x page width) wide, the panel starts right of it, and
    everything of the legend (pixels other than the panel colour) lies in the panel."""
    a = rgb(png)
    W, H = Image.open(source).size
    w, h = page_width(a), int(round(float(scale) * H))
    if w != int(round(float(scale) * W)):
        die("page area %d wide, expected %d" % (w, round(float(scale) * W)))
    legend = np.any(a[:, w + 1:] != PANEL, axis=2)
    ys, xs = np.nonzero(legend)
    if len(xs) < 100:
        die("no legend in the panel")
    if a.shape[0] > h and not np.all(a[h:, :w] == PANEL):
        die("below the page area, something other than the panel colour")
    print("page area %dx%d, legend ink in x %d..%d (panel from %d)" %
          (w, h, w + 1 + xs.min(), w + 1 + xs.max(), w))

def cmd_page_untouched(png, source, factor):
    """With an empty layout, the page area is the lightened page exactly (PIL's reduction):
    no legend pixel lies on it."""
    a = rgb(png)
    g = Image.open(source).convert("L")
    if int(factor) > 1:
        g = g.reduce(int(factor))
    ref = 150 + (np.asarray(g, dtype=np.int32) * 105 + 127) // 255
    w = page_width(a)
    page = a[:ref.shape[0], :w]
    if page.shape[:2] != ref.shape:
        die("page area %r, PIL's page %r" % (page.shape[:2], ref.shape))
    for ch in range(3):
        if not np.array_equal(page[:, :, ch], ref):
            die("the page area differs from the lightened page")

def lab(colours, cvd):
    x = np.asarray(colours, float) / 255
    if cvd:
        x = cspace_convert(x, {"name": "sRGB1+CVD", "cvd_type": cvd, "severity": 100}, "sRGB1")
    return cspace_convert(np.clip(x, 0, 1), "sRGB1", "CIELab")

def min_distance(colours, names, cvd):
    L = lab(colours, cvd)
    return min((float(np.linalg.norm(L[i] - L[j])), names[i], names[j])
               for i, j in itertools.combinations(range(len(names)), 2))

def cmd_cvd(png, layout):
    """Tints as they come out in the PNG: the centre of each role's block on white paper, and
    the same role's legend swatch; the arrows from the legend's rows."""
    a = rgb(png)
    blocks = json.load(open(layout))["blocks"]
    tints = []
    for b in blocks:
        x0, y0, x1, y1 = b["box"]
        tints.append(tuple(int(v) for v in a[(y0 + y1) // 2, (x0 + x1) // 2]))
    if len(set(tints)) != len(ROLES):
        die("the %d roles show %d tints" % (len(ROLES), len(set(tints))))
    print("note: tints in the PNG: " + ", ".join("%s %r" % rt for rt in zip(ROLES, tints)))
    for cvd, floor in ((None, 15), ("deuteranomaly", 10), ("protanomaly", 10),
                       ("tritanomaly", 10)):
        d, p, q = min_distance(tints, ROLES, cvd)
        name = cvd.replace("anomaly", "anopia") if cvd else "normal vision"
        print("note: %s: smallest CIE76 difference between role tints %.1f (%s / %s), floor %d"
              % (name, d, p, q, floor))
        if d < floor:
            die("%s: tints of %s and %s differ by %.1f, under %d" % (name, p, q, d, floor))
        d, _, _ = min_distance([STEP, JUMP], ["step", "jump"], cvd)
        print("note: %s: arrows differ by %.1f, floor 30" % (name, d))
        if d < 30:
            die("%s: the arrow colours differ by %.1f" % (name, d))
    # The legend's swatches show the tints the page shows: each role's tint occurs in the panel.
    w = page_width(a)
    panel = a[:, w + 1:]
    for role, t in zip(ROLES, tints):
        if not np.all(panel == t, axis=2).any():
            die("the legend has no swatch of the %s tint %r" % (role, t))

def bands(mask):
    """Runs of rows of `mask` holding any True: [(y0, y1), ...]."""
    rows = mask.any(axis=1)
    out, y = [], 0
    while y < len(rows):
        if rows[y]:
            y0 = y
            while y < len(rows) and rows[y]:
                y += 1
            out.append((y0, y))
        else:
            y += 1
    return out

def ink_box(g, level):
    ys, xs = np.nonzero(g < level)
    return xs.min(), ys.min(), xs.max() + 1, ys.max() + 1

def ncc(u, v):
    u, v = u - u.mean(), v - v.mean()
    return float((u * v).sum() / np.sqrt((u * u).sum() * (v * v).sum()))

def cmd_letters(png, font_file, min_ncc):
    """Every label of the legend, cut from the PNG, against PIL's rendering of the same word
    in the same font at the same size (letter size: 1/72 of the page area's width, at least
    12 pixels, the rule of src/draw.c): the ink boxes agree within 2 pixels, and the normalised
    cross-correlation of the two, best of the shifts by up to 2 pixels, is at least min_ncc
    (not 1: cairo places letters at unhinted advances, PIL at hinted ones, so the letters of a
    long word drift apart by a pixel or two at large sizes).
    The labels are antialiased: at least a fifth of their inked pixels are intermediate."""
    a = rgb(png)
    w = page_width(a)
    em = max(12, round(w / 72))
    g = a[:, w + 1:].mean(axis=2)
    col = g[:, int(3.5 * em):] # the labels start 4 em right of the panel's edge
    rows = [b for b in bands(col < 200) if b[1] - b[0] >= 0.4 * em]
    if len(rows) < len(LABELS):
        die("%d rows of letters in the legend, expected %d" % (len(rows), len(LABELS)))
    font = ImageFont.truetype(font_file, em)
    worst, worst_control = 1.0, -1.0
    for (y0, y1), label in zip(rows, LABELS):
        cut = col[max(0, y0 - 2):y1 + 2]
        x0, yy0, x1, yy1 = ink_box(cut, 200)
        got = cut[yy0:yy1, x0:x1]
        def best(word):
            """Best correlation of the label with PIL's `word`, and the word's ink size."""
            im = Image.new("L", (int(em * (len(word) + 2)), int(3 * em)), 238)
            ImageDraw.Draw(im).text((em // 2, 2 * em), word, font=font, fill=34, anchor="ls")
            ref = np.asarray(im, dtype=float)
            rx0, ry0, rx1, ry1 = ink_box(ref, 200)
            h, w = got.shape
            return max(ncc(got, ref[ry0 + dy:ry0 + dy + h, rx0 + dx:rx0 + dx + w])
                       for dy in range(-2, 3) for dx in range(-2, 3)), (rx1 - rx0, ry1 - ry0)
        score, (rw, rh) = best(label)
        if abs(rw - got.shape[1]) > 2 or abs(rh - got.shape[0]) > 2:
            die("label %r: ink %dx%d, PIL's %dx%d" % (label, got.shape[1], got.shape[0], rw, rh))
        worst = min(worst, score)
        if score < float(min_ncc):
            die("label %r: correlation %.3f with PIL's rendering, under %s" % (label, score, min_ncc))
        # Control: the same letters in reverse order score far lower, so the measure reads words.
        control = best(label[::-1])[0]
        worst_control = max(worst_control, control)
        if control > score - 0.25:
            die("label %r: the reversed word correlates %.3f, the word %.3f" % (label, control, score))
        dark = got < 230
        mid = dark & (got > 40)
        if mid.sum() < 0.2 * dark.sum():
            die("label %r: %d of %d pixels intermediate, not antialiased" %
                (label, mid.sum(), dark.sum()))
    print("note: letter size %d px: %d labels, lowest correlation with PIL's rendering %.3f, "
          "highest of the reversed words %.3f" % (em, len(LABELS), worst, worst_control))

def cmd_numbers(png, x0, y0, x1, y1):
    """The line numbers left of the first lines are antialiased letters in the step colour:
    pixels between the colour and white occur, not only the two."""
    a = rgb(png)[int(y0):int(y1), int(x0):int(x1)]
    d = np.abs(a - np.array(STEP)).max(axis=2)
    full, partial = int((d <= 30).sum()), int(((d > 30) & (a.min(axis=2) < 230)).sum())
    if full < 5 or partial < full / 2:
        die("%d pixels in the step colour, %d intermediate" % (full, partial))

cmds = {"beside": cmd_beside, "untouched": cmd_page_untouched, "cvd": cmd_cvd,
        "letters": cmd_letters, "numbers": cmd_numbers}
cmds[sys.argv[1]](*sys.argv[2:])
EOF
py() { "$python" check.py "$@"; }
# draw ARGS...: runs lineate draw, status in $rc.
draw() {
    $limit "$lineate" draw "$@" >out 2>err
    rc=$?
}

# ---- the legend lies beside the page -----------------------------------------------------------
for page in $pages; do
    name=$(basename "$page" .png)
    $limit "$lineate" "$page" >"$name.json" 2>/dev/null
    for scale in 0.3 1; do
        draw "$page" "$name.json" --scale "$scale" -o "$name-$scale.png"
        check "$name at scale $scale: drawn" test "$rc" -eq 0 -a ! -s err
        check "$name at scale $scale: the legend panel starts right of the page area" \
            py beside "$name-$scale.png" "$page" "$scale"
    done
    # An empty layout: nothing but the page and the legend. PIL's reduce(2) is the reference
    # at half size; at full size the page is only lightened.
    printf '{"page": 1, "width": %s, "height": %s, "lines": [], "blocks": []}' \
        $("$python" -c "from PIL import Image; print(*Image.open('$page').size)") >empty.json
    # PIL's reduce(2) boxes are lineate's only when both sides are even.
    for scale in 1 0.5; do
        factor=$(test "$scale" = 1 && echo 1 || echo 2)
        if [ "$factor" = 2 ] && "$python" -c "
from PIL import Image; import sys; w, h = Image.open('$page').size; sys.exit(w % 2 == 0 and h % 2 == 0)"
        then continue; fi
        draw "$page" empty.json --scale "$scale" -o empty.png
        check "$name, empty layout, scale $scale: the page area is the lightened page, untouched" \
            py untouched empty.png "$page" "$factor"
    done
done

# ---- role tints under colour-vision deficiency simulations ------------------------------------
# A white page with one text block of each role, drawn at full size: the tints as they appear.
"$python" -c "
from PIL import Image
Image.new('L', (1400, 1000), 255).save('white.png')" || fail "cannot make white.png"
"$python" - <<'EOF' >roles.json
import json
roles = ["body", "heading", "page-header", "page-footer", "page-number", "list-item",
         "caption", "footnote", "margin-note"]
blocks = [{"kind": "text", "role": r, "box": [100 + 130 * i, 100, 200 + 130 * i, 300]}
          for i, r in enumerate(roles)]
print(json.dumps({"page": 1, "width": 1400, "height": 1000, "lines": [], "blocks": blocks}))
EOF
draw white.png roles.json --no-order -o roles.png
check "nine role blocks on white paper: drawn" test "$rc" -eq 0
check "role tints apart under deuteranopia, protanopia and tritanopia simulation" \
    py cvd roles.png roles.json

# ---- letters: antialiased, and the legend's words those of the font --------------------------
for scale in 0.3 1; do
    check "newsletter at scale $scale: every legend label matches PIL's rendering, antialiased" \
        py letters "newsletter-$scale.png" "$font" 0.75
done
# Line numbers 1 and 2 of the newsletter stand left of the title lines, at x about 875 and
# 745 of 2550 (the saved layout), y 330 and 420.
check "newsletter at scale 1: the line numbers are antialiased" \
    py numbers newsletter-1.png 650 280 900 460
check "newsletter at scale 0.3: the line numbers are antialiased" \
    py numbers newsletter-0.3.png 195 84 270 138

echo "draw_picture.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

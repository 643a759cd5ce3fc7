#!/bin/sh
# draw.sh: automake test of `lineate draw`, the audit picture. Draws the two-column newsletter
# page from its saved layout, from the image alone, from hand-made layouts, and from bad input,
# and reads every picture back with PIL to check sizes, pixels and colours.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3; defaults ., . and
# /usr/bin/python3. Exit status: 0 pass, 1 fail, 77 skip (no python3 with PIL and numpy).
#
# References outside lineate: every PNG is decoded by PIL (python3-pil), the independent
# decoder; the gray page is compared with PIL's own box reduction (Image.reduce); tints are
# compared with the "multiply" blend mode of the PDF specification (ISO 32000-1, sec. 11.3.5):
# out = page x tint / 255. The colours named below are those of src/draw.c: line outline
# (0, 0, 0), ordinary step (0, 114, 178), jump (213, 94, 0) (Okabe & Ito); the role colours of
# Paul Tol's "muted" scheme, body (136, 204, 238), heading (204, 102, 119), caption
# (221, 204, 119), as tints of strength 180/255 (tint = 255 - round((255 - c) 180 / 255));
# rules, pictures and tables (85, 85, 85); the legend panel (238, 238, 238) and the line at its
# left edge (136, 136, 136).
# The page's gray g is shown as 150 + round(105 g / 255). The legend's place, its colours
# under colour-vision simulations and its letters are checked by tests/draw_picture.sh.

test_name=draw test_modules="PIL.Image, numpy" test_timeout=120
. "$(cd "${top_srcdir:-.}" && pwd)/tests/harness.sh"
page="$testdata/newsletter.png" # 2550 x 3300 pixels, 300 dpi, two columns
# draw ARGS...: runs lineate draw, stdout to out, stderr to err, status in $rc.
draw() {
    $limit "$lineate" draw "$@" >out 2>err
    rc=$?
}

cat >check.py <<'EOF'
import json, sys
import numpy as np
from PIL import Image

OUTLINE, STEP, JUMP = (0, 0, 0), (0, 114, 178), (213, 94, 0)
RIM, PANEL = (136, 136, 136), (238, 238, 238)
ROLES = {"body": (136, 204, 238), "heading": (204, 102, 119), "caption": (221, 204, 119)}
KIND = (85, 85, 85)
STRENGTH = 180

def die(msg):
    print(msg)
    sys.exit(1)

def rgb(path):
    im = Image.open(path)
    if im.format != "PNG" or im.mode != "RGB":
        die("%s: %s %s, expected an RGB PNG" % (path, im.format, im.mode))
    return np.asarray(im, dtype=np.int32)

def gray_page(path, factor):
    """The page as drawn, computed independently: PIL's box reduction, then lightened."""
    g = Image.open(path).convert("L")
    if factor > 1:
        g = g.reduce(factor)
    g = np.asarray(g, dtype=np.int32)
    return 150 + (g * 105 + 127) // 255

def page_width(a):
    """Width of the page area: the first column wholly of the rim colour (the panel's edge)."""
    rim = np.all(np.all(a == RIM, axis=2), axis=0)
    if not rim.any():
        die("no legend panel edge found")
    return int(np.argmax(rim))

def near(a, colour, tol=30):
    return np.abs(a - np.array(colour)).max(axis=-1) <= tol

def cmd_size(path, w, h):
    """The page area is w x h, the legend panel right of it; when the legend is taller than
    the page, the picture is as tall as the legend and the page area's columns below the
    page are of the panel's colour."""
    a = rgb(path)
    w, h = int(w), int(h)
    if page_width(a) != w or a.shape[0] < h or a.shape[1] <= w:
        die("%s: %dx%d with the page area %d wide, expected a page area of %dx%d" %
            (path, a.shape[1], a.shape[0], page_width(a), w, h))
    if not np.all(a[h:, :w] == PANEL):
        die("%s: below the page area, something other than the panel's colour" % path)

def cmd_same(a, b):
    if not np.array_equal(rgb(a), rgb(b)):
        die("%s and %s differ" % (a, b))

def cmd_outlines(png, layout, scale, min_share):
    """Just outside the top and bottom edge of every line quad (within 3 pixels) a pixel has
    the outline colour; the centre of every quad does not (it shows the tinted page)."""
    a, k = rgb(png), float(scale)
    lines = json.load(open(layout))["lines"]
    hits = total = 0
    for ln in lines:
        q = ln["quad"]
        for (p0, p1), side in (((q[0], q[1]), -1), ((q[3], q[2]), 1)):
            for t in (0.3, 0.5, 0.7):
                x = int((p0[0] + t * (p1[0] - p0[0])) * k)
                y = int((p0[1] + t * (p1[1] - p0[1])) * k)
                ys = range(y - 3, y + 1) if side < 0 else range(y, y + 4)
                total += 1
                hits += any(tuple(a[yy, x]) == OUTLINE for yy in ys)
        cx = int(sum(p[0] for p in q) / 4 * k)
        cy = int(sum(p[1] for p in q) / 4 * k)
        if tuple(a[cy, cx]) == OUTLINE:
            die("centre of line %r has the outline colour" % ln["box"])
    if total < 100 or hits < float(min_share) * total:
        die("%d of %d edge points have the outline colour" % (hits, total))
    print("%d of %d edge points have the outline colour" % (hits, total))

def tint(c):
    return 255 - ((255 - c) * STRENGTH + 127) // 255

def cmd_tints(png, source):
    """Hand-made blocks: heading, no role, an unknown role, caption (tint.json)."""
    a, ref = rgb(png), gray_page(source, 2)
    want = {(300, 700): "heading", (900, 700): "body", (300, 1000): "body",
            (900, 1000): "caption"}
    for (x, y), role in want.items():
        got = a[y - 20:y + 20, x - 20:x + 20]
        exp = np.stack([(ref[y - 20:y + 20, x - 20:x + 20] * tint(c) + 127) // 255
                        for c in ROLES[role]], axis=2)
        if np.abs(got - exp).max() > 1: # one unit for the rounding of the blend
            die("block at (%d, %d): not tinted %s (max error %d)" %
                (x, y, role, np.abs(got - exp).max()))
        if (got.max(axis=2) - got.min(axis=2)).mean() < 15:
            die("block at (%d, %d) is not coloured" % (x, y))
    # Away from the blocks the page area is the plain gray page, exactly: PIL's reduce rounds
    # the box mean half up, as lineate does (measured identical on this page).
    w = page_width(a)
    if ref.shape != (a.shape[0], w):
        die("page area %dx%d, PIL's reduction %dx%d" % (w, a.shape[0], ref.shape[1], ref.shape[0]))
    page = a[:, :w]
    mask = np.ones(ref.shape, bool)
    for x0, y0, x1, y1 in ((97, 597, 503, 803), (697, 597, 1103, 803), (97, 897, 503, 1103),
                           (697, 897, 1103, 1103), (1197, 897, 1203, 1103),
                           (697, 1247, 903, 1353), (947, 1247, 1153, 1353)):
        mask[y0:y1, x0:x1] = False
    for ch in range(3):
        d = np.abs(page[:, :, ch] - ref)[mask]
        if d.max() > 0:
            die("plain page differs from PIL's reduction by up to %d" % d.max())
    print("plain page matches PIL's reduction on %d pixels" % mask.sum())

def cmd_kinds(png):
    """Hand-made picture and table blocks (tint.json): hatched, diagonals for the picture
    (no row of the inside dark from end to end), a grid for the table (such rows)."""
    a = rgb(png)
    for (x0, y0, x1, y1), grid, name in (((700, 1250, 900, 1350), False, "picture"),
                                         ((950, 1250, 1150, 1350), True, "table")):
        cell = near(a[y0 + 10:y1 - 10, x0 + 10:x1 - 10], KIND, 60)
        share, full_rows = cell.mean(), int(np.all(cell, axis=1).sum())
        if not 0.05 < share < 0.6 or (full_rows > 0) != grid:
            die("%s block: %.2f of its inside has its colour, %d full rows" %
                (name, share, full_rows))

def cmd_pixel(png, x, y, colour):
    """The pixel or one of its neighbours (5 x 5) is within 30 of the colour per channel."""
    a = rgb(png)
    want = {"jump": JUMP, "step": STEP}[colour]
    x, y = int(x), int(y)
    if not near(a[y - 2:y + 3, x - 2:x + 3], want).any():
        die("pixel (%d, %d) is %r, expected the %s colour %r" %
            (x, y, tuple(a[y, x]), colour, want))

def cmd_count(png, colour, x0, y0, x1, y1, op, n):
    """Pixels within 30 of the colour per channel in the box [x0, x1) x [y0, y1)."""
    a = rgb(png)[int(y0):int(y1), int(x0):int(x1)]
    want = {"jump": JUMP, "step": STEP}[colour]
    c = int(near(a, want).sum())
    if not (c > int(n) if op == "gt" else c == int(n)):
        die("%d pixels of the %s colour in the box, expected %s %s" % (c, colour, op, n))

cmds = {"size": cmd_size, "same": cmd_same, "outlines": cmd_outlines, "tints": cmd_tints,
        "kinds": cmd_kinds, "pixel": cmd_pixel, "count": cmd_count}
cmds[sys.argv[1]](*sys.argv[2:])
EOF
py() { "$python" check.py "$@"; }

# ---- hand-made layouts of the newsletter's size (2550 x 3300, drawn at half size) ------------
# tint.json: four text blocks (heading, no role, an unknown role, caption) at x 200-1000 and
# 1400-2200, y 1200-1600 and 1800-2200 (half size: centres (300, 700), (900, 700), (300, 1000),
# (900, 1000)); a picture and a table block below them; a line-less rule.
cat >tint.json <<'EOF'
{"page": 1, "pages": 1, "width": 2550, "height": 3300, "lines": [],
 "blocks": [
  {"kind": "text", "role": "heading", "box": [200, 1200, 1000, 1600], "lines": []},
  {"kind": "text", "quad": [[1400, 1200], [2200, 1200], [2200, 1600], [1400, 1600]],
   "lines": []},
  {"kind": "text", "role": "no-such-role", "box": [200, 1800, 1000, 2200], "lines": []},
  {"kind": "text", "role": "caption", "box": [1400, 1800, 2200, 2200], "lines": []},
  {"kind": "picture", "box": [1400, 2500, 1800, 2700], "lines": []},
  {"kind": "table", "box": [1900, 2500, 2300, 2700], "lines": []},
  {"kind": "rule", "box": [2400, 1800, 2404, 2200], "lines": []}]}
EOF
# Two lines in reverse vertical order: the second is 800 pixels above the first. The arrow runs
# from the end of line 1 (1500, 2030) to the start of line 2 (300, 1230): midpoint (900, 1630),
# at half size (450, 815).
cat >reverse.json <<'EOF'
{"page": 1, "width": 2550, "height": 3300, "blocks": [],
 "lines": [{"box": [300, 2000, 1500, 2060]}, {"box": [300, 1200, 1500, 1260]}]}
EOF
# The same two lines in reading order, one under the other: from (1500, 1230) to (300, 1330),
# midpoint (900, 1280), at half size (450, 640), in the white between the lines.
cat >forward.json <<'EOF'
{"page": 1, "width": 2550, "height": 3300, "blocks": [],
 "lines": [{"box": [300, 1200, 1500, 1260]}, {"box": [300, 1300, 1500, 1360]}]}
EOF
# Back along one row: from the end of the right line (2200, 1230) to the start of the left one
# (200, 1230): midpoint (1200, 1230), at half size (600, 615).
cat >backrow.json <<'EOF'
{"page": 1, "width": 2550, "height": 3300, "blocks": [],
 "lines": [{"box": [1400, 1200, 2200, 1260]}, {"box": [200, 1200, 1000, 1260]}]}
EOF
# A page whose reading order asks for review; the same with "needed": false.
cat >review.json <<'EOF'
{"page": 1, "width": 2550, "height": 3300, "blocks": [], "lines": [],
 "order_review": {"needed": true, "reasons": ["two columns read across", 7]}}
EOF
sed 's/"needed": true/"needed": false/' review.json >noreview.json

# ---- the newsletter: saved layout and image alone -------------------------------------------
# Sizes and pixels: PIL decodes each PNG (the independent decoder). 2550 x 3300 halved is
# 1275 x 1650 (arithmetic). The analysed image and its saved JSON must give equal pixels.
$limit "$lineate" "$page" >news.json 2>err
check "the newsletter is analysed (its saved layout for the tests)" test "$?" -eq 0 -a -s news.json
draw "$page" news.json -o news.png
check "draw from the saved JSON: exit 0, nothing printed" test "$rc" -eq 0 -a ! -s out -a ! -s err
check "from the JSON: an RGB PNG with a page area of 1275x1650 (half of 2550x3300, the default above 2000 px)" \
    py size news.png 1275 1650
draw "$page" -o alone.png
check "draw from the image alone: exit 0" test "$rc" -eq 0 -a ! -s err
check "from the image alone: a page area of 1275x1650" py size alone.png 1275 1650
check "the image alone (analysed) and its saved JSON give the same picture" \
    py same news.png alone.png
draw "$page" news.json -o again.png
check "the same input twice gives byte-identical files" cmp -s news.png again.png
$limit "$lineate" --pretty "$page" >pretty.json 2>/dev/null
draw "$page" pretty.json -o pretty.png
check "an indented (--pretty) layout gives the same picture" py same news.png pretty.png
draw "$page" - -o stdin.png <news.json
check "the layout from standard input gives the same picture" py same news.png stdin.png
draw "$page" news.json -o -
cp out stdout.png
check "-o - writes the PNG to standard output" test "$rc" -eq 0 -a -s stdout.png -a ! -s err
check "-o - gives the same picture" py same news.png stdout.png
draw "$page" news.json --scale 1 -o full.png
check "--scale 1: a page area of 2550x3300" py size full.png 2550 3300
draw "$page" news.json --scale 0.3 -o small.png
check "--scale 0.3: a page area of 765x990" py size small.png 765 990

# Line outlines: beside points on each quad edge (outside it, within 3 pixels), taken from the
# saved JSON and scaled, PIL must read the outline colour; at the quad's centre it must not.
draw "$page" news.json --no-order -o plain.png
check "--no-order: beside every edge point of every line quad, the outline colour" \
    py outlines plain.png news.json 0.5 1.0
check "with the order drawn: beside at least 80% of the edge points, the outline colour" \
    py outlines news.png news.json 0.5 0.80
draw "$page" news.json --no-order --scale 1 -o plain1.png
check "--no-order at full size: beside every edge point, the outline colour" \
    py outlines plain1.png news.json 1 1.0

# ---- hand-made layouts ----------------------------------------------------------------------
# Tints: PIL's Image.reduce(2) box average of the page, lightened, then multiplied by each
# role's tint, against the pixels PIL decodes; the rest of the page area equals the lightened
# reduction. Arrows: at the midpoint of the segment between the two quads' edge centres
# (arithmetic on the hand-made coordinates) PIL must read the jump or step colour (within 30
# per channel, 2 pixels around: the strokes are antialiased).
draw "$page" tint.json --no-order -o tint.png
check "hand-made blocks: exit 0" test "$rc" -eq 0 -a ! -s err
check "text blocks tinted by role (none or unknown: body), the page elsewhere plain gray" \
    py tints tint.png "$page"
check "picture and table blocks are hatched in their own colours" py kinds tint.png
draw "$page" reverse.json -o reverse.png
check "lines in reverse vertical order: exit 0" test "$rc" -eq 0 -a ! -s err
check "lines in reverse vertical order: the arrow's midpoint has the jump colour" \
    py pixel reverse.png 450 815 jump
draw "$page" forward.json -o forward.png
check "lines in reading order: the arrow's midpoint has the ordinary step colour" \
    py pixel forward.png 450 640 step
check "lines in reading order: the line numbers stand left of the lines" \
    py count forward.png step 120 600 150 660 gt 10
draw "$page" backrow.json -o backrow.png
check "back along one row: the arrow's midpoint has the jump colour" \
    py pixel backrow.png 600 615 jump
draw "$page" forward.json --no-order -o forward-plain.png
check "--no-order: no arrow and no line number" \
    py count forward-plain.png step 0 0 1275 1650 eq 0 # the page area
draw "$page" review.json --no-order -o review.png
check "order review needed: its reasons are written in the jump colour, in the legend panel" \
    py count review.png jump 1276 0 3000 1650 gt 50
draw "$page" noreview.json --no-order -o noreview.png
check "order review not needed: nothing in the jump colour" \
    py count noreview.png jump 0 0 3000 1650 eq 0
# Reasons the font cannot show as they are: bytes that are no UTF-8 (0xff, a lone surrogate),
# a control character, a 3,000-letter word; and 200 reasons, more than the legend's 60 rows.
"$python" - <<'EOF' || fail "cannot write the review layouts"
import json
base = {"page": 1, "width": 2550, "height": 3300, "blocks": [], "lines": []}
odd = json.dumps(dict(base, order_review={"needed": True, "reasons": [
    "bad BYTES and \u0007 a bell", "x" * 3000]}))
open("odd.json", "wb").write(odd.encode().replace(b"BYTES", b"\xff\xed\xa0\x80"))
json.dump(dict(base, order_review={"needed": True, "reasons": [
    "reason %d, in words enough to wrap" % i for i in range(200)]}), open("many.json", "w"))
EOF
draw "$page" odd.json --no-order -o odd.png
check "review reasons with bytes that are no UTF-8, a bell and a 3,000-letter word: drawn" \
    test "$rc" -eq 0 -a ! -s err
check "review reasons the font cannot show as they are: written in the jump colour" \
    py count odd.png jump 1276 0 3000 1650 gt 50
draw "$page" many.json --no-order -o many.png
check "200 review reasons: drawn, the legend cut at its 60 rows, the page area kept" \
    test "$rc" -eq 0 -a ! -s err
check "200 review reasons: a page area of 1275x1650" py size many.png 1275 1650

# ---- multi-page images and JSON Lines -------------------------------------------------------
# PIL writes the two-page TIFF (pages of known sizes) and decodes the pictures.
"$python" - "$page" "$srcdir/testdata/minutes.png" <<'EOF' || fail "cannot build two.tif"
import sys
from PIL import Image
news = Image.open(sys.argv[1]).convert("L").crop((0, 0, 2550, 1300))
minutes = Image.open(sys.argv[2]).convert("L").crop((0, 250, 2550, 1100))
news.save("two.tif", save_all=True, append_images=[minutes], compression="tiff_lzw",
          dpi=(300, 300))
news.save("one.png", dpi=(300, 300))
EOF
$limit "$lineate" two.tif >two.jsonl 2>/dev/null
draw two.tif two.jsonl --page 2 -o p2.png
check "--page 2 of a two-page TIFF with its JSON Lines layout: exit 0" test "$rc" -eq 0
check "--page 2: a page area of page 2 at half size (1275x425), the legend taller than it" \
    py size p2.png 1275 425
draw two.tif --page 2 -o p2-alone.png
check "--page 2 analysed from the image alone: the same picture" py same p2.png p2-alone.png

# ---- a stream of several files: the record is found by its source ---------------------------
# Two scans of one size and one page number in different folders, as an archive has them.
mkdir -p vol1 vol2 vol3
"$python" - "$page" "$srcdir/testdata/minutes.png" <<'EOF' || fail "cannot build the volumes"
import sys
from PIL import Image
Image.open(sys.argv[1]).convert("L").crop((0, 0, 2550, 1300)).save("vol1/scan.png", dpi=(300, 300))
Image.open(sys.argv[2]).convert("L").crop((0, 0, 2550, 1300)).save("vol2/scan.png", dpi=(300, 300))
EOF
cp vol2/scan.png vol3/scan.png
$limit "$lineate" vol1/scan.png vol2/scan.png >both.jsonl 2>/dev/null
head -n 1 both.jsonl >vol1.json
draw vol2/scan.png -o vol2-alone.png
draw vol2/scan.png both.jsonl -o vol2-stream.png
check "a stream of two files: exit 0" test "$rc" -eq 0
check "a stream of two files: the second file's record is drawn over it" \
    py same vol2-alone.png vol2-stream.png
draw ./vol2/../vol2/scan.png both.jsonl -o vol2-path.png
check "the image named by another path of the same file: its record still found" \
    py same vol2-alone.png vol2-path.png
draw vol3/scan.png vol1.json -o vol3.png
check "a layout of another file of the same size: refused, exit 1, one line naming both" \
    test "$rc" -eq 1 -a ! -e vol3.png -a "$(nlines err)" -eq 1 -a \
    -n "$(grep -F 'lineate draw: vol1.json: the layout of page 1 is of vol1/scan.png, not of vol3/scan.png' err)"
draw vol3/scan.png both.jsonl -o vol3.png
check "a stream holding neither: refused, exit 1" test "$rc" -eq 1 -a ! -e vol3.png
sed 's/"source":"[^"]*",//' vol1.json >nosource.json
cat nosource.json nosource.json >nosource2.jsonl
draw vol1/scan.png nosource.json -o nosource.png
check "a hand-made layout without a source: drawn over the image it is given with" \
    test "$rc" -eq 0 -a -s nosource.png
draw vol1/scan.png nosource2.jsonl -o nosource2.png
check "two layouts of page 1 without a source: refused as ambiguous, exit 1" \
    test "$rc" -eq 1 -a -n "$(grep -F '2 layouts of page 1, and none names vol1/scan.png' err)"

# ---- performance: an A4 page at 300 dpi (2481 x 3508) drawn at full size ---------------------
# A4 at 300 dpi is 210 x 297 mm = 2480.3 x 3507.9 pixels (ISO 216, common practice: 2481 x 3508).
"$python" -c "
from PIL import Image
Image.open('$page').convert('L').resize((2481, 3508)).save('a4.png', dpi=(300, 300))"
$limit "$lineate" a4.png >a4.json 2>/dev/null
# The processor time (user + system, getrusage of the child) is checked, not the wall-clock
# time: on a machine shared with other jobs the latter measures the others as well.
best=""
for _ in 1 2 3; do
    ms=$("$python" -c "
import resource, subprocess, sys
subprocess.run(sys.argv[1:], stderr=subprocess.DEVNULL)
r = resource.getrusage(resource.RUSAGE_CHILDREN)
print(int((r.ru_utime + r.ru_stime) * 1000))" "$lineate" draw a4.png a4.json --scale 1 -o a4-draw.png)
    if [ -z "$best" ] || [ "$ms" -lt "$best" ]; then best=$ms; fi
done
echo "note: an A4 page at 300 dpi, decoded, drawn at full size and written: best of 3 ${best} ms of processor time"
if [ -n "${LT_SANITIZED:-}" ]; then
    echo "note: sanitized build, the time is not checked"
else
    check "an A4 page (2481x3508) is read, drawn and written in under a second of processor time" \
        test "$best" -lt 1000
fi

# ---- bad input: one line "lineate draw: FILE: reason", the exit status, no file left --------
# Exit statuses of src/cli.h: 1 an input could not be read, 2 bad command line, 3 the output
# could not be written. /dev/full fails every write with ENOSPC (Linux full(4), from memory).
printf 'Minutes of the spring meeting\n' >notimage.png
printf '{"page": 1, "width": 2550, "height": 3300, "lines": [' >bad.json
head -c 4000 news.json >truncated.json
sed 's/"width":2550/"width":1000/' news.json >narrow.json
printf '{"format": "lineate-layout-1", "page": 1, "error": "cannot read"}\n' \
    >error.json
printf '{"page": 1, "width": 2550, "height": 3300, "blocks": [], "lines": [{"box": [1, 2]}]}' \
    >badline.json
printf '{"page": 1, "width": 2550, "height": 3300, "blocks": [], "lines": [], "pages": 2}' \
    >twopages.json
head -n 1 two.jsonl >first.jsonl # page 1 of 2 only
mkdir outdir
# Each row: status|name in the message|arguments (the output is outdir/out.png unless given).
while IFS='|' read -r want name args; do
    rm -rf outdir && head -n 1 two.jsonl >first.jsonl # page 1 of 2 only
mkdir outdir
    case $args in *" -o "*) ;; *) args="$args -o outdir/out.png" ;; esac
    # shellcheck disable=SC2086 # the arguments are meant to be split
    draw $args
    check "bad input '$args': exit $want" test "$rc" -eq "$want"
    check "bad input '$args': one line 'lineate draw: $name: ...'" \
        test "$(nlines err)" -eq 1 -a "$(grep -c -F -e "lineate draw: $name: " err)" -eq 1
    check "bad input '$args': no output file, no temporary file" \
        test -z "$(ls -A outdir)" -a ! -s out
    [ "$(nlines err)" -eq 1 ] || sed 's/^/  stderr: /' err
done <<EOF
1|nosuch.png|nosuch.png
1|notimage.png|notimage.png news.json
1|nosuch.json|$page nosuch.json
1|bad.json|$page bad.json
1|truncated.json|$page truncated.json
1|narrow.json|$page narrow.json
1|error.json|$page error.json
1|badline.json|$page badline.json
1|twopages.json|$page twopages.json
1|two.jsonl|one.png two.jsonl
1|two.tif|two.tif two.jsonl --page 3
1|first.jsonl|two.tif first.jsonl --page 2
1|notimage.png|notimage.png
3|outdir/missing/out.png|$page news.json -o outdir/missing/out.png
3|outdir|$page news.json -o outdir
EOF
if [ -w /dev/full ]; then
    draw "$page" news.json -o /dev/full
    check "-o /dev/full: exit 3, one line naming it" test "$rc" -eq 3 -a "$(nlines err)" -eq 1 \
        -a "$(grep -c 'lineate draw: /dev/full: ' err)" -eq 1
fi
cp news.png keep.png
draw "$page" bad.json -o keep.png
check "a failed run leaves an existing output file unchanged" cmp -s news.png keep.png
check "a failed run leaves no temporary file" test -z "$(ls ./*.tmp.* 2>/dev/null)"

# ---- usage errors: exit 2, one line ---------------------------------------------------------
while IFS='|' read -r args word; do
    # shellcheck disable=SC2086
    draw $args
    check "usage '$args': exit 2, one line naming '$word'" \
        test "$rc" -eq 2 -a "$(nlines err)" -eq 1 -a "$(grep -c -e "$word" err)" -eq 1
done <<EOF
$page news.json|-o
-o x.png|no input
$page news.json extra.json -o x.png|more than one
$page --scale 2 -o x.png|--scale
$page --scale 0.05 -o x.png|--scale
$page --page 0 -o x.png|--page
$page --page 1.5 -o x.png|--page
$page --no-such-option -o x.png|--no-such-option
$page -o|-o
- - -o x.png|standard input
EOF
draw --help
check "draw --help: exit 0, the options" test "$rc" -eq 0 -a "$(grep -c -e '--no-order' out)" -eq 1

echo "draw.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

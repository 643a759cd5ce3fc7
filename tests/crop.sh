#!/bin/sh
# crop.sh: automake test of `lineate crop`: one PNG per text line in reading order with a JSON
# Lines manifest; plain crops against PIL's own crop of the page; --rectify against a known
# rotation; --binary against scikit-image's Sauvola; 1-bit pages, multi-page TIFF, names
# mirrored and collisions refused, bad inputs, an unwritable folder, usage errors, threads,
# a run killed and resumed, crops from a saved and a hand-corrected layout, the analysis
# options, the manifest against its JSON Schema, and the man page's CROP section.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3; defaults ., . and
# /usr/bin/python3. Exit status: 0 pass, 1 fail, 77 skip (no python3 with PIL and numpy).
#
# References outside lineate: python3-pil decodes every crop (an independent PNG decoder) and
# cuts the reference rectangles (Image.crop); PIL's Image.rotate(4, BILINEAR, expand=True) is
# the known transformation the rectified crops must undo; skimage.filters.threshold_sauvola
# (python3-skimage) is the reference binarization, T = m (1 + k (s / R - 1)) after Sauvola &
# Pietikainen (2000); python3-jsonschema validates every manifest record against
# schema/lineate-crop.schema.json.

# Runs are bounded generously: sanitizer builds are several times slower.
test_name=crop test_modules="PIL.Image, numpy" test_timeout=300
. "$(cd "${top_srcdir:-.}" && pwd)/tests/harness.sh"
# crop ARGS...: runs lineate crop, stdout to out, stderr to err, status in $rc.
crop() {
    $limit "$lineate" crop "$@" >out 2>err
    rc=$?
}
py() { "$python" "$work/check.py" "$@"; }

cat >check.py <<'EOF'
import json, math, os, re, sys
import numpy as np
from PIL import Image

def die(msg):
    print(msg)
    sys.exit(1)

def manifest(d):
    return [json.loads(l) for l in open(os.path.join(d, "manifest.jsonl"), encoding="utf-8")]

def crops(d):
    return [r for r in manifest(d) if r["kind"] == "line"]

def load(d, r):
    """A crop decoded by PIL, as a numpy array; its size must be the manifest's."""
    im = Image.open(os.path.join(d, r["file"]))
    im.load()
    if im.mode != "L" or im.size != (r["width"], r["height"]):
        die("%s: mode %s size %s, manifest says %dx%d" % (r["file"], im.mode, im.size,
                                                           r["width"], r["height"]))
    return np.asarray(im)

def half_up(v):
    return math.floor(v + 0.5)

def default_margin(xh):
    """0.25 x-height, rounded, at least 2 (the documented rule); None when the x-height,
    rounded to 0.01 in the manifest, lies too close to a rounding midpoint to tell."""
    m = 0.25 * xh
    if abs(m - math.floor(m) - 0.5) < 0.005:
        return None
    return max(2, half_up(m))

def grow(box, m, w, h):
    return [max(0, box[0] - m), max(0, box[1] - m), min(w, box[2] + m), min(h, box[3] + m)]

def cmd_layout(d, layout_json, page_path, name, margin):
    """The crops of one page equal the analysis: one per line of `lineate PAGE` in reading
    order, named NAME-p0001-lLLLL.png, box, quad and block as in the layout, cut box = box
    grown by the margin, nothing else in the folder (no temporary file)."""
    page = json.load(open(layout_json))
    rs = crops(d)
    if len(rs) != len(page["lines"]) or len(rs) == 0:
        die("%d manifest records, %d lines" % (len(rs), len(page["lines"])))
    pngs = sorted(f for f in os.listdir(d) if f.endswith(".png"))
    if len(pngs) != len(rs):
        die("%d PNG files, %d records" % (len(pngs), len(rs)))
    extra = set(os.listdir(d)) - set(pngs) - {"manifest.jsonl", name + ".crops.jsonl"}
    if extra:
        die("unexpected files: %s" % sorted(extra))
    for i, (r, l) in enumerate(zip(rs, page["lines"]), 1):
        want = "%s-p0001-l%04d.png" % (name, i)
        if r["file"] != want or r["line"] != i or r["order"] != i or r["page"] != 1 or r["pages"] != 1:
            die("record %d: file %s line %s page %s" % (i, r["file"], r["line"], r["page"]))
        if r["box"] != l["box"] or r["quad"] != l["quad"] or r["block"] != l["block"]:
            die("record %d: box/quad/block differ from the layout: %r %r" % (i, r, l))
        if r["source"] != page_path or r["mode"] != "gray" or r["rectified"] is not False:
            die("record %d: source/mode/rectified: %r" % (i, r))
        m = int(margin) if margin != "auto" else default_margin(r["xheight_px"])
        if m is not None and r["margin_px"] != m:
            die("record %d: margin %s, expected %s (x-height %s)" % (i, r["margin_px"], m,
                                                                    r["xheight_px"]))
        if r["cut_box"] != grow(r["box"], r["margin_px"], page["width"], page["height"]):
            die("record %d: cut box %r, box %r margin %d" % (i, r["cut_box"], r["box"],
                                                             r["margin_px"]))

def cmd_same_as_pil(d, page_path):
    """Every gray crop equals, pixel for pixel, PIL's crop of the page at the cut box
    (Image.open(page).crop(box): the outside reference); a 1-bit page converted by PIL to 8-bit
    gray gives 0/255."""
    page = Image.open(page_path)
    if page.mode == "1":
        page = page.convert("L")
    n = 0
    for r in crops(d):
        ref = np.asarray(page.crop(tuple(r["cut_box"])))
        got = load(d, r)
        if got.shape != ref.shape or not (got == ref).all():
            die("%s differs from PIL's crop %r" % (r["file"], r["cut_box"]))
        n += 1
    if n == 0:
        die("no crops")

def cmd_level_rectified(d, page_path):
    """On a page analysed unrotated (|skew| under 0.05 degree, see lineate(1)), a rectified
    crop is the page sampled at pixel centres: it equals the cut box of the page padded with
    white (numpy slicing of PIL's pixels)."""
    page = np.asarray(Image.open(page_path).convert("L"))
    pad = 4096
    padded = np.pad(page, pad, constant_values=255)
    for r in crops(d):
        if abs(r["skew_deg"]) >= 0.05 or not r["rectified"]:
            die("%s: skew %s rectified %s" % (r["file"], r["skew_deg"], r["rectified"]))
        (x0, y0), (x1, _), (_, y1), _ = r["cut_quad"]
        ref = padded[int(y0) + pad:int(y1) + pad, int(x0) + pad:int(x1) + pad]
        if not (load(d, r) == ref).all():
            die("%s differs from the page at %r" % (r["file"], r["cut_quad"]))

def ink_band(a, share=0.9):
    """Rows (count) of the central `share` of the ink (< 128) of a crop's horizontal
    projection profile."""
    prof = (a < 128).sum(axis=1).astype(float)
    if prof.sum() == 0:
        return 0
    c = np.cumsum(prof) / prof.sum()
    lo = int(np.searchsorted(c, (1 - share) / 2))
    hi = int(np.searchsorted(c, 1 - (1 - share) / 2))
    return hi - lo + 1

def cmd_rotate(src, dst, angle):
    Image.open(src).rotate(float(angle), resample=Image.BILINEAR, expand=True,
                           fillcolor=255).save(dst, dpi=(300, 300))

def cmd_rectify(rect_dir, plain_dir, level_dir, level_page, rotated_page, angle):
    """Known transformation: `rotated_page` is `level_page` turned by `angle` degrees
    counter-clockwise about its centre by PIL (expand=True keeps the centre at the centre of the
    larger canvas). Each rectified crop of the rotated page must
    - map back (inverse rotation) into exactly one line of the level page, one to one;
    - have that line's size (grown by the margins) within 2 px across and 3 px down;
    - be level: its 90%-ink band (horizontal projection profile) at most 2 rows taller than
      the same line cut from the level page, and at most 1.5 x-heights for 90% of the lines
      (the measure of a level line; a title in capitals is taller);
    - match the level page pixel for pixel up to interpolation: normalized cross-correlation
      >= 0.95 with the level page's patch at the inverse-rotated corner (measured 0.98);
    while the unrectified crop of every line long enough to climb 2 x-heights across its width
    is not level (band over 1.5 x-heights and over twice the rectified band)."""
    a = math.radians(float(angle))
    cos_a, sin_a = math.cos(a), math.sin(a)
    level = np.asarray(Image.open(level_page).convert("L")).astype(float)
    h0, w0 = level.shape
    w1, h1 = Image.open(rotated_page).size

    def to_level(x, y):
        dx, dy = x - w1 / 2, y - h1 / 2
        return w0 / 2 + dx * cos_a - dy * sin_a, h0 / 2 + dx * sin_a + dy * cos_a

    rect, plain, lev = crops(rect_dir), crops(plain_dir), crops(level_dir)
    if len(rect) != len(lev) or len(plain) != len(rect) or len(rect) < 20:
        die("lines: rotated %d (plain %d), level %d" % (len(rect), len(plain), len(lev)))
    used, within, tilted = set(), 0, 0
    for r, p in zip(rect, plain):
        if not r["rectified"] or p["rectified"] or r["box"] != p["box"]:
            die("%s: the two runs disagree on the line" % r["file"])
        if abs(r["skew_deg"] - float(angle)) > 0.1:
            die("%s: skew %s, expected %s" % (r["file"], r["skew_deg"], angle))
        cx = sum(q[0] for q in r["quad"]) / 4
        cy = sum(q[1] for q in r["quad"]) / 4
        lx, ly = to_level(cx, cy)
        m = [l for l in lev if l["box"][0] <= lx < l["box"][2] and l["box"][1] <= ly < l["box"][3]]
        if len(m) != 1 or m[0]["line"] in used:
            die("%s: maps to %d level lines" % (r["file"], len(m)))
        l = m[0]
        used.add(l["line"])
        dw = r["width"] - 2 * r["margin_px"] - (l["box"][2] - l["box"][0])
        dh = r["height"] - 2 * r["margin_px"] - (l["box"][3] - l["box"][1])
        if abs(dw) > 2 or abs(dh) > 3:
            die("%s: size off by %d x %d px from the level line" % (r["file"], dw, dh))
        crop = load(rect_dir, r)
        band_r, band_l = ink_band(crop), ink_band(load(level_dir, l))
        if band_r > band_l + 2:
            die("%s: ink band %d rows, level line %d" % (r["file"], band_r, band_l))
        xh = r["xheight_px"]
        within += band_r <= 1.5 * xh
        x0, y0 = to_level(*r["cut_quad"][0])
        x0, y0 = int(round(x0)), int(round(y0))
        patch = level[y0:y0 + crop.shape[0], x0:x0 + crop.shape[1]]
        if patch.shape != crop.shape:
            die("%s: maps outside the level page" % r["file"])
        c1, p1 = crop - crop.mean(), patch - patch.mean()
        ncc = (c1 * p1).sum() / math.sqrt((c1 * c1).sum() * (p1 * p1).sum())
        if ncc < 0.95:
            die("%s: correlation %.3f with the level page" % (r["file"], ncc))
        width = r["box"][2] - r["box"][0]
        if width * math.sin(a) >= 2 * xh:
            tilted += 1
            band_p = ink_band(load(plain_dir, p))
            if not (band_p > 1.5 * xh and band_p > 2 * band_r):
                die("%s: unrectified band %d rows, rectified %d, x-height %s" %
                    (p["file"], band_p, band_r, xh))
    if within < 0.9 * len(rect) or tilted < 15:
        die("level bands %d of %d; tilted lines checked %d" % (within, len(rect), tilted))

def cmd_binary(d, page_path):
    """--binary crops hold only 0 and 255 and are Sauvola black and white of the whole page:
    agreement with skimage threshold_sauvola(window 51 = 0.17 inch at 300 dpi, odd; k 0.34;
    R 128), ink where gray <= T, on at least 99.95% of the crop pixels (measured 100%)."""
    from skimage.filters import threshold_sauvola
    page = np.asarray(Image.open(page_path).convert("L")).astype(float)
    ink = page <= threshold_sauvola(page, window_size=51, k=0.34, r=128)
    agree = total = 0
    for r in crops(d):
        got = load(d, r)
        if r["mode"] != "binary" or not set(np.unique(got)) <= {0, 255}:
            die("%s: mode %s, values %s" % (r["file"], r["mode"], np.unique(got)[:8]))
        x0, y0, x1, y1 = r["cut_box"]
        agree += int((got == np.where(ink[y0:y1, x0:x1], 0, 255)).sum())
        total += got.size
    if total == 0 or agree < 0.9995 * total:
        die("agreement with skimage %d of %d" % (agree, total))

def cmd_only01(d):
    """Every crop holds only 0 and 255, and there is at least one."""
    rs = crops(d)
    for r in rs:
        v = set(np.unique(load(d, r)))
        if not v <= {0, 255}:
            die("%s: values %s" % (r["file"], sorted(v)[:8]))
    if not rs:
        die("no crops")

def cmd_records(d, spec):
    """The manifest's records in order equal `spec`, space-separated tokens SOURCE:PAGE (one or
    more crops of that page, one after another) and SOURCE:error:PAGE (an error record; PAGE
    null when the file did not open); every crop's file exists."""
    out, last = [], None
    for r in manifest(d):
        if r["kind"] == "page":
            continue
        if "error" in r:
            if not r["error"] or r["format"] != "lineate-crop-2" or "file" in r:
                die("bad error record %r" % r)
            out.append("%s:error:%s" % (r["source"], "null" if r["page"] is None else r["page"]))
            last = None
            continue
        if not os.path.isfile(os.path.join(d, r["file"])):
            die("missing crop file %s" % r["file"])
        key = (r["source"], r["page"], r["file"].rsplit("-l", 1)[0])
        if key != last:
            out.append("%s:%d" % (r["source"], r["page"]))
        last = key
    if out != spec.split():
        die("records %s, expected %s" % (out, spec.split()))

def cmd_names(d, *prefixes):
    """Crop file names start, input by input, with the given prefixes (NAME-pPPPP), lines
    counted from 1 within each page, and name only existing files."""
    seen = []
    for r in crops(d):
        pre = r["file"].rsplit("-l", 1)[0]
        if not seen or seen[-1] != pre:
            seen.append(pre)
            expect = 1
        if r["file"] != "%s-l%04d.png" % (pre, expect) or r["line"] != expect:
            die("%s: expected line %d" % (r["file"], expect))
        expect += 1
    if seen != list(prefixes):
        die("name prefixes %s, expected %s" % (seen, list(prefixes)))

def cmd_schema(schema_path, *dirs):
    """Every record of every manifest (and page manifest) is valid against the JSON Schema
    (python3-jsonschema, Draft 2020-12), and each page record is followed by as many line
    records as it announces."""
    try:
        import jsonschema
        validator = jsonschema.Draft202012Validator(json.load(open(schema_path)))
    except (ImportError, AttributeError):
        print("jsonschema >= 4 not available: schema validation skipped")
        return
    n = 0
    for d in dirs:
        for root, _, files in os.walk(d):
            for f in files:
                if not f.endswith(".jsonl"):
                    continue
                want = 0
                for line in open(os.path.join(root, f), encoding="utf-8"):
                    r = json.loads(line)
                    errors = list(validator.iter_errors(r))
                    if errors:
                        die("%s: %s" % (os.path.join(root, f), errors[0].message))
                    if r["kind"] == "page":
                        if want:
                            die("%s: %d line records missing" % (f, want))
                        want = r["lines"]
                    elif r["kind"] == "line":
                        want -= 1
                    n += 1
                if want:
                    die("%s: %d line records missing" % (f, want))
    if n == 0:
        die("no records")

def cmd_killed_pages(d):
    """What a killed run left: every page manifest complete (its crops in place), no
    manifest.jsonl yet, and at least one page done but not all."""
    done = 0
    for root, _, files in os.walk(d):
        for f in files:
            if f.endswith(".crops.jsonl"):
                rs = [json.loads(l) for l in open(os.path.join(root, f))]
                if rs[0]["kind"] != "page" or len(rs) != rs[0]["lines"] + 1:
                    die("%s: incomplete" % f)
                for r in rs[1:]:
                    if not os.path.isfile(os.path.join(d, r["file"])):
                        die("%s: %s missing" % (f, r["file"]))
                done += 1
    if done == 0 or os.path.exists(os.path.join(d, "manifest.jsonl")):
        die("%d pages done, manifest.jsonl present: %s" % (done, os.path.exists(os.path.join(d, "manifest.jsonl"))))

def cmd_hand_layout(src, dst):
    """A hand-corrected layout: the first line's quad replaced by the rectangle
    [100, 120, 700, 190) and the first two blocks swapped in reading order."""
    page = json.load(open(src))
    page["lines"][0]["quad"] = [[100, 120], [700, 120], [700, 190], [100, 190]]
    page["lines"][0]["box"] = [100, 120, 700, 190]
    page["blocks"][0], page["blocks"][1] = page["blocks"][1], page["blocks"][0]
    json.dump(page, open(dst, "w"))

def cmd_hand_crops(d, layout, page_path):
    """The crops follow the hand-corrected layout: the lines of its first block first, then
    the second's (order 1, 2, ... in the order the blocks list them), and the edited line cut
    at its new rectangle (--margin 0: PIL's crop of exactly that box)."""
    page = json.load(open(layout))
    want = [i + 1 for b in page["blocks"] for i in b["lines"]]
    rs = crops(d)
    if [r["line"] for r in rs][:len(want)] != want or [r["order"] for r in rs] != list(range(1, len(rs) + 1)):
        die("order: lines %s, expected %s" % ([r["line"] for r in rs][:12], want[:12]))
    edited = [r for r in rs if r["line"] == 1]
    if len(edited) != 1 or edited[0]["cut_box"] != [100, 120, 700, 190]:
        die("edited line: %r" % edited)
    ref = np.asarray(Image.open(page_path).convert("L").crop((100, 120, 700, 190)))
    if not (load(d, edited[0]) == ref).all():
        die("the edited line's crop differs from PIL's crop")

def cmd_pages(out_dir, src, *names_sizes):
    """Writes the images of a test: NAME=PAGE:TOP:BOTTOM[:1bit] cuts rows of a testdata page;
    NAME.tif=A,B,C is a multi-page TIFF of earlier cuts."""
    made = {}
    for spec in names_sizes:
        name, what = spec.split("=")
        path = os.path.join(out_dir, name)
        os.makedirs(os.path.dirname(path), exist_ok=True)
        if name.endswith(".tif"):
            ims = [made[k] for k in what.split(",")]
            ims[0].save(path, save_all=True, append_images=ims[1:], dpi=(300, 300))
            continue
        parts = what.split(":")
        im = Image.open(os.path.join(src, parts[0] + ".png")).convert("L")
        im = im.crop((0, int(parts[1]), im.width, int(parts[2])))
        if len(parts) > 3:
            im = im.point(lambda v: 255 if v >= 128 else 0).convert("1")
        im.save(path, dpi=(300, 300))
        made[name] = im

def cmd_documented(man_path, *dirs):
    """Every field of every manifest record (crops and errors) is a tag of the man page's
    "The manifest" subsection of CROP, and every tag there is a field seen."""
    lines = open(man_path, encoding="utf-8").read().splitlines()
    i = lines.index(".SH CROP")
    j = next(k for k in range(i + 1, len(lines)) if lines[k].startswith(".SH "))
    sec = lines[i:j]
    k = sec.index(".SS The manifest")
    e = next((n for n in range(k + 1, len(sec)) if sec[n].startswith(".SS ")), len(sec))
    tags = set()
    for n in range(k, e - 1):
        if sec[n].startswith(".TP"):
            t = re.sub(r"^\.[A-Z]+ ", "", sec[n + 1]).replace('"', "").replace("\\-", "-")
            tags |= {w.strip() for w in t.split(",") if w.strip()}
    seen = set()
    for d in dirs:
        for r in manifest(d):
            seen |= set(r)
    if seen != tags:
        die("manifest fields %s, man page %s" % (sorted(seen), sorted(tags)))

def cmd_options(man_path, help_path):
    """The long options of `lineate crop --help` equal the tags of the man page's
    "Crop options" subsection."""
    lines = open(man_path, encoding="utf-8").read().splitlines()
    k = lines.index(".SS Crop options")
    e = next(n for n in range(k + 1, len(lines)) if re.match(r"\.S[SH] ", lines[n]))
    tags = " ".join(lines[n + 1] for n in range(k, e - 1) if lines[n].startswith((".TP", ".TQ")))
    in_man = sorted(set(re.findall(r"--[a-z][a-z-]*", tags.replace("\\-", "-"))))
    in_help = sorted(set(m.group(1) for m in (re.match(r"\s+(?:-[A-Za-z], )?(--[a-z][a-z-]*)", l)
                                              for l in open(help_path)) if m))
    if len(in_man) < 5 or in_man != in_help:
        die("crop options: man page %s, --help %s" % (in_man, in_help))

globals()["cmd_" + sys.argv[1].replace("-", "_")](*sys.argv[2:])
EOF

cp "$testdata/newsletter.png" "$testdata/minutes.png" .
news=newsletter.png
minutes=minutes.png
# quiet: the last crop ran with exit 0, nothing on stdout, and nothing on stderr but the
# closing summary lines.
quiet() {
    test "$rc" -eq 0 -a ! -s out && ! grep -v -e ' pages done, ' -e ' line images written$' err | grep -q .
}

# ---- the newsletter: one crop per line, in reading order, equal to PIL's crops ------------------
$limit "$lineate" "$news" >news.json 2>err
check "lineate on the newsletter: exit 0" test "$?" -eq 0 -a ! -s err
crop "$news" --out-dir plain
check "crop: exit 0, nothing on stdout, a summary on stderr" quiet
n_lines=$("$python" -c 'import json, sys; print(len(json.load(open(sys.argv[1]))["lines"]))' news.json)
check "crop: the summary counts the page and its $n_lines line images" \
    test -n "$(grep '^lineate crop: 1 pages done, 0 failed, 0 skipped' err)" -a \
    -n "$(grep "^lineate crop: $n_lines line images written" err)"
check "crop: one PNG per line of 'lineate FILE', records in reading order, default margins" \
    py layout plain news.json "$news" newsletter auto
check "crop: every crop decodes with PIL at its manifest size and equals PIL's crop of the page" \
    py same-as-pil plain "$news"
# margin_run DIR MARGIN: the crops of the newsletter in DIR follow its layout with that margin
# and equal PIL's crops.
margin_run() {
    test "$rc" -eq 0 && py layout "$1" news.json "$news" newsletter "$2" &&
        py same-as-pil "$1" "$news"
}
crop --margin 0 "$news" --out-dir margin0
check "--margin 0: the crops are the line boxes, equal to PIL's crops" margin_run margin0 0
crop --margin=9 "$news" --out-dir margin9
check "--margin 9: boxes grown by 9 px, clipped to the page, equal to PIL's crops" \
    margin_run margin9 9
crop "$news" --out-dir plain2
check "a second run gives byte-identical crops and manifest" diff -r plain plain2
crop --rectify "$news" --out-dir level
check "--rectify on a page without skew: the page itself at the cut box (white outside)" \
    py level-rectified level "$news"

# ---- --rectify against a known rotation ---------------------------------------------------------
py rotate "$minutes" minutes-rot4.png 4
crop --rectify minutes-rot4.png --out-dir rot-rect
check "--rectify on the rotated minutes: exit 0, nothing on stderr but the summary" quiet
crop minutes-rot4.png --out-dir rot-plain
crop "$minutes" --out-dir minutes-level
check "rectified crops undo PIL's 4-degree rotation: level bands, sizes, correlation" \
    py rectify rot-rect rot-plain minutes-level "$minutes" minutes-rot4.png 4

# ---- --binary -----------------------------------------------------------------------------------
crop --binary "$news" --out-dir binary
check "--binary: exit 0" quiet
if "$python" -c 'import skimage.filters' >/dev/null 2>&1; then
    check "--binary crops hold only 0 and 255 and agree with skimage's Sauvola of the page" \
        py binary binary "$news"
else
    echo "note: python3-skimage missing, --binary only checked for 0 and 255"
    check "--binary crops hold only 0 and 255" py only01 binary
fi
crop --binary --rectify minutes-rot4.png --out-dir rot-binary
check "--binary --rectify on a skewed page: exit 0" quiet
check "--binary --rectify on a skewed page: only 0 and 255" py only01 rot-binary

# ---- 1-bit pages, multi-page TIFF, folders, names shared by several inputs ----------------------
py pages . "$testdata" in/a/scan.png=newsletter:250:1000 in/b/scan.png=minutes:250:900 \
    in/c/scan.png=bulletin:300:800:1bit in/scan.tif=in/a/scan.png,in/b/scan.png,in/c/scan.png
crop in/c/scan.png --out-dir onebit
check "a 1-bit page: exit 0" quiet
check "a 1-bit page: crops of 0 and 255 only" py only01 onebit
check "a 1-bit page: crops equal PIL's crops of the page converted to 8-bit gray" \
    py same-as-pil onebit in/c/scan.png
crop in/a/scan.png in/b/scan.png in/scan.tif in/a/scan.png --out-dir twice
check "the same input twice: refused at start, exit 2, one line naming it, nothing written" \
    test "$rc" -eq 2 -a "$(nlines err)" -eq 1 -a ! -e twice -a \
    -n "$(grep -F 'in/a/scan.png and in/a/scan.png would both write twice/in/a/scan.crops.jsonl' err)"
crop in/a/scan.png in/b/scan.png in/scan.tif --out-dir shared
check "inputs sharing a base name: exit 0" quiet
check "names mirror the paths given (in/a/scan, in/b/scan); TIFF pages p0001..p0003" \
    py names shared in/a/scan-p0001 in/b/scan-p0001 in/scan-p0001 in/scan-p0002 in/scan-p0003
check "the manifest follows input, page and line order" \
    py records shared "in/a/scan.png:1 in/b/scan.png:1 in/scan.tif:1 in/scan.tif:2
        in/scan.tif:3"
crop in --out-dir folder
check "a folder: exit 0" quiet
check "a folder: its images at any depth, in byte order of their paths" \
    py records folder "in/a/scan.png:1 in/b/scan.png:1 in/c/scan.png:1 in/scan.tif:1
        in/scan.tif:2 in/scan.tif:3"
# tiff_same: each page of in/scan.tif gave byte-identical crops to the PNG file holding the
# same pixels (a/scan, b/scan, c/scan below the folder).
tiff_same() {
    for p in 1 2 3; do
        case $p in 1) png=a/scan ;; 2) png=b/scan ;; *) png=c/scan ;; esac
        n=0
        for f in folder/scan-p000$p-l*.png; do
            [ -e "$f" ] && cmp -s "$f" "folder/$png-p0001-${f##*-}" || return 1
            n=$((n + 1))
        done
        [ "$n" -gt 0 ] || return 1
    done
}
check "TIFF pages give the same crops as PNG files of the same pixels (1-bit included)" tiff_same

# ---- bad inputs ---------------------------------------------------------------------------------
head -c 3000 in/a/scan.png >in/truncated.png
mkdir in/empty-folder
crop in/a/scan.png in/missing.png in/truncated.png in/empty-folder in/b/scan.png --out-dir bad
check "a missing file, a truncated PNG and an empty folder among good files: exit 1" \
    test "$rc" -eq 1 -a ! -s out
grep -v -e ' pages done, ' -e ' line images written$' err >err-lines
check "bad inputs: one stderr line each, naming the file" \
    test "$(nlines err-lines)" -eq 3 -a "$(grep -c -F in/missing.png err-lines)" -eq 1 -a \
    "$(grep -c -F in/truncated.png err-lines)" -eq 1 -a "$(grep -c -F in/empty-folder err-lines)" -eq 1
check "bad inputs: an error record for each file in input order, crops for the good files" \
    py records bad "in/a/scan.png:1 in/missing.png:error:null in/truncated.png:error:1
        in/b/scan.png:1"
# same_crops A B PREFIX: the crops PREFIX-* of folder A are in B, byte for byte.
same_crops() {
    n=0
    for f in "$1/$3"-*.png; do
        [ -e "$f" ] && cmp -s "$f" "$2/${f#"$1"/}" || return 1
        n=$((n + 1))
    done
    [ "$n" -gt 0 ]
}
check "bad inputs: the good files' crops are those of a run without them" \
    same_crops shared bad in/a/scan-p0001
check "bad inputs: the good files' crops are those of a run without them (second file)" \
    same_crops shared bad in/b/scan-p0001
check "bad inputs: no temporary file left" \
    test "$(find bad -type f | grep -v -c -e '\.png$' -e '\.jsonl$')" -eq 0

# ---- an unwritable output folder: exit 3, no manifest -------------------------------------------
: >a-file
crop in/a/scan.png --out-dir a-file
check "--out-dir naming a regular file: exit 3, one stderr line naming it" \
    test "$rc" -eq 3 -a "$(nlines err)" -eq 1 -a "$(grep -c a-file err)" -eq 1
crop in/a/scan.png --out-dir a-file/sub
check "--out-dir below a regular file: exit 3, nothing created" \
    test "$rc" -eq 3 -a "$(nlines err)" -eq 1 -a ! -e a-file/sub -a ! -s a-file
check "the failed runs left no manifest and no temporary file" \
    test -z "$(find . -name 'manifest.jsonl.tmp*')" -a ! -s a-file
mkdir locked
chmod 555 locked
if ! (: >locked/probe) 2>/dev/null; then
    crop in/a/scan.png --out-dir locked
    check "--out-dir without write permission: exit 3, the folder left empty" \
        test "$rc" -eq 3 -a -z "$(ls -A locked)"
else
    rm -f locked/probe
    echo "note: running as root, a folder without write permission is still writable"
fi
crop in/missing.png --out-dir a-file
check "a bad input and an unwritable folder: exit 3" test "$rc" -eq 3

# ---- usage errors: exit 2, one line, nothing created --------------------------------------------
while IFS='|' read -r args word; do
    # shellcheck disable=SC2086 # the arguments are meant to be split
    crop $args </dev/null
    check "usage error 'crop $args': exit 2, one stderr line naming '$word'" \
        test "$rc" -eq 2 -a ! -s out -a "$(nlines err)" -eq 1 -a "$(grep -c -e "$word" err)" -eq 1
done <<'EOF'
in/a/scan.png|--out-dir
--out-dir never|input
--out-dir never --margin -1 in/a/scan.png|--margin
--out-dir never --margin 1.5 in/a/scan.png|--margin
--out-dir never --margin x in/a/scan.png|--margin
--out-dir never --dpi 5 in/a/scan.png|--dpi
--out-dir never --no-such-option in/a/scan.png|--no-such-option
--out-dir never in/a/scan.png --margin|--margin
EOF
check "usage errors create no output folder" test ! -e never

# ---- threads, a killed run resumed -----------------------------------------------------------
# The pages of the corpus excerpt in testdata/corpus (4 pages) and three test pages.
mkdir many
cp "$testdata"/corpus/*.png many/
cp "$testdata/newsletter.png" "$testdata/minutes.png" "$testdata/bulletin.png" many/
crop -j 1 many --out-dir threads1
check "-j 1 over 7 pages: exit 0" quiet
crop -j 2 many --out-dir threads2
check "-j 2 gives the crops and manifests of -j 1, byte for byte" diff -r threads1 threads2
check "-j 2: the summary names 2 threads" grep -q ' 2 threads$' err
"$lineate" crop -j 1 many --out-dir killed 2>/dev/null & # no timeout wrapper: $! is lineate
pid=$!
i=0
while [ "$(find killed -name '*.crops.jsonl' 2>/dev/null | wc -l)" -lt 3 ] && [ $i -lt 1200 ]; do
    sleep 0.05
    i=$((i + 1))
done
kill -9 $pid 2>/dev/null
wait $pid 2>/dev/null
check "a run killed after some pages: their page manifests complete, no manifest.jsonl yet" \
    py killed-pages killed
crop -j 2 --resume many --out-dir killed
check "the run resumed with -j 2: exit 0, the pages done skipped" \
    test "$rc" -eq 0 && grep -q ' [1-9] skipped' err
check "the resumed run gives the crops and manifests of an uninterrupted one, byte for byte" \
    diff -r threads1 killed
crop -j 2 --resume many --out-dir killed
check "resumed again: every page skipped" grep -q '0 pages done, 0 failed, 7 skipped' err
rm killed/bulletin-p0001-l0003.png
crop --resume many --out-dir killed
check "a crop file lost: its page redone, the others skipped" \
    grep -q '1 pages done, 0 failed, 6 skipped' err && diff -r threads1 killed
crop --resume --margin 0 many/bulletin.png --out-dir killed
check "resumed with other settings: the page is not taken as done" grep -q '1 pages done' err

# ---- crops from a saved layout, and from a hand-corrected one --------------------------------
$limit "$lineate" many >many.jsonl 2>/dev/null
crop --layout many.jsonl many --out-dir saved
check "--layout: exit 0" quiet
check "--layout with the stream of the same run: the same crops as the analysis" \
    diff -r -x '*.jsonl' threads1 saved
check "--layout: the manifest differs only in naming the layout" \
    sh -c 'sed "s|\"layout\":\"many.jsonl\"|\"layout\":\"analysis\"|" saved/manifest.jsonl | cmp -s - threads1/manifest.jsonl'
py hand-layout news.json hand.json
crop --layout hand.json --margin 0 "$news" --out-dir hand
check "--layout hand-corrected: exit 0" quiet
check "--layout hand-corrected: crops in its reading order, the edited line at its new box" \
    py hand-crops hand hand.json "$news"
crop --layout hand.json "$minutes" --out-dir wrong
check "--layout of another image: exit 1, one line naming the layout and both sources" \
    test "$rc" -eq 1 -a -n "$(grep -F "hand.json: the layout of page 1 is of $news, not of $minutes" err)"

# ---- the analysis options of the main command ---------------------------------------------------
$limit "$lineate" --rtl "$news" >news-rtl.json 2>/dev/null
crop --rtl "$news" --out-dir rtl
check "--rtl: the crops follow the right-to-left layout of 'lineate --rtl'" \
    py layout rtl news-rtl.json "$news" newsletter auto
check "--rtl: a reading order other than the default's" \
    test "$(cmp -s news.json news-rtl.json; echo $?)" -ne 0
$limit "$lineate" --window 31 --k 0.2 --max-skew 3 --dpi 200 --force-dpi "$news" >news-opts.json 2>/dev/null
crop --window 31 --k 0.2 --max-skew 3 --dpi 200 --force-dpi "$news" --out-dir opts
check "--window, --k, --max-skew, --dpi, --force-dpi: the crops of that analysis" \
    py layout opts news-opts.json "$news" newsletter auto
crop --max-pixels 1000 "$news" --out-dir small
check "--max-pixels: the page refused, exit 1, an error record" \
    test "$rc" -eq 1 && py records small "newsletter.png:error:1"
printf '%s\n' "$news" >list
crop --from list --progress --out-dir from
check "--from and --progress: the listed page, a progress line" \
    test "$rc" -eq 0 && grep -q 'progress: 1/1 files' err && diff -r -x '*.jsonl' plain from

# ---- a file name that is not UTF-8 ---------------------------------------------------------------
mkdir odd
cp in/a/scan.png "odd/$(printf 'scan\377')".png
crop odd --out-dir odd-out
check "a name that is not UTF-8: exit 0" quiet
check "a name that is not UTF-8: strict UTF-8 JSON, the exact names in source_bytes and file_bytes" \
    "$python" -c '
import json, os, sys, urllib.parse
rs = [json.loads(l.decode("utf-8")) for l in open(sys.argv[1] + "/manifest.jsonl", "rb")]
lines = [r for r in rs if r["kind"] == "line"]
assert lines and all(urllib.parse.unquote_to_bytes(r["source_bytes"]) == b"odd/scan\xff.png" for r in rs)
for r in lines:
    assert os.path.isfile(os.path.join(sys.argv[1].encode(), urllib.parse.unquote_to_bytes(r["file_bytes"])))
' odd-out
crop --resume odd --out-dir odd-out
check "a name that is not UTF-8: --resume finds its page complete" grep -q '0 pages done, 0 failed, 1 skipped' err

# ---- help and the man page ----------------------------------------------------------------------
crop --help
check "crop --help: exit 0, usage on stdout" test "$rc" -eq 0 -a -s out -a ! -s err
cp out crop-help.txt
check "crop --help and the man page's crop options list the same long options" \
    py options "$man" crop-help.txt
check "every manifest field written above is described in the man page's CROP section" \
    py documented "$man" plain rot-rect binary shared bad odd-out
check "every manifest record is valid against schema/lineate-crop.schema.json" \
    py schema "$srcdir/schema/lineate-crop.schema.json" plain level rot-rect binary shared folder \
    bad threads1 threads2 killed hand odd-out
check "the man page SYNOPSIS shows the crop command" grep -q '^\.B lineate crop$' "$man"

echo "crop.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

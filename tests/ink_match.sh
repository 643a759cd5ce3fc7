#!/bin/sh
# lineate score --match ink on truth drawn loosely on purpose: the truth of testdata/corpus
# (one page of it turned by 3.18 degrees) with every line's quad grown in its own frame to
# 2.2 times its height, 0.3 heights above the ink and 0.9 below (as annotation tools draw
# around a baseline), written as PAGE XML by tests/truth_to_xml.py. Matched on box areas the
# loose truth meets lineate's lines at an IoU under 0.5 (F1 near 0); matched on ink it scores
# as the tight truth does (within 0.06 on every page). The tight truth
# scores the same on ink as on boxes. Bad uses: an image not found, --images without
# --match ink, a bad mode.
set -u
test_name=ink_match
test_modules=xml.etree.ElementTree
test_timeout=300
. "${top_srcdir:-.}/tests/harness.sh"

corpus=$testdata/corpus
$limit "$lineate" -j 2 --out-dir pred "$corpus" 2>/dev/null
mkdir -p loose
"$python" - "$corpus" loose <<'PY' || exit 1
import glob, json, math, os, sys
src, dst = sys.argv[1], sys.argv[2]
for path in sorted(glob.glob(src + "/*.gt.json")):
    g = json.load(open(path))
    for l in g["lines"]:
        q = l["quad"]  # top-left, top-right, bottom-right, bottom-left in the line's frame
        h = math.dist(q[0], q[3])
        ux, uy = (q[3][0] - q[0][0]) / h, (q[3][1] - q[0][1]) / h  # down the line's frame
        up, down = 0.3 * h, 0.9 * h
        quad = [(q[0][0] - ux * up, q[0][1] - uy * up), (q[1][0] - ux * up, q[1][1] - uy * up),
                (q[2][0] + ux * down, q[2][1] + uy * down), (q[3][0] + ux * down, q[3][1] + uy * down)]
        quad = [(min(max(x, 0), g["width"]), min(max(y, 0), g["height"])) for x, y in quad]
        l["quad"] = [list(p) for p in quad]
        l["box"] = [math.floor(min(p[0] for p in quad)), math.floor(min(p[1] for p in quad)),
                    math.ceil(max(p[0] for p in quad)), math.ceil(max(p[1] for p in quad))]
    name = os.path.basename(path)[:-len(".gt.json")]
    json.dump(g, open("%s/%s.json" % (dst, name), "w"))
PY
for f in loose/*.json; do
    "$python" "$srcdir/tests/truth_to_xml.py" page "$f" "${f%.json}.page.xml" && rm "$f" ||
        fail "converting $f"
done

"$lineate" score --json --per-page "$corpus" pred >tight-box.json
"$lineate" score --json --per-page --match ink "$corpus" pred >tight-ink.json
"$lineate" score --json --per-page loose pred >loose-box.json
"$lineate" score --json --per-page --match ink --images "$corpus" loose pred >loose-ink.json
check "the four scores ran" test -s tight-box.json -a -s tight-ink.json -a -s loose-box.json \
    -a -s loose-ink.json

"$python" - <<'PY'
import json, sys
def load(path):
    d = json.load(open(path))
    return d["summary"]["f1_50"], {p["name"]: p["f1_50"] for p in d["pages"]}
tight_box, tb = load("tight-box.json")
tight_ink, ti = load("tight-ink.json")
loose_box, lb = load("loose-box.json")
loose_ink, li = load("loose-ink.json")
print("F1 at IoU 0.5: tight truth %.3f on boxes, %.3f on ink; loose truth %.3f on boxes, %.3f on ink"
      % (tight_box, tight_ink, loose_box, loose_ink))
for name in sorted(tb):
    print("  %-28s tight %.3f / %.3f   loose %.3f / %.3f" % (name, tb[name], ti[name], lb[name], li[name]))
bad = 0
def check(ok, what):
    global bad
    print(("ok: " if ok else "FAIL: ") + what)
    bad += not ok
check(loose_box < 0.2, "loose truth on box areas: F1 %.3f under 0.2" % loose_box)
check(loose_ink >= tight_box - 0.03, "loose truth on ink: F1 %.3f within 0.03 of the tight truth's %.3f"
      % (loose_ink, tight_box))
check(all(li[n] >= tb[n] - 0.06 for n in tb), "loose truth on ink: every page within 0.06 of its tight F1")
check(abs(tight_ink - tight_box) < 0.005, "tight truth: the same F1 on ink as on boxes")
sys.exit(1 if bad else 0)
PY
check "matching on ink scores loose truth as the tight truth" test $? -eq 0

"$lineate" score --match ink loose pred >/dev/null 2>noimage.err
rc=$?
check "--match ink without the page image: exit 1, a message that names it" \
    sh -c "test $rc -eq 1 && grep -q 'cannot find the page image' noimage.err && test \$(wc -l <noimage.err) -eq 1"
"$lineate" score --images "$corpus" loose pred >/dev/null 2>images.err
check "--images without --match ink: exit 2" test $? -eq 2
"$lineate" score --match pixels loose pred >/dev/null 2>mode.err
check "--match pixels: exit 2" test $? -eq 2

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]

#!/bin/sh
# End to end: lineate on the corpus excerpt in testdata/corpus (real pages with ground truth,
# see testdata/README.md), scored with `lineate score`; the output must validate against the
# JSON Schema (python3-jsonschema) and stay above the accuracy floors below.
set -u
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
PYTHON3=${PYTHON3:-/usr/bin/python3}
bin=$top_builddir/lineate
[ -x "$bin" ] || { echo "no lineate binary"; exit 77; }
"$PYTHON3" -c 'import jsonschema' 2>/dev/null || { echo "python3-jsonschema missing"; exit 77; }
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
for img in "$top_srcdir"/testdata/corpus/*.png; do
    name=$(basename "$img" .png)
    "$bin" -o "$tmp/$name.json" "$img" || { echo "FAIL: lineate $img"; exit 1; }
done
"$bin" score --json --per-page "$top_srcdir/testdata/corpus" "$tmp" > "$tmp/score.json" ||
    { echo "FAIL: lineate score"; exit 1; }
"$PYTHON3" - "$tmp" "$top_srcdir/schema/lineate-layout.schema.json" <<'PY'
import glob, json, sys
tmp, schema_path = sys.argv[1], sys.argv[2]
from jsonschema import Draft202012Validator
validator = Draft202012Validator(json.load(open(schema_path)))
failed = 0
def check(ok, what):
    global failed
    print(("ok   " if ok else "FAIL ") + what)
    failed += not ok
for path in sorted(glob.glob(tmp + "/*.json")):
    if path.endswith("/score.json"):
        continue
    for line in open(path):
        errors = list(validator.iter_errors(json.loads(line)))
        check(not errors, "schema: " + path.rsplit("/", 1)[1] +
              ("" if not errors else ": " + errors[0].message))
score = json.load(open(tmp + "/score.json"))
# Floors measured when they were set, less a margin for tuning noise (figures in DEVELOPERS.md).
page_floor = {"linguex_linguex-doc_p001-d": 0.88, "mnras_mnras_guide_p002": 0.96,
              "onrannual_skeleton_p001-d": 0.96, "ulthese_ulthese_p002": 0.95}
for page in score["pages"]:
    name = page["name"]
    floor = page_floor.get(name, 0.9)
    check(page["f1_50"] >= floor, "%s: F1@0.5 %.3f >= %.2f" % (name, page["f1_50"], floor))
s = score["summary"]
check(s["f1_50"] >= 0.95, "all pages: F1@0.5 %.3f >= 0.95" % s["f1_50"])
check(s["cross_column_merges"] == 0, "no lines merged across columns (%d)" % s["cross_column_merges"])
check(s["side_by_side_merges"] == 0, "no lines merged side by side (%d)" % s["side_by_side_merges"])
check(s["tau_median"] >= 0.98, "reading order: median tau %.3f >= 0.98" % s["tau_median"])
check(s["skew_error_max_deg"] <= 0.05, "skew: worst error %.3f deg <= 0.05" % s["skew_error_max_deg"])
sys.exit(1 if failed else 0)
PY

#!/bin/sh
# Scoring with PAGE XML and ALTO: the truth of every page of a corpus (testdata/corpus in make
# check; any folder of NAME.png + NAME.gt.json with `make score-xml-corpus CORPUS=DIR`)
# converted to PAGE and to ALTO by tests/truth_to_xml.py (Python's xml.etree, not lineate's
# writer) scores lineate's predictions exactly as the original truth does (F1, tau, splits,
# merges, order by cover, to the third decimal); lineate's own PAGE and ALTO output scored
# against its JSON gives F1 1.000 and tau 1.000 on every page; the converted truth validates
# against the published schemas when ../shared/standards is there. In make check also: bad
# XML inputs give exit 1 and a one-line message naming the file.
set -u
test_name=xml_score
test_modules=xml.etree.ElementTree
test_timeout=600
. "${top_srcdir:-.}/tests/harness.sh"

corpus=${1:-$testdata/corpus}
standards="${LT_SHARED_DIR:-$srcdir/../shared}/standards"
xmllint=${XMLLINT:-$(command -v xmllint)}

mkdir -p pred page alto
$limit "$lineate" -j 2 --out-dir pred "$corpus" 2>/dev/null
$limit "$lineate" -j 2 --format page --out-dir pred-page "$corpus" 2>/dev/null
$limit "$lineate" -j 2 --format alto --out-dir pred-alto "$corpus" 2>/dev/null
converted=0
for gt in "$corpus"/*.gt.json; do
    name=$(basename "$gt" .gt.json)
    "$python" "$srcdir/tests/truth_to_xml.py" page "$gt" "page/$name.page.xml" &&
        "$python" "$srcdir/tests/truth_to_xml.py" alto "$gt" "alto/$name.alto.xml" ||
        { fail "converting $gt"; continue; }
    converted=$((converted + 1))
done
check "truth converted to PAGE and ALTO ($converted pages)" test "$converted" -gt 0

if [ -f "$standards/page-2019-07-15/pagecontent.xsd" ] && [ -n "$xmllint" ]; then
    find page -name '*.xml' | xargs "$xmllint" --nonet --noout \
        --schema "$standards/page-2019-07-15/pagecontent.xsd" >page.valid 2>&1
    check "converted PAGE truth valid against pagecontent.xsd" \
        test "$(grep -c ' validates$' page.valid)" -eq "$converted"
    find alto -name '*.xml' | XML_CATALOG_FILES="$standards/catalog.xml" xargs "$xmllint" \
        --nonet --noout --schema "$standards/alto-4-4/alto-4-4.xsd" >alto.valid 2>&1
    check "converted ALTO truth valid against alto-4-4.xsd" \
        test "$(grep -c ' validates$' alto.valid)" -eq "$converted"
else
    echo "note: $standards or xmllint absent: the converted truth is not validated"
fi

for truth in "$corpus" page alto; do
    tag=$(basename "$truth")
    "$lineate" score --json --per-page "$truth" pred >"score-$tag.json"
    check "lineate score $tag truth: exit 0" test $? -eq 0
done
"$lineate" score --json --per-page pred pred-page >round-page.json
check "score JSON truth against lineate's PAGE: exit 0" test $? -eq 0
"$lineate" score --json --per-page pred pred-alto >round-alto.json
check "score JSON truth against lineate's ALTO: exit 0" test $? -eq 0
"$lineate" score --json --per-page pred-page pred >round-page-truth.json
check "score lineate's PAGE as truth against its JSON: exit 0" test $? -eq 0

"$python" - "$(basename "$corpus")" <<'PY'
import json, sys
corpus = sys.argv[1]
# The figures that must agree; the order by cover is judged on boxes turned level by the
# quads, which PAGE can only give in whole pixels, so a pixel may change which prediction
# covers a line most: for PAGE its differences are reported, not failed.
keys = ["truth_lines", "pred_lines", "f1_50", "f1_75", "splits", "merges", "side_by_side_merges",
        "cross_column_merges", "tau"]
cover_keys = ["out_of_place_share", "backward_steps", "uncovered_lines"]
def pages(path):
    return {p["name"]: p for p in json.load(open(path))["pages"]}
def same(a, b):
    if a is None or b is None:
        return a is b
    return round(a, 3) == round(b, 3)
def differing(a, b, ks):
    return {k: (a.get(k), b.get(k)) for k in ks if not same(a.get(k), b.get(k))}
base = pages("score-%s.json" % corpus)
bad = 0
for fmt in ("page", "alto"):
    other = pages("score-%s.json" % fmt)
    diff = [n for n in base if n not in other or differing(base[n], other[n], keys)]
    cover_diff = [n for n in base if n in other and differing(base[n], other[n], cover_keys)]
    summ = json.load(open("score-%s.json" % fmt))["summary"]
    print("%s truth: %d of %d pages score as the original truth; F1 %.3f, tau median %s, "
          "splits %d, merges %d; order by cover the same on %d pages" %
          (fmt.upper(), len(base) - len(diff), len(base), summ["f1_50"], summ["tau_median"],
           summ["splits"], summ["merges"], len(base) - len(cover_diff)))
    for n in diff[:10]:
        print("  differs: %s: %s" % (n, differing(base[n], other.get(n, {}), keys)))
    for n in cover_diff[:10]:
        print("  order by cover differs: %s: %s" % (n, differing(base[n], other[n], cover_keys)))
    bad += len(diff) > 0 or (fmt == "alto" and len(cover_diff) > 0)
orig = json.load(open("score-%s.json" % corpus))["summary"]
print("original truth: F1 %.3f, tau median %s, splits %d, merges %d" %
      (orig["f1_50"], orig["tau_median"], orig["splits"], orig["merges"]))
for path, what in (("round-page.json", "PAGE"), ("round-alto.json", "ALTO"),
                   ("round-page-truth.json", "PAGE as truth")):
    ps = json.load(open(path))["pages"]
    perfect = [p for p in ps if round(p["f1_50"], 3) == 1.0 and
               (p["tau"] is None or round(p["tau"], 3) == 1.0)]
    print("lineate JSON vs lineate %s: %d of %d pages F1 1.000 and tau 1.000" %
          (what, len(perfect), len(ps)))
    for p in ps:
        if p not in perfect:
            print("  not perfect: %s F1 %s tau %s" % (p["name"], p["f1_50"], p["tau"]))
    bad += len(perfect) != len(ps) or not ps
sys.exit(1 if bad else 0)
PY
check "PAGE and ALTO truth score as the original; lineate's PAGE and ALTO round trip at 1.000" \
    test $? -eq 0

# The score output and the corpus truth against their JSON Schemas (python3-jsonschema).
"$python" - "$srcdir/schema" "$corpus" score-*.json round-*.json <<'PY'
import glob, json, sys
try:
    from jsonschema import Draft202012Validator
except ImportError:
    print("note: python3-jsonschema missing: schemas not checked")
    sys.exit(0)
schema_dir, corpus, outputs = sys.argv[1], sys.argv[2], sys.argv[3:]
score = Draft202012Validator(json.load(open(schema_dir + "/lineate-score.schema.json")))
truth = Draft202012Validator(json.load(open(schema_dir + "/lineseg-gt.schema.json")))
bad = 0
for path, v in [(p, score) for p in outputs] + [(p, truth) for p in sorted(glob.glob(corpus + "/*.gt.json"))]:
    errors = list(v.iter_errors(json.load(open(path))))
    if errors:
        bad += 1
        print("FAIL schema: %s: %s at %s" % (path, errors[0].message, list(errors[0].path)))
print("%d files checked against lineate-score / lineseg-gt schemas, %d invalid" %
      (len(outputs) + len(glob.glob(corpus + "/*.gt.json")), bad))
sys.exit(1 if bad else 0)
PY
check "score --json output and the corpus truth valid against their JSON Schemas" test $? -eq 0

if [ $# -eq 0 ]; then
    # Bad XML: exit 1, one line on stderr that names the file and the reason.
    printf '<?xml version="1.0"?>\n<PcGts><Page imageFilename="a.png"' >cut.xml
    printf '<?xml version="1.0"?>\n<html><body/></html>\n' >html.xml
    printf '<?xml version="1.0"?>\n<alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Description><MeasurementUnit>mm10</MeasurementUnit></Description><Layout><Page ID="p" PHYSICAL_IMG_NR="1" WIDTH="10" HEIGHT="10"/></Layout></alto>\n' >mm10.xml
    printf '<?xml version="1.0"?>\n<PcGts><Page imageFilename="a.png" imageWidth="100" imageHeight="100"><ReadingOrder><OrderedGroup id="g"><RegionRefIndexed index="0" regionRef="nowhere"/></OrderedGroup></ReadingOrder></Page></PcGts>\n' >ref.xml
    printf '<?xml version="1.0"?>\n<PcGts><Page imageFilename="a.png" imageWidth="100" imageHeight="100"><TextRegion id="r"><TextLine id="l"><Coords points="1,2 x,4"/></TextLine></TextRegion></Page></PcGts>\n' >points.xml
    printf '<?xml version="1.0"?>\n<!DOCTYPE PcGts [<!ENTITY ext SYSTEM "file:///etc/passwd">]>\n<PcGts><Page imageFilename="&ext;" imageWidth="100" imageHeight="100"/></PcGts>\n' >entity.xml
    printf '<?xml version="1.0"?>\n<!DOCTYPE PcGts [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;"><!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;"><!ENTITY d "&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;"><!ENTITY e "&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;"><!ENTITY f "&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;"><!ENTITY g "&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;">]>\n<PcGts><Page imageFilename="&g;&g;&g;&g;&g;&g;&g;&g;&g;&g;" imageWidth="100" imageHeight="100"/></PcGts>\n' >laughs.xml
    for f in cut html mm10 ref points entity laughs; do
        $limit "$lineate" score "$f.xml" pred/mnras_mnras_guide_p002.json >/dev/null 2>"$f.err"
        rc=$?
        check "bad XML ($f): exit 1, one line naming the file" \
            test "$rc" -eq 1 -a "$(nlines "$f.err")" -eq 1 -a "$(grep -c "$f.xml" "$f.err")" -eq 1
        cat "$f.err"
    done
    check "an external entity is refused, not fetched" grep -q "external entity" entity.err
fi

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]

#!/bin/sh
# The PAGE XML and ALTO writers (--format page|alto): every document written for the test
# pages validates against the published schemas (PAGE content 2019-07-15, ALTO 4.4) with
# libxml2's xmllint, read from ../shared/standards (skipped when that folder is absent); file
# names with --out-dir; one document per page on standard output; and the documents say what
# the JSON says (lines, regions, roles, reading order, lines light on dark as PAGE's
# TextStyle/@reverseVideo), read back with Python's xml.etree.
set -u
test_name=xml_formats
test_modules=xml.etree.ElementTree
test_timeout=300
. "${top_srcdir:-.}/tests/harness.sh"

standards="${LT_SHARED_DIR:-$srcdir/../shared}/standards"
xmllint=${XMLLINT:-$(command -v xmllint)}
if [ ! -f "$standards/page-2019-07-15/pagecontent.xsd" ]; then
    echo "SKIP: $standards (the published PAGE and ALTO schemas) is absent"
    exit 77
fi
if [ -z "$xmllint" ]; then
    echo "SKIP: xmllint not found (Debian: libxml2-utils)"
    exit 77
fi

pages="$testdata/newsletter.png $testdata/bulletin.png $testdata/hard-3col.png"
for img in "$testdata"/corpus/*.png; do pages="$pages $img"; done
# A page in negative (a known transformation: 255 - gray), whose lines are light on dark.
if "$python" -c 'import PIL' >/dev/null 2>&1; then
    "$python" -c 'import sys; from PIL import Image, ImageOps
ImageOps.invert(Image.open(sys.argv[1]).convert("L")).save(sys.argv[2])' \
        "$testdata/newsletter.png" "$PWD/negative.png" && pages="$pages $PWD/negative.png"
fi
# shellcheck disable=SC2086
$limit "$lineate" -j 2 --out-dir json $pages 2>/dev/null
for fmt in page alto; do
    # shellcheck disable=SC2086
    $limit "$lineate" -j 2 --format $fmt --out-dir $fmt $pages 2>"$fmt.err"
    check "--format $fmt --out-dir: exit 0" test $? -eq 0
    n=$(find $fmt -name "*.$fmt.xml" | wc -l)
    check "--format $fmt: one NAME.$fmt.xml per page ($n)" test "$n" -eq "$(echo $pages | wc -w)"
done

# Validation: PAGE directly; ALTO through the catalog that maps the XLink schema it imports.
find page -name '*.page.xml' | sort >page.list
find alto -name '*.alto.xml' | sort >alto.list
# shellcheck disable=SC2046
"$xmllint" --nonet --noout --schema "$standards/page-2019-07-15/pagecontent.xsd" \
    $(cat page.list) >page.valid 2>&1
check "every PAGE document validates against pagecontent.xsd" \
    test "$(grep -c ' validates$' page.valid)" -eq "$(nlines page.list)"
# shellcheck disable=SC2046
XML_CATALOG_FILES="$standards/catalog.xml" "$xmllint" --nonet --noout \
    --schema "$standards/alto-4-4/alto-4-4.xsd" $(cat alto.list) >alto.valid 2>&1
check "every ALTO document validates against alto-4-4.xsd" \
    test "$(grep -c ' validates$' alto.valid)" -eq "$(nlines alto.list)"
grep -v ' validates$' page.valid alto.valid | head -n 5

# Content: the same lines (Coords the JSON polygon), regions and order as the JSON of the same
# run.
"$python" - json page alto <<'PY'
import glob, json, os, sys
import xml.etree.ElementTree as ET
jdir, pdir, adir = sys.argv[1:4]
P = "{http://schema.primaresearch.org/PAGE/gts/pagecontent/2019-07-15}"
A = "{http://www.loc.gov/standards/alto/ns-v4#}"
page_type = {"body": "paragraph", "heading": "heading", "page-header": "header",
             "page-footer": "footer", "page-number": "page-number", "caption": "caption",
             "footnote": "footnote", "margin-note": "marginalia", "list-item": "paragraph"}
bad = 0
for jpath in sorted(glob.glob(jdir + "/**/*.json", recursive=True)):
    rel = os.path.relpath(jpath, jdir)[:-len(".json")]
    lay = json.loads(open(jpath).read())
    text_blocks = [b for b in lay["blocks"] if b["kind"] == "text" and b["lines"]]
    page = ET.parse("%s/%s.page.xml" % (pdir, rel)).getroot().find(P + "Page")
    regions = {r.get("id"): r for r in page.iter(P + "TextRegion")}
    order = [ref.get("regionRef") for ref in page.find(P + "ReadingOrder").iter(P + "RegionRefIndexed")]
    page_lines = [l for rid in order for l in regions[rid].findall(P + "TextLine")]
    types = [regions[rid].get("type") for rid in order]
    seps = len(page.findall(P + "SeparatorRegion"))
    pics = len(page.findall(P + "ImageRegion"))
    alto = ET.parse("%s/%s.alto.xml" % (adir, rel)).getroot()
    alto_lines = list(alto.iter(A + "TextLine"))
    alto_blocks = list(alto.iter(A + "TextBlock"))
    problems = []
    if int(page.get("imageWidth")) != lay["width"] or int(page.get("imageHeight")) != lay["height"]:
        problems.append("PAGE image size")
    if len(page_lines) != len(lay["lines"]):
        problems.append("PAGE lines %d, JSON %d" % (len(page_lines), len(lay["lines"])))
    if types != [page_type[b["role"]] for b in text_blocks]:
        problems.append("PAGE region types or order")
    if seps != sum(b["kind"] == "rule" for b in lay["blocks"]) or \
       pics != sum(b["kind"] == "picture" for b in lay["blocks"]):
        problems.append("PAGE separators / images")
    for l, j in zip(page_lines, lay["lines"]):
        # Coords: the line's polygon (its quad when it has none), in whole pixels
        got = [tuple(map(int, p.split(","))) for p in l.find(P + "Coords").get("points").split()]
        want = j.get("polygon", j["quad"])
        if len(got) != len(want) or any(abs(g[0] - w[0]) > 1 or abs(g[1] - w[1]) > 1
                                         for g, w in zip(got, want) if 0 < w[0] < lay["width"] and 0 < w[1] < lay["height"]):
            problems.append("PAGE Coords %s are not the JSON outline %s" % (got[:4], want[:4]))
            break
    reverse = [l.find(P + "TextStyle") is not None and l.find(P + "TextStyle").get("reverseVideo") == "true"
               for l in page_lines]
    if reverse != [bool(j.get("light_on_dark")) for j in lay["lines"]]:
        problems.append("PAGE reverseVideo on %d lines, JSON light_on_dark on %d" %
                        (sum(reverse), sum(bool(j.get("light_on_dark")) for j in lay["lines"])))
    if rel.endswith("negative") and not all(reverse):
        problems.append("a line of the negative page without reverseVideo")
    if len(alto_lines) != len(lay["lines"]):
        problems.append("ALTO lines %d, JSON %d" % (len(alto_lines), len(lay["lines"])))
    for l, j in zip(alto_lines, lay["lines"]):
        b = j["box"]
        got = [int(l.get(k)) for k in ("HPOS", "VPOS", "WIDTH", "HEIGHT")]
        if got != [b[0], b[1], b[2] - b[0], b[3] - b[1]]:
            problems.append("ALTO line position %s vs box %s" % (got, b))
            break
    roles = [blk.get("TAGREFS") for blk in alto_blocks]
    if roles != ["role-" + b["role"] for b in text_blocks]:
        problems.append("ALTO block roles or order")
    alto_page = alto.find(A + "Layout/" + A + "Page")
    if alto.findtext(A + "Description/" + A + "MeasurementUnit") != "pixel" or \
       int(alto_page.get("WIDTH")) != lay["width"]:
        problems.append("ALTO unit or page size")
    print(("ok: " if not problems else "FAIL: ") + rel + ": %d lines, %d text regions" %
          (len(lay["lines"]), len(text_blocks)) + ("" if not problems else ": " + "; ".join(problems)))
    bad += bool(problems)
sys.exit(1 if bad else 0)
PY
check "PAGE and ALTO hold the lines, regions, roles and order of the JSON" test $? -eq 0

# Standard output: one document per page, each a complete XML document.
$limit "$lineate" --format page "$testdata/minutes.png" "$testdata/newsletter.png" >two.xml 2>/dev/null
check "standard output: one PAGE document per page" test "$(grep -c '^<?xml ' two.xml)" -eq 2
check "an unknown format is a usage error (exit 2)" \
    sh -c "'$lineate' --format hocr '$testdata/minutes.png' >/dev/null 2>err.txt; test \$? -eq 2"
check "... with a message naming the choices" grep -q "not json, page or alto" err.txt
printf 'not an image' >bad.png
$limit "$lineate" --format alto bad.png >bad.xml 2>bad.err
rc=$?
check "a page that fails: exit 1, no document, its message on stderr" \
    test "$rc" -eq 1 -a ! -s bad.xml -a -s bad.err
# A file name with the characters XML escapes: written escaped, valid, read back as it was.
cp "$testdata/minutes.png" 'a&b<c "d".png'
for fmt in page alto; do
    $limit "$lineate" --format $fmt 'a&b<c "d".png' >"amp.$fmt.xml" 2>/dev/null
done
"$xmllint" --nonet --noout --schema "$standards/page-2019-07-15/pagecontent.xsd" amp.page.xml \
    >/dev/null 2>&1 &&
    XML_CATALOG_FILES="$standards/catalog.xml" "$xmllint" --nonet --noout \
        --schema "$standards/alto-4-4/alto-4-4.xsd" amp.alto.xml >/dev/null 2>&1
check "a file name with & < and quotes: both documents valid" test $? -eq 0
"$lineate" score --per-page amp.page.xml amp.alto.xml >amp.score 2>&1
check "... and the name read back unchanged" grep -q '^a&b<c "d".png ' amp.score

SOURCE_DATE_EPOCH=1704067200 $limit "$lineate" --format page "$testdata/minutes.png" >fixed.xml
check "SOURCE_DATE_EPOCH fixes the PAGE creation time" \
    grep -q '<Created>2024-01-01T00:00:00Z</Created>' fixed.xml

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]

#!/bin/sh
# make validate-corpus CORPUS=DIR: writes every page image DIR/*.png as PAGE XML and as ALTO
# (lineate --format page|alto --out-dir) and validates every document against the published
# schemas in ../shared/standards with xmllint; prints the counts and exits 1 on any failure.
set -u
corpus=$1
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
standards="${LT_SHARED_DIR:-$top_srcdir/../shared}/standards"
xmllint=${XMLLINT:-$(command -v xmllint)}
[ -f "$standards/page-2019-07-15/pagecontent.xsd" ] ||
    { echo "validate-corpus: $standards (the PAGE and ALTO schemas) is absent"; exit 2; }
[ -n "$xmllint" ] || { echo "validate-corpus: xmllint not found (Debian: libxml2-utils)"; exit 2; }
out=${VALIDATE_OUT:-validate-out}
rm -rf "$out" && mkdir -p "$out" || exit 1
status=0
for fmt in page alto; do
    "$top_builddir/lineate" --format $fmt --out-dir "$out/$fmt" "$corpus"/*.png ||
        { echo "validate-corpus: lineate --format $fmt failed"; status=1; }
    if [ $fmt = page ]; then
        schema="$standards/page-2019-07-15/pagecontent.xsd"
    else
        schema="$standards/alto-4-4/alto-4-4.xsd"
    fi
    find "$out/$fmt" -name "*.$fmt.xml" | sort >"$out/$fmt.list"
    total=$(wc -l <"$out/$fmt.list")
    # xargs: the documents in batches, one xmllint process per batch
    XML_CATALOG_FILES="$standards/catalog.xml" xargs "$xmllint" --nonet --noout \
        --schema "$schema" <"$out/$fmt.list" >"$out/$fmt.valid" 2>&1
    valid=$(grep -c ' validates$' "$out/$fmt.valid")
    echo "$fmt: $valid of $total documents valid ($(ls "$corpus"/*.png | wc -l) images in $corpus)"
    [ "$valid" -eq "$total" ] || { grep -v ' validates$' "$out/$fmt.valid" | head -n 20; status=1; }
done
exit $status

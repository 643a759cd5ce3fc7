#!/bin/sh
# Speed and memory benchmark (make bench, make bench-memory). Every clean page NAME.png of a
# corpus folder (NAME-d.png degraded copies are left out) is converted once to PNG (as is),
# 1-bit CCITT G4 TIFF and JPEG; for each format the best of three single-thread runs of the
# decode, of every stage and of the whole analysis is timed (tests/tool_stage time), with the
# ratio analysis / decode, then the medians per format. A pipeline of leptonica's own
# functions (tests/bench_leptonica) is timed on the same PNG pages beside lineate's analysis.
# Last, the peak memory (RSS) of lineate -j 1 and -j 2 relative to the decoded 8-bit page.
# Usage: tests/bench.sh CORPUS_DIR [SECTION...]   sections: speed leptonica memory (all)
set -eu
corpus=${1:?usage: bench.sh CORPUS_DIR [speed] [leptonica] [memory]}
shift
sections=${*:-speed leptonica memory}
builddir=${top_builddir:-.}
tool=$builddir/tests/tool_stage
lept=$builddir/tests/bench_leptonica
bin=$builddir/lineate
PYTHON3=${PYTHON3:-/usr/bin/python3}
repeat=3
case " $sections " in *" speed "* | *" leptonica "*) ;; *) repeat=1 ;; esac # memory only
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

has() { case " $sections " in *" $1 "*) return 0 ;; esac; return 1; }

# Median of the numbers on standard input, printed with format $1 (default %.1f); "-" entries
# are skipped, and "-" is printed when there is no number.
median() {
    grep -v '^-$' | sort -g | awk -v f="${1:-%.1f}" '{ v[++n] = $1 } END {
        if (n == 0) print "-"
        else printf f "\n", (n % 2) ? v[(n + 1) / 2] : (v[n / 2] + v[n / 2 + 1]) / 2 }'
}
# Value of key $1 in a "key value key value ..." line on standard input.
field() { awk -v k="$1" '{ for (i = 1; i < NF; i += 2) if ($i == k) { print $(i + 1); exit } }'; }

ls "$corpus"/*.png >/dev/null 2>&1 || { echo "bench: no PNG pages in $corpus"; exit 2; }
mkdir -p "$tmp/png" "$tmp/tiff" "$tmp/jpeg" "$tmp/ink"
for img in "$corpus"/*.png; do
    case "$img" in *-d.png) continue ;; esac
    name=$(basename "$img" .png)
    cp "$img" "$tmp/png/$name.png"
    # The G4 page is lineate's own Sauvola ink with its defaults at 300 dpi (window 51 px,
    # k 0.34, R 128), so the 1-bit analysis starts from the ink the gray analysis sees.
    "$tool" binarize "$img" 51 0.34 128 "$tmp/ink/$name.pgm"
done
# Conversions with PIL (python3-pil): G4 TIFF from the ink (0 = ink), JPEG at quality 90.
# The corpus pages are 300 dpi (its README) and carry no resolution; the copies say 300.
"$PYTHON3" - "$tmp" <<'PY'
import glob, os, sys
from PIL import Image
tmp = sys.argv[1]
for png in sorted(glob.glob(os.path.join(tmp, "png", "*.png"))):
    name = os.path.splitext(os.path.basename(png))[0]
    ink = Image.open(os.path.join(tmp, "ink", name + ".pgm"))
    ink.point(lambda v: 255 if v >= 128 else 0).convert("1", dither=Image.NONE).save(
        os.path.join(tmp, "tiff", name + ".tif"), compression="group4", dpi=(300, 300))
    Image.open(png).convert("L").save(os.path.join(tmp, "jpeg", name + ".jpg"), quality=90,
                                      dpi=(300, 300))
PY
npages=$(ls "$tmp/png" | wc -l)

# ---- speed per format ----------------------------------------------------------------------
# The PNG times are also what the leptonica and memory sections use (analysis time, page size).
stages="decode binarize skew rotate components lines orient blocks analyze"
formats=png
has speed && formats="png tiff jpeg"
{
    has speed && {
        echo "Speed: best of $repeat runs, one thread, ms, each run right after its own decode;" \
            "$npages clean pages; G4 = lineate's Sauvola ink, JPEG quality 90"
        printf '%-34s %-4s %7s %7s %7s %6s %6s %6s %6s %6s %8s %6s %5s\n' page fmt decode binar \
            skew rotate comps lines orient blocks analysis ratio nline
    }
    for fmt in $formats; do
        for f in "$tmp/$fmt"/*; do
            name=$(basename "$f")
            name=${name%.*}
            line=$("$tool" time "$f" $repeat) || { echo "bench: $f: timing failed"; exit 1; }
            echo "$name $fmt $line" >>"$tmp/times.$fmt"
            has speed || continue
            set -- $(echo "$line" | awk '{ for (i = 2; i <= NF; i += 2) printf "%s ", $i }')
            printf '%-34.34s %-4s %7s %7s %7s %6s %6s %6s %6s %6s %8s %6s %5s\n' "$name" "$fmt" \
                "$1" "$2" "$3" "$4" "$5" "$6" "$7" "$8" "$9" "${10}" "${13}"
        done
    done
    has speed && for fmt in png tiff jpeg; do
        summary="summary $fmt: pages $(wc -l <"$tmp/times.$fmt"), median ms:"
        for s in $stages; do
            m=$(cut -d' ' -f3- "$tmp/times.$fmt" | while read -r l; do
                echo "$l" | field "${s}_ms"; done | median)
            summary="$summary $s $m"
        done
        r=$(cut -d' ' -f3- "$tmp/times.$fmt" | while read -r l; do echo "$l" | field ratio; done |
            median %.2f)
        echo "$summary; median ratio analysis/decode $r"
    done
}

# ---- leptonica pipeline beside lineate -----------------------------------------------------
if has leptonica; then
    echo
    echo "Leptonica pipeline (pixSauvolaBinarizeTiled, pixFindSkewSweepAndSearch, pixRotate," \
        "pixGetRegionsBinary, pixGetWordBoxesInTextlines), best of $repeat, ms, PNG pages"
    printf '%-34s %7s %6s %6s %7s %6s %8s %8s %7s %6s %6s\n' page sauvola skew rotate regions \
        words leptonica lineate lept/lin tlines lines
    while read -r name fmt line; do
        l=$("$lept" "$tmp/png/$name.png" $repeat) || { echo "bench: $name: failed"; exit 1; }
        ours=$(echo "$line" | field analyze_ms)
        theirs=$(echo "$l" | field total_ms)
        ratio=$(awk -v a="$theirs" -v b="$ours" 'BEGIN { printf "%.2f", a / b }')
        echo "$name $theirs $ours $ratio" >>"$tmp/lept"
        printf '%-34.34s %7s %6s %6s %7s %6s %8s %8s %7s %6s %6s\n' "$name" \
            "$(echo "$l" | field sauvola_ms)" "$(echo "$l" | field skew_ms)" \
            "$(echo "$l" | field rotate_ms)" "$(echo "$l" | field regions_ms)" \
            "$(echo "$l" | field words_ms)" "$theirs" "$ours" "$ratio" \
            "$(echo "$l" | field textlines)" "$(echo "$line" | field lines)"
    done <"$tmp/times.png"
    echo "summary leptonica: pages $(wc -l <"$tmp/lept"), median ms: leptonica" \
        "$(cut -d' ' -f2 "$tmp/lept" | median) lineate $(cut -d' ' -f3 "$tmp/lept" | median);" \
        "median ratio leptonica/lineate $(cut -d' ' -f4 "$tmp/lept" | median %.2f)"
fi

# ---- memory per worker ---------------------------------------------------------------------
if has memory; then
    echo
    if [ ! -x /usr/bin/time ]; then
        echo "memory: /usr/bin/time missing (Debian package time): skipped"
        exit 0
    fi
    # Peak RSS in KiB of a lineate command (its output discarded), which must succeed.
    peak_kib() {
        /usr/bin/time -f %M -o "$tmp/rss" "$bin" "$@" >/dev/null 2>"$tmp/rss.err" ||
            { echo "bench: lineate $*: failed" >&2; cat "$tmp/rss.err" >&2; exit 1; }
        tail -n 1 "$tmp/rss"
    }
    set -- $(head -n 8 "$tmp/times.png" | cut -d' ' -f1 | sed "s|^\(.*\)\$|$tmp/png/\1.png|")
    nmem=$#
    # Decoded 8-bit page, width x height bytes: the first page, and the largest of the set.
    first_px=$(head -n 1 "$tmp/times.png" | awk '{ for (i = 3; i < NF; i += 2) {
        if ($i == "width") w = $(i + 1); if ($i == "height") h = $(i + 1) } print w * h }')
    max_px=$(head -n "$nmem" "$tmp/times.png" | awk '{ for (i = 3; i < NF; i += 2) {
        if ($i == "width") w = $(i + 1); if ($i == "height") h = $(i + 1) }
        if (w * h > m) m = w * h } END { print m }')
    base=$(peak_kib --version)
    one=$(peak_kib -j 1 "$1")
    j1=$(peak_kib -j 1 "$@")
    j2=$(peak_kib -j 2 "$@")
    echo "Memory: peak RSS (/usr/bin/time -f %M); page = decoded 8-bit page, width x height bytes"
    awk -v base="$base" -v one="$one" -v j1="$j1" -v j2="$j2" -v p1="$first_px" -v pm="$max_px" \
        -v n="$nmem" 'BEGIN {
        printf "process without a page (lineate --version): %.1f MiB\n", base / 1024
        printf "one page -j 1: %.1f MiB = %.2f x page (%.2f x page above the process)\n",
            one / 1024, one * 1024 / p1, (one - base) * 1024 / p1
        printf "%d pages -j 1: %.1f MiB = %.2f x largest page per worker", n, j1 / 1024,
            j1 * 1024 / pm
        printf " (%.2f above the process)\n", (j1 - base) * 1024 / pm
        printf "%d pages -j 2: %.1f MiB = %.2f x largest page per worker", n, j2 / 1024,
            j2 * 1024 / pm / 2
        printf " (%.2f above the process)\n", (j2 - base) * 1024 / pm / 2
        printf "summary memory: per worker %.2f x page (-j 1), %.2f x page (-j 2);",
            (j1 - base) * 1024 / pm, (j2 - base) * 1024 / pm / 2
        printf " the second worker adds %.2f x page\n", (j2 - j1) * 1024 / pm
    }'
fi

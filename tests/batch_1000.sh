#!/bin/sh
# batch_1000.sh (make batch-acceptance): the batch acceptance run. Builds an archive of 1,000
# good pages (bands cut from the test pages: PNG files and a few multi-page TIFFs) with a
# corrupt file, a TIFF whose last page is truncated and an empty file among them; runs
# `lineate --out-dir` once uninterrupted, and once killed with SIGKILL about halfway, then
# resumed with --resume; checks one record per page, the bad ones as error records with their
# reason, and the resumed output identical to the uninterrupted one, as merged JSON Lines and
# page file by page file. Prints the figures. Exit status 0 pass, 1 fail, 77 skip (no PIL).
#
# Outside references: PIL (python3-pil) writes every page and TIFF; the uninterrupted output
# is also compared with lineate's plain stream output (no --out-dir) over the same folder.
set -u
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
PYTHON3=${PYTHON3:-/usr/bin/python3}
bin=$top_builddir/lineate
[ -x "$bin" ] || { echo "FAIL: no lineate binary"; exit 1; }
"$PYTHON3" -c 'import PIL' 2>/dev/null || { echo "SKIP: python3 PIL missing"; exit 77; }
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
trap 'exit 1' INT TERM HUP
failed=0
check() { # check DESCRIPTION COMMAND...
    what=$1
    shift
    if "$@"; then echo "ok   $what"; else echo "FAIL $what"; failed=$((failed + 1)); fi
}
now() { date +%s.%N; }

# ---- the archive ---------------------------------------------------------------------------
# 940 PNG bands (2550 x 300..540 px, 300 dpi) in ten boxes, five 12-page TIFFs (60 pages), and
# the bad ones: a PNG signature followed by junk, a 0-byte file, and a 4-page TIFF whose file
# ends inside page 4's pixels (uncompressed, so pages 1-3 stay readable).
"$PYTHON3" - "$top_srcdir/testdata" "$tmp/archive" <<'PY' || exit 1
import io, os, sys
from PIL import Image
src, dst = sys.argv[1], sys.argv[2]
pages = [Image.open("%s/%s.png" % (src, n)).convert("L")
         for n in ("minutes", "newsletter", "bulletin")]
def band(k):
    page = pages[k % 3]
    height = 300 + 40 * (k % 7)
    y = 200 + (97 * k) % (page.height - height - 400)
    return page.crop((0, y, page.width, y + height))
for k in range(940):
    folder = os.path.join(dst, "box%02d" % (k // 94))
    os.makedirs(folder, exist_ok=True)
    band(k).save(os.path.join(folder, "leaf%04d.png" % k), dpi=(300, 300))
for t in range(5):
    imgs = [band(1000 + 12 * t + i) for i in range(12)]
    imgs[0].save(os.path.join(dst, "box%02d" % (2 * t), "bundle%d.tif" % t), save_all=True,
                 append_images=imgs[1:], compression="tiff_lzw", dpi=(300, 300))
with open(os.path.join(dst, "box03", "leaf0300-corrupt.png"), "wb") as f:
    f.write(b"\x89PNG\r\n\x1a\n" + b"not the rest of a PNG file " * 40)
open(os.path.join(dst, "box06", "leaf0600-empty.png"), "wb").close()
imgs = [band(2000 + i) for i in range(4)]
out = io.BytesIO()
imgs[0].save(out, format="TIFF", save_all=True, append_images=imgs[1:], dpi=(300, 300))
data = out.getvalue()
im = Image.open(io.BytesIO(data))
im.seek(3)
cut = im.tag_v2[273][0] + im.tag_v2[279][0] // 2  # half of page 4's strip
with open(os.path.join(dst, "box08", "leaf0800-truncated.tif"), "wb") as f:
    f.write(data[:cut])
PY
# Inputs in lineate's order (names sorted byte-wise, folder by folder).
(cd "$tmp/archive" && find . -type f | sed 's|^\./||' | LC_ALL=C sort) >"$tmp/inputs"
n_files=$(wc -l <"$tmp/inputs")
n_good=1000
n_records=$((n_good + 3 + 3)) # the good pages, pages 1-3 of the truncated TIFF, three errors
echo "archive: $n_files files, $n_records pages ($n_good of them good bands, 3 bad inputs)"

# merge DIR: the page files of DIR in input order, a file's pages in page order.
merge() {
    while IFS= read -r rel; do
        name=${rel%.*}
        if [ -f "$1/$name.json" ]; then
            cat "$1/$name.json"
        else
            pages=$(grep -o '"pages":[0-9]*' "$1/$name.p1.json" | head -n 1 | cut -d: -f2)
            i=1
            while [ "$i" -le "${pages:-0}" ]; do
                cat "$1/$name.p$i.json" || return 1
                i=$((i + 1))
            done
        fi
    done <"$tmp/inputs"
}

# ---- the uninterrupted run -----------------------------------------------------------------
t0=$(now)
"$bin" --out-dir "$tmp/full" "$tmp/archive" 2>"$tmp/full.err"
rc=$?
t1=$(now)
check "uninterrupted run: exit 1 (some inputs failed, the others written)" test "$rc" -eq 1
n_full=$(find "$tmp/full" -name '*.json' | wc -l)
check "one page file per page ($n_full)" test "$n_full" -eq "$n_records"
merge "$tmp/full" >"$tmp/full.jsonl"
check "merged: $n_records records" test "$(wc -l <"$tmp/full.jsonl")" -eq "$n_records"
n_err=$(grep -c '"error":' "$tmp/full.jsonl")
check "exactly 3 error records" test "$n_err" -eq 3
check "the corrupt file: its name and the reason" \
    grep -q '"error":"[^"]*leaf0300-corrupt.png: page 1: unreadable image header"' "$tmp/full.jsonl"
check "the empty file: its name and the reason" \
    grep -q '"error":"[^"]*leaf0600-empty.png: empty file"' "$tmp/full.jsonl"
check "the truncated TIFF: page 4 fails with the reason, pages 1-3 are analysed" \
    test "$(grep -c '"source":"[^"]*leaf0800-truncated.tif","page":[123],"pages":4,"width"' \
        "$tmp/full.jsonl")" -eq 3 -a -n "$(grep \
        '"page":4,"pages":4,"error":"[^"]*leaf0800-truncated.tif: page 4: cannot decode' \
        "$tmp/full.jsonl")"
check "every message names its file (3 lines on standard error besides the summary)" \
    test "$(grep -c '^lineate: .*leaf0[368]00-' "$tmp/full.err")" -eq 3
"$bin" "$tmp/archive" >"$tmp/stream.jsonl" 2>/dev/null
check "merged page files equal lineate's stream output over the folder" \
    cmp -s "$tmp/full.jsonl" "$tmp/stream.jsonl"

# ---- killed about halfway, then resumed ----------------------------------------------------
"$bin" --out-dir "$tmp/part" "$tmp/archive" 2>/dev/null &
pid=$!
i=0
while [ "$(find "$tmp/part" -name '*.json' 2>/dev/null | wc -l)" -lt $((n_records / 2)) ] &&
    [ $i -lt 6000 ]; do
    sleep 0.05
    i=$((i + 1))
done
{ kill -KILL $pid && wait $pid; } 2>/dev/null # (the shell's "Killed" notice silenced)
n_part=$(find "$tmp/part" -name '*.json' | wc -l)
n_tmp=$(find "$tmp/part" -name '*.tmp.*' | wc -l)
check "the killed run left about half the pages ($n_part of $n_records)" \
    test "$n_part" -ge $((n_records / 2)) -a "$n_part" -lt "$n_records"
check "every page file the killed run left is complete JSON" "$PYTHON3" -c '
import json, pathlib, sys
for p in pathlib.Path(sys.argv[1]).rglob("*.json"):
    json.loads(p.read_text())' "$tmp/part"
t2=$(now)
"$bin" --out-dir "$tmp/part" --resume "$tmp/archive" 2>"$tmp/resume.err"
rc=$?
t3=$(now)
check "resumed run: exit 1 (the bad inputs fail again)" test "$rc" -eq 1
summary=$(grep 'pages done' "$tmp/resume.err")
r_done=$(echo "$summary" | sed -n 's/^lineate: \([0-9]*\) pages done.*/\1/p')
r_failed=$(echo "$summary" | sed -n 's/.* \([0-9]*\) failed.*/\1/p')
r_skipped=$(echo "$summary" | sed -n 's/.* \([0-9]*\) skipped.*/\1/p')
check "resume: skipped + analysed + failed = $n_records" \
    test $((r_done + r_failed + r_skipped)) -eq "$n_records"
check "resume: it skipped the complete pages the killed run left" \
    test "$r_skipped" -gt 0 -a "$r_skipped" -le "$n_part"
merge "$tmp/part" >"$tmp/part.jsonl"
check "resumed, merged JSON Lines equal the uninterrupted run's" \
    cmp -s "$tmp/full.jsonl" "$tmp/part.jsonl"
check "resumed page files equal the uninterrupted run's, file by file" \
    diff -r -x '*.tmp.*' "$tmp/full" "$tmp/part"

# ---- figures -------------------------------------------------------------------------------
awk -v t0="$t0" -v t1="$t1" -v t2="$t2" -v t3="$t3" -v n="$n_records" -v nf="$n_files" \
    -v e="$n_err" -v part="$n_part" -v tmpf="$n_tmp" -v rd="$r_done" -v rs="$r_skipped" \
    -v rf="$r_failed" -v jobs="$(getconf _NPROCESSORS_ONLN)" 'BEGIN {
    printf "figures: %d files, %d pages, %d failed; uninterrupted run (-j %d): %.1f s,", nf, n,
        e, jobs, t1 - t0
    printf " %.1f pages/s\n", n / (t1 - t0)
    printf "figures: killed with %d page files written (%d temporary files left);", part, tmpf
    printf " resume: %d skipped, %d analysed, %d failed in %.1f s\n", rs, rd, rf, t3 - t2
}'
grep 'pages done' "$tmp/full.err" | sed 's/^/uninterrupted: /'
echo "batch_1000: $failed failed"
[ "$failed" -eq 0 ]

#!/bin/sh
# Batch runs: folders searched recursively, --from lists, --jobs giving byte-identical output,
# one record per page (error records for bad ones), --out-dir with --resume after a run that
# was killed halfway ending identical to an uninterrupted run; the pages of one multi-page TIFF
# shared among the threads.
set -u
test_name=batch
test_modules=PIL.Image
test_timeout=600
. "${top_srcdir:-.}/tests/harness.sh"

# An archive of small pages (bands of the test pages) in nested folders, with a bad file.
"$python" - "$srcdir/testdata" "$work/archive" <<'PY' || exit 1
import os, sys
from PIL import Image
src, dst = sys.argv[1], sys.argv[2]
pages = [Image.open("%s/%s.png" % (src, n)).convert("L") for n in ("minutes", "newsletter", "bulletin")]
k = 0
for box in range(6):
    for i, page in enumerate(pages):
        folder = os.path.join(dst, "box%d" % (box % 2), "folder%d" % (box // 2))
        os.makedirs(folder, exist_ok=True)
        y = 250 + 300 * (box % 4)
        page.crop((0, y, 2550, y + 500)).save(os.path.join(folder, "scan%02d.png" % k), dpi=(300, 300))
        k += 1
open(os.path.join(dst, "box0", "broken.png"), "wb").write(b"\x89PNG\r\n\x1a\n broken")
open(os.path.join(dst, "box0", "notes.txt"), "w").write("not an image, and not taken")
PY
n_images=$(find "$work/archive" -name '*.png' | wc -l)

"$lineate" -j 1 "$work/archive" >"$work/j1.jsonl" 2>"$work/j1.err"
rc1=$?
"$lineate" -j 2 "$work/archive" >"$work/j2.jsonl" 2>"$work/j2.err"
rc2=$?
check "a folder: exit 1 (one bad file), the same with 1 and 2 threads" test "$rc1" -eq 1 -a "$rc2" -eq 1
check "--jobs 1 and --jobs 2 give byte-identical output" cmp -s "$work/j1.jsonl" "$work/j2.jsonl"
check "--jobs 1 and --jobs 2 give the same messages" cmp -s "$work/j1.err" "$work/j2.err"
check "one record per image file ($n_images)" test "$(wc -l <"$work/j1.jsonl")" -eq "$n_images"
check "the bad file has an error record" test "$(grep -c '"error"' "$work/j1.jsonl")" -eq 1
find "$work/archive" -name '*.png' | sort >"$work/list"
"$lineate" -j 2 --from "$work/list" >"$work/from.jsonl" 2>/dev/null
check "--from lists the same files: the same records" cmp -s "$work/j1.jsonl" "$work/from.jsonl"
"$lineate" -j 2 --from - <"$work/list" >"$work/from-stdin.jsonl" 2>/dev/null
check "--from - reads the list from standard input" cmp -s "$work/j1.jsonl" "$work/from-stdin.jsonl"

# --out-dir: a complete run, then a run killed halfway and resumed.
"$lineate" -j 2 --out-dir "$work/full" "$work/archive" 2>"$work/full.err"
check "--out-dir: one file per page" test "$(find "$work/full" -name '*.json' | wc -l)" -eq "$n_images"
check "--out-dir: a summary line" grep -q "pages done, 1 failed, 0 skipped" "$work/full.err"
"$lineate" -j 1 --out-dir "$work/part" "$work/archive" 2>/dev/null &
pid=$!
i=0
while [ "$(find "$work/part" -name '*.json' 2>/dev/null | wc -l)" -lt 5 ] && [ $i -lt 600 ]; do
    sleep 0.05
    i=$((i + 1))
done
kill -9 $pid 2>/dev/null
wait $pid 2>/dev/null
partial=$(find "$work/part" -name '*.json' | wc -l)
check "the killed run left some pages ($partial), not all" test "$partial" -lt "$n_images"
check "every page file the killed run left is complete JSON" "$python" -c '
import json, pathlib, sys
for p in pathlib.Path(sys.argv[1]).rglob("*.json"):
    json.loads(p.read_text())' "$work/part"
# What a run killed while writing a page leaves: that page's temporary file, half written.
for img in $(cd "$work/archive" && find . -name 'scan*.png' | sort); do
    page=$work/part/${img%.png}.json
    if [ ! -e "$page" ]; then
        mkdir -p "$(dirname "$page")" && printf '{"format":"lineate-lay' >"$page.tmp"
        break
    fi
done
"$lineate" -j 2 --out-dir "$work/part" --resume "$work/archive" 2>"$work/resume.err"
check "--resume skips the pages already done" grep -q "[1-9][0-9]* skipped" "$work/resume.err"
check "resumed output equals the uninterrupted run" diff -r "$work/full" "$work/part"
"$lineate" --out-dir "$work/part" --resume "$work/archive" 2>"$work/again.err"
check "a second resume redoes only the failed page" \
    grep -q "0 pages done, 1 failed, $((n_images - 1)) skipped" "$work/again.err"

# One multi-page TIFF: its pages are shared out among the threads, and still come out in page
# order, identical whatever the number of threads; from standard input too.
"$python" - "$srcdir/testdata" "$work/ledger.tif" <<'PY' || exit 1
import sys
from PIL import Image
src, dst = sys.argv[1], sys.argv[2]
pages = [Image.open("%s/%s.png" % (src, n)).convert("L") for n in ("minutes", "newsletter", "bulletin")]
bands = [pages[i % 3].crop((0, 300 + 280 * i, 2550, 800 + 280 * i)) for i in range(7)]
bands[0].save(dst, save_all=True, append_images=bands[1:], compression="tiff_lzw", dpi=(300, 300))
PY
for j in 1 2 3; do
    "$lineate" -j $j "$work/ledger.tif" >"$work/ledger-j$j.jsonl" 2>/dev/null
done
check "a 7-page TIFF: 7 records, pages 1 to 7 in order" test "$(grep -o '"page":[0-9]*' \
    "$work/ledger-j1.jsonl" | cut -d: -f2 | tr '\n' ' ')" = "1 2 3 4 5 6 7 "
check "a 7-page TIFF: --jobs 2 and 3 give the bytes of --jobs 1" \
    cmp -s "$work/ledger-j1.jsonl" "$work/ledger-j2.jsonl"
check "a 7-page TIFF: --jobs 3 too" cmp -s "$work/ledger-j1.jsonl" "$work/ledger-j3.jsonl"
"$lineate" -j 1 - <"$work/ledger.tif" >"$work/ledger-stdin1.jsonl" 2>/dev/null
"$lineate" -j 2 - <"$work/ledger.tif" >"$work/ledger-stdin2.jsonl" 2>/dev/null
check "a 7-page TIFF on standard input: 7 records" \
    test "$(grep -c '"lines"' "$work/ledger-stdin2.jsonl")" -eq 7
check "a 7-page TIFF on standard input: --jobs 2 gives the bytes of --jobs 1" \
    cmp -s "$work/ledger-stdin1.jsonl" "$work/ledger-stdin2.jsonl"
(cd "$work" && "$lineate" -j 2 --out-dir ledger ledger.tif 2>/dev/null)
rm -f "$work/ledger/ledger.p3.json" "$work/ledger/ledger.p6.json"
(cd "$work" && "$lineate" -j 2 --out-dir ledger --resume ledger.tif 2>"$work/ledger-resume.err")
check "a 7-page TIFF resumed with 2 threads redoes the 2 missing pages" \
    grep -q "2 pages done, 0 failed, 5 skipped" "$work/ledger-resume.err"
for i in 1 2 3 4 5 6 7; do cat "$work/ledger/ledger.p$i.json"; done >"$work/ledger-merged.jsonl"
(cd "$work" && "$lineate" -j 1 ledger.tif >ledger-relative.jsonl 2>/dev/null)
check "a 7-page TIFF: its page files equal the stream" \
    cmp -s "$work/ledger-relative.jsonl" "$work/ledger-merged.jsonl"

# --out-dir keeps apart inputs of the same name: the folders of a scanned archive each start
# again at 0001 (two different pages here).
mkdir -p "$work/dup/vol1" "$work/dup/vol2" "$work/dup/mixed"
cp "$work/archive/box0/folder0/scan00.png" "$work/dup/vol1/0001.png"
cp "$work/archive/box0/folder0/scan01.png" "$work/dup/vol2/0001.png"
cp "$work/archive/box0/folder0/scan00.png" "$work/dup/mixed/0001.png"
"$python" -c 'from PIL import Image; import sys
Image.open(sys.argv[1]).save(sys.argv[2])' "$work/dup/vol2/0001.png" "$work/dup/mixed/0001.tif"
cd "$work/dup" || exit 1
"$lineate" -j 2 --out-dir out vol1/0001.png vol2/0001.png 2>"$work/dup.err"
check "files given one by one: exit 0, each page its own file under its own path" \
    test $? -eq 0 -a "$(find out -name '*.json' | LC_ALL=C sort | tr '\n' ' ')" = \
    "out/vol1/0001.json out/vol2/0001.json "
check "files given one by one: each page file holds its own input's record" \
    test "$(grep -ho '"source":"[^"]*"' out/vol1/0001.json out/vol2/0001.json | tr '\n' ' ')" = \
    '"source":"vol1/0001.png" "source":"vol2/0001.png" '
"$lineate" -j 2 vol1/0001.png vol2/0001.png >"$work/dup-stream.jsonl" 2>/dev/null
check "files given one by one: the page files equal the stream" \
    sh -c 'cat out/vol1/0001.json out/vol2/0001.json | cmp -s - "$1"' sh "$work/dup-stream.jsonl"
"$lineate" --out-dir out --resume vol1/0001.png vol2/0001.png 2>"$work/dup-resume.err"
check "files given one by one: --resume finds both" \
    grep -q "0 pages done, 0 failed, 2 skipped" "$work/dup-resume.err"
printf '%s\n' "$work/dup/vol1/0001.png" "$work/dup/vol2/0001.png" >list
"$lineate" --out-dir out-abs --from list 2>/dev/null
check "a list of absolute paths: mirrored below the output folder without the leading /" \
    test -f "out-abs$work/dup/vol1/0001.json" -a -f "out-abs$work/dup/vol2/0001.json"
(cd vol1 && "$lineate" --out-dir ../out-up ../vol2/0001.png 2>/dev/null)
check "a path through .. stays inside the output folder (.. becomes __)" test -f out-up/__/vol2/0001.json
"$lineate" --out-dir out-two vol1 vol2 2>"$work/two.err"
check "two folders holding the same name: refused at start with exit 2, nothing written" \
    test $? -eq 2 -a ! -e out-two/0001.json
check "two folders holding the same name: one line naming both inputs and the file" \
    test "$(wc -l <"$work/two.err")" -eq 1 -a -n "$(grep -F 'vol1/0001.png and vol2/0001.png would both write out-two/0001.json' "$work/two.err")"
"$lineate" --out-dir out-mixed mixed 2>"$work/mixed.err"
check "0001.png beside 0001.tif in one folder: refused with exit 2" \
    test $? -eq 2 -a -n "$(grep -F 'would both write out-mixed/0001.json' "$work/mixed.err")"
cp vol1/0001.png vol1/0001.p2.png
"$lineate" --out-dir out-paged vol1 2>"$work/paged.err"
check "0001.p2.png beside a possibly multi-page 0001: refused with exit 2" \
    test $? -eq 2 -a -n "$(grep -F 'would both write out-paged/0001.p2.json' "$work/paged.err")"
"$lineate" --out-dir out-twice vol1/0001.png ./vol1/0001.png 2>/dev/null
check "the same file given twice: refused with exit 2" test $? -eq 2
cd "$work" || exit 1

# The default number of threads follows the CPUs the process may use (its affinity mask), as
# taskset (util-linux) and nproc (coreutils) read it.
if command -v taskset >/dev/null && taskset -c 0 true 2>/dev/null; then
    taskset -c 0 "$lineate" --out-dir "$work/one-cpu" "$work/dup/vol1/0001.png" 2>"$work/one-cpu.err"
    check "under taskset -c 0 the default is 1 thread" grep -q ', 1 thread$' "$work/one-cpu.err"
    "$lineate" --out-dir "$work/all-cpus" "$work/dup/vol1/0001.png" 2>"$work/all-cpus.err"
    cpus=$(nproc)
    check "without it, as many threads as nproc counts ($cpus)" \
        grep -q ", $cpus threads*\$" "$work/all-cpus.err"
else
    echo "SKIP: taskset cannot pin this process"
fi

echo "batch: $failed failed"
[ "$failed" -eq 0 ]

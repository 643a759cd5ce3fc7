#!/bin/sh
# Batch runs: folders searched recursively, --from lists, --jobs giving byte-identical output,
# one record per page (error records for bad ones), --out-dir with --resume after a run that
# was killed halfway ending identical to an uninterrupted run.
set -u
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
PYTHON3=${PYTHON3:-/usr/bin/python3}
bin=$top_builddir/lineate
[ -x "$bin" ] || { echo "no lineate binary"; exit 77; }
"$PYTHON3" -c 'import PIL' 2>/dev/null || { echo "python3 PIL missing"; exit 77; }
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
failed=0
check() { # check DESCRIPTION COMMAND...
    what=$1
    shift
    if "$@"; then echo "ok   $what"; else echo "FAIL $what"; failed=$((failed + 1)); fi
}

# An archive of small pages (bands of the test pages) in nested folders, with a bad file.
"$PYTHON3" - "$top_srcdir/testdata" "$tmp/archive" <<'PY' || exit 1
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
n_images=$(find "$tmp/archive" -name '*.png' | wc -l)

"$bin" -j 1 "$tmp/archive" >"$tmp/j1.jsonl" 2>"$tmp/j1.err"
rc1=$?
"$bin" -j 2 "$tmp/archive" >"$tmp/j2.jsonl" 2>"$tmp/j2.err"
rc2=$?
check "a folder: exit 1 (one bad file), the same with 1 and 2 threads" test "$rc1" -eq 1 -a "$rc2" -eq 1
check "--jobs 1 and --jobs 2 give byte-identical output" cmp -s "$tmp/j1.jsonl" "$tmp/j2.jsonl"
check "--jobs 1 and --jobs 2 give the same messages" cmp -s "$tmp/j1.err" "$tmp/j2.err"
check "one record per image file ($n_images)" test "$(wc -l <"$tmp/j1.jsonl")" -eq "$n_images"
check "the bad file has an error record" test "$(grep -c '"error"' "$tmp/j1.jsonl")" -eq 1
find "$tmp/archive" -name '*.png' | sort >"$tmp/list"
"$bin" -j 2 --from "$tmp/list" >"$tmp/from.jsonl" 2>/dev/null
check "--from lists the same files: the same records" cmp -s "$tmp/j1.jsonl" "$tmp/from.jsonl"
"$bin" -j 2 --from - <"$tmp/list" >"$tmp/from-stdin.jsonl" 2>/dev/null
check "--from - reads the list from standard input" cmp -s "$tmp/j1.jsonl" "$tmp/from-stdin.jsonl"

# --out-dir: a complete run, then a run killed halfway and resumed.
"$bin" -j 2 --out-dir "$tmp/full" "$tmp/archive" 2>"$tmp/full.err"
check "--out-dir: one file per page" test "$(find "$tmp/full" -name '*.json' | wc -l)" -eq "$n_images"
check "--out-dir: a summary line" grep -q "pages done, 1 failed, 0 skipped" "$tmp/full.err"
"$bin" -j 1 --out-dir "$tmp/part" "$tmp/archive" 2>/dev/null &
pid=$!
i=0
while [ "$(find "$tmp/part" -name '*.json' 2>/dev/null | wc -l)" -lt 5 ] && [ $i -lt 600 ]; do
    sleep 0.05
    i=$((i + 1))
done
kill -9 $pid 2>/dev/null
wait $pid 2>/dev/null
partial=$(find "$tmp/part" -name '*.json' | wc -l)
check "the killed run left some pages ($partial), not all" test "$partial" -lt "$n_images"
check "every page file the killed run left is complete JSON" "$PYTHON3" -c '
import json, pathlib, sys
for p in pathlib.Path(sys.argv[1]).rglob("*.json"):
    json.loads(p.read_text())' "$tmp/part"
"$bin" -j 2 --out-dir "$tmp/part" --resume "$tmp/archive" 2>"$tmp/resume.err"
check "--resume skips the pages already done" grep -q "[1-9][0-9]* skipped" "$tmp/resume.err"
check "resumed output equals the uninterrupted run" diff -r "$tmp/full" "$tmp/part"
"$bin" --out-dir "$tmp/part" --resume "$tmp/archive" 2>"$tmp/again.err"
check "a second resume redoes only the failed page" \
    grep -q "0 pages done, 1 failed, $((n_images - 1)) skipped" "$tmp/again.err"
echo "batch: $failed failed"
[ "$failed" -eq 0 ]

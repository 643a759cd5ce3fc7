#!/bin/sh
# The example program examples/page_lines (public API only, linked against the shared
# library) says what `lineate` itself writes as JSON for the same pages: the same number of
# lines and blocks, every block's kind, role and box and every line's box, in reading order
# (the JSON read with Python's json module). A missing file and a file that is not an image
# give one message on standard error and exit 1, with nothing on standard output.
set -u
test_name=example
test_modules=json
test_timeout=120
. "${top_srcdir:-.}/tests/harness.sh"

example="$builddir/examples/page_lines"
if [ ! -x "$example" ]; then
    fail "$example not built (make check builds it)"
    exit 1
fi

for page in hard-2col.png newsletter.png; do
    $limit "$example" "$testdata/$page" >"$page.txt" 2>"$page.err"
    check "$page: example exits 0, nothing on stderr" test $? -eq 0 -a ! -s "$page.err"
    $limit "$lineate" "$testdata/$page" >"$page.json"
    check "$page: lineate exits 0" test $? -eq 0
    # What the example prints, rebuilt from the JSON in the example's own record format.
    "$python" - "$page.json" >"$page.expected" <<'PY'
import json, sys
with open(sys.argv[1]) as f:
    d = json.load(f)
lines, blocks = d["lines"], d["blocks"]
print(f"{len(lines)} lines, {len(blocks)} blocks")
for i, b in enumerate(blocks):
    role = b.get("role", "-") if b["kind"] == "text" else "-"
    nl = len(b["lines"]) if b["kind"] == "text" else 0
    print("block", i + 1, b["kind"], role, *b["box"], f"({nl} lines)")
    if b["kind"] == "text":
        for j in b["lines"]:
            print("line", j + 1, *lines[j]["box"])
PY
    sed -n '1s/^page [0-9]* of [0-9]*: .*, \([0-9]* lines, [0-9]* blocks\)$/\1/p; 2,$p' \
        "$page.txt" >"$page.got"
    if cmp -s "$page.expected" "$page.got"; then
        pass "$page: $(head -1 "$page.got"), the same boxes in the same order as lineate's JSON"
    else
        fail "$page: the example differs from lineate's JSON:"
        diff "$page.expected" "$page.got" | head -10
    fi
done

# Bad input: one line on stderr naming the file, exit 1, nothing on stdout.
printf 'not an image\n' >notes.png
for bad in "$work/missing.png" "$work/notes.png"; do
    $limit "$example" "$bad" >bad.out 2>bad.err
    rc=$?
    check "$(basename "$bad"): exit 1 (got $rc)" test "$rc" -eq 1
    check "$(basename "$bad"): one line on stderr naming the file ($(cat bad.err))" \
        test "$(nlines bad.err)" -eq 1 -a -n "$(grep -F "page_lines: $bad: " bad.err)"
    check "$(basename "$bad"): nothing on stdout" test ! -s bad.out
done
"$example" >/dev/null 2>&1
check "no argument: usage error, exit 2" test $? -eq 2

echo "example: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

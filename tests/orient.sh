#!/bin/sh
# Orientation by known transformation on the corpus excerpt in testdata/corpus: every page
# turned by 90, 180 and 270 degrees with PIL's lossless Image.transpose must report the turn
# that sets it upright, confidently, and give the upright page's lines carried through the
# same turn (line F1 1.0 at IoU 0.5 by `lineate score`); the upright pages stay upright.
# tests/orient_check.py does the work; `make orient-acceptance CORPUS=DIR` runs it on a
# whole folder.
set -u
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
PYTHON3=${PYTHON3:-/usr/bin/python3}
bin=$top_builddir/lineate
[ -x "$bin" ] || { echo "no lineate binary"; exit 77; }
"$PYTHON3" -c 'import PIL' 2>/dev/null || { echo "python3-pil missing"; exit 77; }
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
"$PYTHON3" "$top_srcdir/tests/orient_check.py" "$bin" "$top_srcdir/testdata/corpus" "$tmp" 1.0 1.0

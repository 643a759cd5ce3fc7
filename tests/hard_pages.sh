#!/bin/sh
# Reading order, block roles, pictures and right-to-left order on the built pages of testdata/
# (see tests/hard_pages.py for the checks and their references).
set -u
top_srcdir=${top_srcdir:-.}
top_builddir=${top_builddir:-.}
PYTHON3=${PYTHON3:-/usr/bin/python3}
[ -x "$top_builddir/lineate" ] || { echo "no lineate binary"; exit 77; }
"$PYTHON3" -c 'import PIL' 2>/dev/null || { echo "python3 PIL missing"; exit 77; }
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
"$PYTHON3" "$top_srcdir/tests/hard_pages.py" "$top_builddir/lineate" "$top_srcdir/testdata" "$tmp"

#!/bin/sh
# pale_pages.sh: automake driver of tests/pale_pages.py on three pages of testdata/corpus (two
# clean, one shaded): pale, light, gray and tinted variants, at 300 and 200 dpi, give the lines
# of the untouched page at F1 >= 0.98; the negative and a box in negative of the two clean pages
# too, with exactly the lines in negative marked light_on_dark. With CORPUS=DIR (make
# pale-corpus), every clean page DIR/*.png (not the NAME-d.png copies), reported without a floor.
# Exit status: 0 pass, 1 fail, 77 skip (no python3 with numpy and PIL).
here=$(cd "$(dirname "$0")" && pwd)
srcdir=${top_srcdir:-$(dirname "$here")}
builddir=${top_builddir:-.}
python=${PYTHON3:-/usr/bin/python3}
if ! "$python" -c 'import numpy, PIL' >/dev/null 2>&1; then
    echo "SKIP: $python lacks numpy or PIL (Debian: python3-numpy, python3-pil)"
    exit 77
fi
work=$(mktemp -d "${TMPDIR:-/tmp}/pale_pages.XXXXXX") || exit 1
trap 'rm -rf "$work"' EXIT
trap 'exit 1' INT TERM HUP
if [ -n "${CORPUS:-}" ]; then
    set --
    for img in "$CORPUS"/*.png; do
        case "$img" in *-d.png) continue ;; esac
        set -- "$@" "$img"
    done
    exec "$python" "$srcdir/tests/pale_pages.py" "$builddir/lineate" "$work" "$@"
fi
"$python" "$srcdir/tests/pale_pages.py" --floor 0.98 --only pale "$builddir/lineate" "$work" \
    "$srcdir/testdata/corpus/ulthese_ulthese_p002.png" \
    "$srcdir/testdata/corpus/mnras_mnras_guide_p002.png" \
    "$srcdir/testdata/corpus/onrannual_skeleton_p001-d.png" || exit 1
# The negatives of the two clean pages (the shaded page's negative has a gray ground).
"$python" "$srcdir/tests/pale_pages.py" --floor 0.98 --only negative "$builddir/lineate" "$work" \
    "$srcdir/testdata/corpus/ulthese_ulthese_p002.png" \
    "$srcdir/testdata/corpus/mnras_mnras_guide_p002.png"

#!/bin/sh
# ref_poppler.sh: automake test driver for the poppler reference test (tests/ref_poppler.py),
# which compares lineate's lines on the born-digital pages with pdftotext -bbox-layout and
# validates lineate's JSON for every testdata page against the layout schema.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3, PDFTOTEXT. Defaults: the
# source tree is the parent of this script's folder, the build tree is the current directory,
# /usr/bin/python3, pdftotext from PATH.
# Exit status: 0 pass, 1 fail, 77 skip (no pdftotext, no lineate binary, no python3 with numpy,
# PIL and jsonschema).

here=$(cd "$(dirname "$0")" && pwd)
srcdir=${top_srcdir:-$(dirname "$here")}
builddir=${top_builddir:-.}
python=${PYTHON3:-/usr/bin/python3}
pdftotext=${PDFTOTEXT:-pdftotext}
lineate="$builddir/lineate"

if ! command -v "$pdftotext" >/dev/null 2>&1; then
    echo "SKIP: pdftotext not found (Debian: poppler-utils)"
    exit 77
fi
if [ ! -x "$lineate" ]; then
    echo "SKIP: $lineate not built"
    exit 77
fi
if ! command -v "$python" >/dev/null 2>&1; then
    echo "SKIP: python3 not found ($python)"
    exit 77
fi
if ! "$python" -c 'import numpy, PIL, jsonschema; jsonschema.Draft202012Validator' \
        >/dev/null 2>&1; then
    echo "SKIP: $python lacks numpy, PIL or jsonschema >= 4 (Debian: python3-jsonschema)"
    exit 77
fi

exec "$python" "$srcdir/tests/ref_poppler.py" "$lineate" "$pdftotext" "$srcdir"

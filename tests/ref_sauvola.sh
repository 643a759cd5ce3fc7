#!/bin/sh
# ref_sauvola.sh: automake test driver for the Sauvola reference test (tests/ref_sauvola.py),
# which compares `tests/tool_stage binarize` with scikit-image's threshold_sauvola.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3. Defaults: the source tree
# is the parent of this script's folder, the build tree is the current directory, /usr/bin/python3.
# Exit status: 0 pass, 1 fail, 77 skip (no python3, numpy, PIL or scikit-image).

here=$(cd "$(dirname "$0")" && pwd)
srcdir=${top_srcdir:-$(dirname "$here")}
builddir=${top_builddir:-.}
python=${PYTHON3:-/usr/bin/python3}
tool="$builddir/tests/tool_stage"

if ! command -v "$python" >/dev/null 2>&1; then
    echo "SKIP: python3 not found ($python)"
    exit 77
fi
if ! "$python" -c 'import numpy, PIL, skimage.filters' >/dev/null 2>&1; then
    echo "SKIP: $python lacks numpy, PIL or scikit-image (Debian: python3-skimage)"
    exit 77
fi
if [ ! -x "$tool" ]; then
    echo "FAIL: $tool not found or not executable (build it with make check)"
    exit 1
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/ref_sauvola.XXXXXX") || exit 1
trap 'rm -rf "$work"' EXIT
trap 'exit 1' INT TERM HUP

"$python" "$srcdir/tests/ref_sauvola.py" "$tool" "$srcdir/testdata" "$work"

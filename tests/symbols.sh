#!/bin/sh
# The shared library exports exactly the public API: the dynamic symbols liblineate.so
# defines (nm -D --defined-only, binutils) against the functions lineate.h declares (the
# header read with its comments and preprocessor lines removed). A difference either way
# fails: an internal function exported, or a public one hidden or never defined.
set -u
srcdir=$(cd "${top_srcdir:-.}" && pwd) || exit 1
builddir=$(cd "${top_builddir:-.}" && pwd) || exit 1
so="$builddir/.libs/liblineate.so"
if [ ! -f "$so" ]; then
    echo "SKIP: $so absent (configured with --disable-shared?)"
    exit 77
fi
if ! command -v nm >/dev/null 2>&1; then
    echo "SKIP: nm not found (Debian: binutils)"
    exit 77
fi

work=$(mktemp -d) || exit 1
trap 'rm -rf "$work"' EXIT
nm -D --defined-only "$so" | awk '{ print $NF }' | sort -u >"$work/exported"

status=0
. "$srcdir/tests/declared_api.sh"
declared_api "$srcdir/src/lineate.h" "$work/declared" || status=1
for name in $(comm -13 "$work/declared" "$work/exported"); do
    echo "FAIL: $name is exported by liblineate.so but not declared in lineate.h"
    status=1
done
for name in $(comm -23 "$work/declared" "$work/exported"); do
    echo "FAIL: $name is declared in lineate.h but not exported by liblineate.so"
    status=1
done
[ "$status" -eq 0 ] && echo "PASS: liblineate.so exports the $(wc -l <"$work/declared") functions of lineate.h, nothing else"
exit "$status"

#!/bin/sh
# The library's manual page documents its whole interface: every function lineate.h declares
# (the header read with its comments and preprocessor lines removed) has an entry in
# man/lineate.3, a .TP whose tag names it in bold, and no entry names a function the header
# does not declare. The page also formats without a warning (groff -ww), when groff is here.
set -u
srcdir=$(cd "${top_srcdir:-.}" && pwd) || exit 1
page="$srcdir/man/lineate.3"
work=$(mktemp -d) || exit 1
trap 'rm -rf "$work"' EXIT

# The line after each .TP is an entry's tag: .BR "RETURN-TYPE lt_name" "(ARGS);"
awk 'tag { if (match($0, /lt_[a-z0-9_]+" "\(/)) print substr($0, RSTART, RLENGTH - 4); tag = 0 }
     /^\.TP/ { tag = 1 }' "$page" | sort >"$work/documented"

status=0
. "$srcdir/tests/declared_api.sh"
declared_api "$srcdir/src/lineate.h" "$work/declared" || status=1
for name in $(comm -23 "$work/declared" "$work/documented"); do
    echo "FAIL: $name is declared in lineate.h but has no entry in man/lineate.3"
    status=1
done
for name in $(comm -13 "$work/declared" "$work/documented" | sort -u); do
    echo "FAIL: man/lineate.3 documents $name, which lineate.h does not declare"
    status=1
done
for name in $(uniq -d "$work/documented"); do
    echo "FAIL: man/lineate.3 has two entries for $name"
    status=1
done
if command -v groff >/dev/null 2>&1; then
    warnings=$(groff -man -Tutf8 -ww -z "$page" 2>&1)
    if [ -n "$warnings" ]; then
        echo "FAIL: groff warns about man/lineate.3: $warnings"
        status=1
    fi
fi
[ "$status" -eq 0 ] && echo "PASS: man/lineate.3 documents the $(wc -l <"$work/declared") functions of lineate.h"
exit "$status"

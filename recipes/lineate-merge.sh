#!/bin/sh
# lineate-merge.sh LIST OUT > merged.jsonl: the page files that `lineate --out-dir OUT` wrote
# for the inputs of LIST, in list order and a file's pages in page order: byte for byte what
# one `lineate --from LIST` writes. Checks that every input page has exactly one record: a
# missing page file, a page numbered out of place, or a page file in OUT that belongs to no
# input of LIST makes it exit 1, naming it on standard error.
set -u
list=${1:?usage: lineate-merge.sh LIST OUT}
out=${2:?usage: lineate-merge.sh LIST OUT}
status=0
records=0
while IFS= read -r path; do
    [ -n "$path" ] || continue
    name=${path#./}
    name=${name#/} # page files mirror the path as given, without a leading / or ./
    case "${name##*/}" in *.*) name=${name%.*} ;; esac
    if [ -f "$out/$name.json" ]; then
        cat "$out/$name.json" || status=1
        records=$((records + 1))
    elif [ -f "$out/$name.p1.json" ]; then
        pages=$(grep -o '"pages":[0-9]*' "$out/$name.p1.json" | head -n 1 | cut -d: -f2)
        i=1
        while [ "$i" -le "${pages:-0}" ]; do
            if [ -f "$out/$name.p$i.json" ] &&
                grep -q "\"page\":$i,\"pages\":$pages" "$out/$name.p$i.json"; then
                cat "$out/$name.p$i.json" || status=1
                records=$((records + 1))
            else
                echo "lineate-merge: $path: page $i of $pages has no page file in $out" >&2
                status=1
            fi
            i=$((i + 1))
        done
    else
        echo "lineate-merge: $path: no page file in $out" >&2
        status=1
    fi
done <"$list"
files=$(find "$out" -type f -name '*.json' | wc -l)
if [ "$status" -eq 0 ] && [ "$files" -ne "$records" ]; then
    echo "lineate-merge: $out holds $files page files, but LIST has $records pages" >&2
    status=1
fi
exit "$status"

#!/bin/sh
# Speed benchmark (make bench): for every clean page of a corpus folder, the best of three
# runs of decoding the PNG and of the whole analysis (single thread), per stage where
# measured, and the ratio analysis / decode; then the median ratio.
# Usage: tests/bench.sh CORPUS_DIR
set -eu
corpus=${1:?usage: bench.sh CORPUS_DIR}
tool=${top_builddir:-.}/tests/tool_stage
out=$(mktemp)
trap 'rm -f "$out"' EXIT
for img in "$corpus"/*.png; do
    case "$img" in *-d.png) continue ;; esac
    printf '%-60s %s\n' "$(basename "$img")" "$("$tool" time "$img" 3)" | tee -a "$out"
done
awk '{ d += $3; a += $9 } END { printf "pages %d, mean decode %.1f ms, mean analysis %.1f ms, ", NR, d / NR, a / NR }' "$out"
awk '{ print $NF }' "$out" | sort -n | awk '{ r[NR] = $1 } END {
    printf "median ratio %.2f\n", (NR % 2) ? r[(NR + 1) / 2] : (r[NR / 2] + r[NR / 2 + 1]) / 2 }'

#!/bin/sh
# Full-corpus accuracy: analyse every page image of a corpus folder (NAME.png with
# NAME.gt.json beside it) and score the predictions against the ground truth.
# Usage: tests/score_corpus.sh CORPUS_DIR [OUT_DIR]   (make score-corpus CORPUS=...)
set -eu
corpus=${1:?usage: score_corpus.sh CORPUS_DIR [OUT_DIR]}
out=${2:-${top_builddir:-.}/score-out}
bin=${top_builddir:-.}/lineate
mkdir -p "$out"
for img in "$corpus"/*.png; do
    name=$(basename "$img" .png)
    [ -f "$corpus/$name.gt.json" ] || continue
    "$bin" -o "$out/$name.json" "$img" || echo "failed: $img" >&2
done
"$bin" score --per-page "$corpus" "$out"

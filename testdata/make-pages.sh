#!/bin/sh
# make-pages.sh: regenerates the born-digital test pages of lineate from their groff sources.
# For each NAME in newsletter, minutes, bulletin: NAME.ms -> NAME.pdf (groff -Tpdf -ms, US letter,
# fonts embedded) -> NAME.png (pdftoppm -r 300 -gray -png, then 8-bit gray, 16 gray levels).
#
# Usage: sh testdata/make-pages.sh                (from anywhere; writes next to this script)
#        sh testdata/make-pages.sh --corpus DIR   also re-copies the corpus excerpt (corpus/) and
#                                                 re-cuts sauvola-crop.png from the corpus in DIR
# Needs: groff (gropdf; the fonts it embeds come with ghostscript: libgs10-common and
# fonts-urw-base35), poppler-utils (pdftoppm, pdfinfo), /usr/bin/python3 with python3-pil
# and python3-numpy. Deterministic: SOURCE_DATE_EPOCH fixes the PDFs' dates, so re-running with
# the same package versions gives the same bytes.
set -eu

here=$(cd "$(dirname "$0")" && pwd)
PYTHON3=${PYTHON3:-/usr/bin/python3}
PDFTOPPM=${PDFTOPPM:-pdftoppm}
GROFF=${GROFF:-groff}
SOURCE_DATE_EPOCH=${SOURCE_DATE_EPOCH:-1704067200} # 2024-01-01T00:00:00Z
export SOURCE_DATE_EPOCH

corpus=
if [ "${1:-}" = --corpus ]; then
    corpus=${2:-}
    if [ -z "$corpus" ] || [ ! -f "$corpus/manifest.tsv" ]; then
        echo "make-pages.sh: --corpus needs the corpus folder (with manifest.tsv)" >&2
        exit 1
    fi
elif [ $# -gt 0 ]; then
    echo "usage: make-pages.sh [--corpus DIR]" >&2
    exit 2
fi

for tool in "$GROFF" "$PDFTOPPM" pdfinfo "$PYTHON3"; do
    command -v "$tool" >/dev/null 2>&1 || { echo "make-pages.sh: $tool not found" >&2; exit 1; }
done

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
trap 'exit 1' INT TERM HUP

for name in newsletter minutes bulletin; do
    # -P-pletter: US letter page; -P-e: embed all fonts, so that the render does not depend
    # on which fonts the rendering machine has.
    "$GROFF" -Tpdf -ms -P-pletter -P-e "$here/$name.ms" >"$tmp/$name.pdf"
    pages=$(LC_ALL=C pdfinfo "$tmp/$name.pdf" | sed -n 's/^Pages: *//p')
    if [ "$pages" != 1 ]; then
        echo "make-pages.sh: $name.pdf has $pages pages, expected 1 (shorten $name.ms)" >&2
        exit 1
    fi
    "$PDFTOPPM" -r 300 -gray -png -singlefile "$tmp/$name.pdf" "$tmp/$name-render"
    # pdftoppm 22.12 writes an RGB PNG even with -gray (all three channels equal). Convert it to
    # one 8-bit gray channel and round to 16 levels (multiples of 17): 127.5 = 7.5 * 17 is a
    # rounding midpoint, so no pixel crosses 128 (ink stays ink, paper stays paper).
    "$PYTHON3" - "$tmp/$name-render.png" "$tmp/$name.png" <<'PY'
import sys
import numpy as np
from PIL import Image

src, dst = sys.argv[1], sys.argv[2]
with Image.open(src) as im:
    a = np.asarray(im)
if a.ndim == 3:
    if not (np.array_equal(a[..., 0], a[..., 1]) and np.array_equal(a[..., 0], a[..., 2])):
        sys.exit("make-pages.sh: %s: render is not gray" % src)
    a = a[..., 0]
q = (np.round(a.astype(np.float64) / 17.0) * 17.0).astype(np.uint8)
if not np.array_equal(a < 128, q < 128):
    sys.exit("make-pages.sh: %s: quantisation moved pixels across 128" % src)
Image.fromarray(q, "L").save(dst, dpi=(300, 300), optimize=True)
PY
    mv "$tmp/$name.pdf" "$here/$name.pdf"
    mv "$tmp/$name.png" "$here/$name.png"
    echo "make-pages.sh: wrote $name.pdf and $name.png"
done

[ -n "$corpus" ] || exit 0

# Corpus excerpt: copied byte for byte (provenance in README.md).
mkdir -p "$here/corpus"
for page in ulthese_ulthese_p002 mnras_mnras_guide_p002 linguex_linguex-doc_p001-d \
        onrannual_skeleton_p001-d; do
    cp "$corpus/$page.png" "$corpus/$page.gt.json" "$here/corpus/"
    chmod 644 "$here/corpus/$page.png" "$here/corpus/$page.gt.json"
done
# 800 x 800 crop of a shaded and blurred page for the Sauvola reference test: columns 150..949,
# rows 150..949 of bgteubner_umbruch1a_p001-d.png, pixel values unchanged.
"$PYTHON3" - "$corpus/bgteubner_umbruch1a_p001-d.png" "$tmp/sauvola-crop.png" <<'PY'
import sys
from PIL import Image

with Image.open(sys.argv[1]) as im:
    if im.mode != "L":
        sys.exit("make-pages.sh: %s: not 8-bit gray" % sys.argv[1])
    im.crop((150, 150, 950, 950)).save(sys.argv[2], optimize=True)
PY
mv "$tmp/sauvola-crop.png" "$here/sauvola-crop.png"
echo "make-pages.sh: copied the corpus excerpt and cut sauvola-crop.png"

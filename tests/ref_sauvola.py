#!/usr/bin/python3
"""ref_sauvola.py: checks lineate's Sauvola binarization against scikit-image's.

Plain Sauvola (lt_binarize, lt_binarize_sampled) against skimage's threshold_sauvola; the
normalised form the analysis uses (lt_binarize_normalized with the page's own gray points,
exact and sampled) against the published formula T = M + (m - M) (1 - k (1 - s / R')),
R' = R (W - M) / 255 (Wolf & Jolion 2004 with lineate's choice of M and W, see src/binarize.c)
computed here with numpy from the window mean and deviation of skimage's threshold_niblack
(T = m - k s: k = 0 gives m, k = -1 gives m + s), on the same images and on their pale copies
(gray range mapped onto [170, 235]).

Reference: skimage.filters.threshold_sauvola(image, window_size=W, k=K, r=R) from Debian's
python3-skimage, which computes T = m * (1 + k * (s / R - 1)) (Sauvola & Pietikainen 2000) with
integral images (Shafait, Keysers & Breuel 2008). lineate's tool `tool_stage binarize IN W K R OUT`
writes the ink mask it computes (binary PGM, 0 = ink, 255 = paper), from lt_binarize or, with
"sampled", from lt_binarize_sampled, which the analysis uses; the two must agree on almost
every pixel of three images: a crop of a shaded, blurred corpus page, the born-digital
newsletter page and a synthetic page made here with numpy.

Usage: ref_sauvola.py TOOL_STAGE TESTDATA_DIR WORK_DIR
Exit status: 0 pass, 1 fail, 77 skip (scikit-image or numpy missing).
"""

import os
import subprocess
import sys

try:
    import numpy as np
    from PIL import Image
    from scipy.ndimage import maximum_filter
    from skimage.filters import threshold_niblack, threshold_sauvola
except ImportError as exc:  # the .sh driver checks this too; keep the script usable alone
    print("SKIP: %s" % exc)
    sys.exit(77)

# Cases: lineate's defaults (51 px window at 300 dpi, k 0.34) and smaller values (a 25 px window;
# k 0.2, skimage's default and common practice). R = 128, the dynamic range of the standard
# deviation for 8-bit images given by Sauvola & Pietikainen (2000), is also lineate's default.
WINDOWS_PX = (25, 51)
KS = (0.2, 0.34)
# lt_binarize_sampled (what the analysis uses) computes the threshold exactly only at every
# third pixel in x and y and interpolates between; it samples windows that are odd multiples
# of 3 of at least 27 px (51 is the analysis default at 300 dpi; 33 is its choice at 200 dpi).
SAMPLED_WINDOWS_PX = (33, 51)
R = 128.0

# Pass floor on all pixels (the project's requirement for this test).
MIN_AGREEMENT = 0.995
# Stricter floor on the interior, the pixels at least W/2 from every edge. There the window lies
# inside the image, so skimage's border rule (reflect padding) and lineate's (window clipped to
# the image) see the same neighbourhood and the two must agree up to rounding. Measured while
# writing this test with an independent numpy implementation of the clipped-window rule:
# 100.0000% interior agreement for every case here, while a window off by 2 px gives 99.80%,
# k off by 0.02 gives 99.60% and R = 127 gives 99.97% -- the all-pixel floor alone would let the
# first two through.
MIN_INTERIOR_AGREEMENT = 0.9995
# Floors for lt_binarize_sampled, whose interpolated threshold departs from the exact one by a
# fraction of a gray level between the sampled pixels. Measured when it was written: 99.944% to
# 100% on all pixels and 99.953% to 100% on the interior over these cases; a window off by 2 px
# would give 99.80% (above), which these floors reject.
MIN_SAMPLED_AGREEMENT = 0.999
MIN_SAMPLED_INTERIOR_AGREEMENT = 0.999
# A pixel whose gray value equals the threshold is ink for one rule (gray <= T, as in skimage's
# example `binary = image > thresh`) and paper for the other (gray < T, lineate's documented
# rule); floating-point sums decide such ties at random, so they count as agreement either way.
TIE_EPS = 1e-6
# The gray points (src/binarize.c): the white point is the tile mean that WHITE_SHARE of the
# tiles are at most; the range is stretched by the share 0 up to a black point PLAIN_RATIO of
# the white point, fully from STRETCHED_RATIO, linearly between; at least MIN_RANGE wide.
WHITE_SHARE = 0.9
PLAIN_RATIO, STRETCHED_RATIO = 0.3, 0.55
# The black point of a stretched page (src/binarize.c): a solid tile deviates by at most
# SOLID_DEVIATION of the range from the darkest tile to the paper and lies at most RINGING_SHARE
# of it above the darkest tile; without one, the level INK_CORE_SHARE of the ink's pixels reach.
SOLID_DEVIATION, RINGING_SHARE, INK_CORE_SHARE = 0.02, 0.125, 0.25
MIN_RANGE = 64
# The normalised form is checked with the analysis's k.
NORMALIZED_K = 0.34
# Floor of the sampled normalised form on all pixels and on the interior. On a pale copy the gray
# range is a quarter as wide, so about four times as many pixels lie within the interpolation's
# error of the threshold: measured when this was written, 99.94% at the worst (pale crop, W 33)
# and 99.97% to 100% elsewhere; a window off by 2 px gives about 99.8% (above).
MIN_PALE_SAMPLED_AGREEMENT = 0.9985
# Pale copies: the gray range mapped onto [PALE_INK, PALE_PAPER]; tinted copies: onto
# [PALE_INK, 255] with a band of rows onto [PALE_INK, PALE_PAPER].
PALE_INK, PALE_PAPER = 170, 235
# Levels the black point of a resampled pale copy may lie from PALE_INK (measured when this was
# written: 1.0 on the newsletter, whose darkest tile lies 2.6 below).
RESAMPLED_BLACK_TOLERANCE = 1.5


def tile_sums(gray):
    """Sums of the whole 3 x 3 tiles at multiples of 3 px (an empty array when there is none)."""
    h, w = (gray.shape[0] // 3) * 3, (gray.shape[1] // 3) * 3
    return gray[:h, :w].astype(np.int64).reshape(h // 3, 3, w // 3, 3).sum(axis=(1, 3))


def gray_points(gray):
    """The page's gray points: from the mean of its darkest whole 3 x 3 tile (D) and the tile
    mean that WHITE_SHARE of the tiles are at most (W), the share t of the stretch by D / W and
    the points (t B, 255 - t (255 - W)), returned with t; (0, 255, 0) without a tile. B is the
    black point of a stretched page: the darkest solid tile (standard deviation of its nine
    pixels within SOLID_DEVIATION of W - D) at most RINGING_SHARE of W - D above D, else the
    gray level INK_CORE_SHARE of the pixels of the whole tiles under (D + W) / 2 are at most,
    where under D, else D."""
    sums = tile_sums(gray)
    tiles = np.sort(sums.ravel())
    if tiles.size == 0:
        return 0.0, 255.0, 0.0
    darkest = tiles[0] / 9.0
    white = tiles[int(np.ceil(WHITE_SHARE * tiles.size)) - 1] / 9.0
    ratio = darkest / white if white > 0 else 0.0
    t = min(1.0, max(0.0, (ratio - PLAIN_RATIO) / (STRETCHED_RATIO - PLAIN_RATIO)))
    if t == 0:
        return 0.0, 255.0, 0.0
    h, w = sums.shape[0] * 3, sums.shape[1] * 3
    whole = gray[:h, :w].astype(np.float64)
    blocks = whole.reshape(h // 3, 3, w // 3, 3)
    means, devs = blocks.mean(axis=(1, 3)), blocks.std(axis=(1, 3))
    span = white - darkest
    solid = means[(devs <= SOLID_DEVIATION * span + 1e-9) &
                  (means <= darkest + RINGING_SHARE * span + 1e-9)]
    if solid.size:
        black = solid.min()
    else:
        ink = np.sort(whole[whole < darkest + span / 2])
        core = ink[int(np.ceil(INK_CORE_SHARE * ink.size)) - 1] if ink.size else 255
        black = min(core, darkest)
    return t * black, 255.0 - t * (255.0 - white), t


def normalized_threshold(gray, window_px, k, points):
    """T = M + (m - M) (1 - k + k s / R'), R' = R max(span, MIN_RANGE) / 255 (m below M taken as
    M); span = W - M, or, by the share t, the lightest whole tile's mean within window_px // 6
    tiles (scipy's maximum_filter on the tile grid) less M where that is narrower; m and s from
    skimage's threshold_niblack (reflect padding at the border)."""
    black, white, t = points
    m = threshold_niblack(gray, window_size=window_px, k=0)
    s = threshold_niblack(gray, window_size=window_px, k=-1) - m
    span = np.full(gray.shape, white - black)
    if t > 0:
        reach = window_px // 3 // 2
        lightest = maximum_filter(tile_sums(gray), size=2 * reach + 1, mode="constant", cval=0)
        ty = np.minimum(np.arange(gray.shape[0]) // 3, lightest.shape[0] - 1)
        tx = np.minimum(np.arange(gray.shape[1]) // 3, lightest.shape[1] - 1)
        own = lightest[np.ix_(ty, tx)] / 9.0 - black
        span = np.where(own < span, span - t * (span - own), span)
    r = R * np.maximum(span, MIN_RANGE) / 255
    return black + np.maximum(m - black, 0) * (1 - k + k * s / r)


def synthetic_page(seed=20240101, height_px=700, width_px=1000):
    """Gray test page: a paper background shaded by a linear gradient (230 at the top left down
    to 100 at the bottom right, darker than most real shading), rows of dark "word" rectangles
    like lines of text (3-14 px strokes, ink 70-120 levels below the paper), Gaussian noise with
    sigma 6 gray levels; fixed seed, so every run builds the same image."""
    rng = np.random.default_rng(seed)
    yy, xx = np.mgrid[0:height_px, 0:width_px].astype(np.float64)
    img = 230.0 - 85.0 * xx / width_px - 45.0 * yy / height_px
    line_pitch_px = 34
    for top in range(30, height_px - 40, line_pitch_px):
        x = 40 + int(rng.integers(0, 30))
        while x < width_px - 60:
            word_w = int(rng.integers(15, 90))
            for glyph_x in range(x, min(x + word_w, width_px - 40), 9):
                glyph_h = int(rng.choice([14, 14, 14, 20, 24]))  # x-height, ascender, descender
                glyph_top = top + (6 if glyph_h == 14 else 0)
                stroke_w = int(rng.integers(3, 7))
                img[glyph_top:glyph_top + glyph_h, glyph_x:glyph_x + stroke_w] -= \
                    rng.uniform(70, 120)
            x += word_w + int(rng.integers(10, 22))
    img += rng.normal(0.0, 6.0, img.shape)
    return np.clip(np.round(img), 0, 255).astype(np.uint8)


def read_pgm(path):
    """Reads a binary PGM (P5, maxval 255); returns a uint8 array. Raises ValueError on
    anything else, so that a malformed output fails the test with a reason."""
    with open(path, "rb") as f:
        data = f.read()
    fields = []
    pos = 0
    while len(fields) < 4:
        while pos < len(data) and data[pos:pos + 1].isspace():
            pos += 1
        if data[pos:pos + 1] == b"#":
            while pos < len(data) and data[pos:pos + 1] not in (b"\n", b"\r"):
                pos += 1
            continue
        start = pos
        while pos < len(data) and not data[pos:pos + 1].isspace():
            pos += 1
        if start == pos:
            raise ValueError("%s: truncated PGM header" % path)
        fields.append(data[start:pos])
    pos += 1  # the single whitespace byte after maxval
    if fields[0] != b"P5":
        raise ValueError("%s: not a binary PGM (magic %r)" % (path, fields[0]))
    width, height, maxval = (int(v) for v in fields[1:])
    if maxval != 255:
        raise ValueError("%s: maxval %d, expected 255" % (path, maxval))
    if len(data) - pos != width * height:
        raise ValueError("%s: %d pixel bytes, expected %d x %d" %
                         (path, len(data) - pos, width, height))
    return np.frombuffer(data, dtype=np.uint8, count=width * height,
                         offset=pos).reshape(height, width)


def lineate_ink(tool, png_path, window_px, k, out_path, mode, expect_points):
    """Runs lineate's binarization (mode "exact": lt_binarize, "sampled": lt_binarize_sampled,
    "normalized" and "normalized-sampled": lt_binarize_normalized with the page's gray
    points); returns its ink mask (True = ink)."""
    cmd = [tool, "binarize", png_path, str(window_px), repr(k), repr(R), out_path]
    cmd.append("sampled" if mode.endswith("sampled") else "exact")
    if mode.startswith("normalized"):
        cmd.append("auto")
    proc = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, timeout=300)
    if proc.returncode != 0:
        raise RuntimeError("%s exited with %d: %s" %
                           (" ".join(cmd), proc.returncode,
                            proc.stderr.decode("utf-8", "replace").strip()[:300]))
    pgm = read_pgm(out_path)
    values = np.unique(pgm)
    if not set(values.tolist()) <= {0, 255}:
        raise ValueError("%s: values other than 0 and 255: %s" % (out_path, values[:8]))
    if mode.startswith("normalized"):
        words = proc.stdout.decode().split()
        if (len(words) != 4 or words[0] != "black" or words[2] != "white" or
                abs(float(words[1]) - expect_points[0]) > 1e-4 or
                abs(float(words[3]) - expect_points[1]) > 1e-4):
            raise ValueError("gray points: %r, the tiles give %.6f %.6f" %
                             ((proc.stdout,) + tuple(expect_points)))
    return pgm == 0


def main(argv):
    if len(argv) != 4:
        print("usage: ref_sauvola.py TOOL_STAGE TESTDATA_DIR WORK_DIR", file=sys.stderr)
        return 2
    tool, testdata, work = argv[1:]

    synth_path = os.path.join(work, "synthetic.png")
    Image.fromarray(synthetic_page(), "L").save(synth_path)
    cases = [
        # (a) shaded and blurred corpus page, 800 x 800 crop (see testdata/README.md)
        ("sauvola-crop", os.path.join(testdata, "sauvola-crop.png")),
        # (b) the born-digital newsletter page, 2550 x 3300
        ("newsletter", os.path.join(testdata, "newsletter.png")),
        # (c) synthetic gradient + text-like rectangles + noise, built above
        ("synthetic", synth_path),
    ]
    for name, path in list(cases):
        gray = np.asarray(Image.open(path)).astype(np.float64)
        pale = np.round(PALE_INK + gray * (PALE_PAPER - PALE_INK) / 255).astype(np.uint8)
        pale_path = os.path.join(work, "pale-%s.png" % name)
        Image.fromarray(pale, "L").save(pale_path)
        cases.append(("pale-" + name, pale_path))
        # Tinted: lightened to [PALE_INK, 255], the middle third of the rows onto the pale range
        # (a tint of PALE_PAPER behind them), so that windows there have a paper of their own.
        tint = PALE_INK + gray * (255 - PALE_INK) / 255
        third = gray.shape[0] // 3
        tint[third:2 * third] = pale[third:2 * third]
        tint_path = os.path.join(work, "tint-%s.png" % name)
        Image.fromarray(np.round(tint).astype(np.uint8), "L").save(tint_path)
        cases.append(("tint-" + name, tint_path))

    failures = cases_run = 0
    print("%-18s %-18s %4s %5s %11s %11s %6s %9s %7s" %
          ("image", "mode", "W", "k", "agreement", "interior", "ties", "differ", "ink"))
    runs = [("exact", w, k, MIN_AGREEMENT, MIN_INTERIOR_AGREEMENT)
            for w in WINDOWS_PX for k in KS]
    runs += [("sampled", w, k, MIN_SAMPLED_AGREEMENT, MIN_SAMPLED_INTERIOR_AGREEMENT)
             for w in SAMPLED_WINDOWS_PX for k in KS]
    runs += [("normalized", w, NORMALIZED_K, MIN_AGREEMENT, MIN_INTERIOR_AGREEMENT)
             for w in WINDOWS_PX]
    runs += [("normalized-sampled", w, NORMALIZED_K, MIN_PALE_SAMPLED_AGREEMENT,
              MIN_PALE_SAMPLED_AGREEMENT) for w in SAMPLED_WINDOWS_PX]
    for name, path in cases:
        gray = np.asarray(Image.open(path))
        if gray.ndim != 2 or gray.dtype != np.uint8:
            print("FAIL %s: %s is not 8-bit gray" % (name, path))
            failures += 1
            continue
        points = gray_points(gray)
        for mode, window_px, k, min_all, min_interior in runs:
            if mode.startswith("normalized"):
                if points[2] == 0:
                    continue  # plain Sauvola: the cases above
                threshold = normalized_threshold(gray, window_px, k, points)
            elif name.startswith(("pale-", "tint-")):
                continue  # plain Sauvola loses pale print: nothing to compare
            else:
                threshold = threshold_sauvola(gray, window_size=window_px, k=k, r=R)
            ref_ink = gray < threshold
            ties = np.abs(gray.astype(np.float64) - threshold) <= TIE_EPS
            out_path = os.path.join(work, "%s-%s-%d-%g.pgm" % (name, mode, window_px, k))
            try:
                ink = lineate_ink(tool, path, window_px, k, out_path, mode, points)
            except (RuntimeError, ValueError, OSError,
                    subprocess.TimeoutExpired) as exc:
                print("FAIL %s W=%d k=%g: %s" % (name, window_px, k, exc))
                failures += 1
                continue
            if ink.shape != gray.shape:
                print("FAIL %s W=%d k=%g: output is %dx%d, input %dx%d" %
                      (name, window_px, k, ink.shape[1], ink.shape[0],
                       gray.shape[1], gray.shape[0]))
                failures += 1
                continue
            agree = (ink == ref_ink) | ties
            half = window_px // 2
            interior = agree[half:-half, half:-half]
            agreement = agree.mean()
            interior_agreement = interior.mean()
            ok = agreement >= min_all and interior_agreement >= min_interior
            print("%-18s %-18s %4d %5g %10.4f%% %10.4f%% %6d %9d %6.2f%% %s" %
                  (name, mode, window_px, k, 100.0 * agreement, 100.0 * interior_agreement,
                   int(ties.sum()), int((~agree).sum()), 100.0 * ink.mean(),
                   "ok" if ok else "FAIL"))
            if not ok:
                failures += 1
            cases_run += 1
            os.remove(out_path)
    # The pale newsletter resampled to 2/3 of its size (PIL's Lanczos filter: a copy made at
    # 300 dpi and read at 200): the edges of its strokes ring below the ink's level PALE_INK, and
    # the darkest tile lies there (167.4); the black point is the ink's level within
    # RESAMPLED_BLACK_TOLERANCE, and lineate's gray points are numpy's.
    pale = Image.open(os.path.join(work, "pale-newsletter.png"))
    resampled_path = os.path.join(work, "resampled-pale-newsletter.png")
    pale.resize((round(pale.width * 2 / 3), round(pale.height * 2 / 3)), Image.LANCZOS).save(
        resampled_path)
    resampled = np.asarray(Image.open(resampled_path))
    points = gray_points(resampled)
    darkest = tile_sums(resampled).min() / 9.0
    try:
        lineate_ink(tool, resampled_path, 33, NORMALIZED_K,
                    os.path.join(work, "resampled.pgm"), "normalized-sampled", points)
        ok = abs(points[0] - PALE_INK) <= RESAMPLED_BLACK_TOLERANCE < abs(darkest - PALE_INK)
    except (RuntimeError, ValueError, OSError, subprocess.TimeoutExpired) as exc:
        print("FAIL resampled pale newsletter: %s" % exc)
        ok = False
    print("resampled pale newsletter: darkest tile %.2f, black point %.2f (ink %d) %s" %
          (darkest, points[0], PALE_INK, "ok" if ok else "FAIL"))
    failures += not ok
    print("floors: agreement >= %.2f%% on all pixels, >= %.2f%% on the interior (exact); "
          ">= %.2f%% and >= %.2f%% (sampled); >= %.2f%% (normalized-sampled)" %
          (100.0 * MIN_AGREEMENT, 100.0 * MIN_INTERIOR_AGREEMENT,
           100.0 * MIN_SAMPLED_AGREEMENT, 100.0 * MIN_SAMPLED_INTERIOR_AGREEMENT,
           100.0 * MIN_PALE_SAMPLED_AGREEMENT))
    if failures:
        print("ref_sauvola: %d case(s) failed" % failures)
        return 1
    print("ref_sauvola: all %d cases passed" % cases_run)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))

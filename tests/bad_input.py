"""Table of bad inputs: each case is a file built here, the exit status lineate must give and a
fragment its one-line message must contain. Every case must finish within 10 s; in one batch
run of all cases, every good page still comes out. Run by tests/bad_input.sh."""
import io, json, os, random, resource, struct, subprocess, sys, tempfile, time, zlib

import numpy as np
from PIL import Image

LINEATE = sys.argv[1]
SRC = sys.argv[2]
TIMEOUT_S = 10
LIMIT_BYTES = 2 << 30  # 2 GiB of address space per run (skipped under sanitizers)
PILE_LINES = 1000000  # lines of each of the two piles `lineate score` is given
# Processor time (user and system), which other work on the machine does not stretch; the
# sanitizers take 4 times as long. The wall clock only stops a run that hangs.
PILE_CPU_SECONDS = 20 if os.environ.get("LT_SANITIZED") else 5
PILE_WALL_SECONDS = 120
# Address space (not under the sanitizers) and peak resident memory; the sanitizers' red zones
# and quarantine of freed memory double it.
PILE_MEMORY_BYTES = (2 << 30) if os.environ.get("LT_SANITIZED") else (1 << 30)


def png_bytes(img):
    out = io.BytesIO()
    img.save(out, format="PNG")
    return out.getvalue()


def page(w=600, h=400):
    """A small gray page with three dark text-like bars."""
    a = np.full((h, w), 255, np.uint8)
    for row in range(3):
        y = 60 + row * 40
        for x in range(40, w - 60, 30):
            a[y:y + 18, x:x + 20] = 0
    return Image.fromarray(a)


def chunk(kind, data):
    return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))


def png_header_bomb():
    # A valid signature and IHDR claiming 100000 x 100000 pixels (PNG spec, ISO/IEC 15948).
    ihdr = struct.pack(">IIBBBBB", 100000, 100000, 8, 0, 0, 0, 0)
    return b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr) + chunk(b"IEND", b"")


def tiff_pages(n, broken=None):
    """n deflate-compressed pages; page `broken` (1-based) gets its image data overwritten."""
    out = io.BytesIO()
    imgs = [page(300 + 20 * i, 200) for i in range(n)]
    imgs[0].save(out, format="TIFF", save_all=True, append_images=imgs[1:],
                 compression="tiff_deflate")
    data = bytearray(out.getvalue())
    if broken:
        im = Image.open(io.BytesIO(bytes(data)))
        im.seek(broken - 1)
        offsets, counts = im.tag_v2[273], im.tag_v2[279]
        for off, cnt in zip(offsets, counts):
            data[off:off + cnt] = b"\xa5" * cnt
    return bytes(data)


def jpeg_bytes():
    out = io.BytesIO()
    page().save(out, format="JPEG", quality=80)
    return out.getvalue()


def noise(fraction):
    rng = np.random.default_rng(7)
    a = np.where(rng.random((1200, 900)) < fraction, 0, 255).astype(np.uint8)
    return png_bytes(Image.fromarray(a))


def tiff_resolution(img, kind, value):
    """Uncompressed 8-bit gray TIFF whose XResolution and YResolution are of TIFF type `kind`
    (5 RATIONAL, 12 DOUBLE, both legal for these tags: TIFF 6.0 and its Technical Notes) with
    the 8-byte `value`; ResolutionUnit absent, so inches."""
    w, h = img.size
    pixels = img.tobytes()
    entries, ifd = 11, 8
    values = ifd + 2 + entries * 12 + 4
    data = values + 16
    tags = [(256, 3, w), (257, 3, h), (258, 3, 8), (259, 3, 1), (262, 3, 1), (273, 4, data),
            (277, 3, 1), (278, 3, h), (279, 4, len(pixels)), (282, kind, values),
            (283, kind, values + 8)]
    out = b"II*\0" + struct.pack("<IH", ifd, entries)
    for tag, typ, val in tags:
        out += struct.pack("<HHIHH" if typ == 3 else "<HHII", tag, typ, 1, val,
                           *([0] if typ == 3 else []))
    return out + struct.pack("<I", 0) + value + value + pixels


def png_phys(img, per_metre):
    """PNG with a pHYs chunk of `per_metre` pixels per metre (PNG spec: 4-byte unsigned)."""
    data = png_bytes(img)
    at = data.index(b"IDAT") - 4
    return data[:at] + chunk(b"pHYs", struct.pack(">IIB", per_metre, per_metre, 1)) + data[at:]


def jpeg_cmyk():
    """CMYK JPEG as print workflows write it (PIL: Adobe's marker, inverted samples)."""
    out = io.BytesIO()
    ink = page().point(lambda v: 255 - v)
    Image.merge("CMYK", (ink.point(lambda v: v // 4), ink.point(lambda v: v // 5),
                         ink.point(lambda v: v // 6), ink)).save(out, format="JPEG", quality=95)
    return out.getvalue()


def jpeg_header_only():
    data = jpeg_bytes()
    return data[:data.index(b"\xff\xda")]  # everything before the start of scan


good_png = png_bytes(page())
good_tiff = tiff_pages(1)
CASES = [
    # name, file name, bytes, exit status, message fragment (None: success)
    ("good page", "good.png", good_png, 0, None),
    ("zero bytes", "empty.png", b"", 1, "empty file"),
    ("text with an image extension", "notes.png", b"minutes of the meeting\n" * 20, 1,
     "not an image file"),
    ("truncated PNG", "trunc.png", good_png[: len(good_png) // 2], 1, "cannot decode"),
    ("truncated PNG header", "trunc-header.png", good_png[:30], 1, "trunc-header.png"),
    ("truncated TIFF", "trunc.tif", good_tiff[: len(good_tiff) // 2], 1, "trunc.tif"),
    ("truncated JPEG", "trunc.jpg", jpeg_bytes()[: len(jpeg_bytes()) // 2], 1, "cannot decode"),
    ("PNG header bomb 100000 x 100000", "bomb.png", png_header_bomb(), 1, "more than the limit"),
    ("1 x 1 pixel", "dot.png", png_bytes(Image.new("L", (1, 1), 255)), 0, None),
    ("1 x 100000 pixels", "thread.png", png_bytes(Image.new("L", (1, 100000), 255)), 0, None),
    ("all white", "white.png", png_bytes(Image.new("L", (900, 1200), 255)), 0, None),
    ("all black", "black.png", png_bytes(Image.new("L", (900, 1200), 0)), 0, None),
    ("salt and pepper 50%", "noise.png", noise(0.5), 0, None),
    ("4-page TIFF, page 3 broken", "broken3.tif", tiff_pages(4, broken=3), 1, "page 3"),
    # The decoders' own messages go into the one line, nothing else on stderr.
    ("JPEG header only", "header-only.jpg", jpeg_header_only(), 1, "missing SOS marker"),
    ("JPEG: SOI then garbage", "soi-garbage.jpg", b"\xff\xd8" + bytes(range(256)) * 4, 1,
     "cannot decode JPEG"),
    ("PGM with maxval 0", "maxval0.pgm", b"P5\n600 400\n0\n" + bytes(240000), 1, "maxval = 0"),
]
# Pages that must come out with particular record fields (name, file name, bytes, field
# checks, and a file holding the same page as it should be analysed, for the same lines).
plain = png_bytes(page())
RECORD_CASES = [
    ("TIFF XResolution a double of 1e38", "res-double.tif",
     tiff_resolution(page(), 12, struct.pack("<d", 1e38)),
     {"dpi": 300, "dpi_source": "assumed-file-implausible"}, plain),
    ("TIFF XResolution the largest rational", "res-rational.tif",
     tiff_resolution(page(), 5, struct.pack("<II", 0xFFFFFFFF, 1)),
     {"dpi": 300, "dpi_source": "assumed-file-implausible"}, plain),
    ("TIFF XResolution a plausible double", "res-150.tif",
     tiff_resolution(page(), 12, struct.pack("<d", 150.0)), {"dpi": 150, "dpi_source": "file"},
     None),
    ("PNG pHYs 0xffffffff px/m", "phys.png", png_phys(page(), 0xFFFFFFFF),
     {"dpi": 300, "dpi_source": "assumed-file-implausible"}, plain),
    # Gray from CMYK as PIL converts it (Image.convert, ITU-R 601-2 luma), the same lines.
    ("CMYK JPEG", "cmyk.jpg", jpeg_cmyk(), {"dpi_source": "assumed"},
     png_bytes(Image.open(io.BytesIO(jpeg_cmyk())).convert("L"))),
]
# Inputs that once crashed or hung lineate (found by fuzzing, kept in testdata/bad): any
# clean outcome, exit 0 or 1 with at most one message, within the time limit.
BAD_DIR = os.path.join(SRC, "testdata", "bad")
for fname in sorted(os.listdir(BAD_DIR)) if os.path.isdir(BAD_DIR) else []:
    if fname.endswith((".json", ".md")):
        continue
    with open(os.path.join(BAD_DIR, fname), "rb") as f:
        CASES.append(("regression " + fname, fname, f.read(), None, None))


def limit_memory():
    if not os.environ.get("LT_SANITIZED"):
        resource.setrlimit(resource.RLIMIT_AS, (LIMIT_BYTES, LIMIT_BYTES))


def run(args):
    return subprocess.run([LINEATE] + args, capture_output=True, timeout=TIMEOUT_S,
                          preexec_fn=limit_memory)


def run_measured(args, seconds, limit_bytes):
    """Runs lineate under RLIMIT_AS limit_bytes (not under sanitizers); None when it runs for
    more than `seconds`, else its exit status, stderr lines, processor time in seconds and peak
    resident memory in bytes (getrusage of that child)."""
    def limit():
        if not os.environ.get("LT_SANITIZED"):
            resource.setrlimit(resource.RLIMIT_AS, (limit_bytes, limit_bytes))
    t0 = time.monotonic()
    with tempfile.TemporaryFile() as err:
        p = subprocess.Popen([LINEATE] + args, stdout=subprocess.DEVNULL, stderr=err,
                             preexec_fn=limit)
        while True:
            pid, status, usage = os.wait4(p.pid, os.WNOHANG)
            if pid:
                break
            if time.monotonic() - t0 > seconds:
                p.kill()
                os.wait4(p.pid, 0)
                p.returncode = -9
                return None
            time.sleep(0.01)
        p.returncode = os.waitstatus_to_exitcode(status)
        err.seek(0)
        lines = err.read().decode(errors="replace").splitlines()
    return p.returncode, lines, usage.ru_utime + usage.ru_stime, usage.ru_maxrss * 1024


failed = 0


def check(ok, what):
    global failed
    print(("ok   " if ok else "FAIL ") + what)
    failed += not ok


with tempfile.TemporaryDirectory() as tmp:
    paths = []
    for name, fname, data, status, fragment in CASES:
        path = os.path.join(tmp, fname)
        with open(path, "wb") as f:
            f.write(data)
        paths.append(path)
        try:
            r = run([path])
        except subprocess.TimeoutExpired:
            check(False, "%s: finishes within %d s" % (name, TIMEOUT_S))
            continue
        err = r.stderr.decode(errors="replace").splitlines()
        if status is None:  # decoders may recover some of a damaged JPEG: either outcome, cleanly
            check(r.returncode in (0, 1) and len(err) <= 1,
                  "%s: exit %d, %d stderr line(s)" % (name, r.returncode, len(err)))
            continue
        check(r.returncode == status, "%s: exit %d (want %d)" % (name, r.returncode, status))
        if fragment is None:
            check(not err, "%s: no message (%s)" % (name, err[:1]))
            check(len(r.stdout.splitlines()) >= 1, "%s: a JSON line" % name)
        else:
            one = len(err) == 1 and fname in err[0] and fragment in err[0]
            check(one, "%s: one line naming the file with '%s' (%s)" % (name, fragment, err))
    for name, fname, data, fields, same_as in RECORD_CASES:
        path = os.path.join(tmp, fname)
        with open(path, "wb") as f:
            f.write(data)
        r = run([path])
        err = r.stderr.decode(errors="replace").splitlines()
        check(r.returncode == 0 and not err, "%s: exit %d, %s" % (name, r.returncode, err[:1]))
        if r.returncode != 0:
            continue
        rec = json.loads(r.stdout)
        got = {k: rec.get(k) for k in fields}
        check(got == fields, "%s: %s (want %s)" % (name, got, fields))
        if same_as:
            ref_path = os.path.join(tmp, "ref-" + fname + ".png")
            with open(ref_path, "wb") as f:
                f.write(same_as)
            ref = json.loads(run([ref_path]).stdout)
            boxes, want = [l["box"] for l in rec["lines"]], [l["box"] for l in ref["lines"]]
            close = len(boxes) == len(want) and all(
                abs(a - b) <= 2 for p, q in zip(boxes, want) for a, b in zip(p, q))
            check(close and len(want) > 0, "%s: %d lines as the reference page's %d" %
                  (name, len(boxes), len(want)))
    # One batch: every good page comes out, the bad ones are reported, the exit says so.
    # Every input page gives one record: its layout or an error record.
    r = run(paths)
    records = [json.loads(line) for line in r.stdout.splitlines()]
    layouts = [x for x in records if "error" not in x]
    errors = [x for x in records if "error" in x]
    good_pages = sum(1 for c in CASES if c[3] == 0) + 3  # pages 1, 2, 4 of broken3.tif
    bad_pages = sum(1 for c in CASES if c[3] == 1)  # one record each (page 3 of broken3.tif)
    maybe = sum(1 for c in CASES if c[3] is None)
    check(r.returncode == 1, "batch: exit 1 (%d)" % r.returncode)
    check(len(layouts) + len(errors) == good_pages + bad_pages + maybe,
          "batch: %d records for %d pages" % (len(records), good_pages + bad_pages + maybe))
    check(good_pages <= len(layouts) <= good_pages + maybe,
          "batch: %d layouts for %d good pages" % (len(layouts), good_pages))
    check(all(e.get("source") and "page" in e for e in errors),
          "batch: every error record names its file and page")
    err = r.stderr.decode(errors="replace").splitlines()
    check(len(err) == len(errors), "batch: %d stderr lines for %d error records" %
          (len(err), len(errors)))
    # A reader that closes the pipe early: exit 3 with a message, no crash.
    p = subprocess.Popen([LINEATE] + [paths[0]] * 200, stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE)
    p.stdout.read(10)
    p.stdout.close()
    err = p.stderr.read().decode()
    p.wait(timeout=60)
    check(p.returncode == 3 and "output" in err, "closed pipe: exit %d, '%s'" % (p.returncode, err.strip()))
    # JSON that once broke the reader of `lineate score`: exit 0 or 1, at most one message.
    for fname in sorted(os.listdir(BAD_DIR)) if os.path.isdir(BAD_DIR) else []:
        if not fname.endswith(".json"):
            continue
        path = os.path.join(BAD_DIR, fname)
        try:
            r = run(["score", path, path])
        except subprocess.TimeoutExpired:
            check(False, "score regression %s: finishes within %d s" % (fname, TIMEOUT_S))
            continue
        err = r.stderr.decode(errors="replace").splitlines()
        check(r.returncode in (0, 1) and len(err) <= 1,
              "score regression %s: exit %d, %d stderr line(s)" % (fname, r.returncode, len(err)))
    # JSON syntax as Python's json module judges it (RFC 8259; NaN and Infinity refused): a
    # page mutated at random is refused as "not valid JSON" (or truncated) exactly when Python
    # refuses it. Lone UTF-16 surrogates, which Python lets through, are not generated.
    rng = random.Random(11)
    page_texts = [json.dumps({"format": "lineate-layout-1", "source": "a.png", "page": 1,
                              "width": 900, "height": 700, "skew_deg": -0.5, "lines": [
                                  {"box": [10, 20, 300, 45], "quad": [[10, 20], [300, 20],
                                                                      [300, 45], [10, 45]],
                                   "block": 0, "text": "a\tb \u00e9"},
                                  {"box": [10, 60, 300, 85], "in_order": False}]}),
                  json.dumps({"format": "lineseg-gt-1", "image": "a.png", "width": 900,
                              "height": 700, "columns": 1, "lines": [
                                  {"id": 0, "box": [10, 20, 300, 45], "in_order": True},
                                  {"id": 1, "box": [10, 60, 300, 85.0], "in_order": None}]},
                             indent=1)]
    pieces = list('{}[]",:-+.eE0123456789 \n\tabfnrtu\\/') + [
        "\x01", "\x0c", "01", "1.", "-", "1e", "tru", "NaN", "\\q", "\\u12G4", '"\\u00e9"']
    reject = json.JSONDecoder(parse_constant=lambda c: 1 / 0)
    syntax_path = os.path.join(tmp, "syntax.json")
    agree = 0
    for i in range(200):
        text = rng.choice(page_texts)
        for _ in range(rng.randint(1, 3)):
            at = rng.randrange(len(text) + 1)
            text = (text[:at] + text[at + 1:] if rng.random() < 0.4 else
                    text[:at] + rng.choice(pieces) + text[at:])
        try:
            _, end = reject.raw_decode(text)
            if text[end:].strip(" \t\n\r"):
                continue  # a second value: lineate may first refuse the page for its content
            python_ok = True
        except (ValueError, ZeroDivisionError):
            python_ok = False
        with open(syntax_path, "w") as f:
            f.write(text)
        err = run(["score", syntax_path, syntax_path]).stderr.decode(errors="replace")
        lineate_ok = "not valid JSON" not in err and "truncated JSON" not in err
        agree += lineate_ok == python_ok
        if lineate_ok != python_ok:
            check(False, "JSON syntax case %d: Python %s, lineate '%s' (%r)" %
                  (i, "accepts" if python_ok else "refuses", err.strip(), text))
    check(agree > 0, "JSON syntax: %d mutated pages judged as Python's json module does" % agree)

    # Two layouts of 1,000,000 lines piled on one box, a ground truth and a lineate layout of
    # 94 and 138 MB (10^12 box pairs with IoU >= 0.5): `lineate score` refuses them by the
    # candidate limit, with one line naming both files, in about a second and 400 MB (reading
    # them into cJSON trees took 2.7 GB and 19 s before the limit was reached).
    box = [100, 100, 1100, 140]
    quad = [[100, 100], [1100, 100], [1100, 140], [100, 140]]
    pile_truth, pile_layout = os.path.join(tmp, "pile.gt.json"), os.path.join(tmp, "pile.json")
    for path, head, line in (
            (pile_truth, {"format": "lineseg-gt-1", "image": "pile.png", "width": 2000,
                          "height": 3000}, {"box": box, "quad": quad, "in_order": True}),
            (pile_layout, {"format": "lineate-layout-1", "source": "pile.png", "page": 1,
                           "pages": 1, "width": 2000, "height": 3000, "skew_deg": 0},
             {"box": box, "quad": quad, "baseline": [[100, 132], [1100, 132]],
              "xheight_px": 20, "block": 0})):
        with open(path, "w") as f:
            compact = lambda v: json.dumps(v, separators=(",", ":"))
            f.write(compact(head)[:-1] + ',"lines":[' + ",".join([compact(line)] * PILE_LINES) +
                    "]}\n")
    # The same pile as PAGE XML truth (86 MB; its libxml2 tree took 1.2 GB).
    pile_page = os.path.join(tmp, "pile.page.xml")
    with open(pile_page, "w") as f:
        f.write('<?xml version="1.0" encoding="UTF-8"?>\n<PcGts xmlns="http://schema.'
                'primaresearch.org/PAGE/gts/pagecontent/2019-07-15"><Page imageFilename="pile.png"'
                ' imageWidth="2000" imageHeight="3000"><TextRegion id="r"><Coords points="0,0 1,0'
                ' 1,1 0,1"/>' + "".join('<TextLine id="l%d"><Coords points="100,100 1100,100 1100,'
                                        '140 100,140"/></TextLine>' % i
                                        for i in range(PILE_LINES)) +
                "</TextRegion></Page></PcGts>\n")
    for truth in (pile_truth, pile_page):
        what = "score of two 1,000,000-line piles (%s)" % os.path.basename(truth)
        r = run_measured(["score", truth, pile_layout], PILE_WALL_SECONDS, PILE_MEMORY_BYTES)
        if r is None:
            check(False, "%s: finishes within %d s" % (what, PILE_WALL_SECONDS))
            continue
        status, err, seconds, peak = r
        one = (len(err) == 1 and truth in err[0] and pile_layout in err[0] and
               "more than 4000000 box pairs" in err[0])
        check(status == 1 and one, "%s: exit %d, %s" % (what, status, err[:2]))
        check(seconds < PILE_CPU_SECONDS and peak < PILE_MEMORY_BYTES,
              "%s: %.1f s of processor time (at most %d), peak %d MB (at most %d)" %
              (what, seconds, PILE_CPU_SECONDS, peak >> 20, PILE_MEMORY_BYTES >> 20))
sys.exit(1 if failed else 0)

"""Hostile file systems and processes: folder walks with link loops, FIFOs and unreadable
subfolders, file names that are not UTF-8, very long paths, output folders that cannot be
written, signals during a run, and endless or huge standard input. Each case states what
lineate must do; every run must end within its time limit. Run by tests/bad_input.sh.
Cases that need another user (permissions mean nothing to root) run lineate as `nobody`
when this runs as root, and are skipped when that user cannot run it."""
import io, json, os, resource, signal, subprocess, sys, tempfile, threading, time
import urllib.parse

import numpy as np
from PIL import Image

LINEATE = sys.argv[1]
TIMEOUT_S = 10
NOBODY = 65534
SANITIZED = bool(os.environ.get("LT_SANITIZED"))

failed = 0


def check(ok, what):
    global failed
    print(("ok   " if ok else "FAIL ") + what)
    failed += not ok


def page_png(rows=3):
    a = np.full((max(400, 60 + 40 * rows), 600), 255, np.uint8)
    for row in range(rows):
        y = 60 + row * 40
        for x in range(40, 540, 30):
            a[y:y + 18, x:x + 20] = 0
    out = io.BytesIO()
    Image.fromarray(a).save(out, format="PNG")
    return out.getvalue()


PAGE = page_png()


def write(path, data):
    with open(path, "wb") as f:
        f.write(data)


def run(args, as_nobody=False, memory=None, **kw):
    """lineate with args; raises subprocess.TimeoutExpired past the limit."""
    def start():
        if memory and not SANITIZED:
            resource.setrlimit(resource.RLIMIT_AS, (memory, memory))
        if as_nobody and os.geteuid() == 0:
            os.setgroups([])
            os.setgid(NOBODY)
            os.setuid(NOBODY)
    kw.setdefault("capture_output", True)
    return subprocess.run([LINEATE] + args, timeout=TIMEOUT_S, preexec_fn=start, **kw)


def lines_of(r):
    return r.stderr.decode(errors="replace").splitlines()


def strict_records(stdout):
    """Every line of stdout as JSON, decoded as strict UTF-8 (raises on any invalid byte)."""
    return [json.loads(line.decode("utf-8", errors="strict")) for line in stdout.splitlines()]


def attempt(what, fn):
    try:
        fn()
    except subprocess.TimeoutExpired:
        check(False, "%s: finishes within %d s" % (what, TIMEOUT_S))
    except (UnicodeDecodeError, ValueError) as e:
        check(False, "%s: output is strict UTF-8 JSON (%s)" % (what, e))


def link_loops(tmp):
    """A folder holding two links to itself and one to its parent: searched once."""
    d = os.path.join(tmp, "loops")
    os.makedirs(os.path.join(d, "inner"))
    write(os.path.join(d, "inner", "page.png"), PAGE)
    os.symlink(".", os.path.join(d, "again"))
    os.symlink(".", os.path.join(d, "more"))
    os.symlink("..", os.path.join(d, "inner", "up"))
    r = run([d])
    err = lines_of(r)
    check(r.returncode == 0 and len(r.stdout.splitlines()) == 1,
          "link loops: exit %d, %d records (want 0, 1)" % (r.returncode,
                                                            len(r.stdout.splitlines())))
    check(len(err) == 3 and all("searched already" in e for e in err),
          "link loops: each link reported once (%s)" % err)


def fifos(tmp):
    """A FIFO named like an image inside a folder is skipped with a word; one named on the
    command line is read as a stream."""
    d = os.path.join(tmp, "fifo-folder")
    os.makedirs(d)
    write(os.path.join(d, "a.png"), PAGE)
    os.mkfifo(os.path.join(d, "b.png"))
    r = run([d])
    err = lines_of(r)
    check(r.returncode == 0 and len(r.stdout.splitlines()) == 1,
          "FIFO in a folder: exit %d, %d records" % (r.returncode, len(r.stdout.splitlines())))
    check(len(err) == 1 and "b.png" in err[0] and "not a regular file" in err[0],
          "FIFO in a folder: reported (%s)" % err)
    fifo = os.path.join(tmp, "stream.png")
    os.mkfifo(fifo)
    writer = threading.Thread(target=write, args=(fifo, PAGE))
    writer.start()
    r = run([fifo])
    writer.join(TIMEOUT_S)
    recs = strict_records(r.stdout)
    check(r.returncode == 0 and len(recs) == 1 and recs[0].get("lines"),
          "FIFO named on the command line: read as a stream (exit %d)" % r.returncode)


def non_utf8_names(tmp):
    """Latin-1 names: every record strict UTF-8 JSON, the exact name in source_bytes."""
    d = os.path.join(tmp, "latin1").encode()
    os.makedirs(d)
    names = [b"caf\xe9 100%.png", b"r\xe9sum\xe9-\xff.png"]
    write(os.path.join(d, names[0]), PAGE)
    write(os.path.join(d, names[1]), b"not an image, and its name not UTF-8 either")
    for args in ([os.fsdecode(d)], ["-j", "2"] + [os.fsdecode(os.path.join(d, n)) for n in names]):
        r = run(args)
        recs = strict_records(r.stdout)
        check(r.returncode == 1 and len(recs) == 2,
              "Latin-1 names %s: exit %d, %d records" % (args[0], r.returncode, len(recs)))
        for rec, name in zip(recs, names):
            exact = urllib.parse.unquote_to_bytes(rec.get("source_bytes", ""))
            check(exact == os.path.join(d, name) and "\ufffd" in rec["source"],
                  "Latin-1 name %r: source %r, source_bytes gives it back" % (name, rec["source"]))
        check("error" in recs[1] and "\ufffd" in recs[1]["error"],
              "Latin-1 name: the error record's message is UTF-8 too")
    # lineate draw finds the record of the image by its exact name
    layout = os.path.join(tmp, "latin1.jsonl")
    write(layout, run([os.fsdecode(os.path.join(d, names[0]))]).stdout)
    r = run(["draw", os.fsdecode(os.path.join(d, names[0])), layout, "-o",
             os.path.join(tmp, "latin1.png")])
    check(r.returncode == 0, "Latin-1 name: draw finds its record by source_bytes (%s)" %
          lines_of(r))
    r = run([os.fsdecode(os.path.join(d, names[0])), "--out-dir", os.path.join(tmp, "latin1-out")])
    out = os.path.join(tmp, "latin1-out").encode()
    files = [os.path.join(root, f) for root, _, fs in os.walk(out) for f in fs]
    check(r.returncode == 0 and len(files) == 1, "Latin-1 name with --out-dir: one page file")
    for f in files:
        with open(f, "rb") as fp:
            attempt("Latin-1 page file", lambda: strict_records(fp.read()))


def long_path(tmp):
    """A path of about 450 bytes: the message keeps the reason and the end of the name."""
    d = tmp
    for k in range(4):
        d = os.path.join(d, "archive-box-%d-" % k + "x" * 100)
    os.makedirs(d)
    bad = os.path.join(d, "the-end-of-the-name.png")
    write(bad, b"minutes of the harbour board, not a picture of them")
    r = run([bad])
    err = lines_of(r)
    ok = (len(err) == 1 and err[0].endswith("the-end-of-the-name.png: not an image file "
                                             "(unknown format)") and "..." in err[0])
    check(r.returncode == 1 and ok, "path of %d bytes: one line, name shortened in the middle "
          "(%s)" % (len(bad), err))
    recs = strict_records(r.stdout)
    check(len(recs) == 1 and recs[0]["source"] == bad and
          recs[0]["error"].endswith("the-end-of-the-name.png: not an image file (unknown format)"),
          "path of %d bytes: the error record keeps the whole source and the reason" % len(bad))
    good = os.path.join(d, "good.png")
    write(good, PAGE)
    r = run(["--max-pixels", "1000", good])
    err = lines_of(r)
    check(len(err) == 1 and err[0].endswith("good.png: page 1: 600 x 400 pixels, more than "
                                             "the limit of 1000"),
          "path of %d bytes, a limit: the reason whole (%s)" % (len(good), err))


def unwritable_out_dir(tmp, nobody):
    """--out-dir that is a regular file or a folder one may not write: exit 3, counts of
    what was written, no stale message."""
    pages = [os.path.join(tmp, "pub", n) for n in ("one.png", "two.png")]
    for p in pages:
        write(p, PAGE)
        os.chmod(p, 0o644)
    not_dir = os.path.join(tmp, "pub", "a-file")
    write(not_dir, b"")
    r = run(["--out-dir", not_dir] + pages)
    err = lines_of(r)
    check(r.returncode == 3 and len(err) == 1 and "a-file" in err[0] and
          "Not a directory" in err[0], "--out-dir a regular file: exit %d, %s" % (r.returncode,
                                                                               err))
    if not nobody:
        return
    locked = os.path.join(tmp, "pub", "read-only")
    os.makedirs(locked)
    os.chmod(locked, 0o555)
    r = run(["--out-dir", locked] + pages, as_nobody=True)
    err = lines_of(r)
    check(r.returncode == 3, "--out-dir read-only: exit %d (want 3)" % r.returncode)
    check(sum("cannot write" in e and "Permission denied" in e for e in err) == 2,
          "--out-dir read-only: each page reported (%s)" % err)
    check(any("0 pages done, 2 failed" in e for e in err) and
          not any("standard output" in e for e in err),
          "--out-dir read-only: the summary counts what was written, nothing stale (%s)" % err)


def full_file_system(tmp):
    """--out-dir on a full file system (a 48 KiB tmpfs, when this runs as root and may mount):
    exit 3, each page that did not fit reported, the summary counting what was written."""
    if os.geteuid() != 0:
        return
    mnt = os.path.join(tmp, "full")
    os.makedirs(mnt)
    if subprocess.run(["mount", "-t", "tmpfs", "-o", "size=48k", "tmpfs", mnt],
                      capture_output=True).returncode != 0:
        print("skip full file system: cannot mount a tmpfs")
        return
    try:
        pages = []
        for k in range(6):  # 60 lines each: some 19 KiB of JSON a page, 2 fit
            pages.append(os.path.join(tmp, "full-%d.png" % k))
            write(pages[-1], page_png(60))
        r = run(["-j", "1", "--out-dir", os.path.join(mnt, "out")] + pages)
        err = lines_of(r)
        written = sum(len(fs) for _, _, fs in os.walk(mnt))
        full = sum("No space left on device" in e for e in err)
        check(r.returncode == 3 and full >= 1 and
              any("%d pages done, %d failed" % (written, full) in e for e in err),
              "--out-dir on a full file system: exit %d, %d written, %s" % (r.returncode,
                                                                          written, err))
    finally:
        subprocess.run(["umount", mnt])


def unreadable_subfolder(tmp, nobody):
    if not nobody:
        return
    d = os.path.join(tmp, "pub", "archive")
    os.makedirs(os.path.join(d, "locked"))
    write(os.path.join(d, "locked", "hidden.png"), PAGE)
    write(os.path.join(d, "page.png"), PAGE)
    os.chmod(os.path.join(d, "page.png"), 0o644)
    os.chmod(os.path.join(d, "locked"), 0o000)
    r = run([d], as_nobody=True)
    err = lines_of(r)
    check(r.returncode == 1 and len(r.stdout.splitlines()) == 1,
          "unreadable subfolder: exit %d, %d records (want 1, 1)" %
          (r.returncode, len(r.stdout.splitlines())))
    check(len(err) == 1 and "locked: Permission denied" in err[0],
          "unreadable subfolder: its real error alone (%s)" % err)
    os.chmod(os.path.join(d, "locked"), 0o755)


def signals(tmp):
    """SIGINT or SIGTERM while -o FILE is written: no temporary file left, no output file."""
    d = os.path.join(tmp, "signals")
    os.makedirs(d)
    write(os.path.join(d, "page.png"), PAGE)
    listing = os.path.join(d, "list")
    with open(listing, "w") as f:
        f.write((os.path.join(d, "page.png") + "\n") * 5000)
    for sig in (signal.SIGINT, signal.SIGTERM):
        out = os.path.join(d, "out.jsonl")
        p = subprocess.Popen([LINEATE, "-j", "2", "-o", out, "--from", listing],
                             stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        deadline = time.time() + TIMEOUT_S
        while time.time() < deadline and not any(".tmp" in f for f in os.listdir(d)):
            time.sleep(0.01)
        time.sleep(0.2)
        p.send_signal(sig)
        try:
            rc = p.wait(TIMEOUT_S)
        except subprocess.TimeoutExpired:
            p.kill()
            rc = p.wait()
        left = sorted(f for f in os.listdir(d) if f not in ("page.png", "list"))
        check(rc == -sig and not left, "%s during -o: ended by it (%s), files left: %s" %
              (signal.Signals(sig).name, rc, left))
    out_dir = os.path.join(d, "pages")
    p = subprocess.Popen([LINEATE, "-j", "2", "--out-dir", out_dir, "--from", listing],
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(0.5)
    p.send_signal(signal.SIGTERM)
    p.wait(TIMEOUT_S)
    left = [f for root, _, fs in os.walk(out_dir) for f in fs if f.endswith(".tmp")]
    check(not left, "SIGTERM during --out-dir: no temporary page file left (%s)" % left[:3])


def endless_stdin():
    """Standard input that is no image is refused after its first bytes, however long."""
    with open("/dev/zero", "rb") as zero:
        r = run(["-"], stdin=zero, memory=256 << 20)
    err = lines_of(r)
    check(r.returncode == 1 and len(err) == 1 and "not an image file" in err[0],
          "/dev/zero on stdin: refused at once (%s)" % err)
    # 300 MB of noise through a pipe: lineate stops reading after the first bytes.
    p = subprocess.Popen([LINEATE, "-"], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE)
    chunk = np.random.default_rng(3).integers(0, 256, 1 << 20, dtype=np.uint8).tobytes()
    sent = 0
    try:
        for _ in range(300):
            p.stdin.write(chunk)
            sent += len(chunk)
        p.stdin.close()
    except BrokenPipeError:  # lineate stopped reading: what it needed was sent
        pass
    p.wait(TIMEOUT_S)
    err = p.stderr.read()
    check(p.returncode == 1 and b"not an image file" in err and sent < (8 << 20),
          "300 MB of noise on stdin: refused, %d whole MiB written before the pipe closed" %
          (sent >> 20))


def may_run_as_nobody(tmp):
    """Makes tmp/pub, open to every user; whether the permission cases can run."""
    pub = os.path.join(tmp, "pub")
    os.makedirs(pub)
    os.chmod(tmp, 0o755)
    os.chmod(pub, 0o777)
    if os.geteuid() != 0:
        return True  # permissions apply to this user already
    try:
        return run(["--version"], as_nobody=True).returncode == 0
    except (OSError, subprocess.SubprocessError):
        return False


with tempfile.TemporaryDirectory() as tmp:
    nobody = may_run_as_nobody(tmp)
    if not nobody:
        print("skip permission cases: user nobody cannot run %s" % LINEATE)
    for what, case in (("link loops", lambda: link_loops(tmp)), ("FIFOs", lambda: fifos(tmp)),
                       ("non-UTF-8 names", lambda: non_utf8_names(tmp)),
                       ("long path", lambda: long_path(tmp)),
                       ("unwritable --out-dir", lambda: unwritable_out_dir(tmp, nobody)),
                       ("full file system", lambda: full_file_system(tmp)),
                       ("unreadable subfolder", lambda: unreadable_subfolder(tmp, nobody)),
                       ("signals", lambda: signals(tmp)), ("endless stdin", endless_stdin)):
        attempt(what, case)
sys.exit(1 if failed else 0)

#!/bin/sh
# progress_tty.sh: automake test of the live progress bar on a terminal. lineate and lineate
# crop run over good pages with bad files among them, standard error a pseudo-terminal
# (python3's pty module), 100, 60 and 40 columns wide; what the terminal shows is rebuilt from the
# bytes it received, and no row may hold both bar text and a message: each message has its
# own row, the bar is drawn again on the row below it, and the bar fits the terminal's width.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3. Exit status: 0 pass,
# 1 fail, 77 skip (no python3 with PIL, or no pseudo-terminal).
#
# References outside lineate: the pseudo-terminal is the kernel's (pty(7)); the screen is
# rebuilt by the rules of ECMA-48 for the three controls lineate writes: CR (0x0D) returns to
# the start of the row, LF (0x0A, which the terminal's ONLCR setting sends as CR LF) starts a
# new row, and ESC [ K (EL with no parameter) erases from the cursor to the end of the row.

test_name=progress_tty test_modules=PIL.Image test_timeout=120
. "$(cd "${top_srcdir:-.}" && pwd)/tests/harness.sh"

"$python" - "$testdata" <<'EOF' || { echo "FAIL: cannot build the test pages"; exit 1; }
import sys
from PIL import Image
src = sys.argv[1]
for k, name in enumerate(("minutes", "newsletter", "bulletin")):
    page = Image.open("%s/%s.png" % (src, name)).convert("L")
    page.crop((0, 250, 2550, 650)).save("good%d.png" % (k + 1), dpi=(300, 300))
open("bad1.png", "wb").write(b"\x89PNG\r\n\x1a\n broken")
open("bad2.png", "w").write("Minutes of the rowing club, not an image\n")
EOF

cat >on_terminal.py <<'EOF'
import fcntl, os, pty, re, select, struct, subprocess, sys, termios, time

BAR = re.compile(r"(\[[# ]*\] )?\d+/\d+ files")  # the gauge narrows or goes on narrow terminals
COUNTS = re.compile(r"\d+/\d+ files, \d+ pages")

def run_on_tty(args, columns, stdout_path):
    """Runs args with stderr on a new pseudo-terminal `columns` wide; exit status and the bytes
    the terminal received."""
    master, slave = pty.openpty()
    fcntl.ioctl(slave, termios.TIOCSWINSZ, struct.pack("HHHH", 24, columns, 0, 0))
    with open(stdout_path, "wb") as out:
        p = subprocess.Popen(args, stdin=subprocess.DEVNULL, stdout=out, stderr=slave)
    os.close(slave)
    data, deadline = b"", time.time() + 100
    while time.time() < deadline:
        ready, _, _ = select.select([master], [], [], 1)
        if not ready:
            if p.poll() is not None:
                break
            continue
        try:
            chunk = os.read(master, 65536)
        except OSError:  # EIO: every holder of the terminal's other side closed it
            break
        if not chunk:
            break
        data += chunk
    os.close(master)
    return p.wait(timeout=10), data

def screen(data):
    """The rows a terminal shows after receiving data (CR, LF and ESC [ K; other controls are
    a failure: lineate writes no others)."""
    text, rows, row, col, i = data.decode("utf-8", "replace"), [], [], 0, 0
    while i < len(text):
        if text.startswith("\x1b[K", i):
            del row[col:]
            i += 3
            continue
        ch = text[i]
        i += 1
        if ch == "\r":
            col = 0
        elif ch == "\n":
            rows.append("".join(row))
            row, col = [], 0
        elif ord(ch) < 32:
            sys.exit("control character %r in the output" % ch)
        else:
            if col < len(row):
                row[col] = ch
            else:
                row.append(ch)
            col += 1
    if row:
        rows.append("".join(row))
    return rows

def main(lineate, command, columns, n_good, *args):
    columns, n_good = int(columns), int(n_good)
    name = "lineate" + (" " + command if command else "")
    argv = [lineate] + ([command] if command else []) + list(args)
    rc, data = run_on_tty(argv, columns, "stdout.txt")
    rows = screen(data)
    problems = []
    if rc != 1:
        problems.append("exit %d, expected 1 (bad inputs among good ones)" % rc)
    text = data.decode("utf-8", "replace")
    if not re.search("\r" + BAR.pattern, text):
        problems.append("the bar was never drawn")
    shared = [r for r in rows if COUNTS.search(r) and name + ":" in r]
    if shared:
        problems.append("rows holding the bar and a message: %r" % shared)
    for bad in ("bad1.png", "bad2.png"):
        at = [r for r in rows if r.startswith(name + ": " + bad + ": ")]
        if len(at) != 1:
            problems.append("%s: %d rows of its own with its message, expected 1" % (bad, len(at)))
            continue
        after = text[text.index(at[0]) + len(at[0]):]
        if not (after.startswith("\r\n") and BAR.match(after[2:])):
            problems.append("%s: the bar not drawn again below its message: %r" % (bad, after[:60]))
    bars = [r for r in rows if BAR.match(r)]
    wide = [r for r in bars if len(r) >= columns]
    if wide:
        problems.append("bar rows as wide as the terminal (%d columns): %r" % (columns, wide))
    full = re.match(r"(\[(#*)\] )?5/5 files", bars[-1]) if bars else None
    if not full or (full.group(2) is not None and not full.group(2)):
        problems.append("the last bar is not full at 5/5 files: %r" % bars[-1:])
    if not any(r.startswith("%s: %d pages done, 2 failed" % (name, n_good)) for r in rows):
        problems.append("no summary row")
    for p in problems:
        print("%s, %d columns: %s" % (name, columns, p))
    if problems:
        print("the screen:\n" + "\n".join("  | " + r for r in rows))
        sys.exit(1)

main(*sys.argv[1:])
EOF
if ! "$python" -c 'import os, pty; m, s = pty.openpty()' 2>/dev/null; then
    echo "SKIP: no pseudo-terminal here"
    exit 77
fi
inputs="good1.png bad1.png good2.png bad2.png good3.png"
for columns in 100 60 40; do
    # shellcheck disable=SC2086 # the inputs are meant to be split
    check "lineate on a terminal of $columns columns: messages and the bar never share a row" \
        "$python" on_terminal.py "$lineate" "" "$columns" 3 -j 1 $inputs
    check "lineate on a terminal: the records on standard output, 3 pages and 2 error records" \
        test "$(grep -c '"lines"' stdout.txt)" -eq 3 -a "$(grep -c '"error"' stdout.txt)" -eq 2
    # shellcheck disable=SC2086
    check "lineate crop on a terminal of $columns columns: messages and the bar never share a row" \
        "$python" on_terminal.py "$lineate" crop "$columns" 3 -j 2 --out-dir "crops$columns" $inputs
done

echo "progress_tty.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

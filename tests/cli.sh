#!/bin/sh
# cli.sh: automake test of the lineate command line: --help and --version against the man page,
# the option parser every command shares (--help, --version, abbreviations of long options,
# ambiguous ones refused), usage errors, a table of bad inputs (exit status and the one message
# each must give), stdin, -o, write errors, determinism, multi-page TIFF, --pretty, score, and
# the man page's EXAMPLES.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3; defaults ., . and
# /usr/bin/python3. Exit status: 0 pass, 1 fail, 77 skip (no python3 with PIL).
#
# References outside lineate: the test pages are cut and re-encoded with PIL (python3-pil);
# a lossless change of container (PNG, multi-page TIFF, standard input) must not change the
# analysis. F1 = 2PR / (P + R) is van Rijsbergen's F-measure with beta = 1 (Information
# Retrieval, 1979; citation from memory), and Kendall's tau of an order against itself is 1
# (Kendall 1938, from the definition). jsonschema (python3-jsonschema) validates the output
# against the schema, where installed.

test_name=cli test_modules=PIL.Image test_timeout=60
. "$(cd "${top_srcdir:-.}" && pwd)/tests/harness.sh"
# run ARGS...: runs lineate, stdout to out, stderr to err, status in $rc.
run() {
    $limit "$lineate" "$@" >out 2>err
    rc=$?
}

# ---- JSON parsing and comparisons, in Python ------------------------------------------
cat >check.py <<'EOF'
import json, re, sys

def pages(path):
    """The JSON objects of a file, one per line (JSON Lines) or indented one after another."""
    text = open(path, encoding="utf-8").read()
    dec, pos, out = json.JSONDecoder(), 0, []
    while True:
        while pos < len(text) and text[pos] in " \t\r\n":
            pos += 1
        if pos == len(text):
            return out
        obj, pos = dec.raw_decode(text, pos)
        out.append(obj)

def jsonl(path):
    """Strict JSON Lines: every line is one JSON object."""
    return [json.loads(line) for line in open(path, encoding="utf-8")]

def strip(p):
    return {k: v for k, v in p.items() if k not in ("source", "page", "pages")}

def die(msg):
    print(msg)
    sys.exit(1)

ROFF_ESCAPES = (("\\-", "-"), ("\\(aq", "'"), ("\\(dq", '"'), ("\\e", "\\"), ("\\&", ""))

def roff_plain(s):
    """The few roff escapes the man page uses, as the text they stand for."""
    for a, b in ROFF_ESCAPES:
        s = s.replace(a, b)
    return s

def section(lines, start, end_re):
    """Lines after the line equal to `start` up to the next line matching end_re."""
    i = lines.index(start) + 1
    j = i
    while j < len(lines) and not re.match(end_re, lines[j]):
        j += 1
    return lines[i:j]

def tags(block):
    """The tag lines of .TP items, as plain text."""
    return [roff_plain(block[i + 1]) for i, l in enumerate(block[:-1]) if l.startswith(".TP")]

def cmd_count(path, n, source):
    """n layout records (error records of failed pages aside, which must name the source)."""
    ps = [p for p in jsonl(path) if "error" not in p]
    for e in jsonl(path):
        if "error" in e and not (e.get("format") == "lineate-layout-1" and e.get("source")):
            die("%s: error record without format or source: %r" % (path, e))
    if len(ps) != int(n):
        die("%s: %d JSON lines, expected %s" % (path, len(ps), n))
    for p in ps:
        if p.get("format") != "lineate-layout-1" or (source and p.get("source") != source):
            die("%s: unexpected format or source: %r %r" % (path, p.get("format"),
                                                           p.get("source")))

def cmd_same(a, b):
    pa, pb = [strip(p) for p in jsonl(a)], [strip(p) for p in jsonl(b)]
    if pa != pb:
        die("%s and %s differ beyond source/page/pages" % (a, b))

def cmd_multipage(path, source, sizes):
    ps = jsonl(path)
    want = [tuple(map(int, s.split("x"))) for s in sizes.split(",")]
    got = [(p["page"], p["pages"], p["source"], p["width"], p["height"]) for p in ps]
    exp = [(i + 1, len(want), source, w, h) for i, (w, h) in enumerate(want)]
    if got != exp:
        die("pages %r, expected %r" % (got, exp))
    if any(not p["lines"] for p in ps):
        die("a page of the TIFF file has no lines")

def cmd_pretty(pretty, compact, n):
    text = open(pretty, encoding="utf-8").read()
    got, want = pages(pretty), jsonl(compact)
    if got != want or len(got) != int(n):
        die("pretty output differs from the compact one")
    if int(n) == 1 and json.loads(text) != want[0]:
        die("pretty output is not one JSON document")
    if text.count("\n") <= len(want):
        die("pretty output is not indented")

def cmd_schema(schema_path, *files):
    try:
        import jsonschema
        validator = jsonschema.Draft202012Validator(json.load(open(schema_path)))
    except (ImportError, AttributeError):
        print("jsonschema >= 4 not available: schema validation skipped")
        return
    n = 0
    for f in files:
        for p in pages(f):
            errs = sorted(validator.iter_errors(p), key=lambda e: list(e.path))
            if errs:
                die("%s: %s at %s" % (f, errs[0].message, list(errs[0].path)))
            n += 1
    if n == 0:
        die("no page object to validate")

def cmd_fields(schema_path, man_path):
    """The man page's OUTPUT tags name exactly the schema's properties, object by object."""
    schema = json.load(open(schema_path))
    lines = open(man_path, encoding="utf-8").read().splitlines()
    out = section(lines, ".SH OUTPUT", r"\.SH ")
    for title, props in (("The page object", schema["$defs"]["page"]["properties"]),
                         ("The error record", schema["$defs"]["error_record"]["properties"]),
                         ("The line object", schema["$defs"]["line"]["properties"]),
                         ("The block object", schema["$defs"]["block"]["properties"])):
        block = section(out, ".SS " + title, r"\.S[SH] ")
        names = set()
        for t in tags(block):
            t = re.sub(r"^\.[A-Z]+ ", "", t).replace('"', "")
            names |= {w.strip() for w in t.split(",") if w.strip()}
        if names != set(props):
            die("%s: man page %s, schema %s" % (title, sorted(names), sorted(props)))

def long_options(text):
    return sorted(set(re.findall(r"--[a-z][a-z-]*", text)))

def cmd_options(man_path, help_path, kind):
    """The long options of --help (option lines only) equal those of the man page section."""
    lines = open(man_path, encoding="utf-8").read().splitlines()
    if kind == "analyze":
        block = section(lines, ".SH OPTIONS", r"\.SH ")
    else:
        block = section(lines, ".SS Score options", r"\.S[SH] ")
    in_man = long_options(" ".join(tags(block)))
    help_lines = [l for l in open(help_path) if re.match(r"\s+(-[A-Za-z], )?--[a-z]", l)]
    in_help = long_options(" ".join(re.match(r"\s+(?:-[A-Za-z], )?(--[a-z][a-z-]*)", l)
                                    .group(1) for l in help_lines))
    if len(in_man) < (5 if kind == "analyze" else 3) or in_man != in_help:
        die("%s options: man page %s, --help %s" % (kind, in_man, in_help))

def cmd_man_options(man_path):
    """Each long option of the man page OPTIONS, and 1 when its tag shows a value."""
    lines = open(man_path, encoding="utf-8").read().splitlines()
    for t in tags(section(lines, ".SH OPTIONS", r"\.SH ")):
        takes = t.startswith(".BI ") or "\\fI" in t
        for opt in long_options(t):
            print(opt, int(takes))

def cmd_examples(man_path, script_path, have_jq):
    """Writes the EXAMPLES commands, verbatim, as a script: a line that starts with "$ "
    begins a command, any other line of an .EX block continues it."""
    lines = open(man_path, encoding="utf-8").read().splitlines()
    ex = section(lines, ".SH EXAMPLES", r"\.SH ")
    cmds, inside = [], False
    for l in ex:
        if l == ".EX":
            inside = True
        elif l == ".EE":
            inside = False
        elif inside:
            rest = l
            for esc in ROFF_ESCAPES:
                rest = rest.replace(esc[0], "")
            if "\\" in rest:
                die("unhandled roff escape in EXAMPLES: " + l)
            plain = roff_plain(l)
            if plain.startswith("$ "):
                cmds.append(plain[2:])
            elif cmds:
                cmds[-1] += "\n" + plain
            else:
                die("EXAMPLES: a block does not start with a command: " + l)
    with open(script_path, "w") as f:
        f.write("set -u\n")
        for i, c in enumerate(cmds, 1):
            if have_jq == "0" and re.search(r"\bjq\b", c):
                f.write("echo 'example %d skipped: no jq'\n" % i)
                continue
            f.write(c + "\n")
            f.write('st=$?; if [ "$st" -ne 0 ]; then echo "example %d exited $st" >&2; exit 1; fi\n'
                    % i)
    print(len(cmds))

def cmd_score(score_json, truth, pred, text_path, man_path):
    s = json.load(open(score_json))
    t, p = pages(truth), pages(pred)
    if s["format"] != "lineate-score-1" or len(s["pages"]) != 1:
        die("score: format or page count")
    sm = s["summary"]
    if sm["truth_lines"] != len(t[0]["lines"]) or sm["pred_lines"] != len(p[0]["lines"]):
        die("score: line counts %d/%d, files have %d/%d" % (sm["truth_lines"], sm["pred_lines"],
                                                           len(t[0]["lines"]),
                                                           len(p[0]["lines"])))
    for lvl in ("50", "75"):
        m, nt, npred = sm["matched_" + lvl], sm["truth_lines"], sm["pred_lines"]
        prec, rec = m / npred, m / nt
        f1 = 2 * prec * rec / (prec + rec) if prec + rec else 0.0
        for key, want in (("precision_", prec), ("recall_", rec), ("f1_", f1)):
            if abs(sm[key + lvl] - want) > 2e-6:
                die("score: %s%s = %r, formula gives %r" % (key, lvl, sm[key + lvl], want))
    if not 0 <= sm["matched_75"] <= sm["matched_50"] <= min(sm["truth_lines"], sm["pred_lines"]):
        die("score: match counts out of order")
    if sm["matched_50"] == 0:
        die("score: no line matched at all")
    text = open(text_path).read()
    want = "F1 %.4f  (%d matched)" % (sm["f1_50"], sm["matched_50"])
    if want not in text:
        die("score: text output lacks %r" % want)
    man = open(man_path, encoding="utf-8").read()
    keys = set(s) | set(sm) | set(s["pages"][0])
    undocumented = sorted(k for k in keys if not re.search(r"\b%s\b" % re.escape(k), man))
    if undocumented:
        die("score --json fields missing from the man page: %s" % undocumented)

def cmd_identity(score_json):
    sm = json.load(open(score_json))["summary"]
    want = {"precision_50": 1, "recall_50": 1, "f1_50": 1, "f1_75": 1, "splits": 0,
            "merges": 0, "tau_median": 1, "skew_error_max_deg": 0, "out_of_place_share": 0,
            "backward_steps": 0, "uncovered_lines": 0}
    got = {k: sm[k] for k in want}
    if got != want:
        die("truth scored against itself: %r" % got)

def cmd_prefixes(lineate, command, help_path):
    """Every prefix of every long option in a command's --help, given alone: where it starts
    one option only, it is taken as that option (a flag given "=x" is told it takes no value,
    a valued option given none is told it needs one, both messages naming the full option);
    where it starts several, it is refused as ambiguous, the message listing exactly those.
    Each refusal: exit 2, nothing on stdout, one stderr line 'lineate[ COMMAND]: '."""
    import subprocess
    opts = {}
    for l in open(help_path):
        m = re.match(r"\s+(?:-[A-Za-z], )?--([a-z][a-z-]*)( [A-Z]+)?\s", l)
        if m:
            opts[m.group(1)] = bool(m.group(2))
    if len(opts) < 4 or "help" not in opts or "version" not in opts:
        die("%s: the options of --help: %r" % (command or "lineate", opts))
    name = "lineate" + (" " + command if command else "")
    base = [lineate] + ([command] if command else [])
    runs = 0
    for opt, takes in sorted(opts.items()):
        for n in range(1, len(opt) + 1):
            prefix = opt[:n]
            fits = sorted(o for o in opts if o.startswith(prefix))
            exact = prefix in opts
            arg = "--" + prefix + ("" if takes or (len(fits) > 1 and not exact) else "=x")
            r = subprocess.run(base + [arg], stdin=subprocess.DEVNULL, capture_output=True,
                               text=True, timeout=30)
            runs += 1
            err = r.stderr.splitlines()
            what = "%s %s: exit %d, stdout %r, stderr %r" % (name, arg, r.returncode,
                                                              r.stdout[:60], err)
            if r.returncode != 2 or r.stdout or len(err) != 1 or \
                    not err[0].startswith(name + ": "):
                die(what)
            if len(fits) > 1 and not exact:
                m = re.search(r"is ambiguous: (.*) \(see ", err[0])
                named = sorted(w.strip()[2:] for w in m.group(1).split(",")) if m else None
                if named != fits:
                    die("%s: should name %r as ambiguous" % (what, fits))
            else:
                full = prefix if exact else fits[0]
                want = "option '--%s' %s" % (full, "needs a value" if takes else
                                             "takes no value")
                if want not in err[0]:
                    die("%s: should say %r" % (what, want))
    print("%s: %d options, %d prefixes tried" % (name, len(opts), runs))

cmds = {"prefixes": cmd_prefixes, "count": cmd_count, "same": cmd_same, "multipage": cmd_multipage,
        "pretty": cmd_pretty, "schema": cmd_schema, "fields": cmd_fields,
        "options": cmd_options, "man-options": cmd_man_options, "examples": cmd_examples,
        "score": cmd_score, "identity": cmd_identity}
cmds[sys.argv[1]](*sys.argv[2:])
EOF
py() { "$python" check.py "$@"; }

# ---- test pages ----------------------------------------------------------------------------
# Cuts of the testdata pages keep the runs short: a one-column band of the minutes and the
# two-column top of the newsletter. page3-1bit is the minutes band thresholded at 128 as a
# 1-bit image (used as it is, no binarization). The three form a multi-page TIFF.
mkdir in || exit 1
"$python" - "$testdata" <<'EOF' || { echo "FAIL: cannot build the test pages"; exit 1; }
import sys
from PIL import Image
src = sys.argv[1]
minutes = Image.open(src + "/minutes.png").convert("L").crop((0, 250, 2550, 1100))
news = Image.open(src + "/newsletter.png").convert("L").crop((0, 0, 2550, 1300))
bilevel = minutes.point(lambda v: 255 if v >= 128 else 0).convert("1")
for im, name in ((minutes, "page1"), (news, "page2"), (bilevel, "page3-1bit")):
    im.save("in/%s.png" % name, dpi=(300, 300))
minutes.save("in/good.png", dpi=(300, 300))
minutes.save("in/good.jpg", quality=92, dpi=(300, 300))
minutes.save("in/three.tif", save_all=True, append_images=[news, bilevel],
             compression="tiff_lzw", dpi=(300, 300))
EOF
sizes="2550x850,2550x1300,2550x850"
good=in/good.png

# ---- --help, --version and the man page ----------------------------------------------------
run --help
check "--help exits 0 and prints the options" test "$rc" -eq 0 -a -s out -a ! -s err
cp out help.txt
run -h
check "-h prints the same as --help" cmp -s out help.txt
check "--help and the man page OPTIONS list the same long options" \
    py options "$man" help.txt analyze
$limit "$lineate" score --help >score-help.txt 2>err
check "score --help exits 0" test "$?" -eq 0 -a -s score-help.txt -a ! -s err
check "score --help and the man page list the same score options" \
    py options "$man" score-help.txt score

# Every long option of the man page is one lineate knows, taking a value as the page shows.
py man-options "$man" >man-options.txt
while read -r opt takes; do
    run "$opt" </dev/null
    case $opt:$takes in
    --help:* | --version:*) check "$opt alone: exit 0" test "$rc" -eq 0 -a -s out ;;
    *:1) check "$opt alone: exit 2, needs a value" test "$rc" -eq 2 -a \
        "$(grep -c 'needs a value' err)" -eq 1 ;;
    *) check "$opt alone: exit 2, a flag, no input" test "$rc" -eq 2 -a \
        "$(grep -c 'no input' err)" -eq 1 ;;
    esac
done <man-options.txt
check "the man page OPTIONS give at least 9 long options" test "$(nlines man-options.txt)" -ge 9

version=$(sed -n 's/^AC_INIT(\[lineate\], *\[\([^]]*\)\].*/\1/p' "$srcdir/configure.ac")
run --version
check "--version prints 'lineate $version' (configure.ac)" \
    test "$rc" -eq 0 -a "$(cat out)" = "lineate $version" -a ! -s err
run -V
check "-V prints the version" test "$rc" -eq 0 -a "$(cat out)" = "lineate $version"
check "the man page header carries version $version" \
    grep -q "^\.TH LINEATE 1 .*\"lineate $version\"" "$man"
check "every schema field is described in the man page OUTPUT section" \
    py fields "$schema" "$man"
if command -v groff >/dev/null 2>&1; then
    groff -man -Tutf8 -ww -z "$man" >groff.out 2>&1
    check "groff -man -ww formats the man page without warnings" \
        test "$?" -eq 0 -a ! -s groff.out
else
    echo "note: groff not found, man page formatting not checked"
fi

# ---- one option parser for every command ----------------------------------------------------
# Each command takes --help and -h (its own help: exit 0, nothing on stderr), --version and -V
# (the version of configure.ac), and every prefix of a long option that starts no other one;
# a prefix several options start is refused naming them (py prefixes, above). An abbreviated
# command line gives the output of the full one.
for cmd in "" score draw crop; do
    tag=${cmd:-lineate}
    # shellcheck disable=SC2086 # an empty $cmd is the analyse command
    run $cmd --help
    check "$tag --help: exit 0, its usage on stdout, nothing on stderr" \
        test "$rc" -eq 0 -a ! -s err -a "$(grep -c "^Usage: lineate${cmd:+ $cmd} " out)" -eq 1
    cp out "help-$tag.txt"
    # shellcheck disable=SC2086
    run $cmd -h
    check "$tag -h prints the same as --help" cmp -s out "help-$tag.txt"
    for v in --version -V --vers; do
        # shellcheck disable=SC2086
        run $cmd $v
        check "$tag $v prints 'lineate $version'" \
            test "$rc" -eq 0 -a "$(cat out)" = "lineate $version" -a ! -s err
    done
    # shellcheck disable=SC2086
    run $cmd --no-such-option x
    check "$tag --no-such-option: exit 2, one line 'lineate${cmd:+ $cmd}: unknown option ...'" \
        test "$rc" -eq 2 -a ! -s out -a "$(nlines err)" -eq 1 -a \
        "$(grep -c "^lineate${cmd:+ $cmd}: unknown option '--no-such-option' (see lineate${cmd:+ $cmd} --help)$" err)" -eq 1
    check "$tag: every unambiguous prefix of each option is that option, an ambiguous one refused" \
        py prefixes "$lineate" "$cmd" "help-$tag.txt"
done
run --pre --for=page --max-sk 3 "$good"
cp out abbrev.xml
run --pretty --format=page --max-skew 3 "$good"
check "lineate --pre --for=page --max-sk 3: the output of the full options" \
    test "$rc" -eq 0 -a -s out && cmp -s out abbrev.xml
truth="$testdata/corpus/ulthese_ulthese_p002.gt.json"
run score --js --per "$truth" "$truth"
cp out abbrev.json
run score --json --per-page "$truth" "$truth"
check "lineate score --js --per: the output of --json --per-page" \
    test "$rc" -eq 0 -a -s out && cmp -s out abbrev.json
run draw --no --sc 0.5 -o abbrev.png in/page1.png
run draw --no-order --scale 0.5 -o full.png in/page1.png
check "lineate draw --no --sc 0.5: the picture of --no-order --scale 0.5" \
    test "$rc" -eq 0 -a -s full.png && cmp -s full.png abbrev.png
run crop --rec --marg 3 --out abbrev-crops "$good"
run crop --rectify --margin 3 --out-dir full-crops "$good"
check "lineate crop --rec --marg 3 --out: the crops and manifests of the full options" \
    test "$rc" -eq 0 -a -n "$(ls full-crops)" && diff -r full-crops abbrev-crops
run --max 3 "$good"
check "an ambiguous prefix is refused before any work: exit 2, nothing written" \
    test "$rc" -eq 2 -a ! -s out

# ---- usage errors: exit 2, one line on stderr, nothing on stdout ----------------------------
# Each row: the arguments, and a word the message must contain.
while IFS='|' read -r args word; do
    # shellcheck disable=SC2086 # the arguments are meant to be split
    run $args </dev/null
    check "usage error '$args': exit 2, one stderr line naming '$word'" \
        test "$rc" -eq 2 -a ! -s out -a "$(nlines err)" -eq 1
    check "usage error '$args': message names '$word'" grep -q -e "$word" err
done <<'EOF'
--no-such-option in/good.png|--no-such-option
-x in/good.png|-x
--dpi|--dpi
-o|-o
--window|--window
--dpi 5 in/good.png|--dpi
--dpi 300x in/good.png|--dpi
--k 1.5 in/good.png|--k
--max-skew 90 in/good.png|--max-skew
--max-pixels 0 in/good.png|--max-pixels
|input
--pretty|input
scroe a b|unknown command 'scroe' (did you mean 'score'?)
crpo in/good.png|did you mean 'crop'
EOF
: >drwa # a file named like a slip of a command is an input, not a command
run drwa
check "a file named 'drwa' is analysed as an input, not taken for 'draw'" \
    test "$rc" -eq 1 -a "$(grep -c 'unknown command' err)" -eq 0
$limit "$lineate" score --no-such-option a b >out 2>err
check "score with an unknown option exits 2 and names it" \
    test "$?" -eq 2 -a ! -s out -a "$(grep -c -e '--no-such-option' err)" -ge 1
$limit "$lineate" score only-one >out 2>err
check "score with one argument exits 2" test "$?" -eq 2 -a ! -s out -a -s err

# ---- bad inputs: exit 1, exactly one stderr line naming the file, the good file still done ----
: >in/empty.png
printf 'Minutes of the spring meeting\n' >in/notes.png
mkdir in/folder.png
head -c 3000 in/good.png >in/truncated.png
head -c 3000 in/good.jpg >in/truncated.jpg
head -c 200 in/three.tif >in/truncated.tif
printf 'II*\000\377\377\377\177garbage' >in/badifd.tif
# A valid PNG header that claims 100000 x 100000 pixels (10^10, over the default limit) and
# has no pixel data: must be refused from the header, without a huge allocation.
"$python" - <<'EOF'
import struct, zlib
ihdr = struct.pack(">IIBBBBB", 100000, 100000, 8, 0, 0, 0, 0)
chunk = lambda t, d: struct.pack(">I", len(d)) + t + d + struct.pack(">I", zlib.crc32(t + d))
open("in/huge.png", "wb").write(b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr) +
                                chunk(b"IEND", b""))
EOF
for bad in in/missing.png in/empty.png in/notes.png in/folder.png in/truncated.png \
        in/truncated.jpg in/truncated.tif in/badifd.tif in/huge.png; do
    run "$bad" "$good"
    check "bad input $bad: exit 1" test "$rc" -eq 1
    check "bad input $bad: exactly one stderr line, naming the file" \
        test "$(nlines err)" -eq 1 -a "$(grep -c -F -e "$bad" err)" -eq 1
    check "bad input $bad: the good file alongside still gives its JSON line" \
        py count out 1 "$good"
done
run - <in/notes.png
check "bad standard input: exit 1, one stderr line naming stdin, one error record" \
    test "$rc" -eq 1 -a "$(nlines err)" -eq 1 -a "$(grep -c stdin err)" -eq 1 -a \
    "$(grep -c '"error"' out)" -eq 1 -a "$(nlines out)" -eq 1

# ---- standard input, -o, write errors, determinism ------------------------------------------
run "$good"
cp out good.json
check "a good file: exit 0, one JSON line, nothing on stderr" \
    test "$rc" -eq 0 -a ! -s err
check "a good file: one page object" py count good.json 1 "$good"
run - <"$good"
check "'-' reads standard input: exit 0" test "$rc" -eq 0 -a ! -s err
check "'-' reads standard input: source is '-'" py count out 1 -
check "standard input gives the same analysis as the file" py same out good.json

mkdir o
run -o o/result.json "$good"
check "-o FILE: exit 0, nothing on stdout or stderr" test "$rc" -eq 0 -a ! -s out -a ! -s err
check "-o FILE writes the same bytes as stdout" cmp -s o/result.json good.json
check "-o FILE leaves no temporary file" test "$(ls -A o)" = result.json
run -o o/result.json in/notes.png "$good"
check "-o FILE with a bad input: exit 1, the good page written, no temporary file" \
    test "$rc" -eq 1 -a "$(ls -A o)" = result.json
check "-o FILE with a bad input: the file holds the good page" py count o/result.json 1 "$good"
run -o - "$good"
check "-o - writes to standard output" cmp -s out good.json
run -o no-such-folder/result.json "$good"
check "-o into a missing folder: exit 3, one stderr line naming it" \
    test "$rc" -eq 3 -a "$(nlines err)" -eq 1 -a "$(grep -c no-such-folder err)" -eq 1
check "-o into a missing folder: nothing created" test ! -e no-such-folder
if [ -c /dev/full ]; then
    $limit "$lineate" "$good" >/dev/full 2>err
    rc=$?
    check "writing to /dev/full: exit 3, one stderr line" test "$rc" -eq 3 -a "$(nlines err)" -eq 1
else
    echo "note: no /dev/full, write error on standard output not checked"
fi
# -o onto a device must write to the device, not replace it with a regular file. A private
# device node keeps the system's own untouched: the full device is character major 1, minor 7
# in the Linux kernel's list of devices (from memory; the check below makes sure the node
# refuses writes before it is used).
if [ "$(id -u)" = 0 ] && mknod full-device c 1 7 2>/dev/null &&
        ! (printf x >full-device) 2>/dev/null; then
    run -o full-device "$good"
    check "-o onto a full device: exit 3" test "$rc" -eq 3
    check "-o onto a device leaves the device in place" test -c full-device
else
    echo "note: cannot make a private device node here, -o onto a device not checked"
fi

run "$good" in/page2.png
cp out run1.json
run "$good" in/page2.png
check "two runs of two pages: exit 0" test "$rc" -eq 0 -a -s run1.json
check "two runs give byte-identical output" cmp -s out run1.json

# ---- multi-page TIFF -----------------------------------------------------------------------
run in/three.tif
cp out three.json
check "three-page TIFF: exit 0, nothing on stderr" test "$rc" -eq 0 -a ! -s err
check "three-page TIFF: one JSON line per page, pages 1..3, sizes of the cuts" \
    py multipage three.json in/three.tif "$sizes"
run in/page1.png in/page2.png in/page3-1bit.png
check "TIFF pages give the same analysis as the same pixels in PNG files (1-bit included)" \
    py same three.json out
run --max-pages 2 in/three.tif "$good"
check "--max-pages 2 on three pages: exit 1, one line naming the file, the good file done" \
    test "$rc" -eq 1 -a "$(nlines err)" -eq 1 -a "$(grep -c in/three.tif err)" -eq 1
check "--max-pages 2: the good file's line is written" py count out 1 "$good"
run --max-pixels 1000000 in/three.tif
check "--max-pixels under the page size: exit 1, one line per page naming file and page" \
    test "$rc" -eq 1 -a "$(nlines err)" -eq 3 -a \
    "$(grep -c -e 'in/three.tif: page [123]:' err)" -eq 3 -a "$(grep -c '"error"' out)" -eq 3

# ---- --pretty --------------------------------------------------------------------------------
run --pretty "$good"
check "--pretty output is one JSON document equal to the compact one" \
    py pretty out good.json 1
run --pretty in/three.tif
check "--pretty on three pages: three indented objects equal to the compact ones" \
    py pretty out three.json 3

# ---- schema ----------------------------------------------------------------------------------
check "every page written above is valid against the schema" \
    py schema "$schema" good.json three.json run1.json

# ---- score -----------------------------------------------------------------------------------
truth="$testdata/corpus/ulthese_ulthese_p002.gt.json"
run "$testdata/corpus/ulthese_ulthese_p002.png"
cp out pred.json
$limit "$lineate" score "$truth" pred.json >score.txt 2>err
check "score of a testdata page against its ground truth: exit 0" test "$?" -eq 0 -a ! -s err
check "score text output has the summary" grep -q '^summary: all pages$' score.txt
$limit "$lineate" score --json --per-page "$truth" pred.json >score.json 2>err
check "score --json --per-page: exit 0" test "$?" -eq 0 -a ! -s err
check "score --json figures follow the counts (F1 formula), text agrees, fields documented" \
    py score score.json "$truth" pred.json score.txt "$man"
$limit "$lineate" score --json "$truth" "$truth" >self.json 2>err
check "ground truth scored against itself: F1 1, tau 1, nothing out of place, no splits or merges" \
    py identity self.json

# Folder mode searches subfolders: an archive in two folders, its mirrored --out-dir tree.
mkdir -p arch/vol1 arch/vol2
cp "$testdata/corpus/ulthese_ulthese_p002.png" "$truth" arch/vol1/
cp "$testdata/corpus/mnras_mnras_guide_p002.png" "$testdata/corpus/mnras_mnras_guide_p002.gt.json" \
    arch/vol2/
$limit "$lineate" --out-dir arch-pred arch 2>/dev/null
$limit "$lineate" score --json --per-page arch arch-pred >tree.json 2>err
check "score of two folder trees: exit 0, nothing on stderr" test "$?" -eq 0 -a ! -s err
$limit "$lineate" score --json arch/vol2/mnras_mnras_guide_p002.gt.json \
    arch-pred/vol2/mnras_mnras_guide_p002.json >vol2.json 2>/dev/null
check "score of two folder trees: both pages paired by relative path and scored as one by one" \
    "$python" -c '
import json, sys
tree, one = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
pages = {p["name"]: p for p in tree["pages"]}
assert sorted(pages) == ["vol1/ulthese_ulthese_p002", "vol2/mnras_mnras_guide_p002"], sorted(pages)
assert all(p["status"] == "scored" for p in pages.values())
p = pages["vol2/mnras_mnras_guide_p002"]
assert (p["truth_lines"], p["matched_50"]) == (one["summary"]["truth_lines"], one["summary"]["matched_50"])
' tree.json vol2.json

# ---- the man page EXAMPLES, extracted from man/lineate.1 and run verbatim --------------------
mkdir ex bin
ln -s "$testdata" ex/testdata
# Links, not wrapper scripts: the work folder may be on a file system mounted noexec.
ln -s "$lineate" bin/lineate
ln -s "$(command -v "$python")" bin/python3
have_jq=1
command -v jq >/dev/null 2>&1 || { have_jq=0; echo "note: jq not found, its examples skipped"; }
n=$(py examples "$man" examples.sh "$have_jq")
check "the man page has at least 10 example commands (found $n)" test "${n:-0}" -ge 10
(cd ex && PATH="$work/bin:$PATH" $limit sh ../examples.sh >../ex.out 2>../ex.err)
check "the man page EXAMPLES run: exit 0, nothing on stderr" test "$?" -eq 0 -a ! -s ex.err
[ -s ex.err ] && sed 's/^/  examples stderr: /' ex.err
check "the man page EXAMPLES print their results" test -s ex.out

echo "cli.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

# harness.sh: the common start of lineate's shell tests, sourced by them after they set
#   test_name     name of the test, for its work folder
#   test_modules  Python modules it needs ("PIL.Image" or "PIL.Image, numpy")
#   test_timeout  seconds a single run of lineate may take
# It sets srcdir, builddir, python, lineate, man, schema and testdata; skips (exit 77) when
# the Python modules are missing and fails when lineate is not built; makes a work folder,
# removed at exit, and enters it; and defines limit (a timeout prefix: a hang is a failure
# too), the counters passed and failed, pass, fail, check WHAT COMMAND... and nlines FILE.
# Environment (set by `make check`): top_srcdir, top_builddir, PYTHON3; defaults ., . and
# /usr/bin/python3.

srcdir=$(cd "${top_srcdir:-.}" && pwd) || exit 1
builddir=$(cd "${top_builddir:-.}" && pwd) || exit 1
python=${PYTHON3:-/usr/bin/python3}
lineate="$builddir/lineate"
man="$srcdir/man/lineate.1"
schema="$srcdir/schema/lineate-layout.schema.json"
testdata="$srcdir/testdata"

if [ ! -x "$lineate" ]; then
    echo "FAIL: $lineate not found or not executable (build it with make)"
    exit 1
fi
if ! command -v "$python" >/dev/null 2>&1; then
    echo "SKIP: python3 not found ($python)"
    exit 77
fi
if ! "$python" -c "import $test_modules" >/dev/null 2>&1; then
    echo "SKIP: $python lacks $test_modules (Debian: python3-pil, python3-numpy)"
    exit 77
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/$test_name.XXXXXX") || exit 1
trap 'chmod -R u+w "$work" 2>/dev/null; rm -rf "$work"' EXIT
trap 'exit 1' INT TERM HUP
cd "$work" || exit 1

limit=""
if command -v timeout >/dev/null 2>&1; then limit="timeout $test_timeout"; fi

passed=0
failed=0
pass() { passed=$((passed + 1)); echo "ok: $1"; }
fail() { failed=$((failed + 1)); echo "FAIL: $1"; }
# check WHAT COMMAND...: passes when COMMAND succeeds.
check() {
    what=$1
    shift
    if "$@"; then pass "$what"; else fail "$what"; fi
}
nlines() { wc -l <"$1" | tr -d ' '; }

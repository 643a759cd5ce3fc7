#!/bin/sh
# run.sh — builds lineate's three libFuzzer harnesses with AddressSanitizer and UBSan and runs
# each for SECONDS on a working copy of its seed corpus; prints executions and findings.
#
# Usage: sh fuzz/run.sh SECONDS [image] [json] [xml]   (no harness named: all, one after another)
#
# Everything it writes lies under fuzz/build/ of the source tree that holds this script:
#   fuzz/build/fuzz_image, _json, _xml the harness binaries
#   fuzz/build/corpus-image, -json     working corpora, seeded from fuzz/seeds/* on first use
#                                      and kept between runs (libFuzzer adds to them)
#   fuzz/build/findings-image, -json   crash-*, leak-*, timeout-*, oom-* inputs
#   fuzz/build/NAME.log                libFuzzer's output of the last run
# Exit status: 0 when no harness found anything, 1 when one did, 2 on a usage or build error.
# Environment: CC (default clang), FUZZ_JOBS_NICE (default 10: the runs are niced),
#   LT_CONFIG_DIR: folder holding the config.h that ./configure wrote (default: the top of
#   the source tree; give the build folder for a build outside the source tree).
set -eu

usage() {
    echo "usage: sh fuzz/run.sh SECONDS [image] [json] [xml]" >&2
    exit 2
}

[ $# -ge 1 ] || usage
seconds=$1
shift
case $seconds in
'' | *[!0-9]*) usage ;;
esac
[ "$seconds" -ge 1 ] || usage
harnesses=${*:-image json xml}
for h in $harnesses; do
    case $h in
    image | json | xml) ;;
    *) usage ;;
    esac
done

here=$(cd "$(dirname "$0")" && pwd)
top=$(cd "$here/.." && pwd)
build=$here/build
cc=${CC:-clang}
niceness=${FUZZ_JOBS_NICE:-10}
mkdir -p "$build"

command -v "$cc" >/dev/null 2>&1 || {
    echo "run.sh: $cc not found (Debian: apt-get install clang libclang-rt-14-dev)" >&2
    exit 2
}
config_dir=${LT_CONFIG_DIR:-$top}
[ -f "$config_dir/config.h" ] || {
    echo "run.sh: $config_dir/config.h not found: run ./configure first" \
        "(or set LT_CONFIG_DIR to the build folder)" >&2
    exit 2
}
modules="lept libtiff-4 libpng libjpeg libcjson libxml-2.0"
# shellcheck disable=SC2086 # word splitting of the module and flag lists is intended
if ! deps_cflags=$(pkg-config --cflags $modules) || ! deps_libs=$(pkg-config --libs $modules)
then
    echo "run.sh: pkg-config cannot find one of: $modules" >&2
    exit 2
fi

# The library's sources: liblineate_core_la_SOURCES of Makefile.am when it can be read, else every
# src/*.c but the command-line tool's (main.c, cmd_*.c, batch.c).
sources=$(awk '/^liblineate_core_la_SOURCES *=/ { on = 1 }
    on { for (i = 1; i <= NF; i++) if ($i ~ /^src\/.*\.c$/) print $i; if ($0 !~ /\\$/) exit }' \
    "$top/Makefile.am" 2>/dev/null)
if [ -z "$sources" ]; then
    for src in "$top"/src/*.c; do
        case $(basename "$src") in
        main.c | cmd_*.c | batch.c) ;;
        *) sources="$sources src/$(basename "$src")" ;;
        esac
    done
fi

# Builds into a private folder, then renames the binaries into place, so that two runs
# started together (one per harness) never share a half-written object file.
stage=$(mktemp -d "$build/stage.XXXXXX")
trap 'rm -rf "$stage"' EXIT INT TERM
cflags="-fsanitize=fuzzer,address,undefined -g -O1 -std=c11 -D_POSIX_C_SOURCE=200809L"
cflags="$cflags -Wall -Wextra -I$top/src -I$config_dir"
objs=
for src in $sources; do
    base=$(basename "$src" .c)
    # shellcheck disable=SC2086
    "$cc" $cflags $deps_cflags -c "$top/$src" -o "$stage/$base.o" || {
        echo "run.sh: cannot compile $src" >&2
        exit 2
    }
    objs="$objs $stage/$base.o"
done
for h in $harnesses; do
    # shellcheck disable=SC2086
    "$cc" $cflags $deps_cflags "$here/fuzz_$h.c" $objs $deps_libs -lm -pthread \
        -o "$stage/fuzz_$h" || {
        echo "run.sh: cannot build fuzz/fuzz_$h.c" >&2
        exit 2
    }
    mv -f "$stage/fuzz_$h" "$build/fuzz_$h"
done

# UBSan: stop at the first report (by default it prints and goes on) so libFuzzer keeps it.
UBSAN_OPTIONS=${UBSAN_OPTIONS:-halt_on_error=1:abort_on_error=1:print_stacktrace=1}
ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:allocator_may_return_null=1}
export UBSAN_OPTIONS ASAN_OPTIONS

status=0
for h in $harnesses; do
    case $h in
    image) max_len=65536 fd_mask="-close_fd_mask=2" ;; # the harness watches fd 2 itself
    json | xml) max_len=16384 fd_mask= ;;
    esac
    corpus=$build/corpus-$h
    findings=$build/findings-$h
    log=$build/$h.log
    if [ ! -d "$corpus" ]; then
        mkdir -p "$corpus"
        cp "$here/seeds/$h"/* "$corpus/"
    fi
    mkdir -p "$findings"
    dict=
    [ -f "$here/seeds/$h.dict" ] && dict="-dict=$here/seeds/$h.dict"
    before=$(find "$findings" -type f | wc -l)
    stamp=$build/$h.start
    : >"$stamp"
    echo "fuzz_$h: fuzzing for $seconds s (log: fuzz/build/$h.log)"
    rc=0
    # shellcheck disable=SC2086
    nice -n "$niceness" "$build/fuzz_$h" -max_total_time="$seconds" -timeout=10 \
        -rss_limit_mb=2048 -max_len="$max_len" -print_final_stats=1 \
        -artifact_prefix="$findings/" $fd_mask $dict "$corpus" >"$log" 2>&1 || rc=$?
    runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -n 1)
    [ -n "$runs" ] || runs=$(sed -n 's/^Done \([0-9]*\) runs.*/\1/p' "$log" | tail -n 1)
    [ -n "$runs" ] || runs=$(sed -n 's/^#\([0-9]*\).*/\1/p' "$log" | tail -n 1)
    after=$(find "$findings" -type f | wc -l)
    new=$((after - before))
    files=$(find "$corpus" -type f | wc -l)
    echo "fuzz_$h: ${runs:-?} executions, $new new finding(s), corpus $files files"
    if [ "$new" -gt 0 ] || [ "$rc" -ne 0 ]; then
        status=1
        grep -m 1 -E '^==[0-9]+==ERROR|^SUMMARY|runtime error|ALARM|out-of-memory' "$log" || true
        find "$findings" -type f -newer "$stamp" | sed 's/^/  /'

        echo "fuzz_$h: libFuzzer exited with $rc; see fuzz/build/$h.log"
    fi
done
exit $status

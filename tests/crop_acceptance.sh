#!/bin/sh
# crop_acceptance.sh CORPUS: `lineate crop` over a folder of pages at scale (make
# crop-acceptance, not part of make check). Runs `crop -j 2` uninterrupted; runs it again with
# -j 2, kills it with SIGKILL when about half the pages have their page manifest, resumes it
# with --resume and checks that the crops and manifests equal the uninterrupted run byte for
# byte; then times `crop -j 1` and `crop -j 2` (best of RUNS, default 3, each pinned with
# taskset to 1 and 2 CPUs) and prints the throughput ratio.
# Environment: top_builddir (default .), RUNS.
set -u
corpus=${1:?usage: crop_acceptance.sh CORPUS}
bin="$(cd "${top_builddir:-.}" && pwd)/lineate"
runs=${RUNS:-3}
tmp=$(mktemp -d "${TMPDIR:-/tmp}/crop-acceptance.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
find "$corpus" -maxdepth 1 -name '*.png' | LC_ALL=C sort >"$tmp/list"
n=$(wc -l <"$tmp/list")
[ "$n" -gt 0 ] || { echo "no *.png in $corpus"; exit 1; }
status=0

"$bin" crop -j 2 --from "$tmp/list" --out-dir "$tmp/full" 2>"$tmp/full.err" || status=1
grep 'pages done\|line images' "$tmp/full.err" | sed 's/^/uninterrupted: /'

"$bin" crop -j 2 --from "$tmp/list" --out-dir "$tmp/part" 2>/dev/null &
pid=$!
while [ "$(find "$tmp/part" -name '*.crops.jsonl' 2>/dev/null | wc -l)" -lt $((n / 2)) ] &&
    kill -0 $pid 2>/dev/null; do
    sleep 0.1
done
kill -9 $pid 2>/dev/null
wait $pid 2>/dev/null
echo "killed with $(find "$tmp/part" -name '*.crops.jsonl' | wc -l) of $n page manifests and $(find "$tmp/part" -name '*.png' | wc -l) crops written, manifest.jsonl $(test -e "$tmp/part/manifest.jsonl" && echo present || echo absent)"
"$bin" crop -j 2 --resume --from "$tmp/list" --out-dir "$tmp/part" 2>"$tmp/resume.err" || status=1
grep 'pages done' "$tmp/resume.err" | sed 's/^/resumed: /'
if diff -r "$tmp/full" "$tmp/part" >/dev/null; then
    echo "killed and resumed run equals the uninterrupted one, byte for byte: yes"
else
    echo "killed and resumed run equals the uninterrupted one, byte for byte: NO"
    status=1
fi

best() { # best CPUS JOBS: the best of $runs wall times in seconds
    b=""
    i=0
    while [ $i -lt "$runs" ]; do
        rm -rf "$tmp/t"
        t0=$(date +%s.%N)
        taskset -c "$1" "$bin" crop -j "$2" --from "$tmp/list" --out-dir "$tmp/t" 2>/dev/null
        t1=$(date +%s.%N)
        b=$(echo "$t0 $t1 ${b:-999999}" | awk '{ d = $2 - $1; print (d < $3 ? d : $3) }')
        i=$((i + 1))
    done
    echo "$b"
}
# What the machine gives two processes at the moment: the list cut in halves, each half one
# crop -j 1 pinned to a CPU of its own, both at once. On a shared machine this ceiling can be
# far below 2; the ratio of -j 2 is to be read against it.
split_halves() {
    head -n $((n / 2)) "$tmp/list" >"$tmp/half1"
    tail -n +$((n / 2 + 1)) "$tmp/list" >"$tmp/half2"
}
ceiling() {
    b=""
    i=0
    while [ $i -lt "$runs" ]; do
        rm -rf "$tmp/h1" "$tmp/h2"
        t0=$(date +%s.%N)
        taskset -c 0 "$bin" crop -j 1 --from "$tmp/half1" --out-dir "$tmp/h1" 2>/dev/null &
        taskset -c 1 "$bin" crop -j 1 --from "$tmp/half2" --out-dir "$tmp/h2" 2>/dev/null &
        wait
        t1=$(date +%s.%N)
        b=$(echo "$t0 $t1 ${b:-999999}" | awk '{ d = $2 - $1; print (d < $3 ? d : $3) }')
        i=$((i + 1))
    done
    echo "$b"
}
split_halves
t1=$(best 0 1)
t2=$(best 0,1 2)
tc=$(ceiling)
echo "$n $t1 $t2 $tc" | awk '{ printf "crop -j 1: %.2f s (%.1f pages/s); -j 2: %.2f s (%.1f pages/s); throughput ratio %.2f; two independent -j 1 processes on halves: ratio %.2f\n", $2, $1 / $2, $3, $1 / $3, $2 / $3, $2 / $4 }'
exit $status

#!/bin/sh
# parallel.sh: the many-machine recipe of README.md (GNU parallel over hosts),
# run on the local host only (parallel -S :): the input list cut into slices, each slice one
# `lineate --out-dir OUT --resume --from -` job, the page files merged in input order. Checks
# that the merge equals, byte for byte, one `lineate -j 1` over the same list, and that a
# rerun of the recipe skips every page. Then the variant for hosts without a shared file
# system (--transferfile / --return / --cleanup, a few inputs a job, resumed from parallel's
# job log), with two stand-in hosts: a stand-in for ssh that runs each command in a folder of
# its own per host, so that the inputs and the results really travel through rsync (skipped
# without rsync). Exit status: 0 pass, 1 fail, 77 skip (no GNU parallel or no PIL).
#
# Outside references: GNU parallel (Debian package parallel) cuts the list and runs the jobs;
# PIL (python3-pil) cuts the test pages and writes the multi-page TIFF. The expected output is
# lineate's own single-process run, so the check is that spreading the work changes nothing.
set -u
test_name=parallel
test_modules=PIL.Image
test_timeout=600
. "${top_srcdir:-.}/tests/harness.sh"
command -v parallel >/dev/null 2>&1 ||
    { echo "SKIP: GNU parallel missing (package parallel)"; exit 77; }
parallel --version 2>/dev/null | grep -q 'GNU parallel' ||
    { echo "SKIP: 'parallel' is not GNU parallel"; exit 77; }
# GNU parallel keeps its state in $PARALLEL_HOME (default ~/.parallel): here, in the test folder.
PARALLEL_HOME=$work/parallel-home
export PARALLEL_HOME

# An archive: 14 bands of the three test pages in two folders (shelf1 repeats a name of
# shelf0, as the folders of an archive do), a 1-bit page, and an 11-page TIFF (page 10 must merge after page 9, not
# after page 1).
"$python" - "$srcdir/testdata" "$work/archive" <<'PY' || exit 1
import os, sys
from PIL import Image
src, dst = sys.argv[1], sys.argv[2]
pages = [Image.open("%s/%s.png" % (src, n)).convert("L")
         for n in ("minutes", "newsletter", "bulletin")]
for k in range(14):
    folder = os.path.join(dst, "shelf%d" % (k % 2))
    os.makedirs(folder, exist_ok=True)
    y = 250 + 230 * (k % 12)
    band = pages[k % 3].crop((0, y, 2550, y + 400))
    band.save(os.path.join(folder, "leaf%02d.png" % (k if k != 13 else 12)), dpi=(300, 300))
band = pages[1].crop((0, 900, 2550, 1300)).point(lambda v: 255 if v >= 128 else 0).convert("1")
band.save(os.path.join(dst, "shelf0", "leaf-bilevel.tif"), compression="group4", dpi=(300, 300))
bands = [pages[i % 3].crop((0, 300 + 250 * i, 2550, 650 + 250 * i)) for i in range(11)]
bands[0].save(os.path.join(dst, "shelf1", "ledger.tif"), save_all=True,
              append_images=bands[1:], compression="tiff_lzw", dpi=(300, 300))
PY
find "$work/archive" -type f | sort >"$work/pages.list"
n_pages=$((14 + 1 + 11))

# The reference: one process, one thread, the same list in the same order.
"$lineate" -j 1 --from "$work/pages.list" >"$work/single.jsonl" 2>"$work/single.err"
check "the single run analyses every page (exit 0)" test $? -eq 0
check "the single run gives $n_pages records" test "$(wc -l <"$work/single.jsonl")" -eq "$n_pages"

# ---- the recipe (as in README.md, with -S : for the host list) -------------------------------
# merge_pages LIST DIR: the recipe's merge (recipes/lineate-merge.sh).
merge_pages() { sh "$srcdir/recipes/lineate-merge.sh" "$@"; }
list=$work/pages.list
out=$work/layouts
parallel --will-cite --pipe -N 4 -S 2/: \
    "'$lineate' -j 1 --out-dir '$out' --resume --from -" <"$list" 2>"$work/run1.err"
check "the spread run: every job succeeded" test $? -eq 0
check "the spread run: one file per page" \
    test "$(find "$out" -name '*.json' | wc -l)" -eq "$n_pages"
n_inputs=$(wc -l <"$list")
check "the list of $n_inputs files was cut into jobs of at most 4 inputs" \
    test "$(grep -c 'pages done' "$work/run1.err")" -eq $(((n_inputs + 3) / 4))
merge_pages "$list" "$out" >"$work/merged.jsonl"
check "the merge found every page file" test $? -eq 0
check "merged output equals the single lineate -j 1 run, byte for byte" \
    cmp "$work/single.jsonl" "$work/merged.jsonl"
check "the 11-page TIFF merged in page order" test "$(grep -o '"page":[0-9]*,"pages":11' \
    "$work/merged.jsonl" | cut -d: -f2 | cut -d, -f1 | tr '\n' ' ')" = "1 2 3 4 5 6 7 8 9 10 11 "

# A rerun of the same recipe: every page is complete, so every job skips all of its pages.
find "$out" -name '*.json' -exec cksum {} + | sort >"$work/before"
parallel --will-cite --pipe -N 4 -S 2/: \
    "'$lineate' -j 1 --out-dir '$out' --resume --from -" <"$list" 2>"$work/run2.err"
check "the rerun: every job succeeded" test $? -eq 0
skipped=$(sed -n 's/.* \([0-9]*\) skipped,.*/\1/p' "$work/run2.err" |
    awk '{ s += $1 } END { print s + 0 }')
done_pages=$(sed -n 's/^lineate: \([0-9]*\) pages done.*/\1/p' "$work/run2.err" |
    awk '{ s += $1 } END { print s + 0 }')
check "the rerun skips every page ($skipped of $n_pages skipped, $done_pages analysed)" \
    test "$skipped" -eq "$n_pages" -a "$done_pages" -eq 0
find "$out" -name '*.json' -exec cksum {} + | sort >"$work/after"
check "the rerun left every page file as it was" cmp -s "$work/before" "$work/after"

# A slice lost (its page files deleted, as when a host died): the rerun redoes only those.
rm -f "$out$work"/archive/shelf1/leaf03.json "$out$work"/archive/shelf1/ledger.p1*.json \
    "$out$work"/archive/shelf1/ledger.p7.json
parallel --will-cite --pipe -N 4 -S 2/: \
    "'$lineate' -j 1 --out-dir '$out' --resume --from -" <"$list" 2>"$work/run3.err"
done_pages=$(sed -n 's/^lineate: \([0-9]*\) pages done.*/\1/p' "$work/run3.err" |
    awk '{ s += $1 } END { print s + 0 }')
check "after losing 5 page files the rerun analyses exactly those ($done_pages)" \
    test "$done_pages" -eq 5
merge_pages "$list" "$out" >"$work/merged2.jsonl"
check "and the merge again equals the single run" cmp "$work/single.jsonl" "$work/merged2.jsonl"
rm -f "$out$work"/archive/shelf1/leaf05.json
merge_pages "$list" "$out" >/dev/null 2>"$work/merge.err"
check "a missing page file makes the merge fail, naming the input" \
    test $? -ne 0 -a -n "$(grep 'leaf05.png: no page file' "$work/merge.err")"
# ---- the variant without a shared file system (README.md) -----------------------------------
# Stand-in hosts: "ssh HOST COMMAND" runs COMMAND in $work/hosts/HOST, which holds only what
# parallel copied there with rsync (which it also runs through this ssh). It is run by sh, not
# executed itself, as the work folder may be on a file system mounted noexec (a common /tmp).
# Like sshd it gives the command a HOME and a SHELL: parallel's remote side runs the job with
# $SHELL, which the caller's environment may lack.
if command -v rsync >/dev/null 2>&1; then
    cat >"$work/stand-in-ssh" <<EOF
#!/bin/sh
while [ \$# -gt 0 ]; do
    case "\$1" in -[oplicSOFJ]) shift 2 ;; -*) shift ;; *) break ;; esac
done
host=\$1
shift
[ "\${1:-}" = "--" ] && shift
echo "\$host \$*" >>"$work/ssh.log"
mkdir -p "$work/hosts/\$host" && cd "$work/hosts/\$host" && HOME=\$PWD SHELL=/bin/sh exec sh -c "\$*"
EOF
    job=$work/job
    mkdir -p "$job" && ln -s "$work/archive" "$job/archive"
    (cd "$job" && find archive/ -type f | LC_ALL=C sort >list &&
        "$lineate" -j 1 --from list >"$work/single-relative.jsonl" 2>/dev/null)
    n_inputs=$(wc -l <"$job/list")
    n_jobs=$(((n_inputs + 2) / 3))
    spread() { # the recipe's step, with the stand-in hosts and 3 inputs a job
        (cd "$job" && parallel --will-cite --ssh "sh $work/stand-in-ssh" -S 1/hostA,1/hostB -N 3 \
            --workdir ... --transferfile {} --return {#}.jsonl --cleanup --joblog jobs.log "$@" \
            "'$lineate' -j 2 {} > {#}.jsonl" <list) 2>"$work/transfer.err"
    }
    merge_numbered() { # the returned files 1.jsonl .. N.jsonl in order
        i=1
        while [ "$i" -le "$n_jobs" ]; do
            cat "$job/$i.jsonl" || return 1
            i=$((i + 1))
        done
    }
    spread
    check "transfer: every job succeeded" test $? -eq 0
    check "transfer: one returned file per job of 3 inputs ($n_jobs)" \
        test "$(find "$job" -name '[0-9]*.jsonl' | wc -l)" -eq "$n_jobs"
    check "transfer: both stand-in hosts received inputs through rsync" \
        test "$(grep -c '^hostA rsync --server' "$work/ssh.log")" -gt 0 -a \
        "$(grep -c '^hostB rsync --server' "$work/ssh.log")" -gt 0
    check "transfer: --cleanup left no file on the hosts" \
        test -d "$work/hosts/hostA" -a -z "$(find "$work/hosts" -type f)"
    merge_numbered >"$work/merged-transfer.jsonl"
    check "transfer: merged output equals the single lineate -j 1 run, byte for byte" \
        cmp "$work/single-relative.jsonl" "$work/merged-transfer.jsonl"
    log_lines=$(wc -l <"$work/ssh.log")
    spread --resume
    check "transfer: a rerun with --resume runs no job" \
        test $? -eq 0 -a "$(wc -l <"$work/ssh.log")" -eq "$log_lines"
    # A job lost with its host: its result and its job-log line are gone; --resume redoes it.
    rm -f "$job/3.jsonl"
    awk -F '\t' '$1 != 3' "$job/jobs.log" >"$job/jobs.log.new" &&
        mv "$job/jobs.log.new" "$job/jobs.log"
    spread --resume
    check "transfer: the rerun after a lost job redoes exactly that job" \
        test "$(grep -c '^host[AB] exec perl' "$work/ssh.log")" -eq $((n_jobs + 1))
    merge_numbered >"$work/merged-transfer2.jsonl"
    check "transfer: and the merge again equals the single run" \
        cmp "$work/single-relative.jsonl" "$work/merged-transfer2.jsonl"
else
    echo "skip the transfer variant: rsync missing (package rsync)"
fi
echo "parallel: $failed failed"
[ "$failed" -eq 0 ]

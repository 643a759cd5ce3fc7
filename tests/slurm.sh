#!/bin/sh
# slurm.sh: the Slurm recipe of the manual page (recipes/lineate-slice.sbatch, one job array
# task per slice of the input list, and recipes/lineate-merge.sh, the final step) on a real
# one-node Slurm cluster started here: munged with a key of its own, slurmctld and slurmd with
# a generated slurm.conf, their sockets, ports and state in the test folder, every address the
# loopback one. Submits the array over a small archive, kills one task halfway (scancel) and
# resubmits it, and checks that the merged output equals one `lineate -j 1` run byte for byte,
# that the task's threads follow its CPU allocation, and that the final step finds every page
# once and names a missing one. Needs root (the daemons run as root, as CI does) and the Debian
# packages slurm-wlm and munge: exit 77 (skip) without them. Exit status: 0 pass, 1 fail.
#
# Outside references: Slurm (slurm-wlm 22.05) schedules the tasks and gives each its CPUs;
# PIL (python3-pil) cuts the test pages. The expected output is lineate's own single-process
# run, so the check is that spreading the work over the scheduler changes nothing.
set -u
test_name=slurm
test_modules=PIL.Image
test_timeout=600
. "${top_srcdir:-.}/tests/harness.sh"
if [ "$(id -u)" != 0 ]; then
    echo "SKIP: the Slurm test starts munged, slurmctld and slurmd, which needs root"
    exit 77
fi
for tool in munged slurmctld slurmd sbatch squeue sinfo scontrol scancel; do
    command -v "$tool" >/dev/null 2>&1 ||
        { echo "SKIP: $tool missing (Debian packages slurm-wlm and munge)"; exit 77; }
done

# The manual page shows the task script as it is: every line of it that is not a comment.
sed 's/\\-/-/g; s/\\e/\\/g' "$man" >man.txt
missing=$(grep -v -e '^#[^S]' -e '^#$' -e '^$' "$srcdir/recipes/lineate-slice.sbatch" |
    while IFS= read -r line; do grep -qF -- "$line" man.txt || echo "$line"; done)
check "the manual page shows recipes/lineate-slice.sbatch line for line" test -z "$missing"
[ -z "$missing" ] || echo "  not in the manual page: $missing"

# ---- the cluster -------------------------------------------------------------------------
cluster=$work/cluster
mkdir -p "$cluster/state" "$cluster/spool" && chmod 700 "$cluster"
pids=""
stop_cluster() { # ends the daemons this test started, by their process ids
    for pid in $pids; do kill "$pid" 2>/dev/null; done
    for pid in $pids; do
        i=0
        while kill -0 "$pid" 2>/dev/null && [ $i -lt 50 ]; do sleep 0.1; i=$((i + 1)); done
        kill -9 "$pid" 2>/dev/null
    done
}
trap 'stop_cluster; rm -rf "$work"' EXIT
show_logs() {
    for f in "$cluster"/*.log; do [ -f "$f" ] && { echo "---- $f"; tail -n 20 "$f"; }; done
}

dd if=/dev/urandom of="$cluster/munge.key" bs=1024 count=1 2>/dev/null
chmod 400 "$cluster/munge.key"
munged --foreground --force --key-file="$cluster/munge.key" --socket="$cluster/munge.sock" \
    --pid-file="$cluster/munged.pid" --log-file="$cluster/munged.log" \
    --seed-file="$cluster/munged.seed" 2>>"$cluster/munged.log" &
pids="$!"
i=0
while [ ! -S "$cluster/munge.sock" ] && [ $i -lt 100 ]; do sleep 0.1; i=$((i + 1)); done
[ -S "$cluster/munge.sock" ] || { echo "FAIL: munged did not start"; show_logs; exit 1; }

host=$(hostname -s)
cpus=$(nproc)
mem_mb=$(awk '/^MemTotal:/ { print int($2 / 1024 * 0.9) }' /proc/meminfo)
base=$((20000 + ($$ % 2000) * 2)) # two ports of our own, on the loopback address only
cat >"$cluster/slurm.conf" <<CONF
ClusterName=lineatetest
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=$base
SlurmdPort=$((base + 1))
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$cluster/munge.sock
SlurmUser=root
SlurmdUser=root
StateSaveLocation=$cluster/state
SlurmdSpoolDir=$cluster/spool
SlurmctldPidFile=$cluster/slurmctld.pid
SlurmdPidFile=$cluster/slurmd.pid
SlurmctldLogFile=$cluster/slurmctld.log
SlurmdLogFile=$cluster/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/affinity
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/backfill
SwitchType=switch/none
MpiDefault=none
ReturnToService=2
MinJobAge=600
KillWait=2
JobCompType=jobcomp/none
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
NodeName=ltnode NodeHostname=$host NodeAddr=127.0.0.1 CPUs=$cpus RealMemory=$mem_mb State=UNKNOWN
PartitionName=pages Nodes=ltnode Default=YES MaxTime=INFINITE State=UP
CONF
SLURM_CONF=$cluster/slurm.conf
export SLURM_CONF
slurmctld -D -i -f "$SLURM_CONF" >>"$cluster/slurmctld.log" 2>&1 &
pids="$pids $!"
slurmd -D -N ltnode -f "$SLURM_CONF" >>"$cluster/slurmd.log" 2>&1 &
pids="$pids $!"
i=0
until sinfo -h -n ltnode -o %T 2>/dev/null | grep -q '^idle'; do
    i=$((i + 1))
    [ $i -lt 300 ] || { echo "FAIL: the node did not become idle"; show_logs; exit 1; }
    sleep 0.1
done
pass "a one-node Slurm cluster runs (munged, slurmctld, slurmd; $cpus CPUs)"

# wait_jobs: until the queue is empty (at most 5 minutes).
wait_jobs() {
    i=0
    while [ -n "$(squeue -h -o %i 2>/dev/null)" ] && [ $i -lt 3000 ]; do sleep 0.1; i=$((i + 1)); done
    [ -z "$(squeue -h -o %i 2>/dev/null)" ]
}

# ---- the archive and the reference ------------------------------------------------------------
# 18 full-size pages in three folders whose files share names (0001.png ... in each), and a
# 3-page TIFF: 21 pages.
"$python" - "$srcdir/testdata" "$work/archive" <<'PY' || exit 1
import os, sys
from PIL import Image
src, dst = sys.argv[1], sys.argv[2]
pages = [Image.open("%s/%s.png" % (src, n)).convert("L") for n in ("minutes", "newsletter", "bulletin")]
for v in range(3):
    folder = os.path.join(dst, "vol%d" % (v + 1))
    os.makedirs(folder)
    for k in range(6):
        page = pages[(v + k) % 3]
        page.rotate(0.3 * (k - 2), fillcolor=255).save(os.path.join(folder, "%04d.png" % (k + 1)), dpi=(300, 300))
bands = [pages[i].crop((0, 300, 2550, 1800)) for i in range(3)]
bands[0].save(os.path.join(dst, "vol3", "ledger.tif"), save_all=True, append_images=bands[1:],
              compression="tiff_lzw", dpi=(300, 300))
PY
cd "$work" || exit 1
find archive -type f | LC_ALL=C sort >pages.list
n_inputs=$(wc -l <pages.list)
"$lineate" -j 1 --from pages.list >single.jsonl 2>single.err
check "the reference: one lineate -j 1 over the list, 21 records" \
    test $? -eq 0 -a "$(wc -l <single.jsonl)" -eq 21

# ---- the recipe: the job array, one task killed halfway -------------------------------------------
mkdir bin
ln -s "$lineate" bin/lineate
PATH=$work/bin:$PATH
export PATH
slice=7
tasks=$(((n_inputs + slice - 1) / slice))
job=$(sbatch --parsable --cpus-per-task=1 --array=0-$((tasks - 1)) \
    --export=ALL,LIST=$work/pages.list,OUT=$work/layouts,SLICE=$slice \
    "$srcdir/recipes/lineate-slice.sbatch" 2>sbatch.err)
check "sbatch takes the array of $tasks tasks" test -n "$job"
job=${job%%;*}
# Task 1 is cancelled as soon as its first page file exists: halfway through its 7 inputs.
victim=$(sed -n "$((slice + 1))p" pages.list)
victim_file=layouts/${victim%.*}.json
i=0
while [ ! -f "$victim_file" ] && [ $i -lt 3000 ]; do sleep 0.02; i=$((i + 1)); done
scancel --signal=KILL --full "${job}_1"
wait_jobs
check "the array ran to its end" test $? -eq 0
state1=$(scontrol show job "${job}_1" 2>/dev/null | sed -n 's/.*JobState=\([A-Z]*\).*/\1/p' | head -n 1)
task1_files=0
while IFS= read -r path; do
    name=${path%.*}
    [ -f "layouts/$name.json" ] && task1_files=$((task1_files + 1))
done <<LIST
$(sed -n "$((slice + 1)),$((2 * slice))p" pages.list)
LIST
check "task 1 was killed halfway ($state1, $task1_files of its $slice inputs written)" \
    test "$state1" = CANCELLED -a "$task1_files" -ge 1 -a "$task1_files" -lt "$slice"
for t in 0 2; do
    check "task $t completed" \
        sh -c "scontrol show job ${job}_$t | grep -q 'JobState=COMPLETED'"
done
check "task 0 ran 1 thread, its CPU allocation" grep -q ', 1 thread$' "lineate-${job}_0.log"
"$srcdir/recipes/lineate-merge.sh" pages.list layouts >merged-early.jsonl 2>merge-early.err
check "the final step before the resubmission: exit 1, naming a missing input of task 1" \
    test $? -eq 1 -a -n "$(grep -F 'no page file in layouts' merge-early.err)"

# ---- the resubmission of the killed task, with 2 CPUs ---------------------------------------------
job2=$(sbatch --parsable --cpus-per-task=2 --array=1 \
    --export=ALL,LIST=$work/pages.list,OUT=$work/layouts,SLICE=$slice \
    "$srcdir/recipes/lineate-slice.sbatch" 2>>sbatch.err)
job2=${job2%%;*}
wait_jobs
log2=lineate-${job2}_1.log
check "the resubmitted task completed" sh -c "scontrol show job ${job2}_1 | grep -q 'JobState=COMPLETED'"
task1_pages=0
for path in $(sed -n "$((slice + 1)),$((2 * slice))p" pages.list); do
    task1_pages=$((task1_pages + $(grep -c "\"source\":\"$path\"" single.jsonl)))
done
check "it skipped the $task1_files pages done, did the other $((task1_pages - task1_files)), with 2 threads (its allocation)" \
    grep -q "$((task1_pages - task1_files)) pages done, 0 failed, $task1_files skipped, .*, 2 threads$" "$log2"
[ -f "$log2" ] && sed 's/^/  task log: /' "$log2"

# ---- the final step, as a job of its own -----------------------------------------------------------
job3=$(sbatch --parsable --output=merge.log \
    --wrap "'$srcdir/recipes/lineate-merge.sh' '$work/pages.list' '$work/layouts' >'$work/merged.jsonl'" \
    2>>sbatch.err)
wait_jobs
check "the final step: every input page has exactly one record (exit 0)" \
    sh -c "scontrol show job ${job3%%;*} | grep -q 'JobState=COMPLETED'"
check "the merged output equals the single lineate -j 1 run, byte for byte" cmp single.jsonl merged.jsonl
check "the files of one name in three folders kept apart (vol1, vol2, vol3)" \
    test "$(find layouts -name 0001.json | wc -l)" -eq 3
cp layouts/archive/vol2/0003.json layouts/archive/vol2/0003-copy.json
"$srcdir/recipes/lineate-merge.sh" pages.list layouts >/dev/null 2>merge-extra.err
check "a page file that belongs to no input makes the final step fail" \
    test $? -eq 1 -a -n "$(grep 'page files, but LIST has' merge-extra.err)"
[ "$failed" -eq 0 ] || { cat sbatch.err; show_logs; }

echo "slurm.sh: $passed passed, $failed failed"
[ "$failed" -eq 0 ]

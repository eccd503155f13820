#!/usr/bin/env bash
# selftest.sh proves the mechanics of the Slurm recipes on a running
# cluster (scripts/slurm-local.sh start), with standin-canalstep.sh in place
# of canalstep: array task ID -> --shard K/N, one folder per shard, the merge
# after every shard (afterany), and the exit statuses. It does not test
# canalstep itself.
#
#   scripts/slurm/selftest.sh [WORKDIR]     (default: a new folder in /tmp)
#
# Cases:
#   ok        7 jobs on 3 shards: shard K ran with --shard K/3 into shard-K,
#             the merged index has all 7 jobs, submit --wait exits 0
#   fail      job j5 (shard 2) fails: the merge still runs, its index shows
#             j5 failed beside the 6 good jobs, submit --wait exits non-zero
#   crash     shard 3 dies before writing its folder: the merge names it,
#             merges shards 1-2 and exits non-zero
#   rerun     --array=1 with CANALSTEP_SHARDS=3 runs shard 2/3 alone
#   badarray  --array=1-3 without CANALSTEP_SHARDS is refused (exit 2)
# Exits 0 when every case holds, 1 otherwise.
set -uo pipefail

here=$(cd "$(dirname "$0")" && pwd)
standin="$here/standin-canalstep.sh"
work=${1:-$(mktemp -d /tmp/canalstep-slurm-selftest.XXXXXX)}
mkdir -p "$work"
cd "$work" || exit 1
pass=0 failed=0

check() { # check DESCRIPTION COMMAND...
	if "${@:2}"; then
		echo "  ok    $1"
		pass=$((pass + 1))
	else
		echo "  FAIL  $1"
		failed=$((failed + 1))
	fi
}

# task_state JOBID_TASK prints a finished task's JobState and ExitCode.
task_state() {
	scontrol -o show job "$1" 2>/dev/null | tr ' ' '\n' | grep -E '^(JobState|ExitCode)=' | paste -sd' '
}

if ! sinfo -h >/dev/null 2>&1; then
	echo "selftest: no Slurm cluster answers; start one with scripts/slurm-local.sh start" >&2
	exit 1
fi
echo "selftest: in $work"

printf 'standin_jobs = 7\n' >ok.toml
printf 'standin_jobs = 7\nstandin_fail = "j5"\n' >fail.toml
printf 'standin_jobs = 7\nstandin_crash_shard = 3\n' >crash.toml

echo "== ok: 7 jobs, 3 shards"
t0=$SECONDS
"$here/submit.sh" --wait -n 3 -b "$standin" ok.toml out-ok
rc=$?
echo "  (submit --wait took $((SECONDS - t0)) s)"
check "submit --wait exits 0" [ "$rc" -eq 0 ]
for k in 1 2 3; do
	check "shard $k ran as: batch --shard $k/3 --out $work/out-ok/shard-$k $work/ok.toml" \
		[ "$(cat out-ok/shard-$k/argv.txt 2>/dev/null)" = "batch --shard $k/3 --out $work/out-ok/shard-$k $work/ok.toml" ]
done
check "merged index has jobs j1..j7, all ok" \
	[ "$(tail -n +2 out-ok/merged/index.csv 2>/dev/null | cut -d, -f1,3 | paste -sd' ')" = "j1,ok j2,ok j3,ok j4,ok j5,ok j6,ok j7,ok" ]
check "Slurm logs of 3 shards and the merge in out-ok/logs" [ "$(find out-ok/logs -name '*.out' | wc -l)" -eq 4 ]

echo "== fail: job j5 of shard 2 fails"
"$here/submit.sh" --wait -n 3 -b "$standin" fail.toml out-fail
rc=$?
check "submit --wait exits non-zero (got $rc)" [ "$rc" -ne 0 ]
check "merge ran: merged index has 7 jobs" [ "$(tail -n +2 out-fail/merged/index.csv 2>/dev/null | wc -l)" -eq 7 ]
check "merged index shows j5 failed, in shard 2" grep -qx 'j5,2,failed' out-fail/merged/index.csv
arr=$(sed -n 's/^batch-array: job \([0-9]*\)_1 .*/\1/p' out-fail/logs/batch-*_1.out 2>/dev/null)
st=$(task_state "${arr}_1")
echo "  shard 2's task ${arr}_1: $st"
check "Slurm recorded shard 2's task as FAILED with exit code 1" [ "$st" = "JobState=FAILED ExitCode=1:0" ]

echo "== crash: shard 3 writes nothing"
"$here/submit.sh" --wait -n 3 -b "$standin" crash.toml out-crash
rc=$?
check "submit --wait exits non-zero (got $rc)" [ "$rc" -ne 0 ]
check "merge log names the missing shard 3" grep -q 'shard 3/3 wrote no folder' out-crash/logs/merge-*.out
check "merged index has shards 1-2's 5 jobs" [ "$(tail -n +2 out-crash/merged/index.csv 2>/dev/null | wc -l)" -eq 5 ]

echo "== rerun: shard 2 of 3 alone"
sbatch --wait --array=1 --export=ALL,CANALSTEP_SHARDS=3 --output="$work/rerun-%A_%a.out" \
	"$here/batch-array.sbatch" ok.toml out-rerun "$standin" >/dev/null
rc=$?
check "task exits 0" [ "$rc" -eq 0 ]
check "it ran --shard 2/3 into shard-2" \
	[ "$(cat out-rerun/shard-2/argv.txt 2>/dev/null)" = "batch --shard 2/3 --out out-rerun/shard-2 ok.toml" ]
check "and into no other shard folder" [ "$(ls out-rerun)" = shard-2 ]

echo "== badarray: --array=1-3 without CANALSTEP_SHARDS"
sbatch --wait --array=1-3 --output="$work/bad-%A_%a.out" \
	"$here/batch-array.sbatch" ok.toml out-bad "$standin" >/dev/null
rc=$?
check "refused (sbatch --wait exit $rc, not 0)" [ "$rc" -ne 0 ]
check "the task log says why" grep -q 'are not 0-2' "$(ls "$work"/bad-*_1.out | head -1)"
check "no shard ran" [ ! -e out-bad ]

echo "selftest: $pass checks held, $failed failed (work folder $work)"
[ "$failed" -eq 0 ]

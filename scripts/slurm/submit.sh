#!/usr/bin/env bash
# submit.sh submits a canalstep batch to Slurm as a job array of N shards
# (batch-array.sbatch) and a merge job (merge.sbatch) that runs once every
# shard has ended, whatever its outcome (--dependency=afterany; see
# merge.sbatch for why not afterok).
#
#   scripts/slurm/submit.sh [options] JOB.toml OUT [-- SBATCH_FLAGS...]
#
#   -n, --shards N        number of shards (array tasks 0..N-1); required
#   -b, --bin PATH        canalstep binary on the compute nodes (default: the
#                         canalstep on PATH there)
#   -m, --merged DIR      merged folder (default OUT/merged)
#   -p, --max-parallel M  run at most M shards at once (--array=0-(N-1)%M)
#   -w, --wait            wait for the merge and exit with its status
#
# Flags after -- go to both sbatch calls (e.g. -- --partition=batch
# --time=02:00:00 --cpus-per-task=4). Shard K writes OUT/shard-K; Slurm's
# logs go to OUT/logs/ (batch-ARRAYID_TASK.out, merge-JOBID.out). OUT and
# JOB.toml must be on a file system the compute nodes share; relative paths
# are made absolute here.
#
# Prints the array and merge job IDs. Without --wait it exits 0 once both are
# queued; with --wait it exits with the merge job's status: 0 when every job
# of every shard succeeded, non-zero when any failed (the merged index says
# which) or a shard wrote no folder. --wait asks scontrol for the merge
# job's state every second for the first minute, then every 10 s (sbatch's
# own --wait polls at up to 10 s from the start, which made short batches
# wait 30 s after their merge had ended).
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
usage() {
	sed -n '2,/^set -euo/p' "$0" | sed '$d; s/^# \{0,1\}//' >&2
	exit 2
}
die() {
	echo "submit: $*" >&2
	exit 2
}

shards="" bin="" merged="" maxpar="" wait=0
args=()
while [ $# -gt 0 ]; do
	case "$1" in
	-n | --shards) shards=${2:-}; shift 2 || usage ;;
	-b | --bin) bin=${2:-}; shift 2 || usage ;;
	-m | --merged) merged=${2:-}; shift 2 || usage ;;
	-p | --max-parallel) maxpar=${2:-}; shift 2 || usage ;;
	-w | --wait) wait=1; shift ;;
	-h | --help) usage ;;
	--) shift; break ;;
	-*) die "unknown option $1 (see --help)" ;;
	*) args+=("$1"); shift ;;
	esac
done
extra=("$@")
[ "${#args[@]}" -eq 2 ] || die "give the job file and the output root (see --help)"
case "$shards" in
'' | *[!0-9]* | 0) die "--shards N is required, a whole number of at least 1" ;;
esac
case "$maxpar" in
*[!0-9]*) die "--max-parallel takes a whole number, not '$maxpar'" ;;
esac

abs() { case "$1" in /*) printf '%s\n' "$1" ;; *) printf '%s\n' "$PWD/$1" ;; esac }
job=$(abs "${args[0]}")
out=$(abs "${args[1]}")
[ -f "$job" ] || die "job file $job does not exist"
if [ -n "$bin" ] && [[ "$bin" == */* ]]; then bin=$(abs "$bin"); fi
merged=${merged:+$(abs "$merged")}
mkdir -p "$out/logs"

array="0-$((shards - 1))${maxpar:+%$maxpar}"
array_id=$(sbatch --parsable --array="$array" --output="$out/logs/batch-%A_%a.out" \
	"${extra[@]}" "$here/batch-array.sbatch" "$job" "$out" "${bin:-canalstep}")
array_id=${array_id%%;*} # --parsable prints "ID" or "ID;CLUSTER"
echo "submit: shards: job array $array_id (--array=$array) -> $out/shard-1 … shard-$shards"

merge_args=(--parsable --dependency="afterany:$array_id" --output="$out/logs/merge-%j.out")
merge_id=$(sbatch "${merge_args[@]}" "${extra[@]}" "$here/merge.sbatch" \
	"$out" "$shards" "${bin:-canalstep}" "${merged:-$out/merged}") || merge_id=""
merge_id=${merge_id%%;*}
if [ -z "$merge_id" ]; then
	echo "submit: the merge job was not submitted; cancel the shards with: scancel $array_id" >&2
	exit 1
fi
echo "submit: merge: job $merge_id after every shard (afterany:$array_id) -> ${merged:-$out/merged}"
[ "$wait" = 1 ] || exit 0

# job_end ID prints "STATE EXITCODE" (e.g. "FAILED 1:0") once job ID has
# ended, nothing while it is pending or running; it fails when scontrol
# does not know the job.
job_end() {
	local line state code
	line=$(scontrol -o show job "$1" 2>/dev/null) || return 1
	state=$(printf '%s\n' "$line" | tr ' ' '\n' | sed -n 's/^JobState=//p' | head -1)
	code=$(printf '%s\n' "$line" | tr ' ' '\n' | sed -n 's/^ExitCode=//p' | head -1)
	[ -n "$state" ] || return 1
	case "$state" in
	PENDING | CONFIGURING | RUNNING | COMPLETING | SUSPENDED | REQUEUED | RESIZING | SIGNALING | STAGE_OUT | RESV_DEL_HOLD | REQUEUE_FED | REQUEUE_HOLD | SPECIAL_EXIT | STOPPED) ;;
	*) echo "$state $code" ;;
	esac
}

echo "submit: waiting for the merge job $merge_id"
polls=0 end=""
while :; do
	if ! end=$(job_end "$merge_id"); then
		echo "submit: scontrol no longer knows the merge job $merge_id: see $out/logs/merge-$merge_id.out" >&2
		exit 1
	fi
	[ -z "$end" ] || break
	polls=$((polls + 1))
	if [ "$polls" -le 60 ]; then sleep 1; else sleep 10; fi
done
state=${end%% *} code=${end#* }
rc=${code%%:*} sig=${code#*:}
case "$rc$sig" in *[!0-9]*) rc=1 sig=0 ;; esac
if [ "$sig" != 0 ]; then rc=$((128 + sig)); fi
if [ "$state" != COMPLETED ] && [ "$rc" -eq 0 ]; then rc=1; fi
if [ "$rc" -eq 0 ]; then
	echo "submit: merge job $merge_id succeeded: every job of every shard succeeded"
else
	echo "submit: merge job $merge_id ended $state (exit code $code): some job or shard failed; see ${merged:-$out/merged} and $out/logs/" >&2
fi
exit "$rc"

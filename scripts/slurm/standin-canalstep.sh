#!/usr/bin/env bash
# standin-canalstep.sh stands in for canalstep's batch and merge commands so
# that selftest.sh can prove the Slurm recipes' mechanics (array task ->
# --shard K/N, one folder per shard, the afterany merge, exit statuses)
# before those commands exist. It computes nothing: it only writes files.
#
#   standin-canalstep.sh batch --shard K/N --out DIR JOB.toml
#       jobs j1..jJ (J from the job file's "standin_jobs = J"); shard K gets
#       jobs i with (i-1) mod N = K-1. Writes DIR/argv.txt (its arguments),
#       DIR/index.csv (job,shard,status) and one DIR/<job>.txt per job. A job
#       named in "standin_fail = "j5 j7"" is written as failed and makes the
#       exit status 1. With "standin_crash_shard = K" shard K exits 3 and
#       writes nothing.
#   standin-canalstep.sh merge --out MERGED DIR...
#       MERGED/index.csv: every DIR's rows, sorted by job; exit 1 when a row
#       has failed, 2 when a DIR has no index.csv.
#   standin-canalstep.sh batch --help     exits 0 (so does merge --help)
set -euo pipefail

key() { sed -n "s/^$1 *= *\"\{0,1\}\([^\"]*\)\"\{0,1\} *\$/\1/p" "$2" | head -1; }

cmd=${1:-}
shift || true
case "$cmd" in
batch)
	shard="" out=""
	all=("$@")
	while [ $# -gt 0 ]; do
		case "$1" in
		--help) exit 0 ;;
		--shard) shard=$2; shift 2 ;;
		--out) out=$2; shift 2 ;;
		--workers) shift 2 ;;
		*) job=$1; shift ;;
		esac
	done
	k=${shard%/*} n=${shard#*/}
	if [ "$(key standin_crash_shard "$job")" = "$k" ]; then
		echo "standin: shard $k crashes before writing anything" >&2
		exit 3
	fi
	jobs=$(key standin_jobs "$job")
	fails=" $(key standin_fail "$job") "
	mkdir -p "$out"
	printf 'batch %s\n' "${all[*]}" >"$out/argv.txt"
	echo "job,shard,status" >"$out/index.csv"
	rc=0
	for ((i = 1; i <= jobs; i++)); do
		if [ $(((i - 1) % n)) -ne $((k - 1)) ]; then continue; fi
		status=ok
		if [[ "$fails" == *" j$i "* ]]; then status=failed rc=1; fi
		echo "j$i,$k,$status" >>"$out/index.csv"
		echo "job j$i of shard $k/$n: $status" >"$out/j$i.txt"
	done
	exit "$rc"
	;;
merge)
	[ "${1:-}" != --help ] || exit 0
	[ "${1:-}" = --out ] || { echo "standin: merge --out MERGED DIR..." >&2; exit 2; }
	merged=$2
	shift 2
	mkdir -p "$merged"
	for d in "$@"; do
		[ -f "$d/index.csv" ] || { echo "standin: $d has no index.csv" >&2; exit 2; }
	done
	{
		echo "job,shard,status"
		for d in "$@"; do tail -n +2 "$d/index.csv"; done | sort -t, -k1.2n
	} >"$merged/index.csv"
	if grep -q ',failed$' "$merged/index.csv"; then exit 1; fi
	;;
*)
	echo "standin: batch or merge" >&2
	exit 2
	;;
esac

#!/usr/bin/env bash
# bench-plan.sh times canalstep's drop-placement optimiser side by side with
# the CBC mixed-integer solver (Debian coinor-cbc) on the same single-grade
# problem, checks that both reach the same optimum, and prints the speed
# ratio. Informational: it never fails on speed, only on a wrong optimum.
#
#   scripts/bench-plan.sh              400 stations
#   BENCH_PLAN_STATIONS=200 scripts/bench-plan.sh
#
# The problem is the seeded synthetic case of planner/glpk_test.go
# (mipProblem): 10 m stations, one grade, one drop height, a bankless
# rectangular template so that the earthwork is linear in depth. The model
# CBC solves is written by planner.WriteLP. The optimiser's time is the
# fastest of 20 runs of planner.Optimize (drop design and water-surface
# profiles included); CBC's is the fastest of BENCH_PLAN_RUNS runs (default 3)
# of the cbc binary, process start included.
set -euo pipefail
cd "$(dirname "$0")/.."
# shellcheck source=scripts/setup.sh
source scripts/setup.sh
canalstep_setup coinor-cbc

N=${BENCH_PLAN_STATIONS:-400}
RUNS=${BENCH_PLAN_RUNS:-3}
OUT=${BENCH_OUT:-bench-out}/plan
mkdir -p "$OUT"
OUT=$(cd "$OUT" && pwd)

go test ./planner -run '^TestBenchPlanModel$' -count=1 \
	-args -benchplan.out="$OUT" -benchplan.n="$N" -benchplan.reps=20 >/dev/null
dp_obj=$(awk '$1 == "objective" {print $2}' "$OUT/dp.txt")
dp_s=$(awk '$1 == "seconds" {print $2}' "$OUT/dp.txt")
drops=$(awk '$1 == "drops" {print $2}' "$OUT/dp.txt")

cbc_s=""
for _ in $(seq "$RUNS"); do
	t0=$(date +%s.%N)
	cbc "$OUT/model.lp" solve solu "$OUT/cbc.sol" >"$OUT/cbc.log" 2>&1
	t1=$(date +%s.%N)
	s=$(awk -v a="$t0" -v b="$t1" 'BEGIN {printf "%.6f", b - a}')
	if [ -z "$cbc_s" ] || awk -v a="$s" -v b="$cbc_s" 'BEGIN {exit !(a < b)}'; then cbc_s=$s; fi
done
# First line of CBC's solution file: "Optimal - objective value 12345.678".
status=$(head -1 "$OUT/cbc.sol" | awk '{print $1}')
cbc_obj=$(head -1 "$OUT/cbc.sol" | awk '{print $NF}')
if [ "$status" != "Optimal" ]; then
	echo "bench-plan: CBC did not report an optimal solution: $(head -1 "$OUT/cbc.sol")" >&2
	exit 1
fi

printf 'plan: single-grade drop placement, %s stations (%s drops in the optimum)\n' "$N" "$drops"
printf '  %-28s %14s %12s\n' "solver" "objective" "seconds"
printf '  %-28s %14.4f %12.6f\n' "canalstep optimiser" "$dp_obj" "$dp_s"
printf '  %-28s %14.4f %12.6f\n' "CBC $(cbc -quit 2>/dev/null | awk '/^Version/ {print $2}')" "$cbc_obj" "$cbc_s"
# Same optimum within 1e-6 relative: CBC prints 8 decimals; both solve the
# same feasible set exactly (see planner.WriteLP).
awk -v a="$dp_obj" -v b="$cbc_obj" 'BEGIN {
	d = a - b; if (d < 0) d = -d
	if (d > 1e-6 * (b < 0 ? -b : b)) { printf "  optimum MISMATCH: difference %g\n", d; exit 1 }
	printf "  same optimum (difference %.3g)\n", d
}'
awk -v a="$dp_s" -v b="$cbc_s" 'BEGIN { printf "  optimiser is %.0fx faster than CBC (target >= 100x)\n", b / a }'

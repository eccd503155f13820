#!/usr/bin/env bash
# bench-plan.sh runs the plan case of scripts/bench.sh alone: the optimiser's
# Go benchmarks at 10 and 100 km, the single-grade MIP against the CBC solver
# (Debian coinor-cbc; same optimum checked, timed pairwise), and the demo
# scheme's plan against the libgdal load floor, then prints the table.
# Informational: it fails only when something could not run or the optima
# differ, never on speed.
#
#   scripts/bench-plan.sh                           400 stations
#   BENCH_PLAN_STATIONS=200 scripts/bench-plan.sh
#
# BENCH_OUT, BENCH_ROUNDS, BENCH_RUNS and BENCH_WARMUP as for bench.sh.
exec bash "$(dirname "$0")/bench.sh" plan

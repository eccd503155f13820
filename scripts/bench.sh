#!/usr/bin/env bash
# bench.sh measures canalstep's speed and memory side by side with reference
# tools, in one run on this machine, and prints one table of ratios. It never
# fails on speed: a goal missed is shown as "not met". It fails (exit 1, at
# the end) when a case could not run or a check of its numbers failed;
# every case runs whatever the others did.
#
#   scripts/bench.sh                  all cases: profile plan batch
#   scripts/bench.sh profile plan     only these
#
# Cases (each a function bench_<case>; add one and list it in bench_cases):
#   profile  DEM sampling along a 40 km alignment at 1 m (40,049 points):
#            canalstep profile, package terrain alone, gdallocationinfo on
#            the same points, a Python rasterio tile reader, an empty
#            program linked with libgdal (the load floor) and the decoding
#            of the blocks the points touch (the tile-decode floor,
#            scripts/benchsample.go -decode)
#   plan     the optimiser: Go benchmarks at 10 and 100 km alternated; the single-grade
#            MIP at 400 stations against CBC (same optimum checked); the
#            demo scheme's plan against the load floor
#   batch    canalstep batch with 1 and 2 workers: jobs/s, speed-up, peak
#            RSS, and the same output files from both
#
# Ratios are pairwise: every command of a comparison is timed in ONE
# hyperfine call whose parameter list alternates them (A, B, A, B, …:
# BENCH_ROUNDS rounds, each of BENCH_WARMUP warm-up and BENCH_RUNS timed
# runs of every command), so that load from elsewhere falls on all of them.
# A ratio is the median over rounds of (median A / median B) in a round,
# with the smallest and largest round beside it. Peak RSS is GNU time's
# maximum resident set size of one more run of each command.
#
# Environment:
#   BENCH_OUT       folder for inputs, outputs, logs and timings (default
#                   bench-out/ in the repository; a relative path is taken
#                   from the folder you run the script in)
#   BENCH_ROUNDS    rounds (default 10); BENCH_RUNS timed runs per round
#                   (default 2); BENCH_WARMUP warm-up runs per round (1)
#   BENCH_PLAN_STATIONS  stations of the CBC model (default 400)
#   BENCH_BATCH_ALIGNMENTS  alignments of the batch (default 60; 3
#                   alternatives each); BENCH_BATCH_ROUNDS (default 3, one
#                   run each, after one untimed run of each worker count)
#   BENCH_BATCH_JOB a batch job file to use instead of the generated one
#
# Inputs are generated once into BENCH_OUT by scripts/benchdata.go: a
# 20000×20000 Float32 DEM (10 m cells, DEFLATE, 256² tiles, about 1.3 GB),
# the 40 km alignment and its points, and the batch alignments. Binaries are
# built into BENCH_OUT/bin from the working tree; one that fails to build
# fails the rows that need it and no other.
set -uo pipefail

caller=$PWD
cd "$(dirname "$0")/.." || exit 1
repo=$PWD
# shellcheck source=scripts/setup.sh
source scripts/setup.sh
canalstep_setup coinor-cbc python3-rasterio hyperfine time || exit 1
set +e # setup.sh sets -e; here only the cases run with it (see bench_main)

out=${BENCH_OUT:-$repo/bench-out}
case "$out" in /*) ;; *) out="$caller/$out" ;; esac
mkdir -p "$out" || exit 1
BENCH_OUT=$(cd "$out" && pwd -P)
export BENCH_OUT
BENCH_ROUNDS=${BENCH_ROUNDS:-10}
BENCH_RUNS=${BENCH_RUNS:-2}
BENCH_WARMUP=${BENCH_WARMUP:-1}
B="$BENCH_OUT/bin"
T="$BENCH_OUT/times"
TABLE="$T/table.tsv"
PY=/usr/bin/python3 # python3-rasterio is installed for the system Python

bench_cases=(profile plan batch)

# ---------------------------------------------------------------- helpers

# The table's rows, one per comparison, tab-separated: case, comparison,
# method, A/B median, A/B lowest round, A/B highest round, A ms, B ms,
# A MB, B MB, goals, note. rows.py turns timings into rows and prints them.
read -r -d '' ROWS_PY <<'PYEOF' || true # read returns 1 at the end of input
import json, math, re, statistics as st, sys

def load(tdir, gid):
    names = open(f"{tdir}/{gid}.names").read().splitlines()
    res = json.load(open(f"{tdir}/{gid}.json"))["results"]
    n = len(names)
    per = {nm: [] for nm in names}  # name -> [times of round 1, round 2, …]
    for i, r in enumerate(res):
        rnd = r.get("parameters", {}).get("round")
        if rnd != str(i // n + 1):
            sys.exit(f"rows: {gid}: result {i} is round {rnd}, expected {i // n + 1}")
        per[names[i % n]].append(r["times"])
    rss = {}
    try:
        for line in open(f"{tdir}/{gid}.rss"):
            nm, _, kb = line.rstrip("\n").rpartition(" ")
            rss[nm] = float(kb) / 1024 if kb.isdigit() else float("nan")
    except FileNotFoundError:
        pass
    return per, rss

def fmt(v, spec):
    return "-" if v is None or (isinstance(v, float) and math.isnan(v)) else format(v, spec)

def judge(goals, ratio, a_ms, a_mb, b_mb):
    """Each goal 'X<=v' or 'X>=v', X one of A/B, B/A, A_ms, A_rss, B_rss."""
    if not goals:
        return ""
    vals = {"A/B": ratio, "B/A": 1 / ratio if ratio else None, "A_ms": a_ms, "A_rss": a_mb, "B_rss": b_mb}
    out = []
    for g in goals.split(";"):
        m = re.fullmatch(r"\s*(A/B|B/A|A_ms|A_rss|B_rss)\s*(<=|>=)\s*([0-9.]+)\s*", g)
        if not m:
            out.append(g.strip())
            continue
        v, lim = vals[m.group(1)], float(m.group(3))
        if v is None or math.isnan(v):
            out.append(f"{g.strip()}: no figure")
        else:
            ok = v <= lim if m.group(2) == "<=" else v >= lim
            out.append(f"{g.strip()}: {'met' if ok else 'NOT met'}")
    return "; ".join(out)

def row(case, comp, method, r, lo, hi, a_ms, b_ms, a_mb, b_mb, goals, note):
    cells = [case, comp, method, fmt(r, ".6g"), fmt(lo, ".6g"), fmt(hi, ".6g"),
             fmt(a_ms, ".1f"), fmt(b_ms, ".1f"), fmt(a_mb, ".1f"), fmt(b_mb, ".1f"),
             judge(goals, r, a_ms, a_mb, b_mb) if r is not None else goals, note]
    print("\t".join(c.replace("\t", " ") for c in cells))

def allmed(rounds):
    return st.median([t for rd in rounds for t in rd]) * 1e3

cmd, args = sys.argv[1], sys.argv[2:]
if cmd == "pair":      # pair TDIR GID CASE COMP A B GOALS NOTE
    tdir, gid, case, comp, a, b, goals, note = args
    per, rss = load(tdir, gid)
    rs = [st.median(x) / st.median(y) for x, y in zip(per[a], per[b])]
    row(case, comp, f"hyperfine, {len(rs)} rounds alternated", st.median(rs), min(rs), max(rs),
        allmed(per[a]), allmed(per[b]), rss.get(a), rss.get(b), goals, note)
elif cmd == "net":     # net TDIR GID CASE COMP A B FLOOR GOALS NOTE: (A-F)/(B-F)
    tdir, gid, case, comp, a, b, f, goals, note = args
    per, rss = load(tdir, gid)
    rs = [(st.median(x) - st.median(z)) / (st.median(y) - st.median(z))
          for x, y, z in zip(per[a], per[b], per[f])]
    fl = allmed(per[f])
    row(case, comp, f"hyperfine, {len(rs)} rounds alternated", st.median(rs), min(rs), max(rs),
        allmed(per[a]) - fl, allmed(per[b]) - fl, None, None, goals, note)
elif cmd in ("logged", "netlog"):
    # logged TDIR GID CASE COMP A B GOALS NOTE: A/B per round
    # netlog TDIR GID CASE COMP A F B GOALS NOTE: (A - F)/B per round
    # A, F and B are each a command name of group GID or "@FILE": lines
    # "ROUND SECONDS" that the command logged as it ran (its own timing of
    # its work inside the process), matched to the group's rounds.
    if cmd == "logged":
        tdir, gid, case, comp, a, b, goals, note = args
        f = None
    else:
        tdir, gid, case, comp, a, f, b, goals, note = args
    per, rss = load(tdir, gid)
    def side(x):
        if not x.startswith("@"):
            return per[x], rss.get(x)
        byr = {}
        for line in open(x[1:]):
            fs = line.split()
            if len(fs) == 2 and fs[0].isdigit():
                byr.setdefault(int(fs[0]), []).append(float(fs[1]))
        rounds = len(next(iter(per.values())))
        if sorted(byr) != list(range(1, rounds + 1)):
            sys.exit(f"rows: {x[1:]} has rounds {sorted(byr)}, expected 1-{rounds}")
        return [byr[i] for i in range(1, rounds + 1)], None
    (pa, ma), (pb, mb) = side(a), side(b)
    if f is None:
        rs = [st.median(x) / st.median(y) for x, y in zip(pa, pb)]
        a_ms = allmed(pa)
    else:
        pf, _ = side(f)
        rs = [(st.median(x) - st.median(z)) / st.median(y) for x, y, z in zip(pa, pb, pf)]
        a_ms, ma = allmed(pa) - allmed(pf), None
    row(case, comp, f"hyperfine, {len(rs)} rounds alternated; logged figures timed in-process", st.median(rs), min(rs), max(rs),
        a_ms, allmed(pb), ma, mb, goals, note)
elif cmd == "median":  # median TDIR GID NAME: median wall time of NAME, s
    per, _ = load(args[0], args[1])
    print("%.6f" % (allmed(per[args[2]]) / 1e3))
elif cmd == "raw":     # raw CASE COMP METHOD RATIO LO HI A_MS B_MS A_MB B_MB GOALS NOTE
    num = lambda s: None if s in ("", "-") else float(s)
    c = args
    row(c[0], c[1], c[2], *[num(x) for x in c[3:10]], c[10], c[11])
elif cmd == "table":   # table TSV
    rows = [l.rstrip("\n").split("\t") for l in open(args[0]) if l.strip()]
    hdr = ["case", "comparison (A vs B)", "A/B", "rounds", "B/A", "A ms", "B ms", "A MB", "B MB", "goals"]
    body = []
    g3 = lambda x: "-" if x in ("-", "") else "%.3g" % float(x)  # 3 significant digits
    for r in rows:
        inv = "-" if r[3] in ("-", "") or float(r[3]) == 0 else g3(1 / float(r[3]))
        rng = "-" if r[4] == "-" else f"{g3(r[4])}-{g3(r[5])}"
        body.append([r[0], r[1], g3(r[3]), rng, inv, r[6], r[7], r[8], r[9], r[10]])
    w = [max(len(x[i]) for x in [hdr] + body) for i in range(len(hdr))]
    line = lambda x: "  ".join(c.ljust(w[i]) if i in (0, 1, 9) else c.rjust(w[i]) for i, c in enumerate(x)).rstrip()
    print(line(hdr))
    print("  ".join("-" * n for n in w))
    for x in body:
        print(line(x))
    notes = [(r[0], r[1], r[2], r[11]) for r in rows]
    print()
    for case, comp, method, note in notes:
        print(f"  {case} / {comp}: {method}" + (f"; {note}" if note else ""))
else:
    sys.exit("rows: unknown command " + cmd)
PYEOF

rows() { "$PY" -c "$ROWS_PY" "$@"; }

# add_row CASE COMPARISON STATUS: a row without figures (a failure or skip);
# STATUS lands in the goals column.
add_row() {
	rows raw "$1" "$2" "not timed" - - - - - - - "$3" "" >>"$TABLE"
}

# fail_row CASE COMPARISON WHY: a FAILED row; the case will exit 1.
fail_row() {
	echo "  FAILED: $2: $3" >&2
	add_row "$1" "$2" "FAILED: $3"
	case_rc=1
}

# have BIN... fails unless every binary in BENCH_OUT/bin was built.
have() {
	local b
	for b in "$@"; do [ -x "$B/$b" ] || return 1; done
}

# time_group ID NAME CMD [NAME CMD]...: times the shell commands CMD
# alternated in one hyperfine call (see the header) into T/ID.json, and one
# more run of each under GNU time into T/ID.rss (peak RSS, KB). Group
# settings from GROUP_ROUNDS, GROUP_RUNS, GROUP_WARMUP, GROUP_PREPARE (a
# command run before every timed run) and GROUP_IGNORE=1 (a non-zero exit
# is timed, not an error). Fails, with the reason on stderr, when a command
# fails.
time_group() {
	local id=$1 rounds=${GROUP_ROUNDS:-$BENCH_ROUNDS} runs=${GROUP_RUNS:-$BENCH_RUNS} warm=${GROUP_WARMUP:-$BENCH_WARMUP}
	shift
	local names=() cmds=() hcmds=() opts=() i
	while [ $# -ge 2 ]; do
		names+=("$1")
		cmds+=("$2")
		hcmds+=("$2 # round {round}")
		shift 2
	done
	rm -f "$T/$id.json" "$T/$id.rss"
	printf '%s\n' "${names[@]}" >"$T/$id.names"
	if [ -n "${GROUP_PREPARE:-}" ]; then opts+=(--prepare "$GROUP_PREPARE"); fi
	if [ "${GROUP_IGNORE:-0}" = 1 ]; then opts+=(--ignore-failure); fi
	echo "  timing ${names[*]}: $rounds rounds alternated, each $warm warm-up + $runs runs of every command"
	if ! hyperfine --style basic --warmup "$warm" --runs "$runs" -L round "$(seq -s, 1 "$rounds")" \
		"${opts[@]}" --export-json "$T/$id.json" "${hcmds[@]}" >"$T/$id.log" 2>&1; then
		echo "  hyperfine failed (log $T/$id.log): $(grep -m1 -iE 'error|non-zero|failed' "$T/$id.log")" >&2
		rm -f "$T/$id.json"
		return 1
	fi
	for i in "${!cmds[@]}"; do
		if /usr/bin/time -f %M -o "$T/$id.rss1" bash -c "${cmds[$i]}" >/dev/null 2>&1 || [ "${GROUP_IGNORE:-0}" = 1 ]; then
			echo "${names[$i]} $(tail -1 "$T/$id.rss1")" >>"$T/$id.rss"
		else
			echo "${names[$i]} -" >>"$T/$id.rss"
		fi
	done
	rm -f "$T/$id.rss1"
}

# pair_row CASE ID A B COMPARISON GOALS [NOTE]: a row from group ID.
pair_row() {
	rows pair "$T" "$2" "$1" "$5" "$3" "$4" "$6" "${7:-}" >>"$TABLE"
}

# ------------------------------------------------------------ build, data

bench_build() {
	mkdir -p "$B"
	local ok=0
	build_one() { # build_one NAME COMMAND...
		local name=$1
		shift
		rm -f "$B/$name"
		if ! "$@" >"$T/build-$name.log" 2>&1; then
			echo "  build of $name FAILED (log $T/build-$name.log):" >&2
			head -5 "$T/build-$name.log" | sed 's/^/    /' >&2
			rm -f "$B/$name"
			add_row build "$name" "FAILED: does not build (log $T/build-$name.log)"
			ok=1
		fi
	}
	echo "== build into $B"
	build_one canalstep go build -o "$B/canalstep" ./cmd/canalstep
	build_one benchsample go build -o "$B/benchsample" scripts/benchsample.go
	# The floor for any program linked with GDAL: loading libgdal and its
	# hundred-odd shared libraries, doing nothing else.
	build_one gdal-load-only sh -c "printf 'int main(void) { return 0; }\n' | gcc -x c - -o '$B/gdal-load-only' -Wl,--no-as-needed -lgdal"
	build_one planner.test go test -c -o "$B/planner.test" ./planner
	return "$ok"
}

bench_data() {
	echo "== inputs in $BENCH_OUT"
	go run scripts/benchdata.go -out "$BENCH_OUT" -batch "${BENCH_BATCH_ALIGNMENTS:-60}"
}

# ------------------------------------------------------------------ cases

# bench_profile: the ground profile along the 40 km alignment at 1 m
# spacing (40,049 points: every metre plus the vertices), bilinear.
#   canalstep       canalstep profile (CSV + PNG outputs included)
#   terrain         package terrain alone: read points, Open, Sample
#   gdallocinfo     gdallocationinfo -valonly -geoloc, points on stdin
#                   (nearest cell: less work than bilinear)
#   python          rasterio + numpy, touched blocks only, bilinear
#   gdal-load-only  an empty C program linked with libgdal (the floor)
#   decode          benchsample -decode: the blocks the points touch, each decoded
#                   once (the tile-decode floor; its in-process time is
#                   logged per round, its process time is not used)
bench_profile() {
	local dem="$BENCH_OUT/dem.tif" route="$BENCH_OUT/route.geojson" pts="$BENCH_OUT/points.txt"
	local prof_out="$BENCH_OUT/profile-out"
	local c
	for c in "$dem" "$route" "$pts"; do
		[ -s "$c" ] || { fail_row profile inputs "$c is missing (scripts/benchdata.go failed?)"; return 1; }
	done
	echo "$(wc -l <"$pts") points on a $(gdalinfo "$dem" | awk '/^Size is/ {sub(",", "", $3); print $3 "×" $4}') DEM"

	# The same numbers from the implementations first: a benchmark of wrong
	# answers proves nothing. Tolerances: 1 mm; the files carry 4 decimals
	# (3 in ground.csv), so rounding alone is up to 0.55 mm.
	local zcheck='import numpy as np, sys
a, b = np.loadtxt(sys.argv[1]), np.loadtxt(sys.argv[2])
if len(a) != len(b):
    sys.exit("%d values against %d" % (len(a), len(b)))
d = np.nanmax(np.abs(a - b))
print("  %s: max |diff| %.5f m over %d points" % (sys.argv[3], d, len(a)))
sys.exit(0 if d <= 1e-3 and np.isnan(a).sum() == np.isnan(b).sum() else "differ by more than 1 mm")'
	"$PY" scripts/bench_rasterio.py -o "$BENCH_OUT/z_python.txt" "$dem" "$pts" ||
		fail_row profile "python reference" "bench_rasterio.py failed"
	if have benchsample; then
		"$B/benchsample" -o "$BENCH_OUT/z_terrain.txt" "$dem" "$pts" 2>/dev/null &&
			"$PY" -c "$zcheck" "$BENCH_OUT/z_terrain.txt" "$BENCH_OUT/z_python.txt" "terrain vs python" ||
			fail_row profile "terrain vs python values" "differ (see above)"
	fi
	local have_profile=0
	if have canalstep && "$B/canalstep" profile --help >/dev/null 2>&1; then have_profile=1; fi
	if [ "$have_profile" = 1 ]; then
		rm -rf "$prof_out"
		if "$B/canalstep" profile --dem "$dem" --alignment "$route" --spacing 1 --out "$prof_out" >/dev/null; then
			"$PY" -c 'import csv, sys, numpy as np
rows = list(csv.DictReader(open(sys.argv[1])))
col = next((c for c in ("ground_m", "ground") if c in rows[0]), None) if rows else None
if col is None:
    sys.exit("ground.csv has no ground_m or ground column: %s" % (list(rows[0]) if rows else "no rows"))
np.savetxt(sys.argv[2], [float(r[col]) for r in rows], fmt="%.4f")' \
				"$(ls "$prof_out"/*/ground.csv | head -1)" "$BENCH_OUT/z_canalstep.txt" &&
				"$PY" -c "$zcheck" "$BENCH_OUT/z_canalstep.txt" "$BENCH_OUT/z_python.txt" "canalstep ground.csv vs python" ||
				fail_row profile "canalstep vs python values" "differ (see above)"
		else
			fail_row profile "canalstep profile" "exits non-zero"
			have_profile=0
		fi
	else
		fail_row profile "canalstep profile" "bin/canalstep did not build or has no profile command"
	fi

	local group=()
	if [ "$have_profile" = 1 ]; then
		group+=(canalstep "$B/canalstep profile --dem $dem --alignment $route --spacing 1 --out $prof_out")
	fi
	if have benchsample; then group+=(terrain "$B/benchsample $dem $pts"); fi
	group+=(gdallocinfo "gdallocationinfo -valonly -geoloc $dem < $pts > /dev/null")
	group+=(python "$PY scripts/bench_rasterio.py $dem $pts")
	if have gdal-load-only; then group+=(gdal-load-only "$B/gdal-load-only"); fi
	# The tile-decode floor: the blocks these points touch, each decoded once
	# with GDALReadBlock (median of 5 passes inside the process), logged per
	# round for the row "net of the load floor vs the decode floor".
	local decode_log="$T/profile-decode.txt"
	: >"$decode_log"
	local decode_blocks="?"
	if have benchsample; then
		if "$B/benchsample" -decode 5 "$dem" "$pts" >"$T/profile-decode.msg" 2>&1; then
			sed -n 's/^benchsample: /  decode floor: /p' "$T/profile-decode.msg"
			decode_blocks=$(awk '$4 == "touch" {print $5}' "$T/profile-decode.msg")
		else
			fail_row profile "tile-decode floor" "benchsample -decode failed (log $T/profile-decode.msg)"
		fi
		group+=(decode "$B/benchsample -decode 5 $dem $pts | awk '/^decode_s/ {print \"{round}\", \$2}' >> $decode_log")
	fi
	if ! time_group profile "${group[@]}"; then
		fail_row profile "timings" "a command failed under hyperfine (log $T/profile.log)"
		return 1
	fi
	if [ "$have_profile" = 1 ]; then
		pair_row profile profile canalstep gdallocinfo "canalstep profile vs gdallocationinfo" "A/B<=0.9;A_rss<=64" \
			"canalstep: bilinear, stationing, CSV and PNG; gdallocationinfo: nearest values only"
		pair_row profile profile canalstep python "canalstep profile vs rasterio script" "B/A>=3.5"
		if have gdal-load-only; then
			pair_row profile profile canalstep gdal-load-only "canalstep profile vs libgdal load floor" ""
			rows net "$T" profile profile "canalstep vs gdallocationinfo, net of load floor" canalstep gdallocinfo gdal-load-only "" \
				"(A - floor) / (B - floor) per round; A ms, B ms are net" >>"$TABLE"
			if have benchsample; then
				rows netlog "$T" profile profile "canalstep net of load floor vs tile-decode floor" canalstep gdal-load-only "@$decode_log" "A/B<=2" \
					"(A - load floor) / B per round; B: the $decode_blocks blocks the points touch, decoded once each (benchsample -decode: GDALReadBlock, median of 5 passes)" >>"$TABLE" ||
					fail_row profile "tile-decode floor" "no decode times logged (log $T/profile.log)"
			fi
		fi
	fi
	if have benchsample; then
		pair_row profile profile terrain gdallocinfo "package terrain vs gdallocationinfo" ""
	fi

	echo
	echo "Go benchmarks of package terrain (BenchRoute: this DEM and these points, Open+Sample+Close"
	echo "per op; SampleLine/SampleRandom: a 2048² test DEM, blocks already cached):"
	CANALSTEP_BENCH_DIR="$BENCH_OUT" go test -run '^$' -bench 'BenchRoute|SampleLine|SampleRandom' -benchtime 20x ./terrain >"$T/terrain-bench.txt" 2>&1 ||
		fail_row profile "go test -bench ./terrain" "failed (log $T/terrain-bench.txt)"
	grep -E '^Benchmark' "$T/terrain-bench.txt" | sed 's/^/  /' || true
	echo "Blocks decoded:"
	if have benchsample; then "$B/benchsample" "$dem" "$pts" 2>&1 | sed 's/^/  /' || true; fi
	if [ "$have_profile" = 1 ]; then
		"$B/canalstep" profile --dem "$dem" --alignment "$route" --spacing 1 --out "$prof_out" 2>&1 |
			grep -i block | sed 's/^/  canalstep: /' || true
	fi
	return "$case_rc"
}

# bench_plan: the drop-placement optimiser.
#   go benchmarks  Optimize on 10 km and 100 km of seeded ground (10 m
#                  stations, 3 heights, 5 grades, 1 cm step), one core, run
#                  alternated from the planner test binary, each run logging
#                  its ns/op; the 100 km / 10 km ratio shows the growth
#   CBC            the single-grade MIP of planner's TestBenchPlanModel at
#                  BENCH_PLAN_STATIONS stations (planner.WriteLP): the
#                  planner test process (build the problem, write the LP,
#                  one Optimize) against the cbc process on that LP; both
#                  optima must agree
#   demo plan      canalstep plan on the demo scheme (5 alignments, every deliverable) against
#                  the libgdal load floor
bench_plan() {
	local d="$BENCH_OUT/plan" n=${BENCH_PLAN_STATIONS:-400}
	mkdir -p "$d/dp"

	echo "Optimize on one core: BenchmarkOptimize10km (5 ops a run) and 100km (1 op) alternated:"
	if ! have planner.test; then
		fail_row plan "Optimize 100 km vs 10 km" "planner test binary did not build"
	elif ! "$B/planner.test" -test.run '^$' -test.bench '^BenchmarkOptimize(10|100)km$' -test.benchtime 1x -test.benchmem -test.cpu 1 >"$T/plan-bench.txt" 2>&1; then
		fail_row plan "Optimize 100 km vs 10 km" "the benchmarks failed (log $T/plan-bench.txt)"
	else
		grep '^Benchmark' "$T/plan-bench.txt" | sed 's/^/  /' || true
		: >"$d/growth-10.txt"
		: >"$d/growth-100.txt"
		local bench_cmd="$B/planner.test -test.run '^\$' -test.cpu 1 -test.bench"
		local log_ns="awk '/^BenchmarkOptimize/ {print \"{round}\", \$3 / 1e9}'"
		if GROUP_RUNS=1 GROUP_WARMUP=0 time_group plan-growth \
			10km "$bench_cmd '^BenchmarkOptimize10km\$' -test.benchtime 5x | $log_ns >> $d/growth-10.txt" \
			100km "$bench_cmd '^BenchmarkOptimize100km\$' -test.benchtime 1x | $log_ns >> $d/growth-100.txt"; then
			rows logged "$T" plan-growth plan "Optimize 100 km vs 10 km, one core" "@$d/growth-100.txt" "@$d/growth-10.txt" "A_ms<=500" \
				"go test -bench ns/op of each run; 10 = linear in length" >>"$TABLE" ||
				fail_row plan "Optimize 100 km vs 10 km" "no ns/op logged (log $T/plan-growth.log)"
		else
			fail_row plan "Optimize 100 km vs 10 km" "a command failed under hyperfine (log $T/plan-growth.log)"
		fi
	fi

	echo
	echo "Single-grade MIP, $n stations, against CBC $(cbc -quit 2>/dev/null | awk '/^Version/ {print $2}'):"
	local run_model="$B/planner.test -test.run ^TestBenchPlanModel\$ -test.count=1 -benchplan.n=$n"
	mkdir -p "$d/dp20"
	: >"$d/inproc.txt"
	if ! have planner.test; then
		fail_row plan "optimiser vs CBC" "planner test binary did not build"
	elif ! "$B/planner.test" -test.run '^TestBenchPlanModel$' -test.count=1 -benchplan.out="$d" -benchplan.n="$n" -benchplan.reps=20 >"$T/plan-model.log" 2>&1; then
		fail_row plan "optimiser vs CBC" "TestBenchPlanModel failed (log $T/plan-model.log)"
	elif ! cbc "$d/model.lp" solve solu "$d/cbc.sol" >"$T/plan-cbc.log" 2>&1 || [ "$(head -1 "$d/cbc.sol" | awk '{print $1}')" != Optimal ]; then
		fail_row plan "optimiser vs CBC" "CBC found no optimum: $(head -1 "$d/cbc.sol" 2>/dev/null)"
	else
		local dp_obj cbc_obj dp_s
		dp_obj=$(awk '$1 == "objective" {print $2}' "$d/dp.txt")
		dp_s=$(awk '$1 == "seconds" {print $2}' "$d/dp.txt")
		cbc_obj=$(head -1 "$d/cbc.sol" | awk '{print $NF}') # "Optimal - objective value 12345.678"
		printf '  optimiser objective %.4f (%s drops), CBC %.4f\n' "$dp_obj" "$(awk '$1 == "drops" {print $2}' "$d/dp.txt")" "$cbc_obj"
		# Same optimum within 1e-6 relative: CBC prints 8 decimals and both
		# solve the same feasible set exactly (see planner.WriteLP).
		if awk -v a="$dp_obj" -v b="$cbc_obj" 'BEGIN { d = a - b; if (d < 0) d = -d; exit !(d <= 1e-6 * (b < 0 ? -b : b)) }'; then
			echo "  same optimum"
			echo "  in-process Optimize alone, fastest of 20: $(awk -v s="$dp_s" 'BEGIN {printf "%.3f", s * 1e3}') ms"
			# optimiser: the whole test process with one Optimize; optimiser-20:
			# 20 Optimize calls in one process, the fastest logged with its
			# round for the in-process row.
			if time_group plan-cbc \
				optimiser "$run_model -benchplan.out=$d/dp -benchplan.reps=1" \
				optimiser-20 "$run_model -benchplan.out=$d/dp20 -benchplan.reps=20 && echo {round} \$(awk '\$1 == \"seconds\" {print \$2}' $d/dp20/dp.txt) >> $d/inproc.txt" \
				cbc "cbc $d/model.lp solve solu $d/cbc-run.sol"; then
				rows logged "$T" plan-cbc plan "optimiser in-process vs CBC, single-grade MIP, $n stations" "@$d/inproc.txt" cbc "B/A>=200" \
					"A: fastest of 20 Optimize calls inside one process, per run; B: cbc process; same optimum checked" >>"$TABLE"
				pair_row plan plan-cbc optimiser cbc "optimiser process vs CBC process, same MIP" "" \
					"A: planner test binary (start, build the problem, write the LP, 1 Optimize)"
			else
				fail_row plan "optimiser vs CBC" "a command failed under hyperfine (log $T/plan-cbc.log)"
			fi
		else
			fail_row plan "optimiser vs CBC" "optimum MISMATCH: optimiser $dp_obj, CBC $cbc_obj"
		fi
	fi

	echo
	echo "canalstep plan on the demo scheme:"
	local demo="$BENCH_OUT/demo"
	rm -rf "$demo" # canalstep replaces only folders it wrote; an older build's are in the way
	if ! have canalstep gdal-load-only; then
		fail_row plan "demo plan vs load floor" "bin/canalstep or bin/gdal-load-only did not build"
	elif ! "$B/canalstep" demo --out "$demo" >"$T/plan-demo.log" 2>&1; then
		fail_row plan "demo plan vs load floor" "canalstep demo failed (log $T/plan-demo.log)"
	else
		local plan_cmd="$B/canalstep plan --dem $demo/inputs/dem.tif --alignment $demo/inputs/canals.geojson --design $demo/inputs/design.toml --out $demo/plan-bench"
		echo "  $(bash -c "$plan_cmd" 2>&1 | grep -c 'optimised:') alignments planned"
		if time_group plan-demo plan "$plan_cmd" gdal-load-only "$B/gdal-load-only"; then
			pair_row plan plan-demo plan gdal-load-only "demo plan (5 alignments, every deliverable) vs libgdal load floor" "A_ms<=350"
		else
			fail_row plan "demo plan vs load floor" "a command failed under hyperfine (log $T/plan-demo.log)"
		fi
	fi
	return "$case_rc"
}

# bench_batch: canalstep batch on BENCH_BATCH_ALIGNMENTS alignments of 2-5
# km on the bench DEM × 3 drop-height alternatives, with 1 and 2 workers
# alternated: jobs per second, the speed-up, peak RSS of each, and whether
# both wrote the same files. Command line:
#   canalstep batch --workers N --out DIR JOB.toml
bench_batch() {
	if ! have canalstep || ! "$B/canalstep" batch --help >/dev/null 2>&1; then
		fail_row batch "workers 1 vs 2" "bin/canalstep did not build or has no batch command"
		return 1
	fi
	local d="$BENCH_OUT/batch" job=${BENCH_BATCH_JOB:-}
	mkdir -p "$d"
	if [ -z "$job" ]; then
		[ -s "$BENCH_OUT/batch.geojson" ] || { fail_row batch inputs "$BENCH_OUT/batch.geojson is missing"; return 1; }
		job="$d/job.toml"
		# The demo's design values (illustrative; see cmd/canalstep's demo).
		cat >"$d/design.toml" <<-EOF
			flow = 2.5
			bottom_width = 2.0
			side_slope = 1.5
			roughness = 0.025
			max_velocity = 0.9
			min_velocity = 0.45
			spacing = 10
		EOF
		# The job file format of canalstep batch (see testdata/batch/job.toml);
		# the design file's keys are plan's flags with _ for -.
		cat >"$job" <<-EOF
			dem = "$BENCH_OUT/dem.tif"
			alignment = "$BENCH_OUT/batch.geojson"
			design = "$d/design.toml"
			alternatives = "0.5;1.0;0.5,1.0"
		EOF
	fi
	local w rc
	for w in 1 2; do
		rm -rf "$d/out-w$w"
		rc=0
		"$B/canalstep" batch --workers "$w" --out "$d/out-w$w" "$job" >"$T/batch-w$w.log" 2>&1 || rc=$?
		if [ ! -s "$d/out-w$w/index.csv" ]; then
			fail_row batch "workers $w" "canalstep batch exited $rc and wrote no index.csv (log $T/batch-w$w.log)"
			return 1
		fi
	done
	local jobs failed same=identical
	jobs=$(($(wc -l <"$d/out-w1/index.csv") - 1))
	failed=$("$PY" -c 'import csv, sys; print(sum(r["status"] == "failed" for r in csv.DictReader(open(sys.argv[1]))))' "$d/out-w1/index.csv")
	diff -rq -x run.log "$d/out-w1" "$d/out-w2" >"$T/batch-diff.txt" 2>&1 || same="DIFFERENT (see $T/batch-diff.txt)"
	echo "  $jobs jobs ($failed failed); outputs of 1 and 2 workers: $same"
	if [ "$failed" != 0 ]; then
		fail_row batch "jobs" "$failed of $jobs jobs failed (reasons in $d/out-w1/index.csv): the timings are not of $jobs planned jobs"
	fi
	[ "$same" = identical ] || fail_row batch "workers 1 vs 2 outputs" "differ (see $T/batch-diff.txt)"
	GROUP_ROUNDS=${BENCH_BATCH_ROUNDS:-3} GROUP_RUNS=1 GROUP_WARMUP=0 GROUP_IGNORE=1 \
		GROUP_PREPARE="rm -rf $d/out-w1 $d/out-w2" \
		time_group batch \
		w1 "$B/canalstep batch --workers 1 --out $d/out-w1 $job" \
		w2 "$B/canalstep batch --workers 2 --out $d/out-w2 $job" || {
		fail_row batch "workers 1 vs 2" "hyperfine failed (log $T/batch.log)"
		return 1
	}
	local t1 t2
	t1=$(rows median "$T" batch w1)
	t2=$(rows median "$T" batch w2)
	pair_row batch batch w1 w2 "batch, 1 worker vs 2 workers" "A/B>=1.8;A_rss<=300;B_rss<=300" \
		"$jobs jobs; $(awk -v n="$jobs" -v a="$t1" -v b="$t2" 'BEGIN {printf "%.1f jobs/s with 1 worker, %.1f with 2", n / a, n / b}')"
	return "$case_rc"
}

# ------------------------------------------------------------------- main

bench_main() {
	local cases=("$@") c rc status=0 need_data=0
	if [ "${#cases[@]}" -eq 0 ]; then cases=("${bench_cases[@]}"); fi
	for c in "${cases[@]}"; do
		if ! declare -F "bench_$c" >/dev/null; then
			echo "bench: unknown case '$c' (cases: ${bench_cases[*]})" >&2
			exit 2
		fi
		case "$c" in profile | batch) need_data=1 ;; esac
	done
	mkdir -p "$T"
	: >"$TABLE"
	load0=$(cut -d' ' -f1-3 /proc/loadavg)
	local results=()
	bench_build || status=1
	if [ "$need_data" = 1 ] && ! bench_data; then
		add_row data "scripts/benchdata.go" "FAILED: inputs not generated"
		status=1
	fi
	for c in "${cases[@]}"; do
		echo
		echo "=== $c"
		(
			set -euo pipefail
			case_rc=0
			"bench_$c"
		)
		rc=$?
		case "$rc" in
		0) results+=("$c: ran") ;;
		77) results+=("$c: skipped") ;;
		*)
			results+=("$c: FAILED (exit $rc)")
			status=1
			;;
		esac
	done

	echo
	echo "=== canalstep bench: $(date -u +%Y-%m-%d) on $(nproc) cores, $(awk '/^MemTotal/ {printf "%.0f GB", $2 / 1048576}' /proc/meminfo); BENCH_OUT=$BENCH_OUT"
	echo "    load average (1, 5, 15 min) at the start: $load0; at the end: $(cut -d' ' -f1-3 /proc/loadavg) (other work on the machine lowers speed-ups)"
	echo "    A/B: median over rounds of A's median over B's median in that round; rounds: lowest-highest round; ms: median wall time; MB: peak RSS"
	echo
	rows table "$TABLE"
	echo
	echo "cases: ${results[*]}"
	if [ "$status" -ne 0 ]; then
		echo "bench: some cases or builds FAILED (see the rows marked FAILED above)" >&2
	fi
	return "$status"
}

bench_main "$@"

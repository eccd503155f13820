#!/usr/bin/env bash
# bench.sh measures canalstep's speed and memory side by side with reference
# tools, in one run on this machine, and prints ratios (never pass/fail).
#
#   scripts/bench.sh            all parts
#   scripts/bench.sh profile    DEM sampling along an alignment only
#   scripts/bench.sh plan       the optimiser alone and against CBC
#
# Inputs are generated once into bench-out/ (BENCH_OUT overrides): a
# 20000×20000 Float32 DEM (10 m cells, DEFLATE, 256² tiles, about 1.3 GB)
# and a 40 km alignment. Each part is a function bench_<part>; add parts
# below and list them in bench_parts.
set -euo pipefail
cd "$(dirname "$0")/.."
# shellcheck source=scripts/setup.sh
source scripts/setup.sh
canalstep_setup coinor-cbc python3-rasterio hyperfine time

BENCH_OUT=${BENCH_OUT:-bench-out}
BENCH_RUNS=${BENCH_RUNS:-10}
PY=/usr/bin/python3 # python3-rasterio is installed for the system Python

bench_parts=(profile plan)

bench_build() {
	mkdir -p bin
	go build -o bin/canalstep ./cmd/canalstep
	go build -o bin/benchsample scripts/benchsample.go
	# The floor for any program linked with GDAL: loading libgdal and its
	# hundred-odd shared libraries, doing nothing else.
	printf 'int main(void) { return 0; }\n' | gcc -x c - -o bin/gdal-load-only -Wl,--no-as-needed -lgdal
}

bench_data() {
	go run scripts/benchdata.go -out "$BENCH_OUT"
}

# peak_rss_mb CMD... prints the peak resident set size of CMD in MB.
peak_rss_mb() {
	/usr/bin/time -v "$@" 2>&1 >/dev/null | awk -F: '/Maximum resident set size/ { printf "%.1f", $2 / 1024 }'
}

# bench_profile: ground profile along the 40 km alignment at 1 m spacing
# (40,049 points: every metre plus the vertices), bilinear.
#   canalstep    bin/canalstep profile (CSV + PNG outputs included)
#   terrain      package terrain alone: read points, Open, Sample (bilinear)
#   gdallocinfo  gdallocationinfo -valonly -geoloc, points on stdin (nearest)
#   python       rasterio + numpy, touched blocks only, bilinear
#   gdal-load-only  an empty C program linked with libgdal (the floor)
bench_profile() {
	local dem="$BENCH_OUT/dem.tif" route="$BENCH_OUT/route.geojson" pts="$BENCH_OUT/points.txt"
	local prof_out="$BENCH_OUT/profile-out"
	local have_profile=0
	if bin/canalstep profile --help >/dev/null 2>&1; then have_profile=1; fi

	echo "== profile: $(wc -l <"$pts") points on a $(gdalinfo "$dem" | awk '/^Size is/ {sub(",", "", $3); print $3 "×" $4}') DEM"
	# Same numbers from both bilinear implementations first.
	bin/benchsample -o "$BENCH_OUT/z_terrain.txt" "$dem" "$pts"
	"$PY" scripts/bench_rasterio.py -o "$BENCH_OUT/z_python.txt" "$dem" "$pts"
	"$PY" -c 'import numpy as np, sys
a, b = np.loadtxt(sys.argv[1]), np.loadtxt(sys.argv[2])
print("terrain vs python: max |diff| %.6f m over %d points" % (np.nanmax(np.abs(a - b)), len(a)))' \
		"$BENCH_OUT/z_terrain.txt" "$BENCH_OUT/z_python.txt"

	if [ "$have_profile" = 1 ]; then
		bin/canalstep profile --dem "$dem" --alignment "$route" --spacing 1 --out "$prof_out" >/dev/null
		"$PY" -c 'import csv, sys, numpy as np
rows = list(csv.DictReader(open(sys.argv[1])))
g = np.array([float(r["ground"]) for r in rows])
p = np.loadtxt(sys.argv[2])
if len(g) != len(p):
    print("canalstep: %d stations, python %d points: not compared" % (len(g), len(p)))
else:
    print("canalstep ground.csv vs python: max |diff| %.4f m over %d stations (csv has 3 decimals)" % (np.nanmax(np.abs(g - p)), len(g)))' \
			"$(ls "$prof_out"/*/ground.csv | head -1)" "$BENCH_OUT/z_python.txt"
	fi

	local cmds=(
		-n terrain "bin/benchsample $dem $pts"
		-n gdallocinfo "gdallocationinfo -valonly -geoloc $dem < $pts > /dev/null"
		-n python "$PY scripts/bench_rasterio.py $dem $pts"
		-n gdal-load-only "bin/gdal-load-only"
	)
	if [ "$have_profile" = 1 ]; then
		cmds=(-n canalstep "bin/canalstep profile --dem $dem --alignment $route --spacing 1 --out $prof_out" "${cmds[@]}")
	else
		echo "(bin/canalstep has no profile command yet: timing the terrain package alone)"
	fi
	hyperfine --style basic --warmup 2 --runs "$BENCH_RUNS" --export-json "$BENCH_OUT/profile-times.json" "${cmds[@]}"

	echo
	echo "== profile: wall time (mean of $BENCH_RUNS runs, warm file cache)"
	"$PY" - "$BENCH_OUT/profile-times.json" <<'PYEOF'
import json, sys
res = {r["command"]: r for r in json.load(open(sys.argv[1]))["results"]}
g, p = res["gdallocinfo"]["mean"], res["python"]["mean"]
cpu = lambda r: r["user"] + r["system"]
gc, pc = cpu(res["gdallocinfo"]), cpu(res["python"])
gm, pm = res["gdallocinfo"]["min"], res["python"]["min"]
print("  %-12s %18s %9s %8s   %7s %9s %8s   %7s %9s %8s" % ("", "wall ms ± sd", "×gdalloc", "×python",
      "min ms", "×gdalloc", "×python", "CPU ms", "×gdalloc", "×python"))
for name in ("canalstep", "terrain", "gdallocinfo", "python", "gdal-load-only"):
    if name in res:
        r = res[name]
        print("  %-12s %10.1f ± %5.1f %9.2f %8.3f   %7.1f %9.2f %8.3f   %7.0f %9.2f %8.3f"
              % (name, r["mean"] * 1e3, r["stddev"] * 1e3, r["mean"] / g, r["mean"] / p,
                 r["min"] * 1e3, r["min"] / gm, r["min"] / pm,
                 cpu(r) * 1e3, cpu(r) / gc, cpu(r) / pc))
print("  min = fastest run (least disturbed by other load); CPU = mean user + system time. goals: canalstep wall ≤ 0.5× gdallocationinfo (while bilinear), ≤ 0.2× python")
PYEOF

	echo "== profile: peak RSS (/usr/bin/time -v; goal < 100 MB)"
	printf '  %-12s %6s MB\n' terrain "$(peak_rss_mb bin/benchsample "$dem" "$pts")"
	if [ "$have_profile" = 1 ]; then
		printf '  %-12s %6s MB\n' canalstep "$(peak_rss_mb bin/canalstep profile --dem "$dem" --alignment "$route" --spacing 1 --out "$prof_out")"
	fi
	printf '  %-12s %6s MB\n' gdallocinfo "$(peak_rss_mb sh -c "gdallocationinfo -valonly -geoloc $dem < $pts")"
	printf '  %-12s %6s MB\n' python "$(peak_rss_mb "$PY" scripts/bench_rasterio.py "$dem" "$pts")"

	echo
	echo "== profile: Go benchmarks of package terrain"
	echo "  BenchRoute: this DEM and these points, Open+Sample+Close per op (blocks decoded each time);"
	echo "  SampleLine/SampleRandom: a 2048² test DEM, blocks already cached"
	CANALSTEP_BENCH_DIR="$PWD/$BENCH_OUT" go test -run '^$' -bench 'BenchRoute|SampleLine|SampleRandom' -benchtime 20x ./terrain |
		grep -E '^Benchmark' | sed 's/^/  /'

	echo
	echo "== profile: blocks decoded"
	bin/benchsample "$dem" "$pts" 2>&1 | sed 's/^/  /'
	if [ "$have_profile" = 1 ]; then
		bin/canalstep profile --dem "$dem" --alignment "$route" --spacing 1 --out "$prof_out" 2>&1 | grep -i block | sed 's/^/  canalstep: /' || true
	fi
}

# bench_plan: the drop-placement optimiser.
#   go benchmarks   Optimize on 10 km and 100 km of seeded ground (10 m
#                   stations, 3 heights, 5 grades, 1 cm step), one core;
#                   the 100 km / 10 km ratio shows the growth with length
#   CBC             scripts/bench-plan.sh: the same single-grade MIP at 400
#                   stations solved by CBC and by the optimiser, same optimum
bench_plan() {
	echo
	echo "== plan: Optimize on one core (go test -bench)"
	go test ./planner -run '^$' -bench '^BenchmarkOptimize(10|100)km$' -benchmem -count 3 -cpu 1 | tee "$BENCH_OUT/plan-bench.txt" | grep '^Benchmark'
	awk '/^BenchmarkOptimize10km/ {a += $3; na++} /^BenchmarkOptimize100km/ {b += $3; nb++}
		END { if (na && nb) printf "  100 km / 10 km time ratio: %.1f (10 = linear)\n", (b / nb) / (a / na) }' "$BENCH_OUT/plan-bench.txt"
	echo
	echo "== plan: against CBC"
	BENCH_OUT="$BENCH_OUT" bash scripts/bench-plan.sh
}

bench_main() {
	local parts=("$@")
	if [ "${#parts[@]}" -eq 0 ]; then parts=("${bench_parts[@]}"); fi
	bench_build
	bench_data
	local p
	for p in "${parts[@]}"; do
		"bench_$p"
	done
}

bench_main "$@"

#!/usr/bin/env bash
# demo.sh installs what is missing, builds canalstep and runs the fictional
# demo scheme end to end. Outputs go to ./canalstep-out (or the folder given
# as the first argument).
set -euo pipefail
cd "$(dirname "$0")/.."
. scripts/setup.sh
canalstep_setup
out="${1:-canalstep-out}"
echo "== building canalstep"
mkdir -p bin
go build -o bin/canalstep ./cmd/canalstep
echo "== running the demo scheme into $out"
bin/canalstep demo --out "$out"

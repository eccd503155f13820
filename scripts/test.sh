#!/usr/bin/env bash
# test.sh installs what is missing, then runs go vet and every test with the race detector.
# Usage: scripts/test.sh [extra go test flags]
set -euo pipefail
cd "$(dirname "$0")/.."
. scripts/setup.sh
canalstep_setup chromium poppler-utils
echo "== go vet ./..."
go vet ./...
echo "== go test -race ./..."
go test -race -count=1 "$@" ./...

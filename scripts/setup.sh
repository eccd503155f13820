#!/usr/bin/env bash
# setup.sh installs the system packages canalstep needs when they are missing.
# Sourced by demo.sh, test.sh and bench.sh. Idempotent; needs root (or sudo) only
# when something is actually missing. Extra packages can be passed as arguments.
set -euo pipefail

canalstep_need_pkgs() {
	local missing=() p
	for p in "$@"; do
		if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed'; then
			missing+=("$p")
		fi
	done
	if [ "${#missing[@]}" -eq 0 ]; then
		return 0
	fi
	echo "setup: installing ${missing[*]}" >&2
	local sudo=""
	if [ "$(id -u)" -ne 0 ]; then sudo="sudo"; fi
	$sudo apt-get update -qq
	DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
}

canalstep_base_pkgs=(libgdal-dev gdal-bin proj-bin glpk-utils libxml2-utils pkg-config g++)

canalstep_setup() {
	canalstep_need_pkgs "${canalstep_base_pkgs[@]}" "$@"
	if ! command -v go >/dev/null 2>&1; then
		if [ -x /usr/local/go/bin/go ]; then
			export PATH="/usr/local/go/bin:$PATH"
		else
			echo "setup: Go is not installed; install Go 1.22 or newer and retry" >&2
			return 1
		fi
	fi
}

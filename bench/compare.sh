#!/usr/bin/env bash
# Side-by-side comparison of bandedge's fit.Fit with SciPy's
# scipy.optimize.least_squares on the same synthetic spectra (see
# bench/README.md). Installs Debian's python3-scipy and python3-numpy with
# apt-get when no Python 3 on this machine has them. Extra arguments go to
# the Go program, e.g.  bench/compare.sh -n 100 -window auto
set -euo pipefail
cd "$(dirname "$0")/.."

has_scipy() { "$1" -c 'import numpy, scipy.optimize, scipy.special' >/dev/null 2>&1; }

# Prefer Debian's interpreter: a pyenv python3 earlier on PATH usually lacks
# SciPy, and PyPI is not reachable here.
python=""
for c in /usr/bin/python3 python3; do
	if command -v "$c" >/dev/null 2>&1 && has_scipy "$c"; then
		python=$(command -v "$c")
		break
	fi
done
if [ -z "$python" ]; then
	if ! command -v apt-get >/dev/null 2>&1; then
		echo "compare.sh: no Python 3 with NumPy and SciPy, and no apt-get to install them" >&2
		exit 1
	fi
	echo "compare.sh: installing Debian's python3-numpy and python3-scipy" >&2
	sudo=""
	if [ "$(id -u)" -ne 0 ]; then sudo=sudo; fi
	$sudo apt-get update -qq
	$sudo apt-get install -y -qq python3-numpy python3-scipy >/dev/null
	python=/usr/bin/python3
	if ! has_scipy "$python"; then
		echo "compare.sh: $python still cannot import SciPy" >&2
		exit 1
	fi
fi
exec go run ./bench/scipycmp -python "$python" "$@"

#!/bin/sh
# Speed and accuracy of our truth run against SciPy's DOP853 on the same initial conditions, measured in one
# go: wayward_bench --export-truth writes the default scenario's initial state, GMs and its own timed runs,
# then scipy_truth.py integrates the same state and prints both times, their ratio and both accuracies.
# Usage: sim/bench/compare_scipy.sh [--build DIR] [scipy_truth.py options, e.g. --repeats 3 --atol 1e-15]
# Environment: REPEATS (timed runs of ours, default 5); OURS (options of our run, e.g. "--method=bulirsch-stoer --rel-tol=1e-14").
set -eu
here=$(cd "$(dirname "$0")" && pwd)
build="$here/../../build/bench"
if [ "${1:-}" = "--build" ]; then
    build=$2
    shift 2
fi
bin="$build/sim/bench/wayward_bench"
python=/usr/bin/python3
if [ ! -x "$bin" ]; then
    echo "compare_scipy.sh: no $bin; build it first: cmake --preset bench && cmake --build --preset bench" >&2
    exit 1
fi
if ! "$python" -c "import scipy" 2>/dev/null; then
    echo "compare_scipy.sh: $python cannot import scipy; install it with: apt-get install python3-scipy" >&2
    exit 1
fi
truth=$(mktemp "${TMPDIR:-/tmp}/wayward_truth.XXXXXX")
trap 'rm -f "$truth"' EXIT
"$bin" --export-truth="$truth" --repeats="${REPEATS:-5}" ${OURS:-}
"$python" "$here/scipy_truth.py" "$truth" "$@"

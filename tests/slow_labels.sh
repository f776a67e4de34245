#!/usr/bin/env bash
# Every doctest case in the "slow" suite must carry CTest's "slow" label, or the sanitizer run (ctest -LE slow)
# would run it too. The label comes from asking doctest which suite a case belongs to, by its name, and doctest reads
# a comma in that name as two filters: such a case silently loses its label. This compares the two lists.
# Usage: slow_labels.sh TESTS_BINARY BUILD_DIR
set -euo pipefail
cases=$("$1" -ts=slow -ltc --no-version 2>/dev/null | grep -v '^\[doctest\]' | grep -v '^=*$' | sort)
labelled=$(ctest --test-dir "$2" -N -L slow | sed -n 's/^ *Test *#[0-9]*: //p' | sort)
if [ "$cases" != "$labelled" ]; then
  echo "slow_labels: these slow cases lack the ctest label (no commas in their names, please):" >&2
  comm -23 <(echo "$cases") <(echo "$labelled") >&2
  exit 1
fi
echo "slow_labels: $(echo "$cases" | wc -l) slow cases, all labelled"

#!/usr/bin/env bash
# Runs every reader's libFuzzer harness for SECONDS each (default 10) from its seed corpus in tests/fuzz/corpus/NAME/.
# Usage: tests/fuzz/run.sh BUILD_DIR [SECONDS]. New inputs go to a scratch corpus, never into the repository; a finding
# leaves its crash-* / timeout-* / oom-* file in BUILD_DIR/fuzz-findings/ and makes the script fail.
set -euo pipefail
build=$1
seconds=${2:-10}
src=$(cd "$(dirname "$0")" && pwd)
findings="$build/fuzz-findings"
scratch=$(mktemp -d)
trap 'rm -rf "$scratch"' EXIT
mkdir -p "$findings"
status=0
for reader in scenario campaign_spec brief answer_key solution observations observer cases telescope plan record sky_map; do
  mkdir -p "$scratch/$reader"
  echo "wayward fuzz: $reader for ${seconds}s" >&2
  # -timeout: one input taking over 10 s is a hang; -rss_limit_mb: runaway memory is a finding too.
  if ! ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1 \
       "$build/tests/fuzz/fuzz_$reader" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=16384 \
       -artifact_prefix="$findings/$reader-" -print_final_stats=0 "$scratch/$reader" "$src/corpus/$reader" \
       >"$scratch/$reader.log" 2>&1; then
    echo "wayward fuzz: $reader FOUND A PROBLEM (input in $findings):" >&2
    grep -E "ERROR|SUMMARY|threw|Test unit written" "$scratch/$reader.log" | head -20 >&2
    status=1
  else
    grep -E "^#[0-9]+.*DONE" "$scratch/$reader.log" | tail -1 | sed "s/^/wayward fuzz:   /" >&2 || true
  fi
done
exit $status

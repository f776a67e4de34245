#!/usr/bin/env bash
# Campaign runs through the CLI: the same tiny campaign with 1 and 2 threads and as 3 shards merged gives the same
# rows; a run stopped by SIGINT, or killed by SIGKILL (and left with a torn last row), resumes to exactly the rows
# of an uninterrupted run; a folder holding another campaign or shard is refused; merge refuses shards of
# different campaigns and names missing and doubled cases. The tiny campaign rehearses a 4-night search per case,
# so its search columns (found, night, hours) are held to the same checks. Rows are compared without their last
# column (unit_seconds, a wall time).
# Usage: campaign_runs.sh WAYWARD SOURCE_DIR
set -euo pipefail
W=$1
SRC=$2
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
rows() { cut -d, -f1-29 "$1/cases.csv"; }
lines_in() { if [ -f "$1" ]; then wc -l < "$1"; else echo 0; fi; }
# Waits until FILE has at least N lines (at most 300 s).
wait_lines() {
    local file=$1 n=$2 k=0
    while [ "$(lines_in "$file")" -lt "$n" ]; do
        sleep 0.2
        k=$((k + 1))
        [ $k -lt 1500 ] || fail "timed out waiting for $n lines in $file"
    done
}

# 2 seeds x 2 settings x 2 epochs of quick.toml, with a small grid: 8 cases, 4 solves.
spec() {
    cat > "$T/$1" <<EOF
[campaign]
name = "tiny"
seed = $2
seeds = 2

[[scenario]]
file = "$SRC/scenarios/quick.toml"

[epochs]
offsets_years = [0, 10]

[[settings]]
name = "free"
ecc_sigma = 0.03
tilt_sigma_deg = 2.0
samples = 50
starts = 2
grid_distances = 6
grid_longitudes = 12

[[settings]]
name = "coplanar"
coplanar = true
samples = 50
starts = 2
grid_distances = 6
grid_longitudes = 12
${3:-}
EOF
}
spec tiny.toml 7 $'[search]\nnights = 4'
spec other.toml 8

echo "== 1 thread, 2 threads, 3 shards merged"
"$W" campaign "$T/tiny.toml" --out "$T/one" --threads 1 --quiet > "$T/one.txt"
"$W" campaign "$T/tiny.toml" --out "$T/two" --threads 2 --quiet > /dev/null
[ "$(rows "$T/one" | wc -l)" -eq 9 ] || fail "expected a header and 8 rows"
rows "$T/one" | tail -n +2 | cut -d, -f1 | sort -n | uniq -d | grep -q . && fail "doubled case in the 1-thread run"
grep -q "8 cases" "$T/one.txt" || fail "the summary does not count 8 cases"
for f in summary.txt success_vs_epoch.png separations.png luck_fraction.png closest_agreement.png manifest.toml; do
    [ -s "$T/one/$f" ] || fail "missing $f"
done
diff <(rows "$T/one") <(rows "$T/two") || fail "1 and 2 threads differ"
# The search columns: found 0 or 1 on every row, a night in 1..4 exactly when found, hours in [0, 4 nights].
awk -F, 'NR > 1 && !(($26 == "0" && $27 == "") || ($26 == "1" && $27 >= 1 && $27 <= 4)) { bad = 1 }
         NR > 1 && ($28 == "" || $28 < 0 || $28 > 96) { bad = 1 } END { exit bad }' "$T/one/cases.csv" ||
    fail "search columns out of range: $(cut -d, -f26-28 "$T/one/cases.csv")"
grep -q "^Search rehearsal: the body confirmed" "$T/one/summary.txt" || fail "the summary has no search table"
for k in 1 2 3; do "$W" campaign "$T/tiny.toml" --out "$T/s$k" --shard "$k/3" --threads 2 --quiet > /dev/null; done
[ "$(rows "$T/s3" | wc -l)" -eq 3 ] || fail "shard 3/3 should hold unit 2 only (2 cases)"
"$W" merge "$T/s1" "$T/s2" "$T/s3" --out "$T/merged" > "$T/merge.txt"
grep -q "all 8 cases, each once" "$T/merge.txt" || fail "merge did not confirm 8 cases"
diff <(rows "$T/one") <(rows "$T/merged") || fail "3 shards merged differ from one run"
diff <(cut -d, -f1-29 "$T/s2/cases.csv" | tail -n +2) <(rows "$T/one" | awk -F, 'NR > 1 && int($1 / 2) % 3 == 1') ||
    fail "shard 2/3 does not hold the units u with u % 3 == 1"
# Rerunning a finished campaign redoes nothing and keeps the rows.
"$W" campaign "$T/tiny.toml" --out "$T/one" --threads 2 > "$T/again.txt" 2>&1
grep -q "8 already finished; 0 solves" "$T/again.txt" || fail "a finished campaign was not recognised"
diff <(rows "$T/one") <(rows "$T/two") || fail "the rerun changed the rows"

echo "== SIGINT: stop, keep finished rows, resume"
"$W" campaign "$T/tiny.toml" --out "$T/int" --threads 1 --quiet > /dev/null 2> "$T/int.err" &
pid=$!
wait_lines "$T/int/cases.csv" 3
kill -INT $pid
rc=0
wait $pid || rc=$?
[ $rc -eq 130 ] || fail "SIGINT should exit 130, got $rc"
grep -q "run the same command again" "$T/int.err" || fail "no resume hint after SIGINT"
n=$(($(lines_in "$T/int/cases.csv") - 1))
[ $n -ge 2 ] && [ $n -lt 8 ] || fail "expected some but not all rows after SIGINT, got $n"
"$W" campaign "$T/tiny.toml" --out "$T/int" --threads 2 --quiet > /dev/null
diff <(rows "$T/one") <(rows "$T/int") || fail "resumed after SIGINT differs"

echo "== SIGKILL with a torn last row: resume"
"$W" campaign "$T/tiny.toml" --out "$T/kill" --threads 1 --quiet > /dev/null 2>&1 &
pid=$!
wait_lines "$T/kill/cases.csv" 3
kill -KILL $pid
wait $pid 2> /dev/null || true
n=$(($(lines_in "$T/kill/cases.csv") - 1))
[ $n -ge 2 ] && [ $n -lt 8 ] || fail "expected some but not all rows after SIGKILL, got $n"
# What a kill in the middle of a write would leave: part of a row, no newline.
printf '6,quick,14528481520' >> "$T/kill/cases.csv"
"$W" campaign "$T/tiny.toml" --out "$T/kill" --threads 2 > "$T/kill.txt" 2>&1
grep -q "Cut off a torn last row" "$T/kill.txt" || fail "the torn row was not reported"
grep -q "$n already finished" "$T/kill.txt" || fail "the finished rows were not kept"
diff <(rows "$T/one") <(rows "$T/kill") || fail "resumed after SIGKILL differs"

echo "== another campaign or shard in the same folder is refused"
rc=0
"$W" campaign "$T/other.toml" --out "$T/one" --quiet > "$T/ref.txt" 2>&1 || rc=$?
[ $rc -eq 2 ] || fail "another campaign in the folder should exit 2, got $rc"
grep -q "holds another campaign" "$T/ref.txt" || fail "unclear refusal: $(cat "$T/ref.txt")"
rc=0
"$W" campaign "$T/tiny.toml" --out "$T/s1" --shard 2/3 --quiet > "$T/ref.txt" 2>&1 || rc=$?
[ $rc -eq 2 ] && grep -q "holds shard 1/3" "$T/ref.txt" || fail "another shard in the folder was not refused: $(cat "$T/ref.txt")"

echo "== merge refuses missing, doubled, and foreign shards"
rc=0
"$W" merge "$T/s1" "$T/s2" --out "$T/m2" > "$T/m.txt" 2>&1 || rc=$?
[ $rc -eq 2 ] || fail "a missing shard should exit 2"
grep -q "2 of 8 cases are missing (cases 4 5; from shard(s) 3/3" "$T/m.txt" || fail "missing cases not named: $(cat "$T/m.txt")"
[ ! -e "$T/m2/cases.csv" ] || fail "a refused merge wrote a table"
rc=0
"$W" merge "$T/s1" "$T/s2" "$T/s3" "$T/s2" --out "$T/m3" > "$T/m.txt" 2>&1 || rc=$?
[ $rc -eq 2 ] && grep -q "2 case(s) are doubled (case 2 in" "$T/m.txt" || fail "doubled cases not named: $(cat "$T/m.txt")"
"$W" campaign "$T/other.toml" --out "$T/x3" --shard 3/3 --quiet > /dev/null
rc=0
"$W" merge "$T/s1" "$T/s2" "$T/x3" --out "$T/m4" > "$T/m.txt" 2>&1 || rc=$?
[ $rc -eq 2 ] && grep -q "shards of different campaigns cannot be merged" "$T/m.txt" || fail "foreign shard not refused: $(cat "$T/m.txt")"
echo "== a system that cannot be drawn gives failed rows, not a crash"
sed 's/^\[star\]/[scenario.plausibility]\nmin_hill_separation = 1000.0\nmax_draws = 1\n\n[star]/' "$SRC/scenarios/quick.toml" > "$T/impossible.toml"
cat > "$T/fails.toml" <<EOF
[campaign]
name = "fails"
seed = 1
seeds = 2
[[scenario]]
file = "impossible.toml"
[epochs]
years = [1990]
[[settings]]
name = "free"
samples = 50
EOF
"$W" campaign "$T/fails.toml" --out "$T/fails" --quiet > "$T/fails.txt"
grep -q "2 cases: .*; 2 failed" "$T/fails.txt" || fail "failed cases not counted: $(cat "$T/fails.txt")"
[ "$(grep -c ',failed,.*could not make the exercise' "$T/fails/cases.csv")" -eq 2 ] || fail "failed rows lack their status or note"
echo "campaign runs: all checks passed"

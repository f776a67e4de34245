#!/usr/bin/env bash
# The separation the viewer shows after the reveal equals `wayward score`'s for the same prediction: the
# trainee's own (--prediction in the viewer, --lon --lat --epoch for the CLI; one far off, one near the truth)
# and the solver's (solution.toml). The viewer prints each score in screenshot mode as
# "wayward-view: score WHO separation_arcmin=S hit=H epoch=Y"; the CLI prints "Separation: S arcmin; ... HIT|MISS"
# with three decimals, so the two must agree to within half of the CLI's last digit.
# Usage: viewer_score.sh WAYWARD_VIEW WAYWARD_CLI SOURCE_DIR   (needs an X display: run under xvfb-run)
set -uo pipefail
view=$1
cli=$2
src=$3
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
failures=0
fail() { echo "FAIL: $*" >&2; failures=$((failures + 1)); }

# viewer_line DIR WHO ARGS...: the viewer's score line for WHO (trainee|solution).
viewer_line() {
  local dir=$1 who=$2
  shift 2
  "$view" "$dir" --panel score --reveal --frames 1 --size 800x500 --screenshot "$tmp/shot.png" "$@" >"$tmp/view.out" 2>"$tmp/view.err"
  local rc=$?
  [ "$rc" -eq 0 ] || { fail "viewer exit $rc for $dir $*"; sed 's/^/  /' "$tmp/view.err" >&2; return 1; }
  grep "^wayward-view: score $who " "$tmp/view.out"
}

# compare LABEL VIEWER_LINE CLI_OUTPUT: separations within 0.0005 arcmin, same hit or miss.
compare() {
  local label=$1 vline=$2 cout=$3
  local vsep vhit csep chit
  vsep=$(sed -n 's/.*separation_arcmin=\([0-9.]*\).*/\1/p' <<<"$vline")
  vhit=$(sed -n 's/.*hit=\([01]\).*/\1/p' <<<"$vline")
  csep=$(sed -n 's/^Separation: \([0-9.]*\) arcmin.*/\1/p' <<<"$cout")
  grep -q '^Separation: .*: HIT$' <<<"$cout" && chit=1 || chit=0
  if [ -z "$vsep" ] || [ -z "$csep" ]; then fail "$label: no separation (viewer '$vline', cli '$csep')"; return; fi
  if ! awk -v a="$vsep" -v b="$csep" 'BEGIN { d = a - b; if (d < 0) d = -d; exit !(d <= 0.0005) }'; then
    fail "$label: viewer $vsep arcmin, wayward score $csep arcmin"; return
  fi
  [ "$vhit" = "$chit" ] || { fail "$label: viewer hit=$vhit, wayward score hit=$chit"; return; }
  echo "ok: $label: viewer $vsep arcmin, wayward score $csep arcmin, hit=$vhit"
}

# The default exercise, a prediction of the trainee's own far from the truth.
"$cli" new "$src/scenarios/default.toml" --seed 1 --out "$tmp/default" >/dev/null || { echo "wayward new failed" >&2; exit 1; }
out=$("$cli" score "$tmp/default" --lon 100 --lat 1 --epoch 1960) || fail "wayward score failed"
line=$(viewer_line "$tmp/default" trainee --prediction 100,1,1960) && compare "default, far prediction" "$line" "$out"

# A prediction near the truth (0.4 degrees east of it, from wayward score's own report): a hit for both.
truth=$(sed -n 's/^True position of .* at [0-9.]*: λ = \([0-9.-]*\) deg, β = \([0-9.-]*\) deg$/\1 \2/p' <<<"$out")
read -r tlon tlat <<<"$truth"
if [ -z "${tlon:-}" ]; then
  fail "could not read the true position from wayward score"
else
  plon=$(awk -v l="$tlon" 'BEGIN { printf "%.6f", l + 0.4 }')
  out=$("$cli" score "$tmp/default" --lon "$plon" --lat "$tlat" --epoch 1960) || fail "wayward score failed"
  line=$(viewer_line "$tmp/default" trainee --prediction "$plon,$tlat,1960") && compare "default, near prediction" "$line" "$out"
  grep -q "hit=1" <<<"$line" || fail "the near prediction should be a hit: $line"
fi

# The quick exercise solved by `wayward solve`: the solver's prediction, and a trainee's at another epoch.
"$cli" new "$src/scenarios/quick.toml" --seed 1 --out "$tmp/quick" >/dev/null || { echo "wayward new failed" >&2; exit 1; }
"$cli" solve "$tmp/quick" --quiet >/dev/null || fail "wayward solve failed"
out=$("$cli" score "$tmp/quick") || fail "wayward score failed"
line=$(viewer_line "$tmp/quick" solution) && compare "quick, solver's prediction" "$line" "$out"
out=$("$cli" score "$tmp/quick" --lon 271.5 --lat -0.5 --epoch 1990.5) || fail "wayward score failed"
line=$(viewer_line "$tmp/quick" trainee --prediction 271.5,-0.5,1990.5) && compare "quick, own prediction at 1990.5" "$line" "$out"

if [ "$failures" -ne 0 ]; then echo "$failures check(s) failed" >&2; exit 1; fi
echo "all viewer score checks passed"

#!/usr/bin/env bash
# wayward-view's failure paths that need no screenshot: no X display, an unreachable display, and bad
# arguments each give exit status 2 and a clear message on stderr.
# Usage: viewer_errors.sh WAYWARD_VIEW SOURCE_DIR
set -uo pipefail
view=$1
src=$2
scenario="$src/scenarios/default.toml"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
failures=0

# expect STATUS PATTERN -- COMMAND...: runs COMMAND, checks its exit status and that stderr matches PATTERN.
expect() {
  local want=$1 pattern=$2
  shift 3
  "$@" >"$tmp/out" 2>"$tmp/err"
  local got=$?
  if [ "$got" -ne "$want" ]; then
    echo "FAIL: exit $got (want $want): $*" >&2; sed 's/^/  stderr: /' "$tmp/err" >&2; failures=$((failures + 1)); return
  fi
  if ! grep -q -- "$pattern" "$tmp/err"; then
    echo "FAIL: stderr lacks '$pattern': $*" >&2; sed 's/^/  stderr: /' "$tmp/err" >&2; failures=$((failures + 1)); return
  fi
  echo "ok: exit $got, '$pattern': $*"
}

# --version needs no display and prints the version on stdout.
if out=$(env -u DISPLAY "$view" --version) && [[ "$out" =~ ^wayward-view\ [0-9]+\.[0-9]+\.[0-9]+\ \(assets:\ .+\)$ ]]; then
  echo "ok: --version prints '$out'"
else
  echo "FAIL: wayward-view --version printed '$out'" >&2; failures=$((failures + 1))
fi
expect 2 "DISPLAY is not set" -- env -u DISPLAY "$view" "$scenario" --screenshot "$tmp/a.png"
expect 2 "DISPLAY is not set" -- env DISPLAY= "$view" "$scenario"
expect 2 "cannot open the X display ':4711'" -- env DISPLAY=:4711 "$view" "$scenario" --screenshot "$tmp/b.png"
[ -e "$tmp/a.png" ] && { echo "FAIL: a screenshot was written without a display" >&2; failures=$((failures + 1)); }
expect 2 "nonsense not in" -- "$view" "$scenario" --panel nonsense --screenshot "$tmp/c.png"
expect 2 "expected WxH" -- "$view" "$scenario" --size 12by34 --screenshot "$tmp/d.png"
expect 2 "frames requires --screenshot" -- "$view" "$scenario" --frames 3
expect 2 "Could not convert: --seed = many" -- "$view" "$scenario" --seed many
expect 2 "expected LON,LAT or LON,LAT,YEAR" -- "$view" "$scenario" --prediction 1,2,3,4 --screenshot "$tmp/e.png"
expect 2 '"north" is not a number' -- "$view" "$scenario" --prediction 10,north --screenshot "$tmp/f.png"
# The help names the prediction's form, not CLI11's "FLOAT x 2" (it takes two or three numbers).
help=$(env -u DISPLAY "$view" --help)
if grep -q -- "--prediction LON,LAT\[,YEAR\]" <<<"$help" && ! grep -q "FLOAT x 2" <<<"$help"; then
  echo "ok: --help shows --prediction LON,LAT[,YEAR]"
else
  echo "FAIL: --help: $(grep -- --prediction <<<"$help")" >&2; failures=$((failures + 1))
fi

if [ "$failures" -ne 0 ]; then echo "$failures check(s) failed" >&2; exit 1; fi
echo "all viewer error checks passed"

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
if out=$(env -u DISPLAY "$view" --version) && [[ "$out" =~ ^wayward-view\ [0-9]+\.[0-9]+\.[0-9]+$ ]]; then
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

if [ "$failures" -ne 0 ]; then echo "$failures check(s) failed" >&2; exit 1; fi
echo "all viewer error checks passed"

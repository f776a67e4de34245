#!/usr/bin/env bash
# At 1280x800 the sidebar of every panel fits its window or scrolls (nothing is cut off without a way to reach it):
# wayward-view's screenshot mode reports the sidebar's content height, window height and scroll range.
# Usage: viewer_sidebar.sh WAYWARD_VIEW WAYWARD_CLI SOURCE_DIR   (run under xvfb-run)
set -uo pipefail
view=$1
cli=$2
src=$3
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
failures=0
"$cli" new "$src/scenarios/quick.toml" --seed 2 --out "$tmp/ex" >/dev/null || exit 1
"$cli" solve "$tmp/ex" --quiet --starts 1 --samples 20 >/dev/null || exit 1
for input in "$src/scenarios/default.toml" "$tmp/ex"; do
  for panel in system sky residuals solve score; do
    line=$("$view" "$input" --panel "$panel" --size 1280x800 --frames 4 --screenshot "$tmp/shot.png" 2>/dev/null | grep 'sidebar content')
    read -r content window scroll < <(sed -n 's/.*content \([0-9]*\) px, window \([0-9]*\) px, scrolls \([0-9]*\) px.*/\1 \2 \3/p' <<<"$line")
    if [ -z "${content:-}" ]; then
      echo "FAIL: $panel on $input: no sidebar report" >&2; failures=$((failures + 1)); continue
    fi
    # What does not fit must be reachable by scrolling (a few pixels of padding either way).
    if [ "$content" -le "$window" ] || [ $((scroll + window + 16)) -ge "$content" ]; then
      echo "ok: $panel on $(basename "$input"): content $content px, window $window px, scrolls $scroll px"
    else
      echo "FAIL: $panel on $input: content $content px, window $window px, scrolls only $scroll px" >&2; failures=$((failures + 1))
    fi
  done
done
if [ "$failures" -ne 0 ]; then echo "$failures check(s) failed" >&2; exit 1; fi

#!/usr/bin/env bash
# Frame times of every viewer panel in trainee mode: a default exercise (made and solved here), a 20 000-star
# field, 1280x800, headless under the X server this runs on. Each panel is rendered RUNS times for FRAMES
# frames after the background work is done (wayward-view prints the median frame time after the first frame);
# the script prints each run's median and the median of the runs, with the load average (the frame time of
# the software renderer under Xvfb depends on what else runs on the machine). A measurement, not a test.
# Usage: viewer_frame_times.sh WAYWARD_VIEW WAYWARD_CLI SOURCE_DIR [RUNS] [FRAMES]   (run under xvfb-run)
set -uo pipefail
view=$1
cli=$2
src=$3
runs=${4:-3}
frames=${5:-120}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$cli" new "$src/scenarios/default.toml" --seed 1 --out "$tmp/ex" >/dev/null || exit 1
"$cli" solve "$tmp/ex" --quiet >/dev/null || exit 1
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg); $(nproc) cores"
for panel in system sky residuals solve score search; do
  medians=()
  for ((r = 0; r < runs; r++)); do
    line=$("$view" "$tmp/ex" --panel "$panel" --year 1960 --prediction 101.6,0.2 --reveal --stars 20000 \
             --frames "$frames" --screenshot "$tmp/shot.png" 2>/dev/null | grep ' frames, ')
    medians+=("$(sed -n 's/.*median \([0-9.]*\) ms per frame.*/\1/p' <<<"$line")")
  done
  middle=$(printf '%s\n' "${medians[@]}" | sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }')
  printf '%-10s median of %d runs: %6.2f ms per frame   (runs: %s)\n' "$panel" "$runs" "$middle" "${medians[*]}"
done
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"

#!/usr/bin/env bash
# Runs the README's example commands: every line starting with "wayward " inside the README's blocks
# marked <!-- example-commands --> ... <!-- /example-commands -->, in order, in a scratch folder with the
# bundled scenarios, using the freshly built tool. Each must exit 0; the files they promise must appear.
set -euo pipefail
wayward_bin=$1
src=$2
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
ln -s "$src/scenarios" "$work/scenarios"
cd "$work"
mapfile -t commands < <(awk '/<!-- example-commands -->/{on=1; next} /<!-- \/example-commands -->/{on=0} on && /^wayward /' "$src/README.md")
if [ ${#commands[@]} -lt 4 ]; then
  echo "readme_commands: found only ${#commands[@]} example commands in README.md" >&2
  exit 1
fi
for c in "${commands[@]}"; do
  echo "+ $c"
  # shellcheck disable=SC2086
  eval "\"$wayward_bin\" ${c#wayward }" > /dev/null
done
# The walkthrough's outputs exist.
for f in ex1/brief.toml ex1/observations.csv ex1/residuals.csv ex1/residuals.png ex1/solution.toml ex1/luck.csv ex1/luck.png ex1/luck_own.csv ex1/luck_own.png ex1/search/plan.csv ex1/search/log.csv ex1/search/summary.txt ex1/search/search.png; do
  [ -s "$f" ] || { echo "readme_commands: $f was not written" >&2; exit 1; }
done
# The README states exactly two set-up commands and .ci/run calls the test one.
grep -q '^bash .ci/demo' "$src/README.md"
grep -q '^bash .ci/test' "$src/README.md"
grep -q '.ci/test' "$src/.ci/run"
echo "readme_commands: ${#commands[@]} commands ran"

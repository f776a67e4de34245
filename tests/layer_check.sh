#!/usr/bin/env bash
# Tests .ci/check-layers on small planted trees: a clean tree passes, and each rule fails on a deliberate breach
# (an upward include, the team's side seeing the truth generator, the viewer calling the command layer, a cycle).
set -u
check=${1:?usage: layer_check.sh CHECK_LAYERS}
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
failures=0
plant() {  # plant DIR: a minimal tree that keeps every rule
  rm -rf "$1"; mkdir -p "$1"/sim/{base,physics,exercise,truth,fit,report,commands} "$1"/viewer
  echo '#pragma once' > "$1"/sim/base/units.hpp
  printf '#pragma once\n#include "sim/base/units.hpp"\n' > "$1"/sim/physics/system.hpp
  printf '#pragma once\n#include "sim/physics/system.hpp"\n' > "$1"/sim/exercise/exercise.hpp
  printf '#pragma once\n#include "sim/exercise/exercise.hpp"\n' > "$1"/sim/truth/generate.hpp
  printf '#pragma once\n#include "sim/exercise/exercise.hpp"\n' > "$1"/sim/fit/known_fit.hpp
  printf '#pragma once\n#include "sim/fit/known_fit.hpp"\n' > "$1"/sim/report/plot.hpp
  printf '#pragma once\n#include "sim/report/plot.hpp"\n' > "$1"/sim/commands/commands.hpp
  printf '#include "sim/report/plot.hpp"\n#include <vector>\n' > "$1"/viewer/app.cpp
}
expect() {  # expect NAME WANT_RC PATTERN
  local out rc
  out=$(python3 "$check" "$tmp/t" 2>&1); rc=$?
  if [ "$rc" -ne "$2" ] || ! grep -q -- "$3" <<<"$out"; then
    echo "FAIL $1: rc=$rc (want $2), output: $out"; failures=$((failures + 1))
  else echo "ok   $1"; fi
}
plant "$tmp/t"; expect "clean tree passes" 0 "layers one-way"
plant "$tmp/t"; echo '#include "sim/report/plot.hpp"' >> "$tmp/t/sim/physics/system.hpp"
expect "upward include fails" 1 "'report' is a layer above 'physics'"
plant "$tmp/t"; echo '#include "sim/truth/generate.hpp"' >> "$tmp/t/sim/fit/known_fit.hpp"
expect "team side seeing truth fails" 1 "must not see the truth generator"
plant "$tmp/t"; echo '#include "sim/commands/commands.hpp"' >> "$tmp/t/viewer/app.cpp"
expect "viewer including commands fails" 1 "not the command layer"
plant "$tmp/t"; printf '#pragma once\n#include "viewer/b.hpp"\n' > "$tmp/t/viewer/a.hpp"; printf '#pragma once\n#include "viewer/a.hpp"\n' > "$tmp/t/viewer/b.hpp"
expect "include cycle fails" 1 "include cycle between modules: viewer/a -> viewer/b -> viewer/a"
plant "$tmp/t"; mkdir -p "$tmp/t/sim/misc"; echo '#pragma once' > "$tmp/t/sim/misc/x.hpp"
expect "file outside a stage folder fails" 1 "live in a stage folder"
echo "$((6 - failures)) passed, $failures failed"
[ "$failures" -eq 0 ]

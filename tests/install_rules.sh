#!/usr/bin/env bash
# `cmake --install` puts both programs in PREFIX/bin and the viewer's font in PREFIX/share/wayward, and the
# installed viewer finds its font there (relative to its own binary), not in the source tree.
# Usage: install_rules.sh BUILD_DIR
set -uo pipefail
build=$1
prefix=$(mktemp -d)
trap 'rm -rf "$prefix"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
cmake --install "$build" --prefix "$prefix" >/dev/null || fail "cmake --install failed"
[ -x "$prefix/bin/wayward" ] || fail "no $prefix/bin/wayward"
out=$("$prefix/bin/wayward" --version) || fail "installed wayward --version failed"
[[ "$out" =~ ^wayward\ [0-9]+\.[0-9]+\.[0-9]+$ ]] || fail "installed wayward --version printed '$out'"
if [ -e "$build/viewer/wayward-view" ]; then
  [ -x "$prefix/bin/wayward-view" ] || fail "no $prefix/bin/wayward-view"
  [ -f "$prefix/share/wayward/fonts/DejaVuSans.ttf" ] || fail "the font is not installed"
  out=$(env -u DISPLAY -u WAYWARD_ASSET_DIR "$prefix/bin/wayward-view" --version) || fail "installed wayward-view --version failed"
  [[ "$out" == *"(assets: $prefix/share/wayward)" ]] ||
    fail "the installed viewer looks for its assets elsewhere: '$out'"
fi
echo "ok: installed under $prefix: $(ls "$prefix/bin" | tr '\n' ' ')"

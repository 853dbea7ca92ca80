#!/usr/bin/env bash
# Builds and starts the Ambit desktop app on the demo library.
#
# On Debian or Ubuntu, installs the system packages the app needs when they
# are missing (WebKitGTK, build tools, ALSA, Node.js), builds the web UI
# (ui/ → ui/dist) and the app, and launches it. The first start creates the
# demo library (the invented demo choir and the sample scores) in the app's
# data folder; set AMBIT_LIBRARY=FOLDER to open another library instead.
#
# `--release` builds an optimised app (about 17 min the first time on two
# cores, against about 8 min for the default debug build).
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
cache=${AMBIT_CACHE:-$HOME/.cache/ambit}
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-$cache/target}
cd "$root"
say() { printf '\n== %s\n' "$*"; }

profile=debug
cargo_flags=()
if [ "${1:-}" = "--release" ]; then
  profile=release
  cargo_flags=(--release)
fi

if command -v dpkg >/dev/null 2>&1 && command -v apt-get >/dev/null 2>&1; then
  packages=(build-essential pkg-config libssl-dev libwebkit2gtk-4.1-dev libasound2-dev)
  command -v npm >/dev/null 2>&1 || packages+=(nodejs npm)
  missing=()
  for package in "${packages[@]}"; do
    dpkg -s "$package" >/dev/null 2>&1 || missing+=("$package")
  done
  if ((${#missing[@]})); then
    say "installing system packages: ${missing[*]}"
    sudo_cmd=()
    [ "$(id -u)" -eq 0 ] || sudo_cmd=(sudo)
    "${sudo_cmd[@]}" apt-get update -qq
    DEBIAN_FRONTEND=noninteractive "${sudo_cmd[@]}" apt-get install -y -qq --no-install-recommends "${missing[@]}"
  fi
fi

"$root/scripts/build-ui.sh"
say "building the app ($profile)"
cargo build -p ambit-app "${cargo_flags[@]}"
say "starting Ambit"
exec "$CARGO_TARGET_DIR/$profile/ambit-app"

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
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$root"

profile=debug
cargo_flags=()
if [ "${1:-}" = "--release" ]; then
  profile=release
  cargo_flags=(--release)
fi

ensure_packages "${app_packages[@]}"
"$root/scripts/build-ui.sh"
say "building the app ($profile)"
cargo build -p ambit-app "${cargo_flags[@]}"
say "starting Ambit"
exec "$CARGO_TARGET_DIR/$profile/ambit-app"

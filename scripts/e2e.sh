#!/usr/bin/env bash
# End-to-end suite of the desktop app: the debug build under Xvfb, driven over
# WebDriver (tauri-driver → Debian's WebKitWebDriver) by Python selenium.
#
# Expects the UI built (ui/dist) and the app built (cargo build -p ambit-app);
# scripts/test-all.sh does both before calling this. Installs tauri-driver and
# a selenium venv under $AMBIT_CACHE (default ~/.cache/ambit) on first use.
# Screenshots of every screen go to docs/screenshots/. With
# AMBIT_MEASURE_START=1, also times cold starts to the roster
# (tests/e2e/measure_start.py) for docs/PERFORMANCE.md.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$root"

app="$CARGO_TARGET_DIR/debug/ambit-app"
[ -x "$app" ] || { echo "e2e: no app at $app; run cargo build -p ambit-app first" >&2; exit 1; }

# --- tauri-driver, cached ----------------------------------------------------
tools="$cache/tools"
driver="$tools/bin/tauri-driver"
if [ ! -x "$driver" ]; then
  say "installing tauri-driver into $tools"
  cargo install tauri-driver --locked --root "$tools"
fi
command -v WebKitWebDriver >/dev/null || { echo "e2e: WebKitWebDriver missing (apt-get install webkit2gtk-driver)" >&2; exit 1; }

# --- selenium venv -------------------------------------------------------------
requirements=tests/e2e/requirements.txt
stamp=$(sha256sum "$requirements" | cut -c1-12)
venv="$cache/e2e-venv-$stamp"
if [ ! -x "$venv/bin/python" ] || [ ! -f "$venv/.complete" ]; then
  say "creating the e2e venv in $venv"
  rm -rf "$venv"
  python3 -m venv "$venv"
  "$venv/bin/pip" install -q -r "$requirements"
  touch "$venv/.complete"
fi

# --- fixtures: a fresh library folder and one invented singer's audition -----
work=$(mktemp -d)
cleanup() { rm -rf "$work"; }
trap cleanup EXIT
say "synthesising the audition files"
cargo run -q --example demo_audition_wavs -- "$work/audition" tenor >/dev/null
# No library in $work/library yet: the app's first start prepares the demo
# library there in the background (test 1 watches its progress), and the
# later flows and the start-up timings use it.
export AMBIT_APP="$app"
export TAURI_DRIVER="$driver"
export AMBIT_LIBRARY="$work/library"
export AMBIT_AUDITION_DIR="$work/audition"
export AMBIT_SCREENSHOTS=${AMBIT_SCREENSHOTS:-$root/docs/screenshots}
# The app must never reach the network; WebKit's GPU paths are off under Xvfb.
export WEBKIT_DISABLE_COMPOSITING_MODE=1
export LIBGL_ALWAYS_SOFTWARE=1
export NO_AT_BRIDGE=1

say "e2e flows (Xvfb)"
xvfb-run -a -s "-screen 0 1280x900x24" "$venv/bin/python" tests/e2e/test_app.py
if [ "${AMBIT_MEASURE_START:-}" = 1 ]; then
  export AMBIT_START_RUNS=${AMBIT_START_RUNS:-5}
  say "cold start to the roster (existing library), $AMBIT_START_RUNS runs"
  (cd tests/e2e && xvfb-run -a -s "-screen 0 1280x900x24" "$venv/bin/python" measure_start.py)
fi

#!/usr/bin/env bash
# The whole test suite, from a fresh Debian/Ubuntu machine.
#
# Installs what the tests need (system packages for the engine and the Tauri
# desktop app, a Python venv with the reference libraries in
# tests/reference/requirements.txt), builds and tests the UI (ui/), then runs
# every Rust test with the reference comparisons switched to "must run", and
# finally the desktop app's end-to-end suite under Xvfb (scripts/e2e.sh).
# Caches live outside the clone, in $AMBIT_CACHE (default ~/.cache/ambit):
# the cargo target dir, the venvs and tauri-driver, so a second run only
# rebuilds what changed.
set -euo pipefail

source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$root"

# --- system packages -------------------------------------------------------
# The engine and references (python3, python3-venv, pkg-config), the desktop
# app (common.sh: WebKitGTK, build tools, ALSA, Node.js) and the e2e suite
# (Xvfb, WebKitWebDriver).
ensure_packages python3 python3-venv pkg-config "${app_packages[@]}" "${e2e_packages[@]}"

# --- Python reference libraries --------------------------------------------
requirements=tests/reference/requirements.txt
stamp=$(sha256sum "$requirements" | cut -c1-12)
venv="$cache/venv-$stamp"
python=${PYTHON:-python3}
if [ ! -x "$venv/bin/python" ] || [ ! -f "$venv/.complete" ]; then
  say "creating the reference venv in $venv"
  rm -rf "$venv"
  "$python" -m venv "$venv"
  "$venv/bin/pip" install -q --upgrade pip
  "$venv/bin/pip" install -q -r "$requirements"
  touch "$venv/.complete"
fi
export AMBIT_PYTHON="$venv/bin/python"
# Reference comparisons fail, rather than skip, when the references are missing.
export AMBIT_REQUIRE_REFERENCES=1
# music21 writes its settings under the home directory; keep it quiet.
export MPLBACKEND=Agg
# numba (under librosa) compiles for the host CPU; on some AVX-512 hosts that
# code crashes pyin. A generic modern target avoids it without changing results.
export NUMBA_CPU_NAME=${NUMBA_CPU_NAME:-haswell}

# --- UI (before any cargo build: the app embeds ui/dist) --------------------
"$root/scripts/build-ui.sh" --test

# --- Rust ------------------------------------------------------------------
say "cargo fmt --check"
cargo fmt --all --check
say "cargo clippy"
cargo clippy --workspace --all-targets --locked -- -D warnings
say "cargo test"
cargo test --workspace --locked

# --- Desktop app end to end --------------------------------------------------
say "build the desktop app (debug)"
cargo build -p ambit-app --locked
"$root/scripts/e2e.sh"

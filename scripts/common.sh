# Shared by the scripts in this folder (sourced, not run): the repository
# root, the cache outside the clone, a heading printer, and installing
# Debian/Ubuntu packages that are missing.

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
cache=${AMBIT_CACHE:-$HOME/.cache/ambit}
mkdir -p "$cache"
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-$cache/target}

say() { printf '\n== %s\n' "$*"; }

# ensure_packages PACKAGE…: apt-get installs the ones dpkg does not have
# (as root, or through sudo). Does nothing where there is no dpkg/apt-get.
ensure_packages() {
  command -v dpkg >/dev/null 2>&1 && command -v apt-get >/dev/null 2>&1 || return 0
  local missing=() package
  for package in "$@"; do
    dpkg -s "$package" >/dev/null 2>&1 || missing+=("$package")
  done
  ((${#missing[@]})) || return 0
  say "installing system packages: ${missing[*]}"
  local sudo_cmd=()
  [ "$(id -u)" -eq 0 ] || sudo_cmd=(sudo)
  "${sudo_cmd[@]}" apt-get update -qq
  DEBIAN_FRONTEND=noninteractive "${sudo_cmd[@]}" apt-get install -y -qq --no-install-recommends "${missing[@]}"
}

# The desktop app's build packages (Tauri 2 on WebKitGTK 4.1; cpal on ALSA),
# and Node.js for the UI when npm is missing.
app_packages=(build-essential pkg-config libssl-dev libwebkit2gtk-4.1-dev libasound2-dev)
command -v npm >/dev/null 2>&1 || app_packages+=(nodejs npm)
# What the end-to-end suite runs on.
e2e_packages=(xvfb xauth webkit2gtk-driver)

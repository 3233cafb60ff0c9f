# Installs what the two commands need and the machine lacks. Sourced by start.sh and test.sh.
# Debian packages come from apt (as root, or through sudo); npm packages from the lockfile.

as_root() {
  if [ "$(id -u)" = "0" ]; then "$@"; elif command -v sudo >/dev/null; then sudo "$@"; else
    echo "[rillbook] need root (or sudo) to run: $*" >&2; return 1; fi
}

apt_updated=""
apt_install() {
  # $@: Debian package names
  if [ -z "$apt_updated" ]; then
    echo "[rillbook] apt-get update"
    as_root apt-get update -qq >/dev/null
    apt_updated=1
  fi
  echo "[rillbook] installing Debian packages: $*"
  as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "$@" >/dev/null
}

ensure_postgres() {
  if [ -n "${DATABASE_URL:-}" ] && [ "${1:-}" != "always" ]; then return 0; fi
  if ! ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1; then
    apt_install postgresql
  fi
}

ensure_test_tools() {
  local missing=()
  [ -x /usr/bin/chromium ] || missing+=(chromium)
  command -v sox >/dev/null || missing+=(sox)
  command -v xmllint >/dev/null || missing+=(libxml2-utils)
  command -v unzip >/dev/null || missing+=(unzip)
  if ! python3 -c 'import scipy.signal' >/dev/null 2>&1 && ! /usr/bin/python3 -c 'import scipy.signal' >/dev/null 2>&1; then
    missing+=(python3-scipy)
  fi
  if [ ${#missing[@]} -gt 0 ]; then apt_install "${missing[@]}"; fi
}

ensure_node_modules() {
  # Reinstall when node_modules is missing or older than the lockfile.
  if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    echo "[rillbook] installing npm packages (npm ci)"
    npm ci --no-audit --no-fund --loglevel=error
  fi
}

ensure_native_engine() {
  # The render's native engine (native/dsp): a Node-API addon in C over FFTW 3, built
  # with node-gyp against Node's own headers. Rebuilt when missing or older than its sources.
  local addon=native/dsp/build/Release/rillbook_dsp.node
  local missing=()
  [ -f /usr/include/fftw3.h ] || missing+=(libfftw3-dev)
  command -v make >/dev/null || missing+=(make)
  command -v g++ >/dev/null || missing+=(g++)
  command -v python3 >/dev/null || missing+=(python3)
  if [ ${#missing[@]} -gt 0 ] && ! apt_install "${missing[@]}"; then
    echo "[rillbook] could not install ${missing[*]}: renders will use the slower JavaScript engine" >&2
    return 0
  fi
  if [ ! -f "$addon" ] || [ -n "$(find native/dsp/src native/dsp/binding.gyp -newer "$addon" 2>/dev/null | head -n 1)" ]; then
    echo "[rillbook] building the native render engine (node-gyp, FFTW 3)"
    local nodedir=()
    # Node's headers as installed with Node itself, so node-gyp needs no download.
    if [ -f "$(dirname "$(dirname "$(command -v node)")")/include/node/node_api.h" ]; then
      nodedir=(--nodedir="$(dirname "$(dirname "$(command -v node)")")")
    fi
    if ! npx --no-install node-gyp rebuild --directory native/dsp "${nodedir[@]}" --loglevel=error >/dev/null; then
      # The product still works without it (lib/audio/dsp.ts falls back, and says so); the tests do not pass.
      echo "[rillbook] the native render engine did not build: renders will use the slower JavaScript engine" >&2
    fi
  fi
}

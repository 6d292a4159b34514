#!/usr/bin/env bash
# Installs what the browser build and the browser tests need on a fresh machine, and skips each
# step whose result is already there, so running it twice does nothing the second time:
#   1. the Rust target wasm32-unknown-unknown (through rustup);
#   2. Debian's `chromium` package, giving /usr/bin/chromium for the headless page tests (needs root);
#   3. the pinned npm packages in web/ (binaryen's wasm-opt, playwright-core) via `npm ci`.
# Usage: bash tests/setup.sh [--build-only]   (--build-only skips Chromium, which only the tests need)
set -euo pipefail
cd "$(dirname "$0")/.."
build_only=false
if [ "${1:-}" = "--build-only" ]; then build_only=true; fi

say() { printf '== setup: %s\n' "$*"; }
fail() { printf 'error: setup: %s\n' "$*" >&2; exit 1; }

# 1. The wasm target.
command -v rustup >/dev/null || fail "rustup is not installed; install the Rust toolchain through rustup first"
# The list is read into a variable first: `grep -q` on a pipe can stop rustup early (SIGPIPE),
# which pipefail would count as a failure.
has_wasm_target() {
  local installed
  installed="$(rustup target list --installed)" || return 1
  grep -qx 'wasm32-unknown-unknown' <<<"$installed"
}
if has_wasm_target; then
  say "rust target wasm32-unknown-unknown: present"
else
  say "rust target wasm32-unknown-unknown: adding"
  rustup target add wasm32-unknown-unknown ||
    fail "could not add the rust target wasm32-unknown-unknown (rustup target add failed above); the browser build needs it. Check that rustup can reach its download server, or install the target from your toolchain's own packages"
  has_wasm_target || fail "rustup reported success but wasm32-unknown-unknown is still not installed"
fi

# 2. Chromium for the headless page tests (Debian's package; Playwright's own download is not used).
if $build_only; then
  say "chromium: skipped (--build-only)"
elif [ -x /usr/bin/chromium ]; then
  say "chromium: present ($(/usr/bin/chromium --version 2>/dev/null || echo 'version unknown'))"
else
  if [ "$(id -u)" -ne 0 ]; then
    fail "/usr/bin/chromium is missing and installing it needs root; run as root, or run: sudo apt-get update && sudo apt-get install -y chromium"
  fi
  command -v apt-get >/dev/null ||
    fail "/usr/bin/chromium is missing and apt-get is not available; install Chromium so that /usr/bin/chromium exists"
  say "chromium: installing with apt-get (about a minute)"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -q
  apt-get install -y -q --no-install-recommends chromium
  [ -x /usr/bin/chromium ] || fail "apt-get installed chromium but /usr/bin/chromium is still missing"
fi

# 3. The pinned npm packages. npm writes node_modules/.package-lock.json on every install, so
# it is older than the committed lockfile exactly when the lockfile changed since the last install.
command -v node >/dev/null && command -v npm >/dev/null ||
  fail "node and npm are needed for wasm-opt and the browser tests; install Node.js 20 or newer (Debian: apt-get install nodejs npm)"
installed_marker=web/node_modules/.package-lock.json
if [ -f "$installed_marker" ] && ! [ web/package-lock.json -nt "$installed_marker" ]; then
  say "npm packages in web/: up to date"
else
  say "npm packages in web/: npm ci"
  (cd web && npm ci --no-audit --no-fund)
fi
[ -x web/node_modules/.bin/wasm-opt ] || fail "npm ci finished but web/node_modules/.bin/wasm-opt is missing"

say "done"

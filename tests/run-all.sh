#!/usr/bin/env bash
# Runs every Bandwright test from a fresh checkout: formatting, lints, the native core, plot,
# CLI, bindings and build-tool tests, the reference and property tests, then builds the single-file
# browser app and runs the page tests in headless Chromium against it (from file://). Installs
# what it needs first and skips what is already there: rustfmt and clippy, the wasm32 target,
# Debian's chromium and the pinned npm packages (tests/setup.sh). Usage: bash tests/run-all.sh
set -euo pipefail
cd "$(dirname "$0")/.."

step() { printf '\n== %s\n' "$*"; }

step "toolchain"
if ! command -v cargo >/dev/null; then
  echo "error: cargo is not installed; install the Rust toolchain (rustup) first" >&2
  exit 1
fi
cargo --version
if ! rustup component list --installed 2>/dev/null | grep -q '^rustfmt'; then rustup component add rustfmt; fi
if ! rustup component list --installed 2>/dev/null | grep -q '^clippy'; then rustup component add clippy; fi

step "formatting"
cargo fmt --all -- --check

step "lints"
cargo clippy --workspace --all-targets --locked -- -D warnings

# Property tests draw random cases; CI fixes the seed so a run is reproducible (unset
# PROPTEST_RNG_SEED, or set another, to explore new cases locally).
export PROPTEST_RNG_SEED="${PROPTEST_RNG_SEED:-20261202}"

step "native tests (core, plot, CLI, bindings, build tool, reference, properties)"
cargo test --workspace --locked

step "fresh-machine setup for the browser app (wasm32 target, chromium, npm ci)"
bash tests/setup.sh

step "browser app build (dist/bandwright.html)"
cargo run --locked -p bandwright-build --release -- --no-open

step "browser tests (headless Chromium, the built file from file://)"
node --test tests/browser/

echo
echo "all test steps passed"

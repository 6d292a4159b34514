#!/usr/bin/env bash
# Runs every Bandwright test from a fresh checkout: formatting, lints, the native core, plot and
# CLI tests, and the reference and property tests. Installs what it needs first (and skips what is
# already there). Usage: bash tests/run-all.sh
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

step "native tests (core, plot, CLI, reference, properties)"
cargo test --workspace --locked

echo
echo "all test steps passed"

#!/usr/bin/env bash
# The long run of the fuzzing harness against the release binary: bash scripts/fuzz.sh [RUNS] [SEED] [WORKERS]
# (default 100000 cases, seed 1, 2 workers). The bounded pass in `cargo test` is tests/integration/fuzz.rs.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --bin hushrail --example fuzz
target_dir="${CARGO_TARGET_DIR:-target}"
HUSHRAIL_BIN="$target_dir/release/hushrail" "$target_dir/release/examples/fuzz" "${1:-100000}" "${2:-1}" "${3:-2}"

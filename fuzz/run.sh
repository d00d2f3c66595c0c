#!/usr/bin/env bash
# Builds the fuzz driver with SanitizerCoverage edge counters (stable Rust)
# and runs one target:   bash fuzz/run.sh TARGET SECONDS [more clout-fuzz run flags]
# Other commands:        bash fuzz/run.sh replay TARGET FILE...
#                        bash fuzz/run.sh show FILE      (the rule an `engines` input describes)
#                        bash fuzz/run.sh minimize TARGET FILE OUT
# Findings go to fuzz/out/TARGET/{crashes,hangs}; new coverage to fuzz/out/TARGET/queue.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
host="$(rustc -vV | sed -n 's/^host: //p')"
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$here/target}"
# --target keeps the flags off build scripts and proc macros (pest_derive).
RUSTFLAGS="-Cpasses=sancov-module -Cllvm-args=-sanitizer-coverage-level=3 \
-Cllvm-args=-sanitizer-coverage-inline-8bit-counters --cfg fuzzing" \
  cargo build --quiet --release --manifest-path "$here/Cargo.toml" --target "$host" --bin clout-fuzz
bin="$CARGO_TARGET_DIR/$host/release/clout-fuzz"
case "${1:-}" in
  replay|minimize|list|show|seeds) exec "$bin" "$@" ;;
  "") echo "usage: bash fuzz/run.sh TARGET SECONDS [flags]" >&2; exit 2 ;;
  *) target="$1"; seconds="${2:-60}"; shift; shift || true
     exec "$bin" run "$target" --seconds "$seconds" "$@" ;;
esac

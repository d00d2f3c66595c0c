#!/usr/bin/env bash
# Builds the WebAssembly module of clout-wasm and turns it into two packages:
#   bindings-wasm/pkg-node/  for Node (CommonJS; package.json `main` loads it)
#   bindings-wasm/pkg-web/   for browsers (ES module), copied to web/pkg/ for the page
# Needs Debian's second toolchain (apt-get install -y rustc-web cargo-web
# rust-web-src lld); installs wasm-bindgen-cli of the pinned version into
# target/tools (inside the clone) when it is missing. wasm-opt (Debian's
# binaryen) shrinks the module when present; without it the packages keep
# the unoptimised module and the script says so.
set -euo pipefail
cd "$(dirname "$0")/.."

version=$(sed -n 's/^wasm-bindgen = "=\(.*\)"$/\1/p' bindings-wasm/Cargo.toml)
[ -n "$version" ] || { echo "build.sh: no pinned wasm-bindgen version in bindings-wasm/Cargo.toml" >&2; exit 1; }
for tool in /usr/bin/rustc /usr/bin/cargo; do
  [ -x "$tool" ] || { echo "build.sh: $tool missing: apt-get install -y rustc-web cargo-web rust-web-src lld" >&2; exit 1; }
done
command -v wasm-ld >/dev/null || { echo "build.sh: wasm-ld missing: apt-get install -y lld" >&2; exit 1; }

bindgen=target/tools/bin/wasm-bindgen
if ! "$bindgen" --version 2>/dev/null | grep -qx "wasm-bindgen $version"; then
  echo "== installing wasm-bindgen-cli $version into target/tools =="
  cargo install wasm-bindgen-cli --version "$version" --root target/tools
fi

echo "== building the module (wasm32-unknown-unknown, profile wasm: size, LTO) =="
# Its own target directory, so the host build is never invalidated.
RUSTC=/usr/bin/rustc RUSTC_BOOTSTRAP=1 RUSTFLAGS="-C linker=wasm-ld" \
  /usr/bin/cargo build --profile wasm -Zbuild-std=std,panic_abort \
  --target wasm32-unknown-unknown -p clout-wasm --target-dir target/wasm
module=target/wasm/wasm32-unknown-unknown/wasm/clout_wasm.wasm

size() { stat -c %s "$1"; }
echo "module as linked: $(size "$module") bytes"
if command -v wasm-opt >/dev/null; then
  # Before wasm-bindgen: Debian's binaryen (version 108) does not keep the
  # externref table that wasm-bindgen adds. Only the features rustc enables
  # for wasm32-unknown-unknown, which Node 20 and current browsers run.
  wasm-opt -Oz --enable-bulk-memory --enable-multivalue --enable-mutable-globals \
    --enable-nontrapping-float-to-int --enable-reference-types --enable-sign-ext \
    -o target/wasm/clout_wasm.opt.wasm "$module"
  module=target/wasm/clout_wasm.opt.wasm
  echo "after wasm-opt -Oz: $(size "$module") bytes"
else
  echo "wasm-opt not found (apt-get install -y binaryen): the packages keep the module as linked"
fi

echo "== packaging =="
rm -rf bindings-wasm/pkg-node bindings-wasm/pkg-web web/pkg
"$bindgen" --target nodejs --out-name clout_wasm --out-dir bindings-wasm/pkg-node "$module"
"$bindgen" --target web --out-name clout_wasm --out-dir bindings-wasm/pkg-web "$module"
echo "package module: $(size bindings-wasm/pkg-web/clout_wasm_bg.wasm) bytes"

crate_version=$(sed -n 's/^version = "\(.*\)"$/\1/p' Cargo.toml | head -1)
cat > bindings-wasm/pkg-node/package.json <<JSON
{
  "name": "clout-wasm-node",
  "version": "$crate_version",
  "private": true,
  "description": "clout for Node: power reports, decisions and rule images (built by bindings-wasm/build.sh)",
  "license": "MIT OR Apache-2.0",
  "main": "clout_wasm.js",
  "types": "clout_wasm.d.ts"
}
JSON
cp -r bindings-wasm/pkg-web web/pkg
echo "built bindings-wasm/pkg-node, bindings-wasm/pkg-web and web/pkg"

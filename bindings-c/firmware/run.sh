#!/usr/bin/env bash
# Builds the C ABI for a Cortex-M4 (thumbv7em-none-eabihf, no std, no heap,
# panic = "abort"), links the tally example as firmware for the emulated
# mps2-an386 board once for every example rule that fits a device build
# (64 members), runs each under qemu-system-arm on random ballots and
# compares the output, line for line, and the exit status with the host
# build of examples/tally.c on the same ballots and image. Then measures
# the firmware (sizes, the decide path's code, stack per call) into
# target/firmware/measurements.txt.
#
# Needs the Debian packages of /work/shared/TOOLCHAINS.md-style set-ups:
#   rustc-web cargo-web rust-web-src lld binutils-arm-none-eabi
#   gcc-arm-none-eabi libnewlib-arm-none-eabi qemu-system-arm
# (.ci/run installs them). BALLOTS (default 1000) ballots per rule.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
out="$root/target/firmware"
work="$out/run"
ballots=${BALLOTS:-1000}
mkdir -p "$work"

echo "== the C ABI for thumbv7em-none-eabihf (Debian's rustc, -Zbuild-std=core) =="
RUSTC=/usr/bin/rustc RUSTC_BOOTSTRAP=1 /usr/bin/cargo rustc --quiet --manifest-path "$root/Cargo.toml" \
    --profile firmware -Zbuild-std=core --target thumbv7em-none-eabihf \
    -p clout-c --no-default-features --crate-type staticlib --target-dir "$out"
lib="$out/thumbv7em-none-eabihf/firmware/libclout_c.a"

echo "== the host side: the clout command and tally.c against the host library =="
cargo build --quiet --manifest-path "$root/Cargo.toml" -p clout-cli -p clout-c
host_lib="$root/target/debug/libclout_c.a"
clout="$root/target/debug/clout"
${CC:-cc} -std=c11 -Wall -Wextra -Werror -pedantic -O1 -I "$root/bindings-c/include" \
    "$root/bindings-c/examples/tally.c" "$host_lib" \
    -lgcc_s -lutil -lrt -lpthread -lm -ldl -lc -o "$work/tally-host"

cflags=(-mthumb -mcpu=cortex-m4 -mfloat-abi=hard -mfpu=fpv4-sp-d16 -Os -g -std=c11 -Wall -Wextra -Werror
    -ffunction-sections -fdata-sections --specs=nano.specs --specs=rdimon.specs
    -I "$root/bindings-c/include" -DMAX_YES=64 -DMAX_LINE=1024)

checked=0
for source in "$root"/examples/*.clout; do
    name=$(basename "$source" .clout)
    "$clout" compile "$source" -o "$work/$name.img" --c-header "$work/$name.h" >/dev/null
    members=$(sed -n 's/^#define RULE_MEMBERS \([0-9]*\)u$/\1/p' "$work/$name.h")
    if [ "$members" -gt 64 ]; then
        echo "$name: skipped ($members members; a device build holds 64)"
        continue
    fi
    arm-none-eabi-gcc "${cflags[@]}" -DTALLY_IMAGE_HEADER="\"$work/$name.h\"" \
        -T "$here/mps2-an386.ld" "$here/main.c" "$here/startup.c" "$lib" \
        -Wl,--gc-sections -Wl,--no-warn-execstack -Wl,-Map="$work/$name.map" -o "$work/$name.elf"
    awk -v members="$members" -v count="$ballots" -v seed="$((checked + 17))" -f "$here/ballots.awk" \
        >"$work/$name.ballots"
    host_status=0
    "$work/tally-host" "$work/$name.img" <"$work/$name.ballots" >"$work/$name.host" || host_status=$?
    device_status=0
    timeout 300 qemu-system-arm -cpu cortex-m4 -machine mps2-an386 -display none -monitor none -serial none \
        -semihosting-config enable=on,target=native -kernel "$work/$name.elf" \
        <"$work/$name.ballots" >"$work/$name.device" 2>"$work/$name.stack" || device_status=$?
    if ! diff -u "$work/$name.host" "$work/$name.device" >"$work/$name.diff"; then
        echo "$name: the firmware's output differs from the host's:" >&2
        head -20 "$work/$name.diff" >&2
        exit 1
    fi
    if [ "$host_status" != "$device_status" ]; then
        echo "$name: exit status $device_status on the device, $host_status on the host" >&2
        cat "$work/$name.stack" >&2
        exit 1
    fi
    lines=$(wc -l <"$work/$name.host")
    echo "$name: $members members, $ballots ballots, $lines lines identical, exit $device_status; $(cat "$work/$name.stack")"
    checked=$((checked + 1))
done
if [ "$checked" -eq 0 ]; then
    echo "no example rule fits a device build" >&2
    exit 1
fi
echo "firmware agrees with the host on $checked example rules"

echo "== measurements of the union example's firmware (27 members, 2 attributes) =="
elf="$work/union.elf"
{
    echo "firmware: $elf ($(date -u +%Y-%m-%d), $(/usr/bin/rustc --version), $(arm-none-eabi-gcc --version | head -1))"
    arm-none-eabi-size "$elf"
    echo "painted stack (bytes, measured on the device): $(cat "$work/union.stack")"
    echo "static (from the disassembly):"
    python3 "$here/measure.py" "$elf" clout_decide clout_decide_members clout_decide_votes clout_critical \
        clout_rule_load clout_image_check clout_image_roster_digest
    echo "largest symbols:"
    arm-none-eabi-nm --size-sort -S -C "$elf" | tail -12
} | tee "$out/measurements.txt"

#!/usr/bin/env python3
"""Static measurements of a firmware ELF, from its disassembly.

    measure.py FIRMWARE.elf ROOT...

For each ROOT function: the code reachable from it (the sizes of every
function it may call, directly or through others, itself included) and the
worst stack depth along any call chain (each function's frame from its
prologue: pushed registers, pushed floating-point registers and the stack
pointer adjustment). Calls are `bl` and branches to the start of another
function (tail calls, counted as calls: an upper bound). An indirect call
(`blx rN`) or a call cycle makes the depth unknown, and the script says so.
Uses arm-none-eabi-objdump and arm-none-eabi-nm.
"""
import re
import subprocess
import sys


def functions(elf):
    """Function address -> (name, size) from the symbol table."""
    out = subprocess.run(["arm-none-eabi-nm", "-S", "--defined-only", elf], check=True, capture_output=True, text=True)
    table = {}
    for line in out.stdout.splitlines():
        parts = line.split()
        if len(parts) == 4 and parts[2] in "tT":
            table[int(parts[0], 16) & ~1] = (parts[3], int(parts[1], 16))
    return table


def disassemble(elf):
    """Function start -> list of (mnemonic, operands)."""
    out = subprocess.run(["arm-none-eabi-objdump", "-d", "--no-show-raw-insn", elf],
                         check=True, capture_output=True, text=True)
    code, current = {}, None
    for line in out.stdout.splitlines():
        head = re.match(r"^([0-9a-f]+) <(.+)>:$", line)
        if head:
            current = int(head.group(1), 16)
            code[current] = []
            continue
        insn = re.match(r"^\s+[0-9a-f]+:\s+(\S+)\s*(.*)$", line)
        if insn and current is not None:
            code[current].append((insn.group(1), insn.group(2)))
    return code


def frame(insns):
    """Bytes the prologue takes: pushes and `sub sp` in the first dozen instructions."""
    total = 0
    for mnemonic, ops in insns[:12]:
        if mnemonic in ("push", "push.w", "stmdb") and ("sp!" in ops or mnemonic.startswith("push")):
            regs = re.search(r"\{(.*)\}", ops)
            total += 4 * len(regs.group(1).split(",")) if regs else 0
        elif mnemonic.startswith("str") and re.search(r"\[sp, #-(\d+)\]!", ops):
            total += int(re.search(r"\[sp, #-(\d+)\]!", ops).group(1))
        elif mnemonic == "vpush":
            regs = re.search(r"\{(.*)\}", ops).group(1)
            count = 0
            for part in regs.split(","):
                ends = re.findall(r"\d+", part)
                count += int(ends[-1]) - int(ends[0]) + 1 if len(ends) == 2 else 1
            total += count * (8 if "d" in regs else 4)
        elif mnemonic.startswith("sub") and re.match(r"sp, (sp, )?#(\d+)", ops):
            total += int(re.match(r"sp, (sp, )?#(\d+)", ops).group(2))
    return total


def calls(insns, starts):
    """Functions called (or branched to at their start) and whether any call is indirect."""
    found, indirect = set(), False
    for mnemonic, ops in insns:
        target = re.match(r"^([0-9a-f]+) <", ops)
        if mnemonic in ("bl", "blx") and target:
            found.add(int(target.group(1), 16))
        elif mnemonic == "blx":
            indirect = True
        elif re.match(r"^b(\.w|\.n)?$", mnemonic) and target and int(target.group(1), 16) in starts:
            found.add(int(target.group(1), 16))
    return found, indirect


def main():
    elf, roots = sys.argv[1], sys.argv[2:]
    names = functions(elf)
    code = disassemble(elf)
    by_name = {name: addr for addr, (name, _) in names.items()}
    starts = set(code)
    graph = {a: calls(insns, starts) for a, insns in code.items()}
    frames = {a: frame(insns) for a, insns in code.items()}

    def depth(a, path):
        if a in path:
            return None  # a cycle
        callees, indirect = graph.get(a, (set(), False))
        if indirect:
            return None
        worst = 0
        for c in callees:
            d = depth(c, path | {a})
            if d is None:
                return None
            worst = max(worst, d)
        return frames.get(a, 0) + worst

    for root in roots:
        if root not in by_name:
            print(f"{root}: not in {elf}")
            continue
        seen, todo = set(), [by_name[root]]
        while todo:
            a = todo.pop()
            if a in seen:
                continue
            seen.add(a)
            todo.extend(graph.get(a, (set(), False))[0])
        size = sum(names.get(a, ("", 0))[1] for a in seen)
        d = depth(by_name[root], frozenset())
        stack = "unknown (indirect call or cycle)" if d is None else f"{d} bytes"
        print(f"{root}: code {size} bytes in {len(seen)} functions, worst stack {stack}")


if __name__ == "__main__":
    main()

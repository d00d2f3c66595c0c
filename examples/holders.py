"""Writes examples/holders.csv: a fictional snapshot of 3,000 token holders.

Deterministic (a fixed seed), heavy-tailed (a few large holders, many small
ones), balances with 18 decimals. Addresses are random hexadecimal strings of
this script's own; no real account is meant. Run: python3 examples/holders.py
"""

import hashlib
import random

rng = random.Random(20261201)
rows = []
for rank in range(3000):
    address = "0x" + hashlib.sha256(f"harbor-dao-holder-{rank}".encode()).hexdigest()[:40]
    # Pareto-like tail: the largest holder about 4.8 million tokens, the
    # smallest a few tokens; base units are whole numbers of 10^-18 tokens.
    tokens = 4_800_000 / (rank + 1) ** 1.15 * rng.uniform(0.85, 1.15)
    base_units = int(tokens * 10**6) * 10**12 + rng.randrange(10**12)
    whole, fraction = divmod(base_units, 10**18)
    rows.append((address, f"{whole}.{fraction:018d}"))
rng.shuffle(rows)
with open("examples/holders.csv", "w", newline="") as f:
    f.write("address,balance\n")
    for address, balance in rows:
        f.write(f"{address},{balance}\n")

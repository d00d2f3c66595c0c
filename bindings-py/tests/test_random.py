"""A seeded loop over random rule files: Python and the `clout` command
give the same answers (or the same errors) for each. The generator mixes
member weights (zeros included), groups, blocs, shares and amounts,
`count` and `against` forms, four-state conditions and nesting, so some
files do not compile: those must fail alike."""

from __future__ import annotations

import json
import random

import pytest

import clout

SEED = 20261201
FILES = 40


def random_file(rng: random.Random) -> str:
    lines = ['title "Random board (fictional)"']
    names = []
    for i in range(rng.randint(1, 5)):
        name = f"m{i}"
        names.append(name)
        lines.append(f"member {name} seats={rng.randint(0, 9)} pop={rng.randint(0, 50_000)}")
    if rng.random() < 0.6:
        k = rng.randint(2, 6)
        lines.append(f"members g x{k} seats={rng.randint(0, 3)}")
        names += [f"g{j}" for j in range(1, k + 1)]
    if len(names) >= 2 and rng.random() < 0.5:
        lines.append(f"bloc core = {', '.join(rng.sample(names, 2))}")
        names.append("core")

    def atom() -> str:
        pick = rng.randrange(9)
        if pick == 0:
            return f"seats >= {rng.randint(1, 3)}/{rng.randint(3, 5)}"
        if pick == 1:
            return f"pop > {rng.randint(30, 70)}%"
        if pick == 2:
            return f"count >= {rng.randint(1, 4)}"
        if pick == 3:
            return f"count against < {rng.randint(1, 4)}"
        if pick == 4:
            return rng.choice(names)
        if pick == 5:
            return f"seats >= {rng.randint(1, 12)}"
        if pick == 6:
            return "seats yes > 1/2 of cast"
        if pick == 7:
            return f"count present >= {rng.randint(1, 2)}/3"
        return f"seats > {rng.randint(1, 2)}/3"

    def condition(depth: int) -> str:
        if depth == 0 or rng.random() < 0.4:
            return atom()
        op = rng.choice(["and", "or"])
        return f"({condition(depth - 1)} {op} {condition(depth - 1)})"

    for r in range(rng.randint(1, 3)):
        lines.append(f"rule r{r} = {condition(2)}")
    return "\n".join(lines) + "\n"


def ballot(rng: random.Random, members):
    votes = {"yes": [], "no": [], "abstain": []}
    for m in members:
        choice = rng.choice(["yes", "no", "abstain", None])
        if choice:
            votes[choice].append(m)
    return votes


@pytest.mark.parametrize("k", range(FILES))
def test_random_file(cli, k):
    rng = random.Random(SEED + k)
    text = random_file(rng)
    done = cli.run(["report", "-", "--format", "json"], stdin=text)
    try:
        f = clout.parse(text, name="<stdin>")
    except clout.RuleError as e:
        assert done.returncode == 2, text
        assert e.text == done.stderr, text
        return
    for rule in f.rules:
        args = ["-", "--rule", rule]
        assert f.report(rule) == cli.json(["report", *args], stdin=text), text
        b = ballot(rng, f.members)
        decide = ["decide", *args]
        for key, names in b.items():
            if names:
                decide += [f"--{key}", ",".join(names)]
        if not any(b.values()):
            decide += ["--rest", "absent"]
        got = f.decide(**b, rule=rule, rest="absent" if not any(b.values()) else None)
        assert got == cli.json(decide, stdin=text), text
        assert f.simplify(rule) == cli.json(["simplify", *args], stdin=text), text
        assert f.order(rule) == cli.json(["order", *args], stdin=text), text
        assert f.coalitions(rule, kind="minimal_blocking") == cli.json(
            ["coalitions", *args, "--minimal-blocking"], stdin=text
        ), text


def test_some_random_files_compile_and_some_do_not():
    outcomes = set()
    for k in range(FILES):
        try:
            clout.parse(random_file(random.Random(SEED + k)))
            outcomes.add("compiles")
        except clout.RuleError:
            outcomes.add("refused")
    assert outcomes == {"compiles", "refused"}

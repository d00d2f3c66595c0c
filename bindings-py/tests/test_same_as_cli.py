"""Every example file and every rule: the Python dicts equal the JSON the
`clout` command prints for the same question, key for key and value for
value (floats compared exactly: both are serde's shortest round-trip
decimal of the same f64)."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

import clout

from conftest import EXAMPLES, ROOT, rules_of

CASES = [(path, rule) for path in EXAMPLES for rule in rules_of(path)]
IDS = [f"{path.stem}-{rule}" for path, rule in CASES]

# The dimension search of compact `qualified` takes about 45 s in a debug build
# (3 s in release); the Rust suite runs it (cli/tests/cli_toolkit.rs).
SLOW = {("compact", "qualified", "simplify")}


def rel(path: Path) -> str:
    return str(path.relative_to(ROOT))


def same_or_same_refusal(cli, args, call):
    """The command's JSON and the Python call agree: equal answers, or both
    refuse with the same message."""
    done = cli.run([*args, "--format", "json"])
    if done.returncode == 0:
        import json

        assert call() == json.loads(done.stdout)
    else:
        assert done.returncode == 2, done.stderr
        with pytest.raises(clout.Refused) as refusal:
            call()
        assert done.stderr.startswith(f"error: {refusal.value.message}\n"), done.stderr


def test_examples_are_all_here():
    assert len(EXAMPLES) >= 8
    assert len(CASES) >= 18


@pytest.mark.parametrize(("path", "rule"), CASES, ids=IDS)
def test_report(cli, path, rule):
    f = clout.load(path)
    assert f.report(rule) == cli.json(["report", rel(path), "--rule", rule])


@pytest.mark.parametrize(("path", "rule"), CASES, ids=IDS)
def test_decide(cli, path, rule):
    f = clout.load(path)
    members = f.members
    ballots = [
        dict(yes=members[: len(members) // 2 + 1]),
        dict(yes=members[::2], no=members[1::3], abstain=members[5:7], rest="absent"),
        dict(yes=["all"], no=members[:1]),
    ]
    for b in ballots:
        args = ["decide", rel(path), "--rule", rule]
        for key in ("yes", "no", "abstain"):
            if b.get(key):
                args += [f"--{key}", ",".join(b[key])]
        if "rest" in b:
            args += ["--rest", b["rest"]]
        assert f.decide(**b, rule=rule) == cli.json(args)


@pytest.mark.parametrize(("path", "rule"), CASES, ids=IDS)
def test_drafting(cli, path, rule):
    f = clout.load(path)
    base = [rel(path), "--rule", rule]
    if (path.stem, rule, "simplify") not in SLOW:
        same_or_same_refusal(cli, ["simplify", *base], lambda: f.simplify(rule))
    same_or_same_refusal(cli, ["order", *base], lambda: f.order(rule))
    same_or_same_refusal(
        cli,
        ["coalitions", *base, "--minimal-blocking", "--limit", "7"],
        lambda: f.coalitions(rule, kind="minimal_blocking", limit=7),
    )
    same_or_same_refusal(cli, ["coalitions", *base, "--minimal-winning"], lambda: f.coalitions(rule))
    # The 30-member treaties take a debug build seconds per quota; the sweep of
    # the 27-member union stands for them.
    if not path.stem.startswith("treaty-30"):
        same_or_same_refusal(
            cli, ["sweep", *base, "--step", "10%"], lambda: f.sweep(rule, step="10%")
        )


@pytest.mark.parametrize(("path", "rule"), CASES, ids=IDS)
def test_image(cli, path, rule, tmp_path):
    out = tmp_path / "rule.img"
    done = cli.run(["compile", rel(path), "--rule", rule, "-o", str(out)])
    assert done.returncode == 0, done.stderr
    assert clout.load(path).image(rule) == out.read_bytes()


def test_sweep_options(cli):
    f = clout.load(ROOT / "examples/transit.clout")
    args = ["sweep", "examples/transit.clout", "--rule", "charter"]
    assert f.sweep("charter", condition=2) == cli.json([*args, "--condition", "2"])
    assert f.sweep("charter", attribute="riders", start="40%", stop="90%", step="7.5%") == cli.json(
        [*args, "--attr", "riders", "--from", "40%", "--to", "90%", "--step", "7.5%"]
    )
    g = clout.game(5, [3, 2, 2, 1])
    assert g.sweep(start=1, stop=8, step=1) == cli.json(
        ["sweep", "--game", "[5; 3, 2, 2, 1]", "--from", "1", "--to", "8", "--step", "1"]
    )


def test_compare(cli):
    transit = clout.load(ROOT / "examples/transit.clout")
    council = clout.load(ROOT / "examples/council.clout")
    pairs = [
        (clout.game(3, [2, 1, 1]), None, clout.game(4, [2, 1, 1]), None, ["[3; 2, 1, 1]", "[4; 2, 1, 1]"]),
        (clout.game(3, [2, 1, 1]), None, clout.game(5, [3, 2, 2]), None, ["[3; 2, 1, 1]", "[5; 3, 2, 2]"]),
        (transit, "budget", transit, "charter",
         ["examples/transit.clout", "examples/transit.clout", "--rule-a", "budget", "--rule-b", "charter"]),
        (council, None, clout.parse("[12; 5 x3, 1 x6]"), None, ["examples/council.clout", "[12; 5 x3, 1 x6]"]),
    ]
    for a, ra, b, rb, args in pairs:
        assert a.compare(b, ra, rb) == cli.json(["compare", *args])
    assert transit.compare(transit, "budget", "closure", by="position") == cli.json(
        ["compare", "examples/transit.clout", "examples/transit.clout",
         "--rule-a", "budget", "--rule-b", "closure", "--by", "position"]
    )


def test_report_options(cli):
    f = clout.load(ROOT / "examples/assembly.clout")
    args = ["report", "examples/assembly.clout"]
    assert f.report(ternary=True, attendance=0.8) == cli.json([*args, "--ternary", "--attendance", "0.8"])
    transit = clout.load(ROOT / "examples/transit.clout")
    assert transit.report("charter", engine="enumerate") == cli.json(
        ["report", "examples/transit.clout", "--rule", "charter", "--engine", "enumerate"]
    )
    # Over the budget the report approximates, with the same seeded figures.
    big = clout.game(600, list(range(1, 41)))
    assert big.report(budget=1000, seed=7, tolerance=0.01) == cli.json(
        ["report", "--game", "[600; " + ", ".join(map(str, range(1, 41))) + "]",
         "--budget", "1000", "--seed", "7", "--tolerance", "0.01"]
    )


@pytest.mark.parametrize("name", ["fit-shares.csv", "fit-populations.csv"])
def test_fit(cli, name):
    path = ROOT / "tests/data" / name
    with open(path, newline="") as handle:
        rows = [r for r in csv.reader(handle) if r and not r[0].startswith("#")]
    header, body = rows[0], rows[1:]
    targets = {m.strip(): float(v.strip().rstrip("%")) for m, v in body}
    populations = header[1].strip() == "population"
    got = clout.fit(targets, populations=populations, seconds=0.2)
    assert got == cli.json(["fit", rel(path), "--seconds", "0.2"])

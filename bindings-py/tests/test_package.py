"""The installed package: its names, stubs, docstrings and example script."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

import clout

from conftest import ROOT


def test_public_names_and_docstrings():
    assert set(clout.__all__) >= {"parse", "load", "game", "fit", "RuleFile", "RuleError", "Refused", "LimitError"}
    for name in ("parse", "load", "game", "fit"):
        assert getattr(clout, name).__doc__, name
    for method in ("report", "decide", "simplify", "compare", "sweep", "coalitions", "order", "image"):
        assert getattr(clout.RuleFile, method).__doc__, method
    assert issubclass(clout.RuleError, ValueError) and issubclass(clout.LimitError, clout.Refused)


def test_stubs_and_marker_are_installed():
    package = Path(clout.__file__).parent
    assert (package / "py.typed").exists()
    stubs = (package / "_clout.pyi").read_text()
    for name in ("def parse", "def load", "def game", "def fit", "class RuleFile", "def report", "def image"):
        assert name in stubs, name


def test_game_members_and_rules():
    g = clout.game(39, [7] * 5 + [1] * 10)
    assert g.members == [f"p{i}" for i in range(1, 16)] and g.rules == ["game"]
    report = g.report()
    # [39; 7 x5, 1 x10]: each ward of weight 7 has 848 swings (README, checked by the Rust doctest).
    assert report["members"][0]["swings"] == "848"
    assert report["members"][0]["veto"] is True


def test_the_example_script_runs():
    done = subprocess.run(
        [sys.executable, "bindings-py/examples/tour.py"], cwd=ROOT, capture_output=True, text=True, timeout=300
    )
    assert done.returncode == 0, done.stderr
    assert "weighted: True" in done.stdout and "line 2, column 27" in done.stdout


def test_load_reads_the_tables_beside_the_rule_file():
    f = clout.load(ROOT / "examples" / "treasury.clout")
    with open(ROOT / "examples" / "holders.csv") as table:
        rows = sum(1 for _ in table) - 1
    assert len(f.members) == rows
    assert f.members[0] == "0x5380315e7512aa1eddaf8184dbe5114bafb885b4"


def test_parse_takes_tables_by_the_path_written_in_the_text():
    text = 'members party from "parties.csv" name=name seats=seats\nrule pass = seats > 1/2\n'
    table = "name,seats\nleft,5\ncentre,3\nright,4\n"
    f = clout.parse(text, tables={"parties.csv": table})
    assert f.members == ["left", "centre", "right"]
    assert f.decide(yes=["left", "right"])["passed"] is True
    with pytest.raises(clout.RuleError) as missing:
        clout.parse(text)
    assert "parties.csv" in str(missing.value)
    assert (missing.value.line, missing.value.column) == (1, 20)

"""Bad input raises a clear exception with where and a hint, never a crash:
rule text errors as RuleError (line, column, message, hint, the command's
rendering), refusals as Refused or LimitError, wrong argument types as
TypeError."""

from __future__ import annotations

import re

import pytest

import clout

from conftest import ROOT

HOSTILE = sorted((ROOT / "tests/hostile").glob("*.clout"))


def test_rule_error_carries_line_column_message_hint():
    text = "member harbor seats=9\nmember mill seats=7\nbloc founders = harbour, mill\nrule r = founders\n"
    with pytest.raises(clout.RuleError) as caught:
        clout.parse(text, name="board.clout")
    e = caught.value
    assert isinstance(e, ValueError)
    assert (e.line, e.column) == (3, 17)
    assert e.message == "unknown member `harbour`"
    assert e.hint == "did you mean `harbor`?"
    assert e.text == str(e)
    assert e.text.startswith("board.clout:3:17: error: unknown member `harbour`\n")
    assert "   3 | bloc founders = harbour, mill\n" in e.text
    assert e.text.endswith("1 error in board.clout\n")
    assert len(e.diagnostics) == 1 and e.diagnostics[0].severity == "error"


def test_every_error_of_a_file_is_kept():
    with pytest.raises(clout.RuleError) as caught:
        clout.parse("member a seats=1\nrule r = seats >= 2 and b\n")
    e = caught.value
    assert [(d.line, d.column) for d in e.diagnostics] == [(2, 10), (2, 25)]
    assert (e.line, e.column) == (2, 10)
    assert e.diagnostics[1].message == "unknown name `b`"
    assert e.text.endswith("2 errors in <string>\n")


@pytest.mark.parametrize("path", HOSTILE, ids=[p.name for p in HOSTILE])
def test_hostile_files_fail_as_on_the_command_line(cli, path, monkeypatch):
    monkeypatch.chdir(ROOT)
    rel = str(path.relative_to(ROOT))
    done = cli.run(["report", rel])
    assert done.returncode == 2
    with pytest.raises(clout.RuleError) as caught:
        clout.load(rel)
    e = caught.value
    assert e.text == done.stderr
    where = re.match(re.escape(rel) + r":(\d+):(\d+): ", done.stderr)
    assert where, done.stderr
    assert (e.line, e.column) == (int(where[1]), int(where[2]))


def test_hostile_text_through_parse_has_the_same_place():
    for path in HOSTILE[:20]:
        raw = path.read_bytes()
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError:
            continue
        with pytest.raises(clout.RuleError) as from_text:
            clout.parse(text, name="x")
        with pytest.raises(clout.RuleError) as from_file:
            clout.load(path)
        assert (from_text.value.line, from_text.value.column) == (from_file.value.line, from_file.value.column)


def test_unreadable_file_is_an_os_error(tmp_path):
    with pytest.raises(FileNotFoundError):
        clout.load(tmp_path / "missing.clout")
    (tmp_path / "bad.clout").write_bytes(b"member a seats=1\n\xff\n")
    with pytest.raises(clout.RuleError) as caught:
        clout.load(tmp_path / "bad.clout")
    assert (caught.value.line, caught.value.column) == (2, 1)
    assert "not UTF-8" in caught.value.message


def test_refusals_name_the_offender_and_hint():
    f = clout.load(ROOT / "examples/transit.clout")
    with pytest.raises(clout.Refused) as caught:
        f.report("budgte")
    assert caught.value.message == "no rule named `budgte`"
    assert caught.value.hint == "did you mean `budget`?"
    assert caught.value.kind == "input"
    with pytest.raises(clout.Refused, match="unknown member `harbour`") as caught:
        f.decide(yes=["harbour"])
    assert caught.value.hint == "did you mean `harbor`?"
    with pytest.raises(clout.Refused, match="several attributes") as caught:
        f.sweep("charter")
    assert 'attribute="NAME"' in caught.value.hint  # Python's keyword, not the command's option
    with pytest.raises(clout.Refused, match="cannot be matched"):
        f.compare(clout.game(2, [1, 1]))


def test_limits_raise_limit_error():
    big = clout.game(100, list(range(1, 40)))
    with pytest.raises(clout.LimitError) as caught:
        big.report(exact=True, budget=1000)
    assert isinstance(caught.value, clout.Refused) and isinstance(caught.value, ValueError)
    assert caught.value.kind == "limit"
    assert "budget=STEPS" in caught.value.hint
    with pytest.raises(clout.LimitError, match="too large for the exact test"):
        clout.game(100, list(range(2, 27))).order()


@pytest.mark.parametrize(
    ("call", "words"),
    [
        (lambda f: f.report(engine="warp"), "engine: unknown value `warp`"),
        (lambda f: f.report(tolerance=0.9), "tolerance 0.9 is not a half-width"),
        (lambda f: f.report(attendance=1.5), "attendance 1.5 is not a chance"),
        (lambda f: f.coalitions(kind="largest"), "kind: unknown value `largest`"),
        (lambda f: f.decide(yes=["harbor"], rest="maybe"), "rest: unknown value `maybe`"),
        (lambda f: f.sweep(start=0.5), "start: 0.5 is not a quota"),
        (lambda f: f.sweep(step="5.%"), "is not a quota"),
        (lambda f: f.sweep(condition=9), "has no condition 9"),
        (lambda f: f.compare(f, by="size"), "by: unknown value `size`"),
        (lambda f: clout.game(3, [2, -1]), "weights[1] = -1 is not a weight"),
        (lambda f: clout.fit({"a": 1.0}, seconds=-1), "seconds -1 is not a time budget"),
        (lambda f: clout.fit({"a": -1.0, "b": 1.0}), "target"),
    ],
)
def test_bad_arguments_are_refused(call, words):
    f = clout.load(ROOT / "examples/transit.clout")
    with pytest.raises(clout.Refused) as caught:
        call(f)
    assert words in str(caught.value)
    assert caught.value.hint is None or caught.value.hint


def test_wrong_types_are_type_errors():
    f = clout.load(ROOT / "examples/transit.clout")
    with pytest.raises(TypeError):
        f.decide(yes="harbor")  # a string is not a list of names
    with pytest.raises(TypeError):
        clout.parse(42)
    with pytest.raises(TypeError):
        f.compare("examples/transit.clout")

"""Shared fixtures: the repository, the real `clout` command, the examples.

The command is `$CLOUT_BIN` if set, else the debug build of the workspace
(`cargo build -p clout-cli` runs once per session; after `cargo test` it
has nothing to do).
"""

from __future__ import annotations

import json
import os
import subprocess
from pathlib import Path
from typing import List, Optional, Sequence

import pytest

ROOT = Path(__file__).resolve().parents[2]
# Rule files that read tables (members from "FILE") need the tables passed
# in, which `clout.load` does not do yet; the Rust suite covers them.
EXAMPLES = sorted(
    p for p in (ROOT / "examples").glob("*.clout") if ' from "' not in p.read_text()
)


def rules_of(path: Path) -> List[str]:
    """The rule names of a file, read the way the command lists them."""
    import clout

    return clout.load(path).rules


class Cli:
    """Runs the `clout` command in the repository."""

    def __init__(self, binary: str) -> None:
        self.binary = binary

    def run(self, args: Sequence[str], stdin: Optional[str] = None) -> subprocess.CompletedProcess:
        return subprocess.run(
            [self.binary, *args],
            cwd=ROOT,
            input=stdin,
            capture_output=True,
            text=True,
            timeout=600,
        )

    def json(self, args: Sequence[str], stdin: Optional[str] = None):
        """`clout ARGS --format json`, parsed; fails the test on a non-zero exit."""
        done = self.run([*args, "--format", "json"], stdin)
        assert done.returncode == 0, f"clout {' '.join(args)}: {done.stderr}"
        return json.loads(done.stdout)


@pytest.fixture(scope="session")
def cli() -> Cli:
    binary = os.environ.get("CLOUT_BIN")
    if not binary:
        subprocess.run(["cargo", "build", "-q", "-p", "clout-cli"], cwd=ROOT, check=True)
        binary = str(ROOT / "target" / "debug" / "clout")
    return Cli(binary)

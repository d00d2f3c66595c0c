"""Exceptions raised by clout.

Every error of rule text is a :class:`RuleError`; every refused call (an
unknown name, an option out of range, a computation over its work budget)
is a :class:`Refused`, or a :class:`LimitError` when a limit would be
passed. Both are :class:`ValueError`; Ctrl-C raises ``KeyboardInterrupt``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import List, Optional, Sequence, Tuple


@dataclass(frozen=True)
class Diagnostic:
    """One error, warning or note about rule text."""

    line: int
    """1-based line."""
    column: int
    """1-based column (in characters)."""
    message: str
    """Short, lowercase, names the offender."""
    hint: Optional[str]
    """What to do about it, if anything helps."""
    severity: str
    """"error", "warning" or "note"."""


class RuleError(ValueError):
    """Rule text that does not compile.

    ``line``, ``column``, ``message`` and ``hint`` are those of the first
    diagnostic; ``diagnostics`` holds them all; ``text`` (also ``str(error)``)
    is the rendering the ``clout`` command prints, with the offending line
    and a caret under the cause.
    """

    line: int
    column: int
    message: str
    hint: Optional[str]
    text: str
    diagnostics: List[Diagnostic]

    def __init__(
        self,
        text: str,
        diagnostics: Sequence[Tuple[int, int, str, Optional[str], str]],
    ) -> None:
        super().__init__(text)
        self.text = text
        self.diagnostics = [Diagnostic(*d) for d in diagnostics]
        first = self.diagnostics[0] if self.diagnostics else Diagnostic(1, 1, text, None, "error")
        self.line = first.line
        self.column = first.column
        self.message = first.message
        self.hint = first.hint


class Refused(ValueError):
    """A call the library refused: ``message`` names the offender, ``hint``
    says what to do, ``kind`` is "input", "limit", "unsuitable" (a forced
    engine cannot take the rule) or "interrupted"."""

    message: str
    hint: Optional[str]
    kind: str

    def __init__(self, message: str, hint: Optional[str] = None, kind: str = "input") -> None:
        super().__init__(message if hint is None else f"{message}\n  = hint: {hint}")
        self.message = message
        self.hint = hint
        self.kind = kind


class LimitError(Refused):
    """A computation that would pass its work budget or memory limit (raise
    ``budget=`` or ``memory=``, or let the report approximate)."""

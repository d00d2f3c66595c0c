"""clout: exact voting power, decisions and drafting tools for weighted,
compound voting rules.

>>> import clout
>>> council = clout.game(39, [7] * 5 + [1] * 10)
>>> council.report()["members"][0]["swings"]
'848'

Every result is a dict with exactly the keys and values the ``clout``
command prints with ``--format json``: exact counts are decimal strings,
indices are floats. See the README's "From Python" section.
"""

from ._clout import CAUTION, MODEL, RuleFile, fit, game, load, parse
from ._errors import Diagnostic, LimitError, Refused, RuleError

__all__ = [
    "CAUTION",
    "Diagnostic",
    "LimitError",
    "MODEL",
    "Refused",
    "RuleError",
    "RuleFile",
    "fit",
    "game",
    "load",
    "parse",
]

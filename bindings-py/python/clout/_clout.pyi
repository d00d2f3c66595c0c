"""Type stubs of the extension module behind ``clout``.

Every result is the JSON of the matching ``clout`` command read by
``json.loads``: its keys are listed in the README ("From Python" and the
command sections). Exact counts, weights and quotas are decimal strings;
indices and probabilities are floats.
"""

from os import PathLike
from typing import Any, Dict, List, Mapping, Optional, Sequence, Union

Report = Dict[str, Any]
"""``clout report --format json``."""
Decision = Dict[str, Any]
"""``clout decide --format json``."""
Simplification = Dict[str, Any]
"""``clout simplify --format json``."""
Comparison = Dict[str, Any]
"""``clout compare --format json``."""
Sweep = Dict[str, Any]
"""``clout sweep --format json``."""
Coalitions = Dict[str, Any]
"""``clout coalitions --format json``."""
Order = Dict[str, Any]
"""``clout order --format json``."""
Fit = Dict[str, Any]
"""``clout fit --format json``."""
Level = Union[int, str]
"""An integer quota such as 58, or a share such as "62.5%"."""

MODEL: str
CAUTION: str

class RuleFile:
    """A compiled rule file: its members, rules and every analysis of them.

    Made by :func:`parse`, :func:`load` or :func:`game`. Methods take the
    rule's name (default: the file's first rule); computations release the
    GIL, and Ctrl-C stops them between steps.
    """

    @property
    def rules(self) -> List[str]:
        """Rule names, the first being the default."""
    @property
    def members(self) -> List[str]:
        """Member names in declaration order."""
    @property
    def attributes(self) -> List[str]:
        """Declared weight attributes."""
    @property
    def title(self) -> Optional[str]:
        """The file's title, if any."""
    @property
    def source(self) -> str:
        """The source text."""
    @property
    def name(self) -> str:
        """The name shown in messages: the path, "<string>" or "game"."""
    def report(
        self,
        rule: Optional[str] = None,
        *,
        engine: Optional[str] = None,
        exact: bool = False,
        budget: Optional[int] = None,
        memory: Optional[int] = None,
        tolerance: float = 0.001,
        seed: int = 1,
        ternary: bool = False,
        attendance: Optional[float] = None,
    ) -> Report:
        """Every member's swings and power indices and the rule's properties.

        ``engine``: "auto", "enumerate", "profile", "dense" or "diagram";
        ``budget``: most elementary steps (default 5e10); ``memory``: most
        bytes (default 2 GiB). Over a limit the report approximates (with a
        half-width on every figure) unless ``exact=True``, which raises
        :class:`LimitError` instead.
        """
    def decide(
        self,
        yes: Sequence[str] = ...,
        no: Sequence[str] = ...,
        abstain: Sequence[str] = ...,
        *,
        rest: Optional[str] = None,
        rule: Optional[str] = None,
    ) -> Decision:
        """The outcome of one vote, each condition's sums and the critical members.

        Lists hold members, groups, blocs, ranges ("rep1..rep218") or "all";
        ``rest`` is "no", "abstain" or "absent" (default: absent, or no when
        only ``yes`` is given).
        """
    def simplify(self, rule: Optional[str] = None, *, budget: Optional[int] = None) -> Simplification:
        """Dummies, and one weighted vote of least total or a proof that none exists."""
    def compare(
        self,
        other: "RuleFile",
        rule: Optional[str] = None,
        other_rule: Optional[str] = None,
        *,
        by: Optional[str] = None,
        budget: Optional[int] = None,
    ) -> Comparison:
        """Whether two rules pass the same coalitions; ``by`` is "name" or "position"."""
    def sweep(
        self,
        rule: Optional[str] = None,
        *,
        attribute: Optional[str] = None,
        condition: Optional[int] = None,
        start: Optional[Level] = None,
        stop: Optional[Level] = None,
        step: Optional[Level] = None,
        budget: Optional[int] = None,
    ) -> Sweep:
        """Indices and probability of passage as a quota moves (default 50% to 100% by 1%)."""
    def coalitions(
        self, rule: Optional[str] = None, *, kind: str = "minimal_winning", limit: int = 50
    ) -> Coalitions:
        """Minimal winning or ("minimal_blocking") minimal blocking coalitions."""
    def order(self, rule: Optional[str] = None) -> Order:
        """The members ordered by influence (Isbell's desirability relation)."""
    def image(self, rule: Optional[str] = None) -> bytes:
        """The rule as a binary image for devices and the C ABI (``clout compile``'s bytes)."""

def parse(
    text: str, name: str = "<string>", tables: Optional[Mapping[str, str]] = None
) -> RuleFile:
    """Compiles rule text; raises :class:`RuleError` with line and column.

    ``tables`` maps each table that a ``members NAME from "FILE"`` line
    reads, by the path written there, to its CSV or JSON text."""

def load(path: Union[str, "PathLike[str]"]) -> RuleFile:
    """Reads and compiles a rule file and the tables it reads (beside it);
    :class:`OSError` or :class:`RuleError`."""

def game(quota: int, weights: Sequence[int]) -> RuleFile:
    """The weighted game ``[quota; w1, ..., wn]`` (members p1..pn, rule "game")."""

def fit(
    targets: Mapping[str, float],
    *,
    populations: bool = False,
    seconds: float = 10.0,
    max_total: int = 10000,
) -> Fit:
    """Integer weights and a quota whose Banzhaf index is closest to the targets."""

"""The search every regime shares: the smallest candidate size that passes every check.

Table checks (no solve) run on every candidate first; the network is solved
only for candidates that pass them: the smallest such candidate alone, and if
it fails a network check, all the remaining ones together — so a sizing needs
one or two solves whatever the regime.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TypeVar

from .model import SizeEvaluation

Candidate = TypeVar("Candidate")
# evaluate(candidates, with_network) -> (one evaluation per candidate, number of network solves)
Evaluate = Callable[[Sequence[Candidate], bool], tuple[list[SizeEvaluation], int]]


@dataclass(frozen=True, slots=True)
class Search:
    table_only: tuple[SizeEvaluation, ...]  # every candidate, table checks only
    evaluated: tuple[SizeEvaluation, ...]  # every candidate, with network checks where they were solved
    chosen_index: int | None
    solves: int

    @property
    def chosen(self) -> SizeEvaluation | None:
        return None if self.chosen_index is None else self.evaluated[self.chosen_index]

    @property
    def rejected(self) -> tuple[SizeEvaluation, ...]:
        """Every size below the chosen one (all of them when none passes)."""
        return self.evaluated if self.chosen_index is None else self.evaluated[:self.chosen_index]


def governing_check(rejected: Sequence[SizeEvaluation], order: Sequence[str]) -> str | None:
    """The first check, in the regime's order, that the largest rejected size fails (None when none was rejected)."""
    if not rejected:
        return None
    failing = rejected[-1].failing
    return next(name for name in order if name in failing)


def smallest_passing(candidates: Sequence[Candidate], evaluate: Evaluate) -> Search:
    table_only, _ = evaluate(candidates, False)
    evaluated = list(table_only)
    passing = [k for k, ev in enumerate(table_only) if ev.passes]
    solves, chosen_k = 0, None
    if passing:
        (first,), solves = evaluate([candidates[passing[0]]], True)
        evaluated[passing[0]] = first
        if first.passes:
            chosen_k = passing[0]
        elif len(passing) > 1:
            rest, n = evaluate([candidates[k] for k in passing[1:]], True)
            solves += n
            for k, ev in zip(passing[1:], rest):
                evaluated[k] = ev
            chosen_k = next((k for k in passing[1:] if evaluated[k].passes), None)
    return Search(tuple(table_only), tuple(evaluated), chosen_k, solves)

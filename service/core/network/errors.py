"""Errors raised by the network solver.

Every error is a :class:`service.core.errors.CalcError` (the project-wide base
the HTTP layer maps to a 422 problem document) and additionally carries the ids
of the offending elements and the names of the offending nodes, plus a small
``data`` mapping of numbers that explain the failure (for example the largest
power a load could be given).  Lists are capped so that a pathological
1M-node request cannot produce a multi-megabyte error body; the detail text
says how many were left out.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

from service.core.errors import Blame, CalcError

# Enough to point a person at the problem; the full list of a million floating
# nodes helps nobody and would bloat the problem document.
MAX_LISTED = 50


def _cap(items: Iterable[str]) -> tuple[tuple[str, ...], int]:
    listed = tuple(dict.fromkeys(str(i) for i in items))
    return listed[:MAX_LISTED], max(0, len(listed) - MAX_LISTED)


class NetworkError(CalcError):
    """Base of all network-solver errors.

    Attributes beyond the base class: ``element_ids`` and ``node_names`` (the
    culprits, at most :data:`MAX_LISTED` each), ``omitted`` (how many culprits
    were not listed) and ``data`` (numbers explaining the failure).
    """

    CODE = "network_error"

    def __init__(
        self,
        detail: str,
        *,
        how_to_fix: str,
        element_ids: Iterable[str] = (),
        node_names: Iterable[str] = (),
        element_positions: Mapping[str, int] | None = None,
        data: Mapping[str, Any] | None = None,
    ) -> None:
        ids, more_ids = _cap(element_ids)
        nodes, more_nodes = _cap(node_names)
        if more_ids or more_nodes:
            detail += f" ({more_ids + more_nodes} more not listed)"
        positions = element_positions or {}
        # A blame points at the request's "elements" array when we know where
        # the element came from; otherwise at the id itself.
        blames = tuple(
            Blame(("elements", positions[i]) if i in positions else ("elements", i), f"element {i!r}")
            for i in ids
        )
        super().__init__(code=self.CODE, detail=detail, how_to_fix=how_to_fix, blames=blames)
        self.element_ids: tuple[str, ...] = ids
        self.node_names: tuple[str, ...] = nodes
        self.omitted_element_ids: int = more_ids
        self.omitted_node_names: int = more_nodes
        self.omitted: int = more_ids + more_nodes
        self.data: dict[str, Any] = dict(data or {})

    def __reduce__(self):
        # Pickled with its attributes, not through __init__ (which takes keyword arguments): a solve in a worker
        # process (worker.py) sends its error back this way.
        return _rebuilt, (type(self), dict(self.__dict__))


def _rebuilt(cls: type[NetworkError], state: dict[str, Any]) -> NetworkError:
    err = cls.__new__(cls)
    Exception.__init__(err, state["detail"])
    err.__dict__.update(state)
    return err


class EmptyNetworkError(NetworkError):
    CODE = "empty_network"


class InvalidNodeError(NetworkError):
    """A node reference that is empty, not text, unknown, or not usable."""

    CODE = "invalid_node_reference"


class DuplicateElementIdError(NetworkError):
    CODE = "duplicate_element_id"


class InvalidValueError(NetworkError):
    """A non-physical or non-finite parameter (negative resistance, zero length...)."""

    CODE = "non_physical_value"


class FloatingNodesError(NetworkError):
    """Nodes with no conducting path to the reference node: their voltage is undefined."""

    CODE = "floating_nodes"


class CurrentSourceCutsetError(NetworkError):
    """A group of nodes reached from the rest only through current sources (or opens)."""

    CODE = "current_source_cutset"


class VoltageSourceLoopError(NetworkError):
    """A loop made only of ideal voltage sources and zero-impedance branches."""

    CODE = "voltage_source_loop"


class SingularNetworkError(NetworkError):
    CODE = "singular_network"


class ResonanceError(SingularNetworkError):
    """Inductors and capacitors that cancel exactly at the network's frequency: no sinusoidal steady state."""

    CODE = "resonant_network"


class FactorTooLargeError(NetworkError):
    """The LU factors of the network's equations outgrew the memory budget (SolveOptions.factor_max_bytes).

    ``data``: ``factor_bytes`` (the factors' storage, estimated from their entry count) and ``limit_bytes``.
    """

    CODE = "network_too_costly"


class ConvergenceError(NetworkError):
    CODE = "no_convergence"


class DeadlineExceededError(ConvergenceError):
    """The Newton iteration ran out of its time budget (SolveOptions.deadline_s) before converging.

    A ConvergenceError (same code): the answer is not known, and the data say how
    far the iteration got (``iterations``, ``mismatch_a``, ``deadline_s``, ``elapsed_s``).
    """


class VoltageCollapseError(NetworkError):
    """Constant-power load(s) asking for more than the network can transfer."""

    CODE = "voltage_collapse"


class LoadUndervoltageError(NetworkError):
    """Load(s) whose operating voltage falls below the low-voltage guard."""

    CODE = "load_undervoltage"


class NonFiniteResultError(NetworkError):
    CODE = "non_finite_result"

"""The solver's internal form: every element reduced to a few primitive branch kinds.

Reducing eleven element types to four primitives keeps assembly, topology
checks and result extraction type-agnostic and vectorised:

ADMITTANCE  a linear two-terminal admittance y (resistors, impedances, cable
            runs, constant-impedance loads, AC inductors and capacitors)
BRANCH      a branch with its current as an unknown: v_a - v_b - Z*i = E.
            Ideal and non-ideal voltage sources, and every zero-impedance
            element (closed switch, DC inductor, 0-ohm resistor) as E = Z = 0,
            so their currents are reported instead of being lost in a merge.
INJECTION   an independent current drawn out of a and pushed into b
NONLINEAR   a constant-current or constant-power load, i = c*|v|^(k-2)*v
OPEN        no primitive (open switch, DC capacitor): current 0, voltage reported

Node indices are matrix indices, the reference node is -1 (see nodes.py).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

ADMITTANCE, BRANCH, INJECTION, NONLINEAR, OPEN = 0, 1, 2, 3, 4


@dataclass(frozen=True, slots=True, eq=False)
class Primitives:
    n: int  # number of non-reference nodes
    dtype: type  # np.float64 for DC, np.complex128 for AC
    adm_a: np.ndarray
    adm_b: np.ndarray
    adm_y: np.ndarray
    adm_owner: np.ndarray
    br_a: np.ndarray
    br_b: np.ndarray
    br_e: np.ndarray
    br_z: np.ndarray
    br_owner: np.ndarray
    inj_a: np.ndarray
    inj_b: np.ndarray
    inj_j: np.ndarray
    inj_owner: np.ndarray
    nl_a: np.ndarray
    nl_b: np.ndarray
    nl_c: np.ndarray  # i = c * |v|^(k-2) * v above the guard voltage
    nl_k: np.ndarray  # 1 = constant current, 0 = constant power
    nl_v0: np.ndarray  # rated voltage
    nl_vg: np.ndarray  # guard voltage (below it the load is a constant impedance)
    nl_s0: np.ndarray  # rated complex power (real at DC)
    nl_owner: np.ndarray
    open_a: np.ndarray
    open_b: np.ndarray
    open_owner: np.ndarray
    # Per element of Network.elements: which primitive kind it became and the
    # [start, stop) slice of that kind's arrays that belongs to it.
    elem_cat: np.ndarray
    elem_start: np.ndarray
    elem_stop: np.ndarray
    # The median |Z| of the impedance elements, and the elements whose small impedance put them in impedance form
    # (a BRANCH with Z != 0, their current an unknown) rather than admittance form: see SolveOptions.
    impedance_scale: float = 1.0
    impedance_form: tuple[int, ...] = ()

    @property
    def m(self) -> int:
        """Number of branch-current unknowns."""
        return int(self.br_a.size)


class PrimitiveBuilder:
    """Collects primitive chunks per element group, then concatenates once."""

    def __init__(self, n_elements: int, dtype: type) -> None:
        self.dtype = dtype
        self.chunks: dict[int, list[tuple[np.ndarray, ...]]] = {k: [] for k in range(5)}
        self.count = [0] * 5
        self.elem_cat = np.full(n_elements, OPEN, dtype=np.int8)
        self.elem_start = np.zeros(n_elements, dtype=np.int64)
        self.elem_stop = np.zeros(n_elements, dtype=np.int64)

    def add(self, cat: int, owners: np.ndarray, per_owner: int, *cols: np.ndarray) -> None:
        """Append primitives of one kind; ``per_owner`` consecutive rows per owner element.

        ``owners`` holds each owner once, in order; a single owner may own many
        rows (``per_owner`` = -1: all rows belong to owners[0]).
        """
        rows = cols[0].size
        if rows == 0 and owners.size == 0:
            return
        start = self.count[cat]
        if per_owner == -1:
            owner_rows = np.full(rows, owners[0], dtype=np.int64)
            self.elem_start[owners[0]] = start
            self.elem_stop[owners[0]] = start + rows
        else:
            owner_rows = owners if per_owner == 1 else np.repeat(owners, per_owner)
            first = start + per_owner * np.arange(owners.size)
            self.elem_start[owners] = first
            self.elem_stop[owners] = first + per_owner
        self.elem_cat[owners] = cat
        self.chunks[cat].append((*cols, owner_rows))
        self.count[cat] += rows

    def _cat(self, cat: int, ncols: int, dtypes: tuple[type, ...]) -> list[np.ndarray]:
        parts = self.chunks[cat]
        if len(parts) == 1:  # the usual case: one element type per primitive kind, no copy needed
            return [np.asarray(parts[0][c], dtype=dtypes[c]) for c in range(ncols)]
        if not parts:
            return [np.zeros(0, dtype=t) for t in dtypes]
        return [np.concatenate([np.asarray(p[c], dtype=dtypes[c]) for p in parts]) for c in range(ncols)]

    def build(self, n: int, impedance_scale: float = 1.0, impedance_form: tuple[int, ...] = ()) -> Primitives:
        i, f, d = np.int64, np.float64, self.dtype
        adm = self._cat(ADMITTANCE, 4, (i, i, d, i))
        br = self._cat(BRANCH, 5, (i, i, d, d, i))
        inj = self._cat(INJECTION, 4, (i, i, d, i))
        nl = self._cat(NONLINEAR, 8, (i, i, d, f, f, f, d, i))
        op = self._cat(OPEN, 3, (i, i, i))
        return Primitives(
            n, d, *adm, *br, *inj, *nl, *op, self.elem_cat, self.elem_start, self.elem_stop, impedance_scale,
            impedance_form,
        )


# The value columns of each primitive kind; the others (nodes, owners) are structure.
VALUE_FIELDS = {
    ADMITTANCE: ("adm_y",),
    BRANCH: ("br_e", "br_z"),
    INJECTION: ("inj_j",),
    NONLINEAR: ("nl_c", "nl_k", "nl_v0", "nl_vg", "nl_s0"),
    OPEN: (),
}


def _rows(start: np.ndarray, stop: np.ndarray) -> np.ndarray:
    """The rows [start_k, stop_k) of every k, concatenated."""
    lengths = stop - start
    if np.all(lengths == 1):
        return start
    return np.repeat(start - np.cumsum(lengths) + lengths, lengths) + np.arange(int(lengths.sum()))


def with_values_of(p: Primitives, sub: Primitives, owners: np.ndarray) -> Primitives | None:
    """``p`` with the values of elements ``owners`` taken from ``sub`` (their primitives alone).

    None when an element's primitives changed kind or count, or a branch
    changed between zero and non-zero impedance: then the structure is not
    the same (topology checks and stamp positions would change).
    """
    if not (np.array_equal(p.elem_cat[owners], sub.elem_cat[owners])
            and np.array_equal(p.elem_stop[owners] - p.elem_start[owners],
                               sub.elem_stop[owners] - sub.elem_start[owners])):
        return None
    changes: dict[str, np.ndarray] = {}
    cats = p.elem_cat[owners]
    for cat, fields in VALUE_FIELDS.items():
        sel = owners[cats == cat]
        if not fields or sel.size == 0:
            continue
        dst = _rows(p.elem_start[sel], p.elem_stop[sel])
        src = _rows(sub.elem_start[sel], sub.elem_stop[sel])
        for name in fields:
            column = getattr(p, name).copy()
            column[dst] = getattr(sub, name)[src]
            changes[name] = column
        if cat == BRANCH and not np.array_equal(p.br_z[dst] == 0, changes["br_z"][dst] == 0):
            return None
    return replace(p, **changes)

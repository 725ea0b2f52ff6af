"""Node names -> matrix indices, in O(number of node references).

Node k of the unknown vector is either an integer label (array elements and
names like "17") or a free-form name.  Integer labels are mapped with a dense
lookup array when they are reasonably compact (a 1M-node grid labelled
0..N-1 maps with a few vectorised numpy operations instead of a million
dict insertions); sparse huge labels fall back to np.unique + searchsorted.
The reference node gets index -1 everywhere: its row and column are dropped
from the matrix.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

import numpy as np

from .errors import InvalidNodeError

REF = -1


def int_label(name: str) -> int | None:
    """The integer a node name stands for, or None for a free-form name."""
    if name.isascii() and name.isdigit() and (name == "0" or name[0] != "0"):
        return int(name)
    return None


class NodeTable:
    """Bidirectional map between node names and unknown indices (reference = -1)."""

    __slots__ = ("reference", "_labels", "_lookup", "_named", "_named_index", "size")
    # _named_index maps every string name seen on a scalar element (and the
    # reference) to its index; array labels go through _lookup / searchsorted.

    def __init__(
        self,
        reference: str,
        names: Iterable[str],
        label_arrays: Sequence[np.ndarray],
    ) -> None:
        self.reference = reference
        named: dict[str, None] = {}
        scalar_labels: list[int] = []
        int_names: list[str] = []
        for name in names:
            if name == reference:
                continue
            lab = int_label(name)
            if lab is None:
                named[name] = None
            else:
                scalar_labels.append(lab)
                int_names.append(name)
        if not (int_names or label_arrays):  # free-form names only: no label arrays to build
            self._labels = np.zeros(0, dtype=np.int64)
            self._lookup = None
            self._named = list(named)
            self._named_index = {n: i for i, n in enumerate(self._named)}
            self._named_index[reference] = REF
            self.size = len(self._named)
            return
        ref_label = int_label(reference)
        if ref_label is not None:
            scalar_labels.append(ref_label)

        parts = [np.asarray(scalar_labels, dtype=np.int64), *label_arrays]
        total = sum(p.size for p in parts)
        top = max((int(p.max()) for p in parts if p.size), default=-1)
        if top < 4 * total + 1024:
            present = np.zeros(top + 1, dtype=bool)
            for p in parts:
                present[p] = True
            labels = np.flatnonzero(present)
        else:
            labels = np.unique(np.concatenate(parts))
            present = None
        if ref_label is not None:
            labels = labels[labels != ref_label]
        self._labels = labels
        if present is not None:
            lookup = np.full(top + 1, -2, dtype=np.int64)  # -2: label not in the network
            lookup[labels] = np.arange(labels.size)
            if ref_label is not None:
                lookup[ref_label] = REF
            self._lookup = lookup
        else:
            self._lookup = None
        named.pop(reference, None)
        self._named = list(named)
        base = labels.size
        self._named_index = {n: base + i for i, n in enumerate(self._named)}
        self._named_index[reference] = REF
        self.size = base + len(self._named)
        # Every scalar element's node name resolves with one dict lookup,
        # including integer-like names (mapped here in one vectorised call).
        if int_names:
            idx = self.label_indices(np.asarray(scalar_labels[: len(int_names)], dtype=np.int64))
            self._named_index.update(zip(int_names, idx.tolist()))

    # -- name -> index -------------------------------------------------
    def index(self, name: str) -> int:
        """Index of a node name; raises InvalidNodeError if the network has no such node."""
        if not isinstance(name, str) or not name:
            raise InvalidNodeError(
                f"node reference {name!r} is not a non-empty string",
                how_to_fix="name nodes with non-empty strings",
                node_names=[str(name)],
            )
        if name in self._named_index:
            return self._named_index[name]
        lab = int_label(name)
        if lab is not None:
            idx = self.label_indices(np.asarray([lab]), check=False)[0]
            if idx != -2:
                return int(idx)
        raise InvalidNodeError(
            f"node {name!r} is not a node of this network",
            how_to_fix="use a node name that appears on some element, or the reference node",
            node_names=[name],
        )

    def indices(self, names: Sequence[str]) -> np.ndarray:
        """Indices of node names that are known to be in the table (from element terminals)."""
        try:
            return np.fromiter(map(self._named_index.__getitem__, names), dtype=np.int64, count=len(names))
        except KeyError:
            return np.asarray([self.index(n) for n in names], dtype=np.int64)

    def label_indices(self, labels: np.ndarray, check: bool = True) -> np.ndarray:
        if self._lookup is not None:
            inside = labels < self._lookup.size
            if inside.all():
                return self._lookup[labels]
            out = np.full(labels.shape, -2, dtype=np.int64)
            out[inside] = self._lookup[labels[inside]]
            return out
        pos = np.searchsorted(self._labels, labels)
        pos_c = np.minimum(pos, max(self._labels.size - 1, 0))
        ok = self._labels.size > 0
        hit = (self._labels[pos_c] == labels) if ok else np.zeros(labels.shape, bool)
        ref_lab = int_label(self.reference)
        out = np.where(hit, pos_c, -2)
        if ref_lab is not None:
            out = np.where(labels == ref_lab, REF, out)
        return out

    # -- index -> name -------------------------------------------------
    def name(self, index: int) -> str:
        if index == REF:
            return self.reference
        if index < self._labels.size:
            return str(int(self._labels[index]))
        return self._named[index - self._labels.size]

    def names(self, indices: Iterable[int] | None = None) -> list[str]:
        if indices is None:
            return [str(x) for x in self._labels.tolist()] + self._named
        return [self.name(int(i)) for i in indices]

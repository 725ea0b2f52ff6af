"""Structural checks done before any matrix is factorised, each O(elements).

A singular MNA matrix usually has a structural cause a person can fix; naming
it ("node X has no path to the reference", "V1 and S3 form a loop") is far more
useful than "singular matrix".  Two graph facts cover the common causes:

1. Voltage-defining paths.  A node's voltage is fixed only if a chain of
   elements that relate branch voltage to current (admittances, voltage
   sources, shorts, loads) joins it to the reference.  Current sources, open
   switches and DC capacitors do not: they fix a current, not a voltage.
   Components of the graph of voltage-defining elements that miss the
   reference are floating; if current sources cross into such a component it
   is a current-source cut-set (KCL across it is decided by the sources alone).
   scipy.sparse.csgraph.connected_components does this in C.
2. Zero-impedance loops.  Ideal voltage sources and shorts (closed switches,
   DC inductors, 0-ohm parts) impose voltages; a loop made only of them either
   contradicts KVL or leaves a circulating current undetermined.  A connected
   component of that subgraph with at least as many edges as nodes contains a
   cycle (a tree has nodes - 1 edges); only for such components do we walk the
   edges in Python to name the elements, by repeatedly pruning degree-1 nodes:
   what survives (the 2-core) is exactly the set of edges on or between loops.
"""

from __future__ import annotations

from collections import defaultdict

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .errors import CurrentSourceCutsetError, FloatingNodesError, VoltageSourceLoopError
from .nodes import NodeTable
from .primitives import Primitives


def _components(n_nodes: int, a: np.ndarray, b: np.ndarray) -> tuple[int, np.ndarray]:
    """Connected components of the undirected graph with edges (a, b): (count, label per vertex)."""
    if a.size <= SMALL_GRAPH:
        return _union_find_labels(n_nodes, a.tolist(), b.tolist())
    g = sp.coo_matrix((np.ones(a.size, dtype=np.int8), (a, b)), shape=(n_nodes, n_nodes)).tocsr()
    return connected_components(g, directed=False)


# Up to this many edges, union-find in Python beats building a scipy.sparse
# graph for connected_components (about 60 us of fixed cost on the 2-core machine).
SMALL_GRAPH = 150


def _union_find_labels(n_nodes: int, ea: list[int], eb: list[int]) -> tuple[int, np.ndarray]:
    """Component labels (a root vertex per component, not numbered 0..k-1) and the component count."""
    parent = list(range(n_nodes))
    for x, y in zip(ea, eb):
        while parent[x] != x:
            parent[x] = x = parent[parent[x]]
        while parent[y] != y:
            parent[y] = y = parent[parent[y]]
        if x != y:
            parent[x] = y
    roots = []
    for v in range(n_nodes):
        r = v
        while parent[r] != r:
            r = parent[r]
        roots.append(r)
    return len(set(roots)), np.asarray(roots, dtype=np.int64)


def _labels_from_matrix(p: Primitives, matrix: sp.csc_matrix) -> np.ndarray:
    """Component labels of nodes 0..n-1 plus a reference vertex n, from the MNA pattern.

    The MNA matrix of a network without nonlinear loads already is the graph
    of voltage-defining elements: an admittance couples its two nodes
    directly, a branch couples each terminal to its current unknown n+k.  Only
    the reference (not in the matrix) is missing: it joins every component
    that holds a vertex with an element to the reference.  Reusing the pattern
    saves building a second graph of the same size (~15 ms at 100k nodes).
    """
    n, size = p.n, matrix.shape[0]
    g = sp.csr_matrix((np.ones(matrix.nnz), matrix.indices, matrix.indptr), shape=(size, size))
    # MNA patterns are structurally symmetric (every stamp has its mirror), so
    # strong components equal weak ones and scipy can skip the transpose.
    _, lab = connected_components(g, directed=True, connection="strong")
    k = np.arange(p.m) + n
    touching = np.concatenate([
        p.adm_a[p.adm_b < 0], p.adm_b[p.adm_a < 0], k[(p.br_a < 0) | (p.br_b < 0)],
    ])
    grounded = np.zeros(lab.max() + 2, dtype=bool)
    grounded[lab[touching]] = True
    out = np.empty(n + 1, dtype=np.int64)
    out[:n] = np.where(grounded[lab[:n]], -1, lab[:n])
    out[n] = -1
    return out


def check_topology(
    p: Primitives, table: NodeTable, ids: list[str], positions: dict[str, int],
    matrix: sp.csc_matrix | None = None,
) -> None:
    n = p.n
    ref = n  # the reference node is vertex n of the graphs below

    def vert(x: np.ndarray) -> np.ndarray:
        return np.where(x < 0, ref, x)

    # --- 1. floating parts and current-source cut-sets ---------------------
    if matrix is not None and p.nl_a.size == 0:
        labels = _labels_from_matrix(p, matrix)
    else:
        a = np.concatenate([p.adm_a, p.br_a, p.nl_a])
        b = np.concatenate([p.adm_b, p.br_b, p.nl_b])
        _, labels = _components(n + 1, vert(a), vert(b))
    floating = labels != labels[ref]
    if floating.any():
        float_nodes = np.flatnonzero(floating[:n])
        ia, ib = floating[vert(p.inj_a)], floating[vert(p.inj_b)]
        la, lb = labels[vert(p.inj_a)], labels[vert(p.inj_b)]
        crossing = (ia | ib) & (la != lb)
        oa, ob = floating[vert(p.open_a)], floating[vert(p.open_b)]
        open_touch = oa | ob
        node_names = table.names(float_nodes[:60])
        if crossing.any():
            culprits = [ids[i] for i in np.unique(p.inj_owner[crossing])]
            raise CurrentSourceCutsetError(
                f"current source(s) {', '.join(culprits[:10])} are the only connection of "
                f"{float_nodes.size} node(s) to the rest of the network, so the currents they force "
                "cannot flow (or their voltages are undefined)",
                how_to_fix="give those nodes a conducting path (a resistance, load or source) to the "
                "rest of the network, or remove the current sources",
                element_ids=culprits,
                node_names=node_names,
                element_positions=positions,
                data={"floating_node_count": int(float_nodes.size)},
            )
        culprits = [ids[i] for i in np.unique(np.concatenate([p.open_owner[open_touch], p.inj_owner[ia | ib]]))]
        raise FloatingNodesError(
            f"{float_nodes.size} node(s) have no conducting path to the reference node "
            f"{table.reference!r}: {', '.join(node_names[:10])}"
            + (f" (only open elements reach them: {', '.join(culprits[:10])})" if culprits else ""),
            how_to_fix="connect every part of the network to the reference node through some element "
            "(open switches, current sources and, at DC, capacitors do not count)",
            element_ids=culprits,
            node_names=node_names,
            element_positions=positions,
            data={"floating_node_count": int(float_nodes.size)},
        )

    # --- 2. loops of ideal voltage sources / shorts -------------------------
    zero = p.br_z == 0
    count = int(zero.sum())
    if count == 0:
        return
    za, zb = vert(p.br_a[zero]), vert(p.br_b[zero])
    if count <= SMALL and not _has_cycle(za.tolist(), zb.tolist()):
        return
    if count > SMALL:
        _, lab = _components(n + 1, za, zb)
        nodes_per = np.bincount(lab, minlength=lab.max() + 1)
        edges_per = np.bincount(lab[za], minlength=lab.max() + 1)
        bad = np.flatnonzero(edges_per >= nodes_per)
        if bad.size == 0:
            return
        in_bad = np.isin(lab[za], bad)
    else:
        in_bad = np.ones(count, dtype=bool)
    owners = p.br_owner[zero][in_bad]
    ea, eb = za[in_bad].tolist(), zb[in_bad].tolist()
    loop_edges = _two_core(ea, eb)
    culprits = list(dict.fromkeys(ids[owners[k]] for k in loop_edges))
    loop_nodes = sorted({x for k in loop_edges for x in (ea[k], eb[k])})
    raise VoltageSourceLoopError(
        f"ideal voltage sources and zero-impedance elements form a loop: {', '.join(culprits[:10])}",
        how_to_fix="break the loop (open a switch, remove a duplicate source) or give a source an "
        "internal impedance; note that at DC an inductor is a short",
        element_ids=culprits,
        node_names=[table.name(x if x != ref else -1) for x in loop_nodes],
        element_positions=positions,
    )


# Below this many zero-impedance branches a Python union-find is cheaper than
# building a sparse graph (a typical network has a handful of sources).
SMALL = 2000


def _has_cycle(ea: list[int], eb: list[int]) -> bool:
    parent: dict[int, int] = {}

    def find(v: int) -> int:
        root = v
        while parent.get(root, root) != root:
            root = parent[root]
        while parent.get(v, v) != root:  # path compression
            parent[v], v = root, parent[v]
        return root

    for x, y in zip(ea, eb):
        rx, ry = find(x), find(y)
        if rx == ry:
            return True
        parent[rx] = ry
    return False


def _two_core(ea: list[int], eb: list[int]) -> list[int]:
    """Indices of edges that survive repeated removal of degree-1 vertices."""
    adj: dict[int, set[int]] = defaultdict(set)
    for k, (x, y) in enumerate(zip(ea, eb)):
        adj[x].add(k)
        adj[y].add(k)
    alive = [True] * len(ea)
    stack = [v for v, es in adj.items() if len(es) == 1]
    while stack:
        v = stack.pop()
        if len(adj[v]) != 1:
            continue
        (k,) = adj[v]
        alive[k] = False
        for w in (ea[k], eb[k]):
            adj[w].discard(k)
            if len(adj[w]) == 1:
                stack.append(w)
    return [k for k in range(len(ea)) if alive[k]]

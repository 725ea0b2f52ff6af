"""An estimate of the LU factors' size made before factorising, from the matrix's sparsity pattern alone.

SuperLU (through scipy) offers no symbolic analysis, so the estimate is made here, O(nnz) and vectorised:
the pattern is made symmetric (A + A^T), ordered two ways, by reverse Cuthill-McKee (scipy.sparse.csgraph; good
for grids and meshes) and by a reversed depth-first order (good for radial networks, where RCM's envelope grows
with the tree's width), and the smaller envelope (profile) of the two is kept: for each row i of the permuted
matrix, i minus its first nonzero column.

What it bounds, exactly: Gaussian elimination WITHOUT pivoting in that order creates no fill outside the
envelope (George & Liu, Computer Solution of Large Sparse Positive Definite Systems, 1981, ch. 4: from memory),
so L (strictly lower) holds at most envelope entries and U (diagonal included) at most envelope + n:
``2 * envelope + n`` bounds the entries of that no-pivot LU.  It is NOT a bound on SuperLU's own factorisation,
which orders by minimum degree (MMD_AT_PLUS_A), pivots by rows and pads its supernodes: measured on this
project's 2-core machine, SuperLU stored 0.1-0.44 times this estimate on random topologies (300-20,000 nodes),
0.13-0.7 on grids of 900-100,000 nodes, 0.46-0.74 on random trees (1,000-20,000 nodes), but up to 1.48 times it on
small cubes (a 3-D lattice of 1,000 nodes; 0.94 at 13,824, 0.52 at 24,389) and 1.18 on a 225-node grid.  So it is
an estimate, with IN_PROCESS_MARGIN over the worst excess measured: a network whose estimate times the margin
fits the factor budget is factorised in-process; any other in a worker process with an address-space limit
(worker.py); and the factors are measured after every factorisation either way (linear.Factor).
tests/unit/test_network_fill_estimate.py checks the bound and these measured ratios on smaller sizes.

Cost (median of 15, the 2-core machine shared with other work, load about 4): 6 ms for a 24,000-node grid and
23 ms for a 100,000-node one, against about 0.1 s and 0.5 s for SuperLU's factorisation of the same matrices.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import depth_first_order, reverse_cuthill_mckee

from .linear import factor_bytes

# The estimate times this must fit the factor budget for a solve to stay in-process: SuperLU's stored entries came
# to at most 1.48 times the estimate on every shape measured (see above), so 2 leaves room over that.
IN_PROCESS_MARGIN = 2


def _envelope(pattern: sp.csr_matrix, perm: np.ndarray) -> int:
    """The envelope of a symmetric pattern (its diagonal included) in the order perm."""
    n = perm.size
    position = np.empty(n, dtype=np.int64)
    position[perm] = np.arange(n)
    first = np.minimum.reduceat(position[pattern.indices], pattern.indptr[:-1])  # no row is empty: the diagonal
    return int((position - first).sum())


def _leaves_first(pattern: sp.csr_matrix) -> np.ndarray:
    """A depth-first preorder of the pattern's graph from its first node, reversed (nodes it does not reach follow in
    their own order): in a tree every node comes after all of its descendants, so a radial network's envelope is
    about its node count times its depth, where RCM's grows with the tree's width."""
    order = depth_first_order(pattern, 0, directed=True, return_predecessors=False)[::-1]  # symmetric: directed
    if order.size < pattern.shape[0]:
        reached = np.zeros(pattern.shape[0], dtype=bool)
        reached[order] = True
        order = np.r_[order, np.flatnonzero(~reached)]
    return order


def envelope_order(matrix: sp.spmatrix) -> tuple[np.ndarray, int]:
    """Of reverse Cuthill-McKee and a reversed depth-first order of the symmetrised pattern of a square matrix, the
    one with the smaller envelope (grids and meshes: RCM; radial networks: depth-first), and that envelope: the sum
    over rows i of (i - the column of row i's first nonzero, the diagonal counted as a nonzero)."""
    n = matrix.shape[0]
    csc = sp.csc_matrix(matrix)
    # The pattern only, as ones (so that values cancelling in A + A^T cannot drop an entry): A's CSC arrays read
    # as CSR are A^T's pattern.
    ones = sp.csr_matrix((np.ones(csc.indices.size, dtype=np.int8), csc.indices, csc.indptr), shape=(n, n))
    pattern = (ones + ones.T + sp.identity(n, dtype=np.int8, format="csr")).tocsr()
    best = None
    for perm in (reverse_cuthill_mckee(pattern, symmetric_mode=True), _leaves_first(pattern)):
        size = _envelope(pattern, perm)
        if best is None or size < best[1]:
            best = (perm, size)
    return best


def envelope_entries(matrix: sp.spmatrix) -> int:
    """``2 * envelope + n``: the most entries the L and U of a no-pivot LU in RCM order can hold (see the module)."""
    return 2 * envelope_order(matrix)[1] + matrix.shape[0]


def estimated_factor_bytes(matrix: sp.spmatrix, real_form: bool = False) -> int:
    """factor_bytes of envelope_entries: the estimate compared with SolveOptions.factor_max_bytes.

    ``real_form``: the solve also factorises the real 2N x 2N form of this complex matrix (Newton's Jacobian with
    constant-power loads in AC). Each complex entry becomes a 2 x 2 real block; ordered block by block, its envelope
    is 4 * envelope + n, so its bound is 4 times the entries, of 8-byte values.
    """
    entries = envelope_entries(matrix)
    size = factor_bytes(entries, matrix.dtype)
    if real_form:
        size = max(size, factor_bytes(4 * entries, np.dtype(np.float64)))
    return size

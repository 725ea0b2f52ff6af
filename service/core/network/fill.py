"""An estimate of the LU factors' size made before factorising, from the matrix's sparsity pattern alone.

SuperLU (through scipy) offers no symbolic analysis, so the estimate is made here, O(nnz) and vectorised:
the pattern is made symmetric (A + A^T), ordered by reverse Cuthill-McKee (scipy.sparse.csgraph), and the
envelope (profile) of the permuted matrix is counted: for each row i, i minus its first nonzero column.

What it bounds, exactly: Gaussian elimination WITHOUT pivoting in that RCM order creates no fill outside the
envelope (George & Liu, Computer Solution of Large Sparse Positive Definite Systems, 1981, ch. 4: from memory),
so L holds at most envelope + n entries (its diagonal included) and U at most envelope + n; ``2 * envelope + n``
(L's unit diagonal counted once)
bounds the entries of that no-pivot LU.  It is NOT a bound on SuperLU's own factorisation, which orders by minimum
degree (MMD_AT_PLUS_A), pivots by rows and pads its supernodes: measured on this project's 2-core machine,
SuperLU stored 0.07-0.44 times this bound on random topologies (300-20,000 nodes), 0.13-0.7 on grids of
900-100,000 nodes, but up to 1.48 times it on small cubes (a 3-D lattice of 1,000 nodes; 0.94 at 13,824, 0.52 at
24,389) and 1.18 on a 225-node grid.  So it is an estimate, with IN_PROCESS_MARGIN over the worst excess measured:
a network whose estimate times the margin fits the factor budget is factorised in-process; any other in a worker
process with an address-space limit (worker.py); and the factors are measured after every factorisation either
way (linear.Factor).  tests/unit/test_network_fill_estimate.py checks the bound and these measured ratios.

Cost: about 5 ms for a 24,000-node grid and 25 ms for a 100,000-node one (RCM and the envelope about
half each), against 0.1 s and 0.5 s for SuperLU's factorisation of the same matrices.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import reverse_cuthill_mckee

from .linear import factor_bytes

# The estimate times this must fit the factor budget for a solve to stay in-process: SuperLU's stored entries came
# to at most 1.48 times the estimate on every shape measured (see above), so 2 leaves room over that.
IN_PROCESS_MARGIN = 2


def envelope_order(matrix: sp.spmatrix) -> tuple[np.ndarray, int]:
    """The RCM permutation of the symmetrised pattern of a square matrix, and the envelope size in that order:
    the sum over rows i of (i - the column of row i's first nonzero, the diagonal counted as a nonzero)."""
    n = matrix.shape[0]
    coo = matrix.tocoo()
    # The pattern only: ones, so that values cancelling in A + A^T cannot drop an entry.
    ones = np.ones(coo.nnz, dtype=np.int8)
    pattern = sp.csr_matrix((np.r_[ones, ones], (np.r_[coo.row, coo.col], np.r_[coo.col, coo.row])), shape=(n, n))
    perm = reverse_cuthill_mckee(pattern, symmetric_mode=True)
    position = np.empty(n, dtype=np.int64)
    position[perm] = np.arange(n)
    first = np.arange(n)  # the diagonal: every row's first nonzero is at most its own column
    np.minimum.at(first, position[coo.row], position[coo.col])
    np.minimum.at(first, position[coo.col], position[coo.row])
    return perm, int((np.arange(n) - first).sum())


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

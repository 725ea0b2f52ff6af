"""Ampline: electrical-calculation service."""

import os

# One BLAS/LAPACK thread per process, unless the operator says otherwise.  Our solves are small dense ones
# or sparse ones (SuperLU, which gains little from BLAS threads), and an idle OpenBLAS pool spins: measured
# with load_tests/load.py, a lead-chain request cost 10 ms of server CPU with the default pool and 4.8 ms
# with one thread on the 2-core machine.  Throughput scales with AMPLINE_WORKERS and replicas instead.
# Set before numpy is first imported (the service package is imported first by every entry point).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

__version__ = "0.1.0"
API_VERSION = "1.0.0"

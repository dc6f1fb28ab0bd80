"""Numba options for the scan kernels (shared with the rest of the package)."""

from trundle.core._jit import JIT_OPTIONS, PARALLEL_OPTIONS

__all__ = ["JIT_OPTIONS", "PARALLEL_OPTIONS"]

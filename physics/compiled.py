"""Compiled kernels: the one decorator every compiled inner loop of the physics uses.

A few inner loops of the physics (the reliability-level search over the wind points of each
group, the crossing scores, the interpolation of the solving grid) are many small passes
over short axes per case; written as numpy they are bound by temporaries and call overhead,
not by arithmetic. There the numpy path is *replaced* by a kernel compiled with Numba
(``numba.njit``): the kernel is the only implementation, it loops over the cases inside
compiled code, and its public wrapper keeps the module's array interface (arrays in, arrays
out, SI units). Closed forms and brute-force references stay in the tests.

Settings, the same for every kernel:

- ``cache=True``: the machine code is cached beside the source (``__pycache__``) or, where
  that folder is read-only, in Numba's user cache; a new process (a chunk worker, a Dask
  worker) loads it instead of compiling again. ``NUMBA_CACHE_DIR`` moves the cache.
- ``nogil=True``: threads of one process can run kernels side by side.
- ``error_model="numpy"``: a division by zero gives inf or NaN as numpy does, no exception.
- no ``fastmath``: IEEE arithmetic in the order written, so a kernel can be checked against a
  plain loop to the last bit.

Planning estimates only: the aircraft flight manual, the operator's approved performance
methods and local regulations govern.
"""

from __future__ import annotations

import numba

#: Options of every compiled kernel (see the module docstring).
KERNEL_OPTIONS = {"cache": True, "nogil": True, "error_model": "numpy"}


def kernel(func):
    """Compile ``func`` as a kernel (lazily, on first call, for the argument types seen)."""
    return numba.njit(**KERNEL_OPTIONS)(func)

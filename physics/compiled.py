"""Compiled kernels: the one decorator every compiled inner loop of the physics uses.

A few inner loops of the physics (the reliability-level search over the wind points of each
group, the crossing scores, the interpolation of the solving grid, the ground segments' roots
and integrals) are many small passes over short axes per case; written as numpy they are bound
by temporaries and call overhead, not by arithmetic. There the numpy path is *replaced* by a
kernel compiled with Numba (``numba.njit``): the kernel is the only implementation, it loops
over the cases inside compiled code, and its public wrapper keeps the module's array interface
(arrays in, arrays out, SI units). Closed forms and brute-force references stay in the tests.

Settings, the same for every kernel:

- ``cache=True``: the machine code is cached beside the source (``__pycache__``) or, where
  that folder is read-only, in Numba's user cache; a new process (a chunk worker, a Dask
  worker) loads it instead of compiling again. ``NUMBA_CACHE_DIR`` moves the cache.
- ``nogil=True``: threads of one process can run kernels side by side.
- ``error_model="numpy"``: a division by zero gives inf or NaN as numpy does, no exception.
- no ``fastmath``: IEEE arithmetic in the order written, so a kernel can be checked against a
  plain loop to the last bit.

Numba is imported when the first kernel is called, not when a module that defines kernels is
imported: a process that never runs one (the main process of a large run, whose chunks and
landing blocks are solved in worker processes; a command that only reads the store) does not
carry the compiler (about 60 MB, and about 50 MB more once it has run). At that first call every
kernel defined so far becomes a Numba dispatcher in its module's namespace, so kernels calling
each other (module globals) are compiled as one; a kernel defined later is made one at once.

Planning estimates only: the aircraft flight manual, the operator's approved performance
methods and local regulations govern.
"""

from __future__ import annotations

import threading

#: Options of every compiled kernel (see the module docstring).
KERNEL_OPTIONS = {"cache": True, "nogil": True, "error_model": "numpy"}

_LOCK = threading.RLock()
_PENDING: list["_Kernel"] = []  # defined before the compiler was loaded
_NAMESPACES: dict[int, dict] = {}  # the modules that define kernels
_NUMBA = None  # the numba module, once loaded


class _Kernel:
    """A kernel whose compiler is not loaded yet; the first call loads it (for every kernel)."""

    def __init__(self, func):
        self.func = func
        self.dispatcher = None
        self.__name__ = func.__name__
        self.__qualname__ = getattr(func, "__qualname__", func.__name__)
        self.__doc__ = func.__doc__
        self.__module__ = func.__module__
        self.__wrapped__ = func

    def __call__(self, *args, **kwargs):
        if self.dispatcher is None:
            _load_compiler()
        return self.dispatcher(*args, **kwargs)


def _dispatcher(kern: _Kernel) -> None:
    """Make ``kern`` a Numba dispatcher and put it in its module's namespace in its place."""
    kern.dispatcher = _NUMBA.njit(**KERNEL_OPTIONS)(kern.func)
    namespace = kern.func.__globals__
    if namespace.get(kern.func.__name__) is kern:
        namespace[kern.func.__name__] = kern.dispatcher


def _load_compiler() -> None:
    global _NUMBA
    with _LOCK:
        if _NUMBA is None:
            import numba

            _NUMBA = numba
        while _PENDING:
            _dispatcher(_PENDING.pop())
        # a kernel imported by name into another module is replaced there too
        for namespace in _NAMESPACES.values():
            for name, value in list(namespace.items()):
                if isinstance(value, _Kernel) and value.dispatcher is not None:
                    namespace[name] = value.dispatcher


def kernel(func):
    """Compile ``func`` as a kernel (on first call, for the argument types seen)."""
    with _LOCK:
        kern = _Kernel(func)
        _NAMESPACES[id(func.__globals__)] = func.__globals__
        if _NUMBA is None:
            _PENDING.append(kern)
        else:
            _dispatcher(kern)
            return kern.dispatcher
    return kern

"""The LAPACK and BLAS routines of the dense basis factors, without importing scipy.linalg.

The engine's dense bases need five routines: dgetrf, dgetrs, dtrtrs and dgetri (LAPACK)
and dger (BLAS), the very functions `scipy.linalg.lapack` and `scipy.linalg.blas`
re-export from scipy's compiled wrapper modules `scipy.linalg._flapack` and
`scipy.linalg._fblas`. Importing `scipy.linalg` for them costs about 0.15 s of CPU (0.07 s
of it scipy's array-API layer), more than a small blend's whole solve; loading the two
compiled modules directly, without running the `scipy` and `scipy.linalg` package
initialisers, costs about 0.011 s (measured on the blendkit machine, scipy 1.17.1).

This relies on scipy's file layout: the two extension files sit in scipy's `linalg`
folder under those names. They are loaded under their real names and registered in
`sys.modules`, so that when `scipy.linalg` is imported later in the same process (the
sparse path, the benchmarks, the tests) its `from scipy.linalg import _flapack` finds the
same module object: each extension is initialised once, and `scipy.linalg.lapack.dgetrf`
*is* `lapack.dgetrf` here (tests/test_engine_lapack.py checks both orders). scipy reaches
the two modules only through such import statements (scipy 1.17.1), which find them in
`sys.modules`; the package attribute `scipy.linalg._flapack`, which the import system
sets when it loads the module itself, is then not set.

Whenever anything goes wrong (scipy's layout differs, a file is missing or fails to load,
a routine is absent) this falls back to ``from scipy.linalg import lapack, blas``; when
`scipy.linalg` is already imported, it is simply used.
"""

from __future__ import annotations

import importlib.machinery
import importlib.util
import os
import sys
from types import ModuleType

# The routines the engine calls (basis_factor), by compiled module.
LAPACK_ROUTINES = ("dgetrf", "dgetrs", "dtrtrs", "dgetri")
BLAS_ROUTINES = ("dger",)


def _extension_path(folder: str, short: str) -> str:
    """The file of compiled module `short` in `folder`, under any suffix this Python loads."""
    for suffix in importlib.machinery.EXTENSION_SUFFIXES:
        path = os.path.join(folder, short + suffix)
        if os.path.isfile(path):
            return path
    raise ImportError(f"no compiled {short} in {folder}")


def _load_compiled(short: str, routines: tuple[str, ...]) -> ModuleType:
    """scipy.linalg.<short> loaded directly (one already in sys.modules reused), checked to
    hold `routines`, and only then registered in sys.modules under its real name."""
    name = f"scipy.linalg.{short}"
    module = sys.modules.get(name)
    if module is None:
        scipy_spec = importlib.util.find_spec("scipy")  # finds the package without running it
        if scipy_spec is None or not scipy_spec.submodule_search_locations:
            raise ImportError("scipy not found")
        path = _extension_path(os.path.join(scipy_spec.submodule_search_locations[0], "linalg"), short)
        loader = importlib.machinery.ExtensionFileLoader(name, path)
        spec = importlib.util.spec_from_file_location(name, path, loader=loader)
        module = importlib.util.module_from_spec(spec)
        loader.exec_module(module)
    missing = [routine for routine in routines if not callable(getattr(module, routine, None))]
    if missing:
        raise ImportError(f"{name} lacks {', '.join(missing)}")
    sys.modules.setdefault(name, module)
    return module


def _routines() -> tuple[ModuleType, ModuleType, bool]:
    """(LAPACK module, BLAS module, True when loaded directly); scipy.linalg's own when it
    is imported already or the direct load fails in any way."""
    if "scipy.linalg" not in sys.modules:
        try:
            return _load_compiled("_flapack", LAPACK_ROUTINES), _load_compiled("_fblas", BLAS_ROUTINES), True
        except Exception:  # any failure: scipy's own import below, which reports its own errors
            pass
    from scipy.linalg import blas as scipy_blas, lapack as scipy_lapack

    return scipy_lapack, scipy_blas, False


lapack, blas, direct = _routines()

"""CoolProp's fluid library, loaded in the background while the command imports the rest.

Importing CoolProp (7.2) builds its whole fluid library, the equations of state and the
superancillary equations of all its fluids: about 0.6 s of a 1.6 s demo run, spent in one
call that holds Python's global interpreter lock, so nothing else in the process moves
meanwhile (measured in benchmarks/bench_outputs.py). :func:`start` makes that same call
through the library's C interface in a thread instead (ctypes lets go of the lock during a
foreign call), while the command imports NumPy and SciPy on the other core, and puts an
import hook in front of CoolProp: an import of CoolProp, from anywhere in the process,
first waits for the load to end. The library then finds its fluids loaded and does not
load them again (``get_fluid_list`` loads only an empty library).

Nothing is started when anything is not as expected (CoolProp already imported, no
library file, no such function in it: another build or platform); CoolProp then loads as
usual on import. A fork waits for the load to end (a child would get half a library;
the command starts its plotting helpers before the load, so they do not wait), and so
does the process's exit.
"""
from __future__ import annotations

import atexit
import os
import sys
import threading

#: the C interface's ``long get_global_param_string(const char*, char*, int)``, under the
#: names builds export it by: C++ (Itanium ABI, Linux and macOS wheels) and C
FUNCTIONS = ("_Z23get_global_param_stringPKcPci", "get_global_param_string")
#: the parameter whose answer needs the fluid library loaded
PARAMETER = b"fluids_list"
BUFFER = 1 << 16  # [bytes] room for the list of fluid names

_loader: threading.Thread | None = None
_outcome: dict = {}


def library_file() -> str | None:
    """Path of CoolProp's compiled module, found without importing CoolProp."""
    import importlib.machinery
    import importlib.util
    try:
        spec = importlib.util.find_spec("CoolProp")
    except (ImportError, ValueError):
        return None
    if spec is None or not spec.submodule_search_locations:
        return None
    for folder in spec.submodule_search_locations:
        for suffix in importlib.machinery.EXTENSION_SUFFIXES:
            path = os.path.join(folder, "CoolProp" + suffix)
            if os.path.isfile(path):
                return path
    return None


def _load(ctypes, path: str) -> None:
    """The thread's work: open the library and ask it for its fluids (which loads them).
    Never raises; what happened is left in ``_outcome``. It imports nothing: an import of
    CoolProp waits for this thread while holding the import lock."""
    try:
        lib = ctypes.CDLL(path)
        for name in FUNCTIONS:
            try:
                function = lib[name]
                break
            except AttributeError:
                continue
        else:
            _outcome["skipped"] = "no C interface found"
            return
        function.argtypes = (ctypes.c_char_p, ctypes.c_char_p, ctypes.c_int)
        function.restype = ctypes.c_long
        answer = ctypes.create_string_buffer(BUFFER)
        ok = function(PARAMETER, answer, BUFFER)  # catches its own errors, returns 0
        _outcome["fluids"] = answer.value.count(b",") + 1 if ok else 0
    except Exception as exc:  # CoolProp then loads on import as usual
        _outcome["skipped"] = f"{type(exc).__name__}: {exc}"


def wait() -> dict:
    """Wait for the background load (if any) to end; what it did."""
    loader = _loader
    if loader is not None and loader is not threading.current_thread():
        loader.join()
    return dict(_outcome)


class _WaitBeforeImport:
    """Import hook: an import of CoolProp waits for the background load first."""

    def find_spec(self, name, path=None, target=None):
        if name == "CoolProp" or name.startswith("CoolProp."):
            wait()
            try:
                sys.meta_path.remove(self)
            except ValueError:
                pass
        return None  # the usual finders import it


def start() -> bool:
    """Start loading CoolProp's fluid library in the background; False when it is not
    (CoolProp imported already, a load started already, no library file found, no
    ctypes in this Python, or the environment sets ``CVSIM_PRELOAD=0``)."""
    global _loader
    if (_loader is not None or "CoolProp" in sys.modules
            or os.environ.get("CVSIM_PRELOAD", "").strip() == "0"):
        return False
    path = library_file()
    if path is None:
        return False
    try:
        import ctypes  # here: the thread must import nothing (see _load)
    except ImportError:  # a Python built without it: CoolProp loads as usual
        return False
    sys.meta_path.insert(0, _WaitBeforeImport())
    _loader = threading.Thread(target=_load, args=(ctypes, path),
                               name="cvsim-coolprop-load", daemon=True)
    _loader.start()
    atexit.register(wait)  # not torn down under a load still running
    if hasattr(os, "register_at_fork"):  # a child would get half a library: fork after it
        os.register_at_fork(before=wait)
    return True


__all__ = ["library_file", "start", "wait"]

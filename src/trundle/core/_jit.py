"""Numba options in one place, so every kernel compiles the same way and is cached on disk.

Compiled kernels are cached in a per-user cache folder, not inside the installed package
(which may be read-only, shared between users, or part of a signed installation):
``$XDG_CACHE_HOME/trundle/numba`` (``~/.cache/trundle/numba`` by default). A user who sets
``NUMBA_CACHE_DIR`` keeps their choice. :func:`use_user_cache` runs before numba is imported
(from ``trundle/__init__.py``); numba reads the variable once, at its import.
"""

from __future__ import annotations

import atexit
import hashlib
import os
from pathlib import Path

JIT_OPTIONS = {"cache": True, "nogil": True}
PARALLEL_OPTIONS = {**JIT_OPTIONS, "parallel": True}


def _kernel_sources_digest() -> str:
    """A short hash of every module that holds compiled code. numba checks only the stamp of
    the file a kernel is written in, so a kernel that calls another module's kernel (the
    fleet scan calls the envelope's loop body) could load a stale compiled copy after that
    other module changed; a folder per version of the sources rules that out."""
    package = Path(__file__).resolve().parents[1]
    digest = hashlib.sha256()
    for path in sorted(package.rglob("*.py")):
        text = path.read_bytes()
        if b"njit" in text:
            digest.update(path.relative_to(package).as_posix().encode())
            digest.update(text)
    return digest.hexdigest()[:16]


def user_cache_folder() -> Path:
    """Where trundle keeps compiled kernels for this user (one folder per version of the
    kernels' sources)."""
    base = os.environ.get("XDG_CACHE_HOME") or ""
    root = Path(base) if base and Path(base).is_absolute() else Path.home() / ".cache"
    return root / "trundle" / "numba" / _kernel_sources_digest()


def use_user_cache() -> None:
    """Set ``NUMBA_CACHE_DIR`` to :func:`user_cache_folder` unless the user has set it."""
    if os.environ.get("NUMBA_CACHE_DIR"):
        return
    try:
        os.environ["NUMBA_CACHE_DIR"] = str(user_cache_folder())
    except RuntimeError:  # no home folder to be found: numba's own default applies
        pass


def interpreted_copies(*dispatchers) -> dict:
    """Plain-Python copies of compiled functions (their own source, run by the interpreter),
    calling one another's copies instead of the compiled ones: calling a compiled function
    from Python would compile it, which is what the copies are there to avoid. Give every
    compiled function the copies may reach; they see the globals of all their modules.
    Returns name → copy."""
    import types

    # with NUMBA_DISABLE_JIT set, njit gives back the plain functions themselves
    sources = [getattr(d, "py_func", d) for d in dispatchers]
    namespace: dict = {}
    for source in sources:
        namespace.update(source.__globals__)
    copies = {}
    for source in sources:
        copies[source.__name__] = types.FunctionType(source.__code__, namespace,
                                                     source.__name__, source.__defaults__,
                                                     source.__closure__)
    namespace.update(copies)
    return copies


class FirstRunTier:
    """Runs a compiled function's interpreted copy instead of compiling it, while that is
    cheaper. Until the compiled code is at hand (compiled in this process, or in numba's disk
    cache), calls whose estimated work fits in what is left of ``budget`` run the interpreted
    copy; the first call beyond it compiles (and numba caches the result on disk), and from
    then on every call runs compiled. The interpreted copy runs the same statements in the
    same order, so it gives the same floating-point results (the tests check them bit for
    bit).

    The budget is about half the compile's own cost, and it is spent once per user and version
    of the kernels, not once per process: what each process interpreted is added up in a small
    ledger file beside numba's cache, so a user who only ever runs small jobs still gets the
    compiled code after a while. The worst case (the whole budget interpreted, then the
    compile) costs about 1.5 times the compile, once; a small first job costs its interpreted
    time instead of seconds of compiling; a process that finds the cache warm never
    interprets."""

    def __init__(self, compiled, reached: list, budget: float) -> None:
        self.compiled_function = compiled
        self.reached = reached  # every compiled function the copy may call, itself included
        self.compiled = False  # the compiled code is in use from now on
        self.probed = False  # numba's disk cache and the ledger were read once
        self.budget = float(budget)
        self.spent = 0.0  # interpreted work of this process, not yet in the ledger
        self.ledger: Path | None = None  # the ledger file, found when the cache is probed
        self._copy = None

    def interpreted(self):
        """The interpreted copy (made on first need)."""
        if self._copy is None:
            self._copy = interpreted_copies(*self.reached)[self.compiled_function.__name__]
        return self._copy

    def function(self, args: tuple, work: float):
        """What to call ``args`` with, the call estimated at ``work`` (in the budget's unit)."""
        if self.compiled:
            return self.compiled_function
        if not self.probed:
            self.probed = True
            if compiled_without_compiling(self.compiled_function, args):
                self.compiled = True
                return self.compiled_function
            self.ledger = self._ledger()  # where it is now, not where it is at exit
            self.budget -= _ledger_read(self.ledger)
            atexit.register(self._write_ledger)
        if work > self.budget:
            self.compiled = True  # worth compiling now
            return self.compiled_function
        self.budget -= work
        self.spent += work
        return self.interpreted()

    def use_compiled(self) -> None:
        """Run compiled from now on (compiling on the next call if need be)."""
        self.compiled = True

    def _ledger(self) -> Path | None:
        folder = os.environ.get("NUMBA_CACHE_DIR")
        if not folder:
            return None
        name = self.compiled_function.__name__.strip("_")
        return Path(folder) / f"trundle-interpreted-{name}-{_kernel_sources_digest()}.txt"

    def _write_ledger(self) -> None:
        if self.spent > 0.0:
            _ledger_add(self.ledger, self.spent)
            self.spent = 0.0


def _ledger_read(path: Path | None) -> float:
    """Work interpreted so far by earlier processes (0 when there is no ledger)."""
    try:
        return max(0.0, float(path.read_text().strip())) if path else 0.0
    except (OSError, ValueError):
        return 0.0


def _ledger_add(path: Path | None, work: float) -> None:
    """Add ``work`` to the ledger, replacing the file whole (a reader never sees half of it);
    a folder that cannot be written only means the budget is not remembered."""
    if path is None:
        return
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        partial = path.with_name(f"{path.name}.{os.getpid()}.part")
        partial.write_text(f"{_ledger_read(path) + work:.0f}\n")
        os.replace(partial, path)
    except OSError:
        pass


def compiled_without_compiling(dispatcher, args: tuple) -> bool:
    """Whether calling ``dispatcher`` with ``args`` would run machine code already compiled
    in this process or in numba's disk cache, rather than compile it now. Reads numba's
    cache index the way numba does (same key, same check of the source's stamp); if numba's
    private layout ever changes, the answer is False, which costs time, never a result."""
    try:
        signature = tuple(dispatcher.typeof_pyval(a) for a in args)
        if signature in dispatcher.overloads:
            return True
        cache = dispatcher._cache
        key = cache._index_key(signature, dispatcher.targetctx.codegen())
        return key in cache._cache_file._load_index()
    except Exception:  # noqa: BLE001 - a probe of numba's internals; any failure means "no"
        return False

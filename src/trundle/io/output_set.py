"""Output sets written whole: a run's files appear together or not at all — the one way every
command writes ``--out DIR``.

A command that writes several files into ``--out DIR`` (tables, JSON, figures, a report)
must never leave the new model's tables beside the old model's report. :class:`OutputSet`
does this:

1. ``--out ""`` (or blank) is refused: it would mean the current folder.
2. A lock is taken on ``.DIR.trundle-lock`` beside the folder (``fcntl.flock``, released by
   the kernel when the process ends, however it ends): a second run into the same folder is
   refused at once with a clear message, so two runs never mix their files.
3. Left-overs of a run that was killed are tidied: a half-written staging folder is removed;
   a previous set moved aside but not yet replaced is put back.
4. The folder's manifest (:data:`MANIFEST`, JSON: the command that wrote the set and each
   file with its SHA-256) says which files are trundle's. A folder holding another command's
   set (``lines`` outputs when ``envelope`` writes, say) is refused before any work: one
   folder holds one command's results. The user's own files (not in the manifest) stay.
5. The files are written into a staging folder beside the target (``.DIR.new-…``), each one
   flushed to disk; the user's own files of the target are hard-linked into it (the same
   files, not copies), then the manifest naming exactly this run's files is written. Only
   then is the staging folder swapped with the target: in one atomic step where the system
   offers it (Linux ``renameat2`` with ``RENAME_EXCHANGE``), else by two renames that the
   tidy-up of step 3 can undo. The files of the earlier run that this run did not write
   again are therefore gone, and the folder never mixes two runs' results.
   An interrupted, killed or disk-full run leaves the previous set exactly as it was, and no
   ``.part`` file inside it.

A user's own sub-folder inside the output folder cannot be carried over (folders cannot be
hard-linked): such a folder is refused with a message, as is a manifest that cannot be read.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import hashlib
import json
import os
import shutil
import tempfile
from collections.abc import Callable, Mapping
from pathlib import Path
from types import TracebackType

MANIFEST = ".trundle-output.json"
_AT_FDCWD = -100
_RENAME_EXCHANGE = 2


class OutputSetError(ValueError):
    """An output folder that cannot be written; ``str()`` is one line starting ``--out``."""


def check_out_option(text: str | os.PathLike[str], option: str = "--out") -> Path:
    """The folder named by ``--out``; a blank name is refused (it would mean the current
    folder)."""
    shown = os.fspath(text)
    if not shown.strip():
        raise OutputSetError(f'{option} "{shown}": expected the name of a folder for the '
                             "outputs, found an empty name (write --out results, say)")
    return Path(shown)


def lock_path(target: Path) -> Path:
    """The lock file of the output folder ``target`` (beside it, hidden)."""
    return target.parent / f".{target.name}.trundle-lock"


class OutputSet:
    """Write a set of files into a folder as a whole (see the module docstring).

    Use as a context manager, so the lock is held from before the work until the swap::

        with OutputSet(out_dir) as outputs:
            files = make_everything()
            written = outputs.commit(files)

    Parameters
    ----------
    target : the output folder
    option : the option named in messages ("--out")
    command : the command writing the set ("envelope"); a folder holding another command's
        set is refused ("" accepts any)
    progress : called with each file name once it is complete in the staging folder (for
        tests that interrupt a run between files)
    """

    def __init__(self, target: str | os.PathLike[str], option: str = "--out",
                 command: str = "", progress: Callable[[str], None] | None = None):
        self.shown = os.fspath(target)
        self.option = option
        self.command = command
        self.target = _absolute(check_out_option(target, option))
        self.progress = progress
        self._lock_descriptor: int | None = None
        self._earlier: frozenset[str] = frozenset()  # the earlier run's files (its manifest)

    # --- lock -------------------------------------------------------------------------------

    def __enter__(self) -> OutputSet:
        target = self.target
        if target.exists() and not target.is_dir():
            raise self._error("expected a folder, found a file")
        with contextlib.suppress(OSError):
            here = Path.cwd().resolve()
            if here == target.resolve() or here.is_relative_to(target.resolve()):
                # the folder is replaced as a whole: the shell would be left in a removed one
                raise self._error("expected a folder other than the current one or one "
                                  "containing it (trundle replaces its output folder as a "
                                  "whole); write --out results, say")
        try:
            target.parent.mkdir(parents=True, exist_ok=True)
            descriptor = os.open(lock_path(target), os.O_RDWR | os.O_CREAT | os.O_CLOEXEC,
                                 0o666)
        except OSError as error:
            raise self._error(f"cannot write ({error.strerror or error})") from None
        import fcntl

        try:
            fcntl.flock(descriptor, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            os.close(descriptor)
            raise self._error("another trundle run is writing into this folder; wait for it "
                              "to finish or choose another folder") from None
        self._lock_descriptor = descriptor
        try:
            self._tidy()
            self._check_replaceable()
        except BaseException:
            self._release()
            raise
        return self

    def __exit__(self, kind: type[BaseException] | None, value: BaseException | None,
                 traceback: TracebackType | None) -> None:
        self._release()

    def _release(self) -> None:
        if self._lock_descriptor is not None:
            os.close(self._lock_descriptor)  # closing releases the flock
            self._lock_descriptor = None

    def _error(self, detail: str) -> OutputSetError:
        return OutputSetError(f"{self.option} {self.shown}: {detail}")

    # --- tidy-up of killed runs ---------------------------------------------------------------

    def _leftovers(self, kind: str) -> list[Path]:
        prefix = f".{self.target.name}.{kind}-"
        return sorted(p for p in self.target.parent.iterdir() if p.name.startswith(prefix))

    def _tidy(self) -> None:
        """Remove half-written staging folders; put back a previous set moved aside."""
        for staging in self._leftovers("new"):
            shutil.rmtree(staging, ignore_errors=True)
        for aside in self._leftovers("old"):
            if not self.target.exists():
                os.rename(aside, self.target)
            else:
                shutil.rmtree(aside, ignore_errors=True)

    def _check_replaceable(self) -> None:
        """Refuse, before any work, a folder this run cannot replace as a whole; remember
        which of its files an earlier trundle run wrote."""
        target = self.target
        if not target.is_dir():
            return
        entries = os.listdir(target)
        for name in entries:
            path = target / name
            if path.is_dir() and not path.is_symlink():
                raise self._error(f'expected a folder of files, found your own folder "{name}" '
                                  "inside it (trundle replaces its outputs as a whole and can "
                                  "keep your files beside them, not folders); choose another "
                                  "folder")
        if MANIFEST not in entries:
            return
        try:
            manifest = json.loads((target / MANIFEST).read_text(encoding="utf-8"))
            listed = manifest["files"]
            if not isinstance(listed, dict | list):
                raise TypeError
            command = manifest.get("command", "")
        except (OSError, ValueError, KeyError, TypeError, AttributeError):
            raise self._error(f"expected a readable {MANIFEST} (the list of files an earlier "
                              "trundle run wrote), found a damaged one; remove it or choose "
                              "another folder") from None
        if self.command and isinstance(command, str) and command and command != self.command:
            raise self._error(f"expected a new folder or one holding the outputs of 'trundle "
                              f"{self.command}', found the outputs of 'trundle {command}' (one "
                              "folder holds one command's results; choose another folder)")
        # plain names of this folder only: a damaged manifest must not reach outside it
        self._earlier = frozenset(
            name for name in listed if isinstance(name, str) and name
            and Path(name).name == name and name not in (".", "..", MANIFEST))

    # --- writing --------------------------------------------------------------------------

    def commit(self, files: Mapping[str, bytes | str]) -> tuple[list[Path], list[Path]]:
        """Write ``files`` (name → content) as the new set; return (the paths written, the
        paths of the earlier run's files that are gone because this run did not write them
        again)."""
        if self._lock_descriptor is None:
            raise RuntimeError("OutputSet.commit() outside its with-block")
        for name in files:
            if not name or name != Path(name).name or name.startswith(".") or \
                    name == MANIFEST:
                raise ValueError(f"not a plain output file name: {name!r}")
        staging = Path(tempfile.mkdtemp(prefix=f".{self.target.name}.new-",
                                        dir=self.target.parent))
        try:
            manifest: dict[str, str] = {}
            for name, data in files.items():
                payload = data.encode("utf-8") if isinstance(data, str) else data
                _write_file(staging / name, payload)
                manifest[name] = hashlib.sha256(payload).hexdigest()
                if self.progress is not None:
                    self.progress(name)
            kept = self._carry_over(staging, files)
            _write_file(staging / MANIFEST, json.dumps(
                {"written_by": "trundle", "command": self.command, "files": manifest},
                indent=1, sort_keys=True).encode())
            os.chmod(staging, _mode_of(self.target))
            _sync_folder(staging)
            self._swap(staging, kept)
        except OSError as error:
            shutil.rmtree(staging, ignore_errors=True)
            reason = error.strerror or str(error)
            raise self._error(f"cannot write ({reason}); the previous outputs, if any, are "
                              "unchanged") from None
        except BaseException:
            shutil.rmtree(staging, ignore_errors=True)
            raise
        removed = [self.target / name for name in sorted(self._earlier - set(files))]
        return [self.target / name for name in files], removed

    def _carry_over(self, staging: Path, files: Mapping[str, bytes | str]) -> set[str]:
        """Hard-link the user's own files of the target (not this run's, not the earlier
        run's) into ``staging``; return their names."""
        kept: set[str] = set()
        if not self.target.is_dir():
            return kept
        for name in os.listdir(self.target):
            if name == MANIFEST or name in files or name in self._earlier:
                continue
            try:
                os.link(self.target / name, staging / name, follow_symlinks=False)
            except FileNotFoundError:  # removed meanwhile
                continue
            except OSError as error:
                raise self._error(f'cannot keep your own file "{name}" beside the outputs '
                                  f"({error.strerror or error}); move it or choose another "
                                  "folder") from None
            kept.add(name)
        return kept

    def _swap(self, staging: Path, kept: set[str]) -> None:
        target = self.target
        if not target.exists():
            os.rename(staging, target)
        elif _exchange(staging, target):
            self._rescue(staging, kept)
            shutil.rmtree(staging, ignore_errors=True)  # now holds the previous set
        else:
            aside = Path(tempfile.mkdtemp(prefix=f".{target.name}.old-", dir=target.parent))
            os.rename(target, aside)  # replaces the empty placeholder folder
            os.rename(staging, target)
            self._rescue(aside, kept)
            shutil.rmtree(aside, ignore_errors=True)
        _sync_folder(target.parent)

    def _rescue(self, previous: Path, kept: set[str]) -> None:
        """Move back into the target what the user put into it while this run was writing
        (neither trundle's nor carried over): it must not go with the previous set."""
        for name in os.listdir(previous):
            if name == MANIFEST or name in self._earlier or name in kept:
                continue
            with contextlib.suppress(OSError):
                if not (self.target / name).exists():
                    os.rename(previous / name, self.target / name)


def write_output_set(target: str | os.PathLike[str], files: Mapping[str, bytes | str],
                     option: str = "--out", command: str = ""
                     ) -> tuple[list[Path], list[Path]]:
    """Lock, write and swap in one call (when there is no work to do under the lock); return
    (written, removed) as :meth:`OutputSet.commit` does."""
    with OutputSet(target, option, command) as outputs:
        return outputs.commit(files)


# ------------------------------------------------------------------------------------------
# helpers


def _absolute(path: Path) -> Path:
    """``path`` made absolute without following a final symbolic link's target folder away
    from where the user sees it (a link to a folder is resolved: the folder is what is
    replaced)."""
    absolute = Path(os.path.abspath(path))
    return absolute.resolve() if absolute.is_symlink() else absolute


def _write_file(path: Path, payload: bytes) -> None:
    descriptor = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, 0o666)
    with os.fdopen(descriptor, "wb") as handle:
        handle.write(payload)
        handle.flush()
        os.fsync(handle.fileno())


def _sync_folder(folder: Path) -> None:
    with contextlib.suppress(OSError):
        descriptor = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(descriptor)
        finally:
            os.close(descriptor)


def _mode_of(target: Path) -> int:
    """The mode the output folder keeps (or the one an ordinary new folder gets: mkdtemp makes
    it private)."""
    with contextlib.suppress(OSError):
        return target.stat().st_mode & 0o7777
    mask = os.umask(0)
    os.umask(mask)
    return 0o777 & ~mask


def _exchange(first: Path, second: Path) -> bool:
    """Swap two folders atomically (Linux renameat2 RENAME_EXCHANGE); False if unavailable."""
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        renameat2 = libc.renameat2
    except (OSError, AttributeError):
        return False
    renameat2.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p,
                          ctypes.c_uint]
    result = renameat2(_AT_FDCWD, os.fsencode(first), _AT_FDCWD, os.fsencode(second),
                       _RENAME_EXCHANGE)
    if result == 0:
        return True
    code = ctypes.get_errno()
    if code in (errno.EINVAL, errno.ENOSYS, errno.EOPNOTSUPP):
        return False
    raise OSError(code, os.strerror(code), os.fspath(second))


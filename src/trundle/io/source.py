"""Reading input files safely: regular files only, bounded size, read once, hashed once.

A model file (or a load-model file it ``use``-s) is read by :func:`read_source`:

* it must be a regular file: a folder, a named pipe (FIFO), a device or a socket is refused
  at once, from ``os.stat``, before anything is opened (a FIFO is never opened for reading;
  the file is opened with ``O_NONBLOCK`` and checked again with ``fstat``, so one swapped in
  between cannot block either);
* it is read once, up to the documented size limit, and the SHA-256 of provenance is taken
  from exactly the bytes that are decoded and parsed;
* it must be UTF-8 (a UTF-8 byte-order mark is accepted and dropped); UTF-16 and UTF-32 are
  named, so the user knows how to save the file.

:func:`resolve_use` decides where a ``use = "path"`` may read from: relative to the model
file's folder, inside that folder's tree or the library, or inside a folder the user allowed
explicitly; never an absolute path, ``~`` or a path leaving the tree otherwise. A refused
file is never opened, so no message can quote its content.

:func:`parse_toml` bounds the nesting depth before ``tomllib`` (which recurses) sees the text.

Errors are :class:`SourceError` (a ``ValueError``): one line ``<file>: <key>: <detail>``, the
same shape as the model-file reader's errors, which re-raises them as its own.
"""

from __future__ import annotations

import errno
import hashlib
import os
import stat
import tomllib
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from trundle.io.limits import LIMITS, LimitError, check_nesting, check_size

_UTF8_BOM = b"\xef\xbb\xbf"
_BOMS = ((b"\x00\x00\xfe\xff", "UTF-32 (big-endian)"), (b"\xff\xfe\x00\x00",
         "UTF-32 (little-endian)"), (b"\xfe\xff", "UTF-16 (big-endian)"),
         (b"\xff\xfe", "UTF-16 (little-endian)"))


class SourceError(ValueError):
    """An input file that cannot be read; ``str()`` is one line naming file and key.

    Attributes
    ----------
    file : the file as the user named it
    key : "file", a dotted key ("load[0].use") or "line N"
    detail : what was expected and what was found
    """

    def __init__(self, file: str, key: str, detail: str):
        self.file = file
        self.key = key
        self.detail = " ".join(detail.split())
        super().__init__(f"{file}: {key}: {self.detail}")


@dataclass(frozen=True)
class Source:
    """A file read once.

    Fields
    ------
    path : the file as named by the caller
    data : the bytes read (all of them, byte-order mark included)
    text : the decoded text (without a byte-order mark)
    sha256 : hex SHA-256 of ``data``
    """

    path: Path
    data: bytes
    text: str
    sha256: str


def file_kind(mode: int) -> str | None:
    """What a non-regular file is, in words ("a folder", "a named pipe (FIFO)"); None for a
    regular file."""
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "a special file"


def read_source(path: str | os.PathLike[str], what: str = "model file",
                key: str = "file", name: str | None = None) -> Source:
    """Read ``path`` as described in the module docstring.

    Parameters
    ----------
    path : the file
    what : what the file should be, for messages ("model file", "load-model file")
    key : the key errors name ("file", or "load[0].use" for a file named by a model)
    name : the file as shown in messages (default: ``str(path)``)

    Raises
    ------
    SourceError
        One line naming the file, the key, what was expected and what was found.
    """
    shown = str(path) if name is None else name
    try:
        status = os.stat(path)
    except FileNotFoundError:
        raise SourceError(shown, key, f"expected an existing {what}, found none") from None
    except NotADirectoryError:
        raise SourceError(shown, key, f"expected an existing {what}, found a path through "
                          "something that is not a folder") from None
    except OSError as error:
        raise SourceError(shown, key, f"expected a readable {what}, found one that cannot be "
                          f"examined ({error.strerror or error})") from None
    kind = file_kind(status.st_mode)
    if kind is not None:
        raise SourceError(shown, key, f"expected a {what} (a regular file), found {kind}")
    try:
        check_size(key, status.st_size)
    except LimitError as error:
        raise SourceError(shown, key, error.detail) from None
    data = _read_regular(path, shown, what, key)
    return Source(Path(path), data, decode_text(data, shown, what, key),
                  hashlib.sha256(data).hexdigest())


def _read_regular(path: str | os.PathLike[str], shown: str, what: str, key: str) -> bytes:
    maximum = int(LIMITS["file size"].maximum)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0) | \
        getattr(os, "O_CLOEXEC", 0)
    try:
        descriptor = os.open(path, flags)
    except OSError as error:
        reason = "permission denied" if error.errno == errno.EACCES else \
            (error.strerror or str(error))
        raise SourceError(shown, key, f"expected a readable {what}, found one that cannot be "
                          f"opened ({reason})") from None
    try:
        # checked again on the open file: something swapped in after the stat is caught here
        kind = file_kind(os.fstat(descriptor).st_mode)
        if kind is not None:
            raise SourceError(shown, key, f"expected a {what} (a regular file), found {kind}")
        chunks: list[bytes] = []
        size = 0
        while True:
            chunk = os.read(descriptor, min(1 << 20, maximum + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
            if size > maximum:  # the file grew while being read
                try:
                    check_size(key, size)
                except LimitError as error:
                    raise SourceError(shown, key, error.detail) from None
    except OSError as error:
        raise SourceError(shown, key, f"expected a readable {what}, found one that cannot be "
                          f"read ({error.strerror or error})") from None
    finally:
        os.close(descriptor)
    return b"".join(chunks)


def decode_text(data: bytes, shown: str, what: str = "model file", key: str = "file") -> str:
    """``data`` as UTF-8 text (a UTF-8 byte-order mark dropped); other encodings named."""
    if data.startswith(_UTF8_BOM):
        data = data[len(_UTF8_BOM):]
    else:
        for mark, encoding in _BOMS:
            if data.startswith(mark):
                raise SourceError(shown, key, f"expected UTF-8 text, found {encoding} text "
                                  "(save the file as UTF-8)")
    if _looks_like_utf16(data):  # NUL bytes are valid UTF-8, so look before decoding
        raise SourceError(shown, key, "expected UTF-8 text, found what looks like UTF-16 "
                          "text without a byte-order mark (save the file as UTF-8)")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as error:
        raise SourceError(shown, key, f"expected UTF-8 text, found a byte that is not UTF-8 "
                          f"at offset {error.start} (is the {what} in another encoding, such "
                          "as Latin-1 or Windows-1252? save it as UTF-8)") from None


def _looks_like_utf16(data: bytes) -> bool:
    sample = data[:200]
    return len(sample) >= 4 and (sample[1::2].count(0) > 0.4 * len(sample) / 2 or
                                 sample[0::2].count(0) > 0.4 * len(sample) / 2)


# ------------------------------------------------------------------------------------------
# TOML with bounded nesting


def nesting_depth(text: str, stop_at: int | None = None) -> int:
    """The deepest nesting of arrays and inline tables in TOML ``text``, outside strings and
    comments (a table header adds at most two); stops counting past ``stop_at``."""
    depth = deepest = 0
    i, n = 0, len(text)
    while i < n:
        c = text[i]
        if c == "#":
            end = text.find("\n", i)
            i = n if end < 0 else end
            continue
        if c in "\"'":
            i = _skip_string(text, i)
            continue
        if c in "[{":
            depth += 1
            if depth > deepest:
                deepest = depth
                if stop_at is not None and deepest > stop_at:
                    return deepest
        elif c in "]}":
            depth = max(0, depth - 1)
        i += 1
    return deepest


def _skip_string(text: str, i: int) -> int:
    """The index just after the TOML string starting at ``i`` (or the end of the text)."""
    quote = text[i]
    if text.startswith(quote * 3, i):
        end = text.find(quote * 3, i + 3)
        if quote == '"':
            while end >= 0 and _escaped(text, end):
                end = text.find(quote * 3, end + 1)
        return len(text) if end < 0 else end + 3
    j = i + 1
    n = len(text)
    while j < n:
        c = text[j]
        if c == "\n":
            return j
        if c == "\\" and quote == '"':
            j += 2
            continue
        if c == quote:
            return j + 1
        j += 1
    return n


def _escaped(text: str, index: int) -> bool:
    backslashes = 0
    while index - 1 - backslashes >= 0 and text[index - 1 - backslashes] == "\\":
        backslashes += 1
    return backslashes % 2 == 1


def parse_toml(text: str, shown: str, key: str = "file") -> dict[str, Any]:
    """Parse TOML ``text`` with the nesting depth bounded by the documented limit.

    Syntax errors are not handled here (the caller words ``tomllib.TOMLDecodeError``).
    """
    maximum = int(LIMITS["nesting depth"].maximum)
    detail = (f"expected tables and arrays nested at most {maximum} deep (the documented "
              "limit), found deeper nesting")
    if nesting_depth(text, stop_at=maximum) > maximum:
        raise SourceError(shown, key, detail)
    try:
        raw = tomllib.loads(text)
    except RecursionError:  # a construct the pre-scan did not count; never a traceback
        raise SourceError(shown, key, detail) from None
    try:
        check_nesting(key, raw)
    except LimitError:
        raise SourceError(shown, key, detail) from None
    return raw


# ------------------------------------------------------------------------------------------
# where `use` may read from


def resolve_use(text: str, model_folder: Path, library_folder: Path | None = None,
                allowed: Iterable[str | os.PathLike[str]] = (), shown: str = "<model>",
                key: str = "use") -> Path:
    """The load-model file a ``use = "text"`` names, if it may be read (a relative path is
    returned joined to ``model_folder``, unresolved, as the user sees it).

    Relative paths are taken from ``model_folder``; the resolved file (symbolic links
    followed) must lie inside ``model_folder``'s tree, the library folder or one of the
    ``allowed`` folders (``--allow-path DIR``). Absolute paths and ``~`` are refused unless
    they resolve into an allowed folder. Nothing is opened here.

    Raises
    ------
    SourceError
        Naming the key and why the path is refused (never the content of a file).
    """
    roots = [Path(a).expanduser().resolve() for a in allowed]
    hint = ("keep load-model files in the model's folder (or below it), or allow a folder "
            "explicitly with --allow-path DIR")
    written = text.strip()
    if written.startswith("~"):
        expanded = Path(written).expanduser()
        if not any(_inside(expanded.resolve(), root) for root in roots):
            raise SourceError(shown, key, f'expected a path relative to the model file\'s '
                              f'folder, found "{written}", which starts with ~ ({hint})')
        return expanded.resolve()
    candidate = Path(written)
    if candidate.is_absolute() or (len(written) > 1 and written[1] == ":"):
        resolved = candidate.resolve()
        if not any(_inside(resolved, root) for root in roots):
            raise SourceError(shown, key, f'expected a path relative to the model file\'s '
                              f'folder, found the absolute path "{written}" ({hint})')
        return resolved
    joined = model_folder / candidate
    inside = [model_folder.resolve(), *roots]
    if library_folder is not None:
        inside.append(library_folder.resolve())
    if not any(_inside(joined.resolve(), root) for root in inside):
        raise SourceError(shown, key, f'expected a path inside the model file\'s folder, found '
                          f'"{written}", which leads outside it ({hint})')
    return joined  # as the user sees it (messages and reports show this path)


def _inside(path: Path, root: Path) -> bool:
    return path == root or path.is_relative_to(root)

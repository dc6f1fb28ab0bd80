"""The built-in load-model library: ``loadmodels/*.toml``, one load model per file.

The library name of a load model is its file name without ``.toml``. In an installed wheel the
files sit inside the package (``trundle/loadmodels``, put there by pyproject's force-include);
in a source checkout (editable install) they are read from the repository's ``loadmodels/``.
Reading a file is :func:`trundle.io.loads.read_library_model` (the io layer, above this one);
this module only finds them and imports no reader.
"""

from __future__ import annotations

from pathlib import Path

_PACKAGE = Path(__file__).resolve().parents[1]  # .../trundle


def folder() -> Path:
    """The folder the built-in load models are read from."""
    shipped = _PACKAGE / "loadmodels"
    if shipped.is_dir():
        return shipped
    return _PACKAGE.parents[1] / "loadmodels"  # src/trundle -> repository root


def names() -> list[str]:
    """Library names, sorted."""
    root = folder()
    if not root.is_dir():
        return []
    return sorted(p.stem for p in root.glob("*.toml") if p.is_file())


def path_of(name: str) -> Path:
    """The file of the load model ``name``; KeyError if there is none."""
    if name not in names():
        raise KeyError(name)
    return folder() / f"{name}.toml"


def is_library_file(path: Path) -> bool:
    try:
        return path.resolve().parent == folder().resolve()
    except OSError:
        return False


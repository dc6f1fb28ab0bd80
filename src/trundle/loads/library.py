"""The built-in load-model library: ``loadmodels/*.toml``, one load model per file.

The library name of a load model is its file name without ``.toml``. In an installed wheel the
files sit inside the package (``trundle/loadmodels``, put there by pyproject's force-include);
in a source checkout (editable install) they are read from the repository's ``loadmodels/``.
Reading a file is :func:`trundle.loadfile.read_load_model_file`; this module only finds them.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from trundle.loadfile import LoadModelFile
    from trundle.units import UnitSystem

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


def read(name: str, units: UnitSystem | None = None) -> LoadModelFile:
    """The load model ``name``, in ``units`` (default: the units its file is written in)."""
    from trundle.loadfile import read_load_model_file

    return read_load_model_file(path_of(name), units)


def read_all(units: UnitSystem | None = None) -> list[LoadModelFile]:
    """Every load model of the library, sorted by name."""
    return [read(name, units) for name in names()]

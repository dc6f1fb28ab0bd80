"""A bridge inventory: a folder of model files, or a CSV file with one bridge a row.

CSV columns (header required; other columns are ignored):

============  =============================================================================
``name``      the bridge's name (unique)
``units``     ``SI`` (m) or ``US`` (ft): the unit of the spans; optional, default SI
``spans``     span lengths separated by spaces, ``30 40 30``
``supports``  one per span end, separated by spaces: ``pin``, ``fixed`` or ``free``;
              optional, default all ``pin``
``stiffness`` relative EI of each span, separated by spaces (``1 1.6 1``); optional,
              default uniform. Force effects depend on ratios only, so no absolute EI
              is needed (deflections are therefore not offered)
``effects``   effects of interest, separated by spaces (default
              ``midspan-moments pier-moments pier-reactions end-shears``):
              ``midspan-moments``, ``pier-moments``, ``pier-reactions``, ``end-reactions``,
              ``end-shears``, ``moment@X``, ``shear@X`` (X in the row's length unit)
============  =============================================================================

A folder holds model files (``*.toml``, docs/model-file.md); each gives a bridge named after
its file, with its own units, and the effects are the moments at its sections and the
reactions of its supports, unless effect tokens are given for the whole inventory.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from trundle.core.beam import Beam, ModelError
from trundle.core.influence import Effect
from trundle.io.modelfile import ModelFileError, load_model
from trundle.io.units import SYSTEMS
from trundle.workflows.bridges import Bridge

DEFAULT_EFFECTS = ("midspan-moments", "pier-moments", "pier-reactions", "end-shears")
EFFECT_TOKENS = ("midspan-moments", "pier-moments", "pier-reactions", "end-reactions",
                 "end-shears", "moment@X", "shear@X")
SUPPORTS = ("pin", "fixed", "free")
MAX_BRIDGES = 100_000


class InventoryError(ValueError):
    """An inventory that cannot be used; the message names the file, row and column."""


def read_inventory(path: str | Path, effects: tuple[str, ...] | None = None) -> list[Bridge]:
    """The bridges of a folder of model files or of an inventory CSV (see the module)."""
    where = Path(path)
    if where.is_dir():
        files = sorted(where.glob("*.toml"))
        if not files:
            raise InventoryError(f"{where}: expected model files (*.toml) in the folder, "
                                 f"found none")
        return [_bridge_of_model(f, effects) for f in files]
    if not where.is_file():
        raise InventoryError(f"{where}: expected an inventory CSV or a folder of model files, "
                             f"found none")
    if where.suffix.lower() == ".toml":
        return [_bridge_of_model(where, effects)]
    if where.suffix.lower() != ".csv":
        raise InventoryError(f"{where}: expected a .csv inventory, a model file or a folder, "
                             f"found the extension {where.suffix!r}")
    return _read_csv(where, effects)


def _bridge_of_model(path: Path, effects: tuple[str, ...] | None) -> Bridge:
    try:
        model = load_model(path)
    except ModelFileError as error:
        raise InventoryError(str(error)) from None
    beam = model.beam
    if effects:
        chosen = _effects(beam, effects, f"{path}: effects")
    else:
        chosen = [Effect("moment", at=float(x)) for x in model.sections]
        chosen += [Effect("reaction", support=k) for k, s in enumerate(beam.supports)
                   if s != "free"]
    return Bridge(path.stem, beam, tuple(chosen), model.units, str(path))


def _read_csv(path: Path, effects: tuple[str, ...] | None) -> list[Bridge]:
    try:
        with path.open(newline="", encoding="utf-8") as handle:
            rows = list(csv.DictReader(handle))
    except UnicodeDecodeError as error:
        raise InventoryError(f"{path}: expected UTF-8 text, found a byte that is not UTF-8 at "
                             f"offset {error.start}") from None
    except csv.Error as error:
        raise InventoryError(f"{path}: cannot be read as CSV ({error})") from None
    if not rows:
        raise InventoryError(f"{path}: expected a header and at least one bridge, found none")
    for column in ("name", "spans"):
        if column not in rows[0]:
            raise InventoryError(f"{path}: column {column!r}: expected in the header, found "
                                 f"only {', '.join(k for k in rows[0] if k)}")
    if len(rows) > MAX_BRIDGES:
        raise InventoryError(f"{path}: expected at most {MAX_BRIDGES} bridges, found "
                             f"{len(rows)}")
    bridges: list[Bridge] = []
    seen: set[str] = set()
    for i, row in enumerate(rows, start=1):
        where = f"{path}: row {i} (line {i + 1})"
        name = (row.get("name") or "").strip()
        if not name:
            raise InventoryError(f"{where}: name: expected a bridge name, found an empty cell")
        if name in seen:
            raise InventoryError(f"{where}: name: expected a unique name, found {name!r} again")
        seen.add(name)
        units = (row.get("units") or "SI").strip().upper() or "SI"
        if units not in SYSTEMS:
            raise InventoryError(f"{where}: units: expected SI or US, found {row['units']!r}")
        spans = _numbers(row.get("spans"), f"{where}: spans", positive=True)
        n = len(spans)
        supports = (row.get("supports") or "").split() or ["pin"] * (n + 1)
        if len(supports) != n + 1:
            raise InventoryError(f"{where}: supports: expected {n + 1} (one per span end), "
                                 f"found {len(supports)}")
        for s in supports:
            if s not in SUPPORTS:
                raise InventoryError(f"{where}: supports: expected pin, fixed or free, found "
                                     f"{s!r}")
        ratios = _numbers(row.get("stiffness"), f"{where}: stiffness", positive=True,
                          optional=True) or [1.0] * n
        if len(ratios) != n:
            raise InventoryError(f"{where}: stiffness: expected {n} ratios (one per span), "
                                 f"found {len(ratios)}")
        ends = np.concatenate([[0.0], np.cumsum(spans)])
        EI = [(float(a), float(b), float(r)) for a, b, r in zip(ends[:-1], ends[1:], ratios,
                                                                strict=True)]
        try:
            beam = Beam(spans=spans, EI=EI if len(set(ratios)) > 1 else ratios[0],
                        supports=supports)
        except ModelError as error:
            raise InventoryError(f"{where}: {error}") from None
        tokens = tuple((row.get("effects") or "").split()) or effects or DEFAULT_EFFECTS
        chosen = _effects(beam, tokens, f"{where}: effects")
        bridges.append(Bridge(name, beam, tuple(chosen), SYSTEMS[units],
                              f"{path.name} row {i}"))
    return bridges


def _numbers(text: str | None, where: str, positive: bool = False,
             optional: bool = False) -> list[float]:
    cells = (text or "").split()
    if not cells:
        if optional:
            return []
        raise InventoryError(f"{where}: expected numbers separated by spaces, found an empty "
                             f"cell")
    out = []
    for cell in cells:
        try:
            value = float(cell)
        except ValueError:
            raise InventoryError(f"{where}: expected a number, found {cell!r}") from None
        if not np.isfinite(value) or (positive and value <= 0):
            raise InventoryError(f"{where}: expected a number > 0, found {cell!r}")
        out.append(value)
    return out


def _effects(beam: Beam, tokens: tuple[str, ...], where: str) -> list[Effect]:
    ends = beam.support_positions
    out: list[Effect] = []
    for token in tokens:
        if token == "midspan-moments":
            out += [Effect("moment", at=float(0.5 * (a + b))) for a, b in zip(ends[:-1], ends[1:],
                                                                            strict=True)]
        elif token == "pier-moments":
            out += [Effect("moment", at=float(x)) for x in ends[1:-1]]
        elif token == "pier-reactions":
            out += [Effect("reaction", support=k) for k in range(1, len(ends) - 1)
                    if beam.supports[k] != "free"]
        elif token == "end-reactions":
            out += [Effect("reaction", support=k) for k in (0, len(ends) - 1)
                    if beam.supports[k] != "free"]
        elif token == "end-shears":
            out += [Effect("shear", at=float(ends[0]), side="right"),
                    Effect("shear", at=float(ends[-1]), side="left")]
        elif token.startswith(("moment@", "shear@")):
            kind, _, x_text = token.partition("@")
            try:
                x = float(x_text)
            except ValueError:
                raise InventoryError(f"{where}: {token!r}: expected a position after @, found "
                                     f"{x_text!r}") from None
            if not 0.0 <= x <= beam.length:
                raise InventoryError(f"{where}: {token!r}: expected a position on the beam "
                                     f"(0 to {beam.length:g}), found {x:g}")
            out.append(Effect(kind, at=x, side="right" if kind == "shear" else None))
        else:
            raise InventoryError(f"{where}: expected some of {', '.join(EFFECT_TOKENS)}, found "
                                 f"{token!r}")
    if not out:
        raise InventoryError(f"{where}: expected at least one effect, found none for this "
                             f"bridge")
    unique = list(dict.fromkeys(out))
    return unique

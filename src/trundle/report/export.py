"""CSV and JSON export: the one way trundle writes a table or a document of results.

- :func:`csv_text` — records (one mapping per row, keyed by the column headers) to CSV text
  with :class:`csv.DictWriter`; the provenance comment first when given; every cell through
  :func:`trundle.report.safe_text.csv_cell` (no spreadsheet formula, no control character).
  Numbers arrive already written by :mod:`trundle.report.format` (``format.number``) or as
  numbers.
- :func:`stamp_csv_files` — the provenance comment as the first line of every CSV of an
  output set that does not carry it yet (sections of other workflows hand in their CSVs bare).
- :func:`jsonable` — results as JSON values: dataclasses by their fields
  (:func:`dataclasses.fields`), mappings, sequences, numpy arrays and scalars, pint quantities
  (their magnitude: the unit is stated beside it in the document), paths; a float that is not
  finite becomes ``null`` and ``-0.0`` becomes ``0.0``.
- :func:`json_text` — a document as JSON text: :func:`jsonable`, then ``json.dumps`` (no NaN)
  with the controls and direction overrides of names escaped.
- :func:`input_values` — values as given in a TOML model file (dates as text, ``inf`` as
  text, so the inputs are shown as they were written).
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import math
from collections.abc import Iterable, Mapping, Sequence
from pathlib import PurePath
from typing import Any

import numpy as np

from trundle.io.outputs import Provenance
from trundle.report.safe_text import csv_cell, json_escaped

Record = Mapping[str, Any] | Sequence[Any]


def _comment(provenance: Provenance | str | None) -> str:
    if provenance is None or provenance == "":
        return ""
    text = provenance.csv_comment() if isinstance(provenance, Provenance) else provenance
    return text.rstrip("\n") + "\n"


def csv_text(columns: Sequence[str], records: Iterable[Record],
             provenance: Provenance | str | None = None) -> str:
    """CSV text: the provenance comment line (if given), the header ``columns``, then one row
    per record. A record is a mapping from column header to value (a missing column is an
    empty cell) or a sequence of values in the order of ``columns``."""
    if len(set(columns)) != len(columns):
        raise ValueError(f"CSV columns must be unique: {list(columns)!r}")
    buffer = io.StringIO()
    buffer.write(_comment(provenance))
    writer = csv.DictWriter(buffer, fieldnames=list(columns), lineterminator="\n",
                            restval="", extrasaction="raise")
    # headers carry names from model files (effects, loads): cleaned like every cell
    writer.writerow({c: csv_cell(c) for c in columns})
    for record in records:
        if not isinstance(record, Mapping):
            values = list(record)
            if len(values) != len(columns):
                raise ValueError(f"CSV row of {len(values)} cells for {len(columns)} columns")
            record = dict(zip(columns, values, strict=True))
        writer.writerow({c: csv_cell(v) for c, v in record.items()})
    return buffer.getvalue()


def stamp_csv_files(files: dict[str, bytes | str], provenance: Provenance
                    ) -> dict[str, bytes | str]:
    """Every CSV of an output set with the provenance comment as its first line."""
    comment = _comment(provenance)
    return {name: (data if data.startswith(comment) else comment + data)
            if name.endswith(".csv") and isinstance(data, str) else data
            for name, data in files.items()}


def jsonable(value: Any) -> Any:
    """``value`` as plain JSON values (see the module docstring)."""
    kind = type(value)  # the common plain types first, without the chain of tests below
    if kind is float:
        return value + 0.0 if math.isfinite(value) else None
    if kind is str or kind is int:
        return value
    if kind is dict:
        return {(k if type(k) is str else str(k)): jsonable(v) for k, v in value.items()}
    if kind is tuple or kind is list:
        return [jsonable(v) for v in value]
    if value is None or isinstance(value, bool | str):
        return value
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        number = float(value)
        return number + 0.0 if math.isfinite(number) else None
    if isinstance(value, np.bool_):
        return bool(value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: jsonable(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, Mapping):
        return {str(k): jsonable(v) for k, v in value.items()}
    if isinstance(value, np.ndarray):
        return [jsonable(v) for v in value.tolist()]
    if isinstance(value, list | tuple):
        return [jsonable(v) for v in value]
    if isinstance(value, PurePath):
        return str(value)
    if hasattr(value, "magnitude") and hasattr(value, "units"):  # a pint Quantity
        return jsonable(value.magnitude)
    raise TypeError(f"no JSON form for {type(value).__name__}")


def json_text(document: Any) -> str:
    """``document`` as JSON text (indented, UTF-8 names with controls escaped), newline-ended.

    The text is ``json.dumps(jsonable(document), indent=1, ensure_ascii=False)`` character
    for character, written in one pass over the document (:func:`_write`): json's own
    indented writer is pure Python and, with :func:`jsonable` before it, cost seconds on an
    envelope of thousands of sections."""
    out: list[str] = []
    _write(document, "\n", out)
    return json_escaped("".join(out)) + "\n"


_INDENT = " "  # json.dumps(indent=1)


def _write(value: Any, newline: str, out: list[str]) -> None:
    """Append the JSON text of ``jsonable(value)`` to ``out`` as ``json.dumps(…, indent=1,
    ensure_ascii=False)`` writes it at the depth whose line break is ``newline``. Plain values
    are written at once; anything else goes through :func:`jsonable` first."""
    kind = type(value)
    if kind is str:
        out.append(_encode_string(value))
    elif kind is float:
        out.append(_FLOAT_REPR(value + 0.0) if math.isfinite(value) else "null")
    elif value is None:
        out.append("null")
    elif kind is bool:
        out.append("true" if value else "false")
    elif kind is int:
        out.append(_INT_REPR(value))
    elif kind is dict:
        if not value:
            out.append("{}")
            return
        inner = newline + _INDENT
        opening = "{" + inner
        for key, item in value.items():
            text = _encode_string(key if type(key) is str else str(key))
            kind = type(item)  # plain values here, not through another call
            if kind is str:
                out.append(f"{opening}{text}: {_encode_string(item)}")
            elif kind is float and math.isfinite(item):
                out.append(f"{opening}{text}: {_FLOAT_REPR(item + 0.0)}")
            elif item is None:
                out.append(f"{opening}{text}: null")
            else:
                out.append(f"{opening}{text}: ")
                _write(item, inner, out)
            opening = "," + inner
        out.append(newline + "}")
    elif kind is list or kind is tuple:
        if not value:
            out.append("[]")
            return
        inner = newline + _INDENT
        first = True
        for item in value:
            out.append(("[" if first else ",") + inner)
            first = False
            _write(item, inner, out)
        out.append(newline + "]")
    else:
        _write_plain(jsonable(value), newline, out)


def _write_plain(value: Any, newline: str, out: list[str]) -> None:
    """A value :func:`jsonable` returned: as :func:`_write`, with json's own tests of type
    (a subclass of str, int or float is written as its base type)."""
    if isinstance(value, str):
        out.append(_encode_string(value))
    elif value is None or value is True or value is False:
        out.append({None: "null", True: "true", False: "false"}[value])
    elif isinstance(value, int):
        out.append(_INT_REPR(value))
    elif isinstance(value, float):
        out.append(_FLOAT_REPR(value))
    else:  # containers of plain values: their items are plain (jsonable made them so)
        _write(value, newline, out)


_encode_string = json.encoder.encode_basestring  # ensure_ascii=False
_FLOAT_REPR = float.__repr__
_INT_REPR = int.__repr__


def input_values(value: Any) -> Any:
    """TOML values as JSON values, as the user wrote them (dates and non-finite as text)."""
    if isinstance(value, Mapping):
        return {str(k): input_values(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [input_values(v) for v in value]
    if isinstance(value, float):
        return value if math.isfinite(value) else str(value)
    if isinstance(value, str | int | bool) or value is None:
        return value
    return str(value)

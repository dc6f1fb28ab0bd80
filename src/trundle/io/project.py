"""The optional ``[project]`` table: who the calculation is for and who made and checked it.

Registered with the model-file reader in :mod:`trundle.io.__init__`; the report prints it in
its project block. Every key is optional text; ``date`` may also be a TOML date and
``revision`` a whole number. Nothing here changes a result.
"""

from __future__ import annotations

import datetime
import tomllib
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any

from trundle.io.modelfile import Model, ModelFileError, Reader, _syntax_error
from trundle.io.source import SourceError, parse_toml, read_source

PROJECT_TABLE = "project"


@dataclass(frozen=True)
class ProjectInfo:
    """The project block of a calculation package (every field "" when not given).

    Fields
    ------
    name : the project
    job_number : the job or file number
    element : the member this calculation is for ("girder G2", "runway beam grid A")
    designed_by : who made the calculation
    checked_by : who checked it
    date : the date of this revision, as written (a TOML date is shown as YYYY-MM-DD)
    revision : the revision mark ("A", "P2", 3)
    """

    name: str = ""
    job_number: str = ""
    element: str = ""
    designed_by: str = ""
    checked_by: str = ""
    date: str = ""
    revision: str = ""

    def items(self) -> list[tuple[str, str]]:
        """(label, value) of every field, in the order of the project block."""
        return [(LABELS[f.name], getattr(self, f.name)) for f in fields(self)]


LABELS = {"name": "project", "job_number": "job number", "element": "element",
          "designed_by": "designed by", "checked_by": "checked by", "date": "date",
          "revision": "revision"}
PROJECT_KEYS = tuple(LABELS)


def read_project(value: Any, reader: Reader) -> ProjectInfo:
    """Reader of the top-level ``[project]`` table (registered with the model-file reader)."""
    table = reader.table(value, PROJECT_TABLE, PROJECT_KEYS)
    found: dict[str, str] = {}
    for name, item in table.items():
        key = f"{PROJECT_TABLE}.{name}"
        if name == "date" and isinstance(item, datetime.date) and not isinstance(
                item, datetime.datetime):
            text = item.isoformat()
        elif name == "revision" and isinstance(item, int) and not isinstance(item, bool):
            text = str(item)
        elif isinstance(item, str):
            text = " ".join(item.split())  # one line in the block: no newlines or tabs
        else:
            reader.expected(key, _EXPECTED[name], item)
        found[name] = reader.text_limit(key, text)
    return ProjectInfo(**found)


_EXPECTED = {"name": 'text such as "Harbour Lane depot"',
             "job_number": 'text such as "J-1234"', "element": 'text such as "girder G2"',
             "designed_by": 'text such as "A. Engineer"',
             "checked_by": 'text such as "B. Checker"',
             "date": "a date such as 2026-12-03 (or text)",
             "revision": 'text such as "B" or a whole number'}


def project_of(model: Model) -> ProjectInfo | None:
    """The model's ``[project]`` table as read, or None when it has none."""
    return model.tables.get(PROJECT_TABLE)


def read_project_file(path: str | Path) -> ProjectInfo:
    """The ``[project]`` table of a TOML file (a model file or a file with only that table),
    for the reports of commands whose inputs are no model file (``fleet``, ``permit``:
    ``--project FILE``). Other tables of the file are not read.

    Raises
    ------
    ModelFileError
        One line naming the file and the key: not a readable TOML file, no ``[project]``
        table, or a key of it that is unknown or of the wrong type.
    """
    name = str(path)
    try:  # regular files only, size-limited, UTF-8, nesting bounded before tomllib recurses
        raw = parse_toml(read_source(path, "project file").text, name)
    except SourceError as error:
        raise ModelFileError(name, error.key, error.detail) from None
    except tomllib.TOMLDecodeError as error:
        raise _syntax_error(name, error) from None
    if PROJECT_TABLE not in raw:
        raise ModelFileError(name, PROJECT_TABLE, "expected a [project] table (name, "
                                                  "job_number, element, designed_by, "
                                                  "checked_by, date, revision), found none")
    return read_project(raw[PROJECT_TABLE], Reader(name))

"""Provenance of a set of results: where they come from, shown in every output.

Output folders are written by :mod:`trundle.io.output_set` (whole sets swapped in under a
lock, with a manifest); this module only says where the results come from.
"""

from __future__ import annotations

import datetime
import hashlib
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from trundle._version import __version__

if TYPE_CHECKING:
    from trundle.io.modelfile import Model


@dataclass(frozen=True)
class Provenance:
    """Where a set of results comes from — an input of every document, never looked up by it.

    Fields
    ------
    model_file : the model file as the user named it ("" for a model built in Python)
    sha256 : SHA-256 of the model file's bytes (hex; "" without a file)
    version : trundle version
    date : when the results were computed (UTC, ISO 8601)
    title, description : the model's title and description ("" when not given)
    """

    model_file: str = ""
    sha256: str = ""
    version: str = __version__
    date: str = ""
    title: str = ""
    description: str = ""

    @classmethod
    def of_model(cls, model: Model, model_file: str | None = None,
                 date: str | None = None) -> Provenance:
        """The provenance of results computed now from ``model``: the SHA-256 is the one
        taken of the very bytes that were parsed (the file is not read again); the model
        file is shown as ``model_file`` (default: as the model names it)."""
        when = date or datetime.datetime.now(datetime.UTC).isoformat(timespec="seconds")
        shown = model_file if model_file is not None else (
            str(model.source) if model.source is not None else "")
        return cls(shown, model.sha256, __version__, when, model.title, model.description)

    @classmethod
    def of_file(cls, path: str | Path, date: str | None = None) -> Provenance:
        """The provenance of an input that is not a model file (a traffic record, an
        inventory): its SHA-256 taken of its bytes now ("" for a folder or a library name)."""
        when = date or datetime.datetime.now(datetime.UTC).isoformat(timespec="seconds")
        target = Path(path)
        digest = ""
        if target.is_file():
            sha = hashlib.sha256()
            with target.open("rb") as handle:
                for block in iter(lambda: handle.read(1 << 20), b""):
                    sha.update(block)
            digest = sha.hexdigest()
        return cls(str(path), digest, __version__, when)

    def csv_comment(self) -> str:
        """The first line of every CSV trundle writes."""
        return (f"# trundle {self.version}; model file {self.model_file or '(built in Python)'}"
                f"; SHA-256 {self.sha256 or '-'}")

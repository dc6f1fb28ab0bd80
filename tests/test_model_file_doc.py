"""docs/model-file.md cannot drift from the readers: every key a reader accepts is documented,
and every key the document's TOML examples use is accepted (and the examples parse as TOML
once their placeholders are filled).

The accepted keys are found where the readers declare them: every ``Reader.table(value, key,
ALLOWED, …)`` call in ``trundle/io`` (found with ``ast``; ALLOWED resolved on the imported
module) and the registered top-level tables. No outside source: trundle's own schema.
"""

from __future__ import annotations

import ast
import importlib
import re
from pathlib import Path

import pytest

import trundle.io
from trundle.io import modelfile

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "model-file.md"
IO = ROOT / "src" / "trundle" / "io"

# names chosen by the user inside these inline tables (factor names, categories, declared
# parameters): not keys of the schema
_FREE_TABLES = re.compile(r"\b(factors|parameters)\s*=\s*\{[^}]*\}")


def accepted_keys() -> dict[str, set[str]]:
    """Key -> the modules whose readers accept it."""
    found: dict[str, set[str]] = {k: {"modelfile"} for k in modelfile.known_top_level_keys()}
    for path in sorted(IO.glob("*.py")):
        module = trundle.io if path.stem == "__init__" else importlib.import_module(
            f"trundle.io.{path.stem}")
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if not (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr == "table" and len(node.args) >= 3):
                continue
            allowed = node.args[2]
            keys = getattr(module, allowed.id) if isinstance(allowed, ast.Name) else \
                ast.literal_eval(allowed)
            for key in keys:
                found.setdefault(key, set()).add(path.stem)
    return found


def toml_blocks() -> list[str]:
    return re.findall(r"```toml\n(.*?)```", DOC.read_text(encoding="utf-8"), re.S)


def documented_keys() -> set[str]:
    keys: set[str] = set()
    for block in toml_blocks():
        header = ""
        for line in block.splitlines():
            code = line.lstrip()
            code = code[1:] if code.startswith("#") else code.split(" #")[0]  # "# or: key = …"
            code = _FREE_TABLES.sub("", code)
            table = re.match(r"^\s*\[\[?([A-Za-z_.]+)\]\]?", code)
            if table:
                header = table.group(1)
                keys.update(header.split("."))
                continue
            if header == "parameters":  # names a design-case file declares for itself
                continue
            keys.update(m.group(1) for m in re.finditer(
                r"(?:^|[{,])\s*\"?([A-Za-z_][A-Za-z0-9_]*)\"?\s*=", code))
    return keys


def test_the_readers_declare_their_keys_where_this_test_finds_them():
    keys = accepted_keys()
    # a reader that stopped declaring its keys through Reader.table would escape the check
    for key in ("spans", "supports", "axles", "capacity", "service_class", "category",
                "deflection_limit", "alternative", "at", "every", "EI_end", "wheel_loads"):
        assert key in keys, key
    assert len(keys) > 80


def test_every_accepted_key_is_documented():
    text = DOC.read_text(encoding="utf-8")
    missing = []
    for key in sorted(accepted_keys()):
        in_code = re.search(rf"`[^`\n]*\b{re.escape(key)}\b[^`\n]*`", text)
        in_block = key in documented_keys()
        if not (in_code or in_block):
            missing.append(key)
    assert not missing, f"keys the readers accept but docs/model-file.md never shows: {missing}"


def test_every_key_in_the_examples_of_the_document_is_accepted():
    unknown = sorted(documented_keys() - set(accepted_keys()))
    assert not unknown, f"keys in docs/model-file.md that no reader accepts: {unknown}"


@pytest.mark.parametrize("index", range(len(toml_blocks())))
def test_every_toml_example_of_the_document_is_toml(index):
    import tomllib

    block = toml_blocks()[index]
    filled = block.replace('"…"', '"1"').replace("…", "")
    lines = [line for line in filled.splitlines() if line.strip() not in ("# …",)]
    try:
        tomllib.loads("\n".join(lines))
    except tomllib.TOMLDecodeError as error:
        pytest.fail(f"TOML block {index} of docs/model-file.md does not parse: {error}\n"
                    f"{block}")

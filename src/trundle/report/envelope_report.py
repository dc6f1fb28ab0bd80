"""The files of ``trundle envelope --out``: CSV, JSON, figures and the HTML report.

:func:`envelope_files` prepares every file in memory first (so a failure writes nothing) and
returns name -> content for :class:`trundle.io.output_set.OutputSet`. The HTML report stands
alone: its figures are inline SVG, the model file is reproduced in its appendix, and its print
style (``@page``) numbers the pages and keeps tables, figures and headings whole.
"""

from __future__ import annotations

from typing import Any

from jinja2 import Environment, PackageLoader, StrictUndefined, select_autoescape
from markupsafe import Markup

from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.envelope_data import (
    SIGN_CONVENTIONS,
    EnvelopeResults,
    ExtraSection,
    TableData,
    quantity_unit,
    span_summaries,
)
from trundle.report.envelope_figures import envelope_figures
from trundle.report.envelope_tables import (
    envelope_csv,
    envelope_json,
    input_tables,
    loads_table,
    reactions_csv,
    sections_table,
    summary_tables,
)
from trundle.report.export import stamp_csv_files
from trundle.report.figures import figure_bytes
from trundle.report.package import (
    body_rows,
    css_string,
    inline_svg,
    model_text_lines,
    project_items,
    shortened,
    x_column_values,
)
from trundle.report.positions_figure import (
    POSITIONS_FIGURE,
    positions_caption,
    positions_figures,
)
from trundle.report.safe_text import clean_text

FIGURE_FORMATS = ("png", "svg")


def cautions(results: EnvelopeResults) -> list[str]:
    """The cautions every envelope output carries, most important first."""
    out = [CAUTION, LOAD_MODEL_CAUTION]
    invented = []
    facts = {path: source for entry in results.loads for path, _, source in entry.file_facts}
    for path, source in facts.items():
        if source.lower().startswith("invented"):
            invented.append(path.stem)
    if invented:
        out.append("Invented example load models in use (" + ", ".join(invented) + "): they "
                   "are not code load models and must not be used for design.")
    out.extend(c for section in results.extra for c in section.cautions)
    return out


def figure_captions(results: EnvelopeResults) -> dict[str, str]:
    units = results.units
    M, V, D = (quantity_unit(f, units) for f in ("moment", "shear_left", "deflection"))
    R = quantity_unit("reaction", units)
    uncertified = results.has_loads and any(
        e is not None and not e.certified
        for s in span_summaries(results) for e in (s.absolute_max, s.absolute_min))
    return {
        "envelope-moment": f"Bending moment envelope [{M}], sagging positive: max and min at "
                           "the sections; diamonds mark a worse section found between them"
                           + (" (filled, value marked *, where not certified: found by a "
                              "sampled search, it may read low)" if uncertified else "") + ".",
        "envelope-shear": f"Shear envelope [{V}]: just left and just right of each section; "
                          "the envelope jumps at the supports.",
        "envelope-deflection": f"Deflection envelope [{D}], downward positive; service "
                               "level (without the loads' load factors).",
        "reactions": f"Support reactions [{R}], upward positive: max and min of every support.",
    }


def envelope_html(results: EnvelopeResults, svgs: dict[str, bytes] | None = None) -> str:
    """The report as one HTML document; ``svgs`` are the figures by name as SVG files (made
    if None), embedded inline."""
    if svgs is None:
        drawn = {**envelope_figures(results), **positions_figures(results)}
        svgs = {name: figure_bytes(figure, "svg") for name, figure in drawn.items()}
    captions = figure_captions(results)
    units = results.units
    number = iter(range(1, 1000))

    def figure_item(name: str, caption: str, table: TableData | None = None
                    ) -> dict[str, Any]:
        return {"svg": inline_svg(svgs[name], f"f{next(number)}-"), "caption": caption,
                "table": table}

    own = [name for name in captions if name in svgs]
    figures = [figure_item(name, captions[name]) for name in own]
    positions = (figure_item(POSITIONS_FIGURE, positions_caption(results))
                 if POSITIONS_FIGURE in svgs else None)
    extra_sections = []
    for section in results.extra:
        extra_sections.append({
            "title": section.title, "tables": list(section.tables), "notes": list(section.notes),
            "detail_tables": [_short_detail(results, t, section) for t in section.detail_tables],
            "figures": [figure_item(name, section.captions.get(name, name),
                                    section.figure_tables.get(name))
                        for name in section.figures if name in svgs],
        })
    load_notes = [{"name": entry.name, "description": entry.description.rstrip("."),
                   "source": entry.source}
                  for entry in results.loads if entry.description or entry.source]
    files = {path: sha for entry in results.loads for path, sha, _ in entry.file_facts}
    load_files = [{"path": str(path), "sha256": files[path]} for path in sorted(files)]
    L = units.label("length")
    sections = ", ".join(f"{round(float(x), 9) + 0.0:.6g}" for x in results.sections)
    description = results.provenance.description
    project = project_items(results)
    job = dict(project).get("job number", "")
    model_text = results.model.text
    context: dict[str, Any] = {
        "title": results.model.title,
        "description": description,
        "model_file": results.model_file,
        "sha256": results.sha256,
        "date": results.date,
        "version": results.version,
        "project_rows": _pairs([*project, ("calculation", f"trundle {results.version}, "
                                                          f"{results.date}")]),
        "page_title": css_string(" · ".join(p for p in (job, results.model.title) if p)[:120]),
        "units_text": (f"{units.name}: forces in {units.label('force')}, lengths in {L}, "
                       f"moments in {units.label('moment')}, deflections in "
                       f"{units.deflection}"),
        "cautions": cautions(results),
        "input_tables": input_tables(results),
        "sections_text": f"{len(results.sections)} sections [{L}]: {sections}",
        "loads_table": loads_table(results),
        "load_notes": load_notes,
        "figures": figures,
        "positions": positions,
        "summary_tables": summary_tables(results),
        "sections_table": _short_sections_table(results) if results.has_loads else None,
        "has_loads": results.has_loads,
        "kicker": " · ".join((["Moving-load envelope"] if results.has_loads else [])
                             + [section.title for section in results.extra]),
        "extra_sections": extra_sections,
        "load_files": load_files,
        "sign_conventions": list(SIGN_CONVENTIONS),
        "markup_break": Markup("<br>"),
        "model_text": model_text_lines(model_text) if model_text else "",
        "model_text_crlf": "\r\n" in model_text,
        "model_text_lines": model_text.count("\n") + (0 if model_text.endswith("\n") else 1),
    }
    # names and titles from the model file: no control or direction-override character
    # (escaping by the template makes markup harmless, not these)
    return clean_text(_templates().get_template("envelope.html.j2").render(**context),
                      keep_newlines=True)


def _pairs(items: list[tuple[str, str]]) -> list[list[tuple[str, str]]]:
    """The project block's fields two to a row."""
    return [items[i:i + 2] for i in range(0, len(items), 2)]


def _short_sections_table(results: EnvelopeResults) -> TableData:
    """The envelope at the tenth points and supports (every section: envelope.csv)."""
    table = sections_table(results)
    keep = body_rows([float(x) for x in results.sections], results)
    return shortened(table, keep, "envelope.csv")


def _short_detail(results: EnvelopeResults, table: TableData, section: ExtraSection
                  ) -> TableData:
    """A section's per-section table cut to the tenth points and supports (its CSV file
    has every row)."""
    x = x_column_values(table)
    if x is None:
        return table
    csv_files = [name for name in section.files if name.endswith(".csv")]
    where = (section.detail_files.get(table.title)
             or (csv_files[0] if len(csv_files) == 1 else "the CSV files of this section"))
    return shortened(table, body_rows(x, results), where)


def _templates() -> Environment:
    return Environment(loader=PackageLoader("trundle.report", "templates"),
                       autoescape=select_autoescape(["html", "j2"]),
                       undefined=StrictUndefined, keep_trailing_newline=True)


def envelope_files(results: EnvelopeResults, figure_format: str = "png",
                   with_figures: bool = True, with_report: bool = True
                   ) -> dict[str, bytes | str]:
    """Every output file by name, finished in memory."""
    if figure_format not in FIGURE_FORMATS:
        raise ValueError(f"figure format: expected one of {FIGURE_FORMATS}, found "
                         f"{figure_format!r}")
    files: dict[str, bytes | str] = {}
    if results.has_loads:
        files["envelope.csv"] = envelope_csv(results)
        files["reactions.csv"] = reactions_csv(results)
    files["envelope.json"] = envelope_json(results)
    figures = envelope_figures(results) if (with_figures or with_report) else {}
    svgs: dict[str, bytes] = {}
    if with_report or figure_format == "svg":
        svgs = {name: figure_bytes(figure, "svg") for name, figure in figures.items()}
    if with_figures:
        for name, figure in figures.items():
            files[f"{name}.{figure_format}"] = (svgs[name] if figure_format == "svg"
                                                else figure_bytes(figure, "png"))
    if with_report:
        for name, figure in positions_figures(results).items():
            svgs[name] = figure_bytes(figure, "svg")
        files["report.html"] = envelope_html(results, svgs)
    for section in results.extra:
        files.update(section.files)
    return stamp_csv_files(files, results.provenance)

"""The crane runway part of ``trundle envelope``: listed in
:mod:`trundle.report.sections`, so the terminal summary, the CSV and JSON files and the HTML
report all carry it for a model with ``[[crane]]`` tables.
"""

from __future__ import annotations

from trundle.report.crane_data import CRANE_CAUTION, runway_report
from trundle.report.crane_figures import runway_figures
from trundle.report.crane_tables import (
    cranes_table,
    defaults_table,
    deflection_table,
    fatigue_table,
    horizontal_forces_table,
    lateral_table,
    longitudinal_table,
    moment_table,
    reactions_table,
    runway_csv_files,
    runway_json,
    runway_settings_table,
    sections_table,
    shear_table,
    wheel_loads_table,
)
from trundle.report.envelope_data import EnvelopeResults, ExtraSection
from trundle.report.terminal_view import check_view, narrowed, section_view

TITLE = "Crane runway"

COMBINATION_NOTE = (
    "Combinations: '<crane> alone' is one crane with its rated load; 'all loaded' runs the "
    "cranes together, each with its rated load; '<crane> loaded, others unloaded' runs them "
    "together with one lifting. Cranes run together as one group whose wheel-to-wheel "
    "distance (last wheel of one crane to the first of the next) is searched from buffers "
    "touching to a runway length apart, both ways along the runway.")
ONE_CRANE_NOTE = "The crane runs with its rated load, both ways along the runway."

NOTES = (
    "Strength values (moment, shear and reactions 'with impact') include each crane's "
    "vertical impact on its wheel loads; deflections, reactions 'without impact', lateral "
    "values and fatigue ranges do not (common practice, no source). All crane values are "
    "unfactored: apply the load factors and combinations of the governing code.",
    "Lead wheel: the first wheel of the first crane of the combination as listed; travel → "
    "towards +x, ← towards −x. '(no crane)': no crane position is worse than the empty runway.",
    "The crane runway results stand apart from the envelope of any [[load]] tables of the "
    "model: combine them as the governing code requires.",
)


def crane_section(results: EnvelopeResults) -> ExtraSection | None:
    """The crane runway section of the envelope outputs (None for a model without cranes)."""
    report = runway_report(results)
    if report is None:
        return None
    entries, units = report.entries, report.units
    wheels, reactions = wheel_loads_table(entries, units), reactions_table(report)
    moments, shears = moment_table(report), shear_table(report)
    deflections, lateral = deflection_table(report), lateral_table(report)
    longitudinal, fatigue = longitudinal_table(report), fatigue_table(report)
    tables = [cranes_table(entries, units), wheels, horizontal_forces_table(entries, units),
              defaults_table(report), runway_settings_table(report), reactions, moments,
              shears, deflections, lateral, longitudinal, fatigue]
    # the report keeps per-section tables short: the runway envelope at the tenth points and
    # supports (every section: runway-sections.csv); fatigue per span (every section and
    # crane: runway-fatigue.csv, named in the fatigue table's note)
    detail = [sections_table(report)]
    figures, captions = runway_figures(report)
    cautions = (CRANE_CAUTION,)
    several = any(len(c.members) > 1 for c in report.runway.combinations)
    notes = (NOTES[0], COMBINATION_NOTE if several else ONE_CRANE_NOTE, *NOTES[1:])
    # the terminal's default: wheel loads, the governing values with the combination, each
    # check summarised, the tenth-point envelope where it is short (every column: --full)
    governing = ("combination", "combination (max with impact)", "travel")
    terminal = [narrowed(wheels, ("crane", "wheels", "maximum", "minimum",
                                  "maximum with impact")),
                narrowed(reactions, ("support", "x", "max with impact", "max without impact",
                                     "min with impact", *governing)),
                narrowed(moments, ("span", "extreme", "M", "at x", *governing)),
                narrowed(shears, ("span", "extreme", "V", "section x", *governing)),
                check_view(deflections, group=1, where=0)]
    if lateral is not None:
        terminal.append(narrowed(lateral, ("span", "M lateral", "at x", "combination")))
    terminal.append(narrowed(longitudinal, ("crane", "force on this rail")))
    if fatigue is not None:
        terminal.append(check_view(fatigue, group=0, where=1))
    terminal += [section_view(t, results, "runway-sections.csv") for t in detail
                 if t is not None]
    terminal.append(NOTES[0])
    return ExtraSection(TITLE, tables=tuple(t for t in tables if t is not None), notes=notes,
                        figures=figures, files=dict(runway_csv_files(report)),
                        data=runway_json(report, cautions),
                        detail_tables=tuple(t for t in detail if t is not None),
                        captions=captions, cautions=cautions,
                        detail_files={t.title: "runway-sections.csv" for t in detail},
                        terminal=tuple(terminal))


"""Plausibility warnings: input that is valid but probably not what was meant.

These are warnings, never errors (an unusual structure is still a structure): one line each,
naming the key, what was found and the usual range, so a slip such as E = "200 MPa" for a
steel girder (instead of GPa; it gives metres of deflection) is caught before anyone reads
the results. The function takes plain numbers in the model's base units (SI: kN and m, US
customary: kip and ft); the model-file reader supplies them.

The ranges are common practice, no source: moduli of structural materials run from about
1 GPa (soft timber, masonry) to about 250 GPa (steels); a span under 0.1 m or over 1 km is
no beam that this tool is meant for; I / L⁴ between 1e-10 and 1e-2 covers everything from a
light joist to a massive transfer girder (a 10 m span with I = 55200 mm⁴, a typing slip for
cm⁴, gives 5.5e-12); a live-load deflection over span / 50 is far beyond any serviceability
limit (usually span / 250 to span / 1000).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

# base units to SI (kN, m): exact definitions of the foot and the pound-force
_KIP_TO_KN = 4.4482216152605
_FOOT_TO_M = 0.3048

MODULUS_RANGE_GPA = (1.0, 250.0)
SPAN_RANGE_M = (0.1, 1000.0)
I_OVER_L4_RANGE = (1e-10, 1e-2)
DEFLECTION_RATIO = 50.0


def _to_si(system: str) -> tuple[float, float]:
    """(force factor, length factor) from the system's base units to kN and m."""
    if system == "SI":
        return 1.0, 1.0
    if system == "US":
        return _KIP_TO_KN, _FOOT_TO_M
    raise ValueError(f"unknown unit system {system!r}")


def plausibility_warnings(system: str, spans: Sequence[float], *,
                          moduli: Mapping[str, float] | None = None,
                          second_moments: Mapping[str, float] | None = None,
                          flexural_rigidities: Mapping[str, float] | None = None,
                          deflections: Sequence[tuple[str, float, float]] = (),
                          crane_spans: Mapping[str, float] | None = None) -> list[str]:
    """One-line warnings for implausible input; empty when all looks ordinary.

    Parameters
    ----------
    system : "SI" (kN, m) or "US" (kip, ft): the base units of every number below
    spans : span lengths [length], in order (keys beam.spans[i])
    moduli : elastic moduli by key ("beam.E") [force/length²]
    second_moments : second moments of area by key ("beam.I") [length⁴]
    flexural_rigidities : EI by key, when given without E and I [force·length²]
    deflections : (where, span length [length], largest deflection [length]) per span
    crane_spans : crane spans by key ("crane[0].span") [length]
    """
    force, length = _to_si(system)
    warnings: list[str] = []
    spans_m = [s * length for s in spans]
    low, high = SPAN_RANGE_M
    for i, span in enumerate(spans_m):
        if not low <= span <= high:
            warnings.append(f"warning: beam.spans[{i}] = {_metres(span)} is outside the usual "
                            f"range of beam spans ({low:g} m to {high / 1000:g} km); check the "
                            "unit")
    for key, span in (crane_spans or {}).items():
        if not low <= span * length <= high:
            warnings.append(f"warning: {key} = {_metres(span * length)} is outside the usual "
                            f"range of crane spans ({low:g} m to {high / 1000:g} km); check "
                            "the unit")
    longest = max(spans_m) if spans_m else 0.0
    for key, modulus in (moduli or {}).items():
        gpa = modulus * force / length**2 / 1e6  # kN/m² → GPa
        low_e, high_e = MODULUS_RANGE_GPA
        if not low_e <= gpa <= high_e:
            warnings.append(f"warning: {key} = {gpa:.3g} GPa is outside the usual range of "
                            f"structural materials ({low_e:g} to {high_e:g} GPa; steel about "
                            "200, concrete about 30, timber about 10); check the unit (MPa or "
                            "GPa?)")
    low_i, high_i = I_OVER_L4_RANGE
    if longest > 0:
        for key, inertia in (second_moments or {}).items():
            ratio = inertia * length**4 / longest**4
            if not low_i <= ratio <= high_i:
                warnings.append(f"warning: {key} = {inertia * length**4:.3g} m^4 is implausible "
                                f"for a longest span of {_metres(longest)} (I / L^4 = "
                                f"{ratio:.2g}, usually {low_i:g} to {high_i:g}); check the "
                                "unit (mm^4, cm^4 or in^4?)")
        for key, rigidity in (flexural_rigidities or {}).items():
            ei = rigidity * force * length**2  # kN·m²
            ratio = ei / 1e6 / longest**4  # in GPa·(I/L⁴) units: compare with E × I ranges
            lowest = MODULUS_RANGE_GPA[0] * low_i
            highest = MODULUS_RANGE_GPA[1] * high_i
            if not lowest <= ratio <= highest:
                warnings.append(f"warning: {key} = {ei:.3g} kN*m^2 is implausible for a longest "
                                f"span of {_metres(longest)} (EI / L^4 = {ei / longest**4:.2g} "
                                f"kN/m^2, usually {lowest * 1e6:g} to {highest * 1e6:g}); check "
                                "the unit")
    for where, span, deflection in deflections:
        if span > 0 and abs(deflection) > span / DEFLECTION_RATIO:
            ratio = span / abs(deflection)
            warnings.append(f"warning: the deflection in {where} is span / {ratio:.3g}, more "
                            f"than span / {DEFLECTION_RATIO:g} ({_metres(abs(deflection) * length)}"
                            f" on {_metres(span * length)}); check E, I and the loads")
    return warnings


def _metres(value: float) -> str:
    if value >= 1000:
        return f"{value / 1000:.3g} km"
    if value < 0.1:
        return f"{value * 1000:.3g} mm"
    return f"{value:.4g} m"


# ------------------------------------------------------------------------------------------
# from a model read from a file


_STIFFNESS_KEYS = (("E", "modulus", "moduli"), ("I", "second moment of area", "second_moments"),
                   ("I_end", "second moment of area", "second_moments"),
                   ("EI", "flexural rigidity", "flexural_rigidities"),
                   ("EI_end", "flexural rigidity", "flexural_rigidities"))


def model_warnings(model: Any) -> list[str]:
    """The warnings of a model read from a file (spans, moduli, second moments, flexural
    rigidities, crane spans), from the values as the file states them."""
    from trundle.io.cranes import cranes_of
    from trundle.io.units import UnitError, parse_quantity

    found: dict[str, dict[str, float]] = {"moduli": {}, "second_moments": {},
                                          "flexural_rigidities": {}}
    raw_beam = model.raw.get("beam", {})
    tables = [("beam", raw_beam)] + [
        (f"beam.stiffness[{i}]", segment)
        for i, segment in enumerate(raw_beam.get("stiffness", []) or [])
        if isinstance(segment, Mapping)]
    for key, table in tables:
        for name, quantity, store in _STIFFNESS_KEYS:
            if name in table:
                try:  # already checked by the reader; a value it could not read gives none
                    found[store][f"{key}.{name}"] = parse_quantity(table[name], quantity,
                                                                   model.units)
                except (UnitError, TypeError, ValueError):
                    continue
    crane_spans = {f"crane[{i}].span": entry.crane.span
                   for i, entry in enumerate(cranes_of(model))}
    return plausibility_warnings(model.units.name, list(model.beam.spans),
                                 crane_spans=crane_spans, **found)


def deflection_warnings(model: Any, sections: Sequence[float], largest: Sequence[float]
                        ) -> list[str]:
    """The span / 50 warning for each span, from the largest absolute deflection found at
    each of ``sections`` (as the envelope of the model's loads gives it)."""
    ends = list(model.beam.support_positions)
    per_span = []
    for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        inside = [abs(d) for x, d in zip(sections, largest, strict=True) if a <= x <= b]
        if inside:
            per_span.append((f"span {i + 1}", b - a, max(inside)))
    return plausibility_warnings(model.units.name, [], deflections=per_span)

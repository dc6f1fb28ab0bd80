"""Units at the edges: parse quantities from model files and label every output.

The numeric core works in plain floats of one consistent set of units. A model file names
its :class:`UnitSystem`; every value read from it is converted to that system's base units
(SI: kN and m, US customary: kip and ft) and every printed or plotted number is labelled.

Conversions run in exact rational arithmetic (a pint registry over ``fractions.Fraction``)
and are rounded to float once, so "10 ft" is exactly the float nearest 3.048 m.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from fractions import Fraction
from functools import cache
from typing import Any

from trundle.io.unit_guard import guard_unit_text

# What each physical quantity is, as a pint expression of the system's force F and length L,
# the label pattern (tables, figures, CSV headings) and the plain-ASCII pattern (JSON unit
# fields).
_QUANTITY_PATTERNS: dict[str, tuple[str, str, str]] = {
    "length": ("{L}", "{L}", "{L}"),
    "position": ("{L}", "{L}", "{L}"),
    "force": ("{F}", "{F}", "{F}"),
    "moment": ("{F}*{L}", "{F}·{L}", "{F}*{L}"),
    "flexural rigidity": ("{F}*{L}**2", "{F}·{L}²", "{F}*{L}^2"),
    "distributed load": ("{F}/{L}", "{F}/{L}", "{F}/{L}"),
    "spring stiffness": ("{F}/{L}", "{F}/{L}", "{F}/{L}"),
    "rotational stiffness": ("{F}*{L}/rad", "{F}·{L}/rad", "{F}*{L}/rad"),
    "modulus": ("{F}/{L}**2", "{F}/{L}²", "{F}/{L}^2"),
    "second moment of area": ("{L}**4", "{L}⁴", "{L}^4"),
}

# Quantities where a bare number is too easy to misread (MPa or GPa? in⁴ or ft⁴?): the file
# must say the unit.
UNIT_REQUIRED = frozenset({"modulus", "second moment of area"})

# Examples shown in error messages, per system.
_EXAMPLES = {
    "SI": {"length": "7.5 m", "position": "3.2 m", "force": "120 kN", "moment": "250 kN*m",
           "flexural rigidity": "1.2e5 kN*m^2", "distributed load": "18 kN/m",
           "spring stiffness": "50 MN/m", "rotational stiffness": "2e5 kN*m/rad",
           "modulus": "210 GPa", "second moment of area": "55200 cm^4"},
    "US": {"length": "24 ft", "position": "10.5 ft", "force": "25 kip", "moment": "180 kip*ft",
           "flexural rigidity": "2.0e6 kip*ft^2", "distributed load": "0.64 kip/ft",
           "spring stiffness": "300 kip/in", "rotational stiffness": "5e4 kip*ft/rad",
           "modulus": "29000 ksi", "second moment of area": "9040 in^4"},
}


class UnitError(ValueError):
    """A value that is not the quantity expected; the message is one line without the key."""


@cache
def registry() -> Any:
    """The one shared pint UnitRegistry (exact rational magnitudes), created on first use."""
    import pint

    return pint.UnitRegistry(non_int_type=Fraction)


@dataclass(frozen=True)
class UnitSystem:
    """The base units of a model file and the units its results are shown in.

    Fields
    ------
    name : "SI" or "US"
    force, length : pint names of the base units every number in the core is expressed in
    deflection : display unit of deflection (mm or in)
    rotation : display unit of rotation (mrad)
    """

    name: str
    force: str
    length: str
    deflection: str
    rotation: str = "mrad"

    def pint_unit(self, quantity: str) -> str:
        """The base unit of ``quantity`` as a pint expression."""
        return _QUANTITY_PATTERNS[quantity][0].format(F=self.force, L=self.length)

    def label(self, quantity: str) -> str:
        """The base unit of ``quantity`` as every table, figure and CSV heading spells it:
        "kN·m²"."""
        if quantity == "deflection":
            return self.deflection
        if quantity == "rotation":
            return self.rotation
        return _QUANTITY_PATTERNS[quantity][1].format(F=self.force, L=self.length)

    def ascii_label(self, quantity: str) -> str:
        """The base unit of ``quantity`` in plain ASCII for the unit fields of JSON files:
        "kN*m^2" (CSV headings, tables and figures use :meth:`label`)."""
        if quantity in ("deflection", "rotation"):
            return self.label(quantity)
        return _QUANTITY_PATTERNS[quantity][2].format(F=self.force, L=self.length)

    def example(self, quantity: str) -> str:
        return _EXAMPLES[self.name][quantity]

    def factor(self, from_unit: str, to_unit: str) -> float:
        """Exact conversion factor between two pint units, rounded once to float."""
        ureg = registry()
        return float(ureg.Quantity(1, from_unit).to(to_unit).magnitude)

    def influence_unit(self, quantity: str) -> tuple[float, str, str]:
        """(factor, label, ASCII label) of an influence ordinate: effect per unit load.

        The core gives ordinates in base units per unit base force; ``factor`` turns them
        into display units (deflection in mm or in, rotation in mrad).
        """
        per = f"/{self.force}"
        if quantity == "deflection":
            factor = self.factor(self.length, self.deflection)
            return factor, self.deflection + per, self.deflection + per
        if quantity == "rotation":
            factor = self.factor("rad", self.rotation)
            return factor, self.rotation + per, self.rotation + per
        return 1.0, self.label(quantity) + per, self.ascii_label(quantity) + per

    def convert(self, value: Any, quantity: str) -> float:
        """``value`` (a number in base units, or a string with a unit) in base units.

        Raises :class:`UnitError` saying what was expected and what was found.
        """
        return parse_quantity(value, quantity, self)


SI = UnitSystem("SI", force="kN", length="m", deflection="mm")
US = UnitSystem("US", force="kip", length="ft", deflection="in")
SYSTEMS = {"SI": SI, "US": US}

# Units a description of a load model may state its numbers in, per system, by quantity (the
# spellings a file may use, the first being the one written when converting into the system).
_TEXT_UNITS: dict[str, dict[str, tuple[str, ...]]] = {
    "SI": {"pressure": ("kN/m²", "kN/m2", "kN/m^2"), "distributed load": ("kN/m",),
           "force": ("kN",), "length": ("m",)},
    "US": {"pressure": ("kip/ft²", "kip/ft2", "kip/ft^2", "ksf"),
           "distributed load": ("kip/ft", "klf"), "force": ("kip", "kips"),
           "length": ("ft",)},
}
_PINT_OF_TEXT = {"kN/m²": "kN/m**2", "kN/m2": "kN/m**2", "kN/m^2": "kN/m**2",
                 "kip/ft²": "kip/ft**2", "kip/ft2": "kip/ft**2", "kip/ft^2": "kip/ft**2",
                 "ksf": "kip/ft**2", "klf": "kip/ft", "kips": "kip"}
_NUMBER = r"\d+(?:\.\d+)?"
_LIST_JOINT = r"\s*(?:,|/|\bto\b|\band\b)\s*"


def _rounded(value: float, digits: int = 4) -> str:
    """``value`` to ``digits`` significant digits, written without an exponent."""
    if value == 0.0:
        return "0"
    places = max(0, digits - 1 - math.floor(math.log10(abs(value))))
    text = f"{round(value, places):.{places}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def quantities_in(text: str, written_in: UnitSystem, shown_in: UnitSystem) -> str:
    """``text`` (a load model's description) with every number that carries a unit of
    ``written_in`` — alone ("420 kN") or in a list ("8, 32, 32 kip", "14 to 30 ft",
    "300 / 200 / 100 kN") — converted to the same quantity in ``shown_in`` (4 significant
    digits), so that a report in US units never shows a force in kN and the reverse. Numbers
    without a unit (lane numbers, percentages, names such as "CL-625") are left alone."""
    if written_in.name == shown_in.name:
        return text
    spellings = sorted(((s, q) for q, names in _TEXT_UNITS[written_in.name].items()
                        for s in names), key=lambda item: -len(item[0]))
    quantity_of = dict(spellings)
    alternatives = "|".join(re.escape(s) for s, _ in spellings)
    pattern = re.compile(rf"(?<![\w.\-]){_NUMBER}(?:{_LIST_JOINT}{_NUMBER})*\s+"
                         rf"(?P<unit>{alternatives})(?![\w/²^])")

    def convert(match: re.Match[str]) -> str:
        unit = match.group("unit")
        quantity = quantity_of[unit]
        target = _TEXT_UNITS[shown_in.name][quantity][0]
        factor = shown_in.factor(_PINT_OF_TEXT.get(unit, unit), _PINT_OF_TEXT.get(target,
                                                                                    target))
        numbers = match.group(0)[:match.start("unit") - match.start(0)]
        converted = re.sub(_NUMBER, lambda m: _rounded(float(m.group(0)) * factor), numbers)
        return f"{converted}{target}"

    return pattern.sub(convert, text)


def _dimensionality(unit_expression: str) -> Any:
    return registry().Quantity(1, unit_expression).dimensionality


@cache
def _known_dimensions() -> tuple[tuple[Any, str], ...]:
    # Force per length is both a distributed load and a spring stiffness; one name covers both.
    named = [
        ("m", "a length"), ("N", "a force"), ("N*m", "a moment"),
        ("N*m**2", "a flexural rigidity (force·length²)"),
        ("N/m", "a force per length (distributed load or spring stiffness)"),
        ("Pa", "a stress or modulus (force/length²)"), ("m**4", "a second moment of area"),
        ("m**2", "an area"), ("m**3", "a volume"), ("kg", "a mass (use a force unit)"),
        ("s", "a time"), ("m/s", "a speed"), ("m/s**2", "an acceleration"),
        ("Hz", "a frequency"), ("J", "an energy or a moment (write a moment as kN*m)"),
        ("mol/m**3", "a molar concentration (a chemistry unit)"),
        ("N/m**3", "a force per volume"), ("dimensionless", "a plain number"),
    ]
    return tuple((_dimensionality(unit), name) for unit, name in named)


def describe_dimension(dimensionality: Any) -> str:
    """A reader's name for a pint dimensionality: "a force", "a length", …"""
    for known, name in _known_dimensions():
        if dimensionality == known:
            return name
    above, below = [], []
    for dimension, power in sorted(dict(dimensionality).items()):
        word = _DIMENSION_WORDS.get(dimension, dimension.strip("[]"))
        size = abs(Fraction(power))
        part = word if size == 1 else f"{word}^{size}"
        (above if power > 0 else below).append(part)
    text = "·".join(above) or "1"
    if below:
        text += "/" + ("·".join(below) if len(below) == 1 else "(" + "·".join(below) + ")")
    return f"a unit of another kind ({text})"


_DIMENSION_WORDS = {"[length]": "length", "[mass]": "mass", "[time]": "time",
                    "[substance]": "amount of substance", "[current]": "electric current",
                    "[temperature]": "temperature", "[luminosity]": "luminosity"}

# Units an engineer writes for each quantity: the suggestions of an error message.
_USUAL_UNITS = {
    "length": ("m", "mm", "cm", "km", "ft", "in", "yd"),
    "force": ("kN", "N", "MN", "kip", "lbf"),
    "moment": ("kN*m", "N*m", "MN*m", "kN*mm", "kip*ft", "kip*in", "lbf*ft"),
    "flexural rigidity": ("kN*m^2", "MN*m^2", "N*mm^2", "kip*ft^2", "kip*in^2"),
    "distributed load": ("kN/m", "N/mm", "kip/ft", "lbf/ft", "kip/in"),
    "spring stiffness": ("kN/m", "MN/m", "kN/mm", "kip/in", "kip/ft"),
    "rotational stiffness": ("kN*m/rad", "MN*m/rad", "kip*ft/rad", "kip*in/rad"),
    "modulus": ("GPa", "MPa", "N/mm^2", "ksi", "psi"),
    "second moment of area": ("cm^4", "mm^4", "m^4", "in^4", "ft^4"),
}
_USUAL_UNITS["position"] = _USUAL_UNITS["length"]


_ARTICLE = {"length": "a length", "position": "a position (length)", "force": "a force",
            "moment": "a moment", "flexural rigidity": "a flexural rigidity EI",
            "distributed load": "a distributed load", "spring stiffness": "a spring stiffness",
            "rotational stiffness": "a rotational stiffness", "modulus": "an elastic modulus",
            "second moment of area": "a second moment of area"}


def expected_phrase(quantity: str, system: UnitSystem) -> str:
    if quantity in UNIT_REQUIRED:
        return f'{_ARTICLE[quantity]} with its unit (e.g. "{system.example(quantity)}")'
    return (f"{_ARTICLE[quantity]} (a number in {system.label(quantity)} "
            f'or a string such as "{system.example(quantity)}")')


def show_value(value: Any) -> str:
    """A value as it was written in the file, for error messages."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return f'"{value}"'
    if isinstance(value, float):
        return repr(value) if math.isfinite(value) else str(value)
    if isinstance(value, dict):
        keys = ", ".join(value) or "no keys"
        return f"a table ({keys})"
    if isinstance(value, list):
        inner = ", ".join(show_value(v) for v in value[:6])
        return f"[{inner}{', …' if len(value) > 6 else ''}]"
    return str(value)


def parse_quantity(value: Any, quantity: str, system: UnitSystem) -> float:
    """Convert ``value`` to ``system``'s base unit of ``quantity``.

    Parameters
    ----------
    value : int, float or str
        A plain number (already in the base unit) or a string with a unit ("14 ft").
    quantity : str
        One of "length", "position", "force", "moment", "flexural rigidity",
        "distributed load", "spring stiffness", "rotational stiffness", "modulus",
        "second moment of area".
    system : UnitSystem

    Returns
    -------
    float in the base unit (e.g. kN·m² for a flexural rigidity in SI).
    """
    expected = expected_phrase(quantity, system)
    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise UnitError(f"expected {expected}, found {show_value(value)}")
    if isinstance(value, int | float):
        if quantity in UNIT_REQUIRED:
            raise UnitError(f"expected {expected}, found the bare number {show_value(value)}")
        number = float(value)
        if not math.isfinite(number):
            raise UnitError(f"expected {expected}, found {show_value(value)}")
        return number
    text = value.strip()
    refused = guard_unit_text(text)  # before pint: "2**(2**40) m" would never finish
    if refused is not None:
        found = show_value(value) if len(text) <= 100 else f"a string of {len(text):,} characters"
        raise UnitError(f"expected {expected}, found {found} ({refused})")
    try:
        bare = float(text)
    except ValueError:
        bare = None
    if bare is not None:
        if quantity in UNIT_REQUIRED:
            raise UnitError(f"expected {expected}, found {show_value(value)} (no unit)")
        if not math.isfinite(bare):
            raise UnitError(f"expected {expected}, found {show_value(value)}")
        return bare
    ureg = registry()
    try:
        parsed = ureg.Quantity(text)
    except Exception as error:  # pint's parser raises many kinds (undefined unit, syntax, …)
        wanted = _dimensionality(system.pint_unit(quantity))
        hint = _case_hint(text, wanted, inside=True) or _spelling_hint(text, quantity, wanted)
        raise UnitError(f"expected {expected}, found {show_value(value)} "
                        f"({_pint_reason(error)}{hint})") from None
    target = system.pint_unit(quantity)
    wanted = _dimensionality(target)
    if parsed.dimensionality != wanted:
        found = describe_dimension(parsed.dimensionality)
        hint = ""
        if re.search(r"\bkn\b", text):  # "kn" is a knot; the kilonewton is kN
            hint = ' (the kilonewton is written "kN"; "kn" is a knot)'
        else:
            hint = _case_hint(text, wanted) or _spelling_hint(text, quantity, wanted,
                                                              inside=False)
        raise UnitError(f"expected {expected}, found {show_value(value)}, which is "
                        f"{found}{hint}")
    try:
        number = float(parsed.to(target).magnitude)
    except (OverflowError, ValueError, ZeroDivisionError):
        number = math.nan
    if not math.isfinite(number):
        raise UnitError(f"expected {expected}, found {show_value(value)}")
    return number


def _case_hint(text: str, wanted: Any, inside: bool = False) -> str:
    """' (units are case-sensitive: did you mean "40 m"?)' when changing the case of one unit
    name gives the quantity wanted ("40 M" is a molar concentration), else ""."""
    ureg = registry()
    for match in re.finditer(r"[^\W\d]\w*", text):
        name = match.group()
        for variant in _case_variants(name):
            if variant == name:
                continue
            candidate = text[:match.start()] + variant + text[match.end():]
            try:
                if ureg.Quantity(candidate).dimensionality == wanted:
                    words = f'units are case-sensitive: did you mean "{candidate}"?'
                    return f"; {words}" if inside else f" ({words})"
            except Exception:  # not a unit either way: no hint
                continue
    return ""


def _spelling_hint(text: str, quantity: str, wanted: Any, inside: bool = True) -> str:
    """'; did you mean "5 kN*m"?' for a unit written together ("kNm"), with its power as a
    plain digit ("cm4"), or misspelt ("fet"), when the corrected text is the quantity wanted;
    else the usual units of the quantity ("; a length is written in m, mm, … ft, in")."""
    usual = _USUAL_UNITS.get(quantity, ())
    match = re.match(r"\s*([-+]?[\d.eE+-]*\d\.?)\s*(.+?)\s*$", text)
    candidates: list[str] = []
    if match:
        number, unit = match.groups()
        joined = re.fullmatch(r"([A-Za-z]+?)(\d)", unit)
        if joined:  # cm4 -> cm^4
            candidates.append(f"{joined.group(1)}^{joined.group(2)}")
        for u in usual:  # kNm -> kN*m, kipft -> kip*ft, kNm2 -> kN*m^2
            if u.replace("*", "").replace("^", "") == unit.replace("^", "").replace(".", ""):
                candidates.append(u)
        if inside:  # an unknown unit: perhaps misspelt (a known one of the wrong kind is not)
            candidates += difflib.get_close_matches(unit, usual, n=2, cutoff=0.5)
            candidates += difflib.get_close_matches(unit.lower(), [u.lower() for u in usual],
                                                    n=1, cutoff=0.5)
        lowered = {u.lower(): u for u in usual}
        for candidate in dict.fromkeys(candidates):
            unit_text = lowered.get(candidate, candidate)
            proposal = f"{number} {unit_text}"
            try:
                if registry().Quantity(proposal).dimensionality == wanted:
                    return f'{"; " if inside else " ("}did you mean "{proposal}"?' + \
                        ("" if inside else ")")
            except Exception:  # not a unit after all: try the next
                continue
    if not usual:
        return ""
    words = f"{_ARTICLE[quantity]} is written in {', '.join(usual)}"
    return f"; {words}" if inside else f" ({words})"


def _case_variants(name: str) -> list[str]:
    """Other spellings of a unit name by case: every one for short names ("MPA" → "MPa")."""
    if len(name) <= 4:
        variants = [""]
        for char in name:
            variants = [v + c for v in variants for c in dict.fromkeys((char.lower(),
                                                                        char.upper()))]
        # fewest changes first; a prefix's case (M for mega, m for milli) changed last
        return sorted(variants, key=lambda v: (sum(a != b for a, b in zip(v, name, strict=True)),
                                               v[0] != name[0]))
    return list(dict.fromkeys((name.lower(), name.upper(), name[0].swapcase() + name[1:])))


def _pint_reason(error: Exception) -> str:
    name = type(error).__name__
    if name == "UndefinedUnitError":
        units = getattr(error, "unit_names", None) or ()
        if isinstance(units, str):
            units = (units,)
        return "unknown unit " + ", ".join(f"'{u}'" for u in units) if units else "unknown unit"
    if isinstance(error, ZeroDivisionError):
        return "division by zero"
    return "not a number followed by a unit"

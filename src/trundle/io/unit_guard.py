"""A pre-check of unit expressions, before pint evaluates them.

pint evaluates "2**(2**40) m" exactly (rational arithmetic), which never ends; a string of a
megabyte takes as long. :func:`guard_unit_text` refuses, in time linear in the text, what no
model file needs: text over the documented length, exponents that are not small numbers
applied to a unit, chained exponents, number literals beyond any real magnitude and deep
parentheses. What passes is evaluated by pint in bounded time and memory.

It returns None or a short reason (without quoting the text); the caller words the error.
"""

from __future__ import annotations

import math
import re

from trundle.io.limits import LIMITS

# The largest exponent a unit may carry ("m^4" needs 4; 12 leaves room for odd unit algebra).
MAX_EXPONENT = 12
# The largest number literal in a value with a unit ("1e18 mm" is still a length to refuse
# later with the magnitude limit; beyond this the literal itself is nonsense).
MAX_LITERAL = 1e30
MAX_PARENTHESES = 4

_TOKEN = re.compile(r"""
    (?P<number>(?:\d+(?:_\d+)*\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)
  | (?P<power>\*\*|\^)
  | (?P<name>[^\W\d]\w*)
  | (?P<space>\s+)
  | (?P<other>.)
""", re.VERBOSE)


def guard_unit_text(text: str) -> str | None:
    """None if ``text`` may be given to pint, else the reason it may not (one short line)."""
    maximum = int(LIMITS["unit text length"].maximum)
    if len(text) > maximum:
        return f"longer than the documented limit of {maximum} characters"
    if "," in text:
        # pint drops the comma: "34,5 kN" would be read as 345 kN, "1,65 m" as 165 m
        return (f'a comma: decimals take a point ("{text.replace(",", ".")}") and numbers '
                "no thousands separators")
    tokens = [(m.lastgroup, m.group()) for m in _TOKEN.finditer(text)
              if m.lastgroup != "space"]
    depth = 0
    # whether each open parenthesis holds a number (then no exponent may follow it)
    holds_number: list[bool] = []
    closed_with_number = False
    for index, (kind, token) in enumerate(tokens):
        if kind == "number":
            try:
                number = float(token)
            except (ValueError, OverflowError):
                number = math.inf
            if not math.isfinite(number) or number > MAX_LITERAL:
                return f"a number beyond {MAX_LITERAL:g}, which no structure needs"
            if holds_number:
                holds_number[-1] = True
        elif token == "(":
            depth += 1
            if depth > MAX_PARENTHESES:
                return f"parentheses nested more than {MAX_PARENTHESES} deep"
            holds_number.append(False)
        elif token == ")":
            depth = max(0, depth - 1)
            closed_with_number = holds_number.pop() if holds_number else False
            if closed_with_number and holds_number:
                holds_number[-1] = True
        elif kind == "power":
            reason = _power_reason(tokens, index, closed_with_number)
            if reason:
                return reason
        if token != ")":
            closed_with_number = False
    return None


def _power_reason(tokens: list[tuple[str | None, str]], index: int,
                  closed_with_number: bool) -> str | None:
    advice = ("exponents apply to units only and are small numbers, such as m^4 (at most "
              f"{MAX_EXPONENT})")
    before = tokens[index - 1] if index > 0 else (None, "")
    if before[0] != "name" and not (before[1] == ")" and not closed_with_number):
        return advice
    position = index + 1
    if position < len(tokens) and tokens[position][1] in "+-":
        position += 1
    if position >= len(tokens) or tokens[position][0] != "number":
        return advice
    try:
        exponent = float(tokens[position][1])
    except ValueError:
        return advice
    if not abs(exponent) <= MAX_EXPONENT:
        return advice
    following = tokens[position + 1] if position + 1 < len(tokens) else (None, "")
    if following[0] == "power":
        return advice
    return None

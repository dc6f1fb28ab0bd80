"""Reports: figures (matplotlib), terminal tables (rich), CSV and JSON export.

Everything here only presents results the core has computed; units come from the model's
:class:`trundle.io.units.UnitSystem`.
"""

CAUTION = ("Results are for checking by a qualified engineer; local codes and licensed "
           "practice govern.")
LOAD_MODEL_CAUTION = ("Standard load models are transcribed and must be verified against the "
                      "edition in force.")

# the one caution line of the terminal and of every command's help (the same words everywhere)
CAUTION_LINE = f"CAUTION: {CAUTION} {LOAD_MODEL_CAUTION}"

__all__ = ["CAUTION", "CAUTION_LINE", "LOAD_MODEL_CAUTION"]

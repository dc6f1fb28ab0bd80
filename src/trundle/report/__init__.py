"""Reports: figures (matplotlib), terminal tables (rich), CSV and JSON export.

Everything here only presents results the core has computed; units come from the model's
:class:`trundle.io.units.UnitSystem`.
"""

CAUTION = ("Results are for checking by a qualified engineer; local codes and licensed "
           "practice govern.")
LOAD_MODEL_CAUTION = ("Standard load models are transcribed and must be verified against the "
                      "edition in force.")

__all__ = ["CAUTION", "LOAD_MODEL_CAUTION"]

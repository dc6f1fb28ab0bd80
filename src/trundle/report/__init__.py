"""Reports: figures (matplotlib), terminal tables (rich), CSV and JSON export.

Everything here only presents results the core has computed; units come from the model's
:class:`trundle.io.units.UnitSystem`.
"""

CAUTION = ("Results are for checking by a qualified engineer; local codes and licensed "
           "practice govern.")
LOAD_MODEL_CAUTION = ("Standard load models are transcribed and must be verified against the "
                      "edition in force.")

# The one line every command prints under --quiet, and the epilogs of the commands' help: the
# same cautions in fewer words (one source for every command, so the wording is one).
SHORT_CAUTION = ("CAUTION: for checking by a qualified engineer; verify load models against the "
                 "edition in force; local codes and licensed practice govern.")
SAFETY_HELP = ("CAUTION: results are for checking by a qualified engineer; local codes and "
               "licensed practice govern.")
DESIGN_SAFETY_HELP = ("CAUTION: results are for checking by a qualified engineer; transcribed "
                      "load models must be verified against the edition in force; local codes "
                      "and licensed practice govern.")

__all__ = ["CAUTION", "DESIGN_SAFETY_HELP", "LOAD_MODEL_CAUTION", "SAFETY_HELP", "SHORT_CAUTION"]

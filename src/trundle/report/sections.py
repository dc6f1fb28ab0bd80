"""The sections every ``trundle envelope`` output carries besides the moving-load envelope.

Composed here, in one place, so that no module registers itself and none imports its plug-ins:
a workflow's report section is added by naming it below.
"""

from trundle.report.crane_section import crane_section
from trundle.report.design_section import design_section
from trundle.report.envelope_data import SectionProvider

SECTIONS: tuple[SectionProvider, ...] = (crane_section, design_section)

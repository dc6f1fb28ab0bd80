"""The exact moving-load scan: compiled kernels and the engine that feeds them."""

from trundle.scan.engine import LineBatch, TermGroup, group_response, scan_group

__all__ = ["LineBatch", "TermGroup", "group_response", "scan_group"]

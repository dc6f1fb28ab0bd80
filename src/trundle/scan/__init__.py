"""The exact moving-load scan: compiled kernels and the engine that feeds them."""

from trundle.scan.engine import LineBatch, TermGroup, group_response, scan_group


def use_compiled_kernels() -> None:
    """Run every scan kernel compiled from now on, never its interpreted first-run copy
    (``core._jit.FirstRunTier``); for benchmarks, which time the compiled code."""
    from trundle.scan import candidates, kernels

    kernels.use_compiled_loop_body()
    kernels.use_compiled_line_evaluation()
    candidates.use_compiled_search()


__all__ = ["LineBatch", "TermGroup", "group_response", "scan_group", "use_compiled_kernels"]

"""Workflows: one module per job, spec -> run() -> result."""

"""Readers of model-file tables (new tables are added here as modules, one per table kind)."""

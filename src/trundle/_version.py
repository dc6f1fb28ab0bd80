"""The version of trundle (a leaf module: every layer may import it)."""

__version__ = "0.1.0"

"""atticsim's version (one place; ``atticsim.__version__`` reads it)."""

__version__ = "0.1.0"

"""Command-line interface (thin: parse, call the library, print)."""

"""Data shipped inside the package (the built-in demo house)."""

"""One module per kind of equipment, discovered by :mod:`audit.steps` (see DEVELOPERS.md)."""

"""jobs layer (see DEVELOPERS.md)."""

"""outputs layer (see DEVELOPERS.md)."""

"""inputs layer (see DEVELOPERS.md)."""

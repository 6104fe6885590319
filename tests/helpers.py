"""Domain assertion helpers shared by the tests."""

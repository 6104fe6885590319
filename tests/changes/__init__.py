"""Tests of schedcheck/changes."""

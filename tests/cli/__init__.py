"""Tests of schedcheck/cli."""

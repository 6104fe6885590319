"""Tests of schedcheck/readings."""

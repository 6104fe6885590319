"""Tests of schedcheck/runstate."""

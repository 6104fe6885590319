"""Tests of schedcheck/outputs."""

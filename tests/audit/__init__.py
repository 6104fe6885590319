"""Tests of schedcheck/audit."""

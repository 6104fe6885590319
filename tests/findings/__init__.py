"""Tests of schedcheck/findings."""

"""Tests of schedcheck/schedule."""

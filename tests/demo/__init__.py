"""Tests of schedcheck/demo."""

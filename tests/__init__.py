"""Tests of schedcheck."""

"""Tests of schedcheck/inputs."""

"""The layout number of summary.json: written by outputs/files.py, checked by outputs/saved.py."""

SUMMARY_SCHEMA = 1

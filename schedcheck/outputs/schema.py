"""The layout numbers: summary.json's (written by outputs/files.py, checked by outputs/saved.py)
and the demo's truth/faults.json's (outputs/demo_files.py)."""

#: 2: each component lists its behaviour ``episodes`` and findings carry ``episode_start`` /
#: ``episode_end`` (1: neither).
SUMMARY_SCHEMA = 2
#: The demo's truth file has kept its layout since the first version.
TRUTH_SCHEMA = 1

"""Findings: the audit's hours -> dated findings of off-schedule running and missed operation."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "find_issues": "find", "find_in_sets": "find", "default_settings": "find",
    "KINDS": "kinds",
})

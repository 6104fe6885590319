"""Demo: the fictional site, its seeded readings and the generator's truth (tests and demo)."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "build_demo": "build", "demo_readings": "build", "DemoSite": "build",
    "readings_for_component": "synth", "score_states": "truth",
    "truth_from_runs": "truth", "weekday_truth": "truth",
})

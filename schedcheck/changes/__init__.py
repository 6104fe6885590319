"""Changes: change points in daily series, before/after comparison, the compare command's core."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "pelt_mean_shift": "change_points", "before_after": "before_after",
    "BeforeAfter": "before_after", "compare_daily": "compare", "CompareResult": "compare",
})

"""Each stage package's re-exports resolve to the object its defining module holds."""

import importlib

import pytest

STAGES = ("readings", "runstate", "schedule", "audit", "findings", "changes", "demo")


@pytest.mark.parametrize("stage", STAGES)
def test_every_reexport_is_the_defining_module_s_object(stage):
    package = importlib.import_module(f"schedcheck.{stage}")
    assert package.__all__, f"schedcheck.{stage} re-exports nothing"
    for name in package.__all__:
        obj = getattr(package, name)
        assert obj is not None
        if hasattr(obj, "__module__") and callable(obj):
            # defined where the map says, not re-exported from somewhere else
            assert obj.__module__.startswith(f"schedcheck.{stage}."), (name, obj.__module__)


def test_submodules_stay_importable_through_the_package():
    from schedcheck.runstate import thresholds

    runstate = importlib.import_module("schedcheck.runstate")
    assert thresholds.otsu_threshold is runstate.otsu_threshold
    with pytest.raises(AttributeError):
        importlib.import_module("schedcheck.audit").no_such_name  # noqa: B018

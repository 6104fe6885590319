"""schedcheck: find air handling units that run outside their intended schedule.

Fan vibration readings are turned into run intervals, the occupancy calendars into intended
intervals, and the two are compared and priced with the fan affinity laws.

Each stage package (``readings``, ``runstate``, ``schedule``, ``audit``, ``findings``,
``changes``, ``demo``) re-exports its public names, so ``from schedcheck.runstate import
classify_unit`` works; inside the package, code imports from the defining module. The
re-exports are resolved on first use (:func:`lazy_exports`), so importing a stage costs
nothing until one of its names is asked for: the command line stays quick to start.
"""

from __future__ import annotations

from importlib import import_module

__version__ = "0.1.0"


def lazy_exports(package: str, exports: dict[str, str]):
    """``(__getattr__, __all__)`` for a package that re-exports ``name -> defining module``.

    ``exports`` maps each public name to the module (relative to ``package``) that defines it.
    An unknown name raises AttributeError, so ``from package import submodule`` still imports
    the submodule.
    """

    def __getattr__(name: str):
        module = exports.get(name)
        if module is None:
            raise AttributeError(f"module {package!r} has no attribute {name!r}")
        return getattr(import_module(f"{package}.{module}"), name)

    return __getattr__, sorted(exports)

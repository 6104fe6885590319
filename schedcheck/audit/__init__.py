"""Audit: run states x intended schedule -> exact hour figures, energy and priced findings."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "AuditResult": "run", "run_audit": "run",
    "ComponentAccount": "accounting", "ScheduleSets": "accounting", "account": "accounting",
    "account_component": "accounting", "FIGURES": "accounting",
    "affinity_power": "energy", "energy_kwh": "energy", "price": "energy",
    "DEFAULT_EXPONENT": "energy", "EXPONENT_RANGE": "energy",
})

"""demo.truth.fault_hours_as_audited: the demo's planted-fault table uses the audit's
definitions, so its hours can be read against the audit table printed under it."""

from __future__ import annotations

import pytest

from schedcheck.jobs.demo import audited_fault_hours


@pytest.mark.slow
def test_planted_fault_hours_match_the_audits_off_schedule_and_missed_hours(demo_audit):
    hours = audited_fault_hours(demo_audit.site_file, demo_audit.demo)
    result = demo_audit.result
    for comp in result.components:
        ns = comp.account.ns
        if ns["no_data"] / 3.6e12 > 1.0:
            continue    # a sensor outage hides part of the fault from the audit
        off = sum(h for (key, kind), h in hours.items() if key == comp.key and kind != "missed")
        missed = sum(h for (key, kind), h in hours.items() if key == comp.key and kind == "missed")
        # the truth is the generator's; the audit sees it through noisy one-minute readings
        assert ns["off_schedule"] / 3.6e12 == pytest.approx(off, abs=1.0), comp.key
        if missed:
            assert ns["missed"] / 3.6e12 == pytest.approx(missed, abs=0.5), comp.key
    # the continuous fault counts its off-schedule hours, not its whole run (665 h)
    assert hours[("AHU-4/supply", "continuous")] == pytest.approx(434.5, abs=1.0)

"""Confidence in the run states, carried from the classifier to `states`, summary.json and the
report's headline."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd

from schedcheck.demo import synth
from schedcheck.outputs.report import write_report
from schedcheck.outputs.states_records import component_record
from schedcheck.runstate import classify
from schedcheck.site import Component
from tests.report_fixture import write_fixture

S = pd.Timestamp("2026-03-02T00:00Z")
E = S + pd.Timedelta("14D")


def _lead(page: str) -> str:
    i = page.index('<p class="lead">')
    return page[i:page.index("</p>", i)]


def test_headline_names_components_with_uncertain_run_states(tmp_path):
    write_fixture(tmp_path, days=3)
    path = tmp_path / "summary.json"
    summary = json.loads(path.read_text())
    first = summary["components"][0]
    first["threshold"] |= {"confidence": "low", "concerns": [
        "the readings below and above the on/off level overlap (separation 1.4, below 2): the "
        "split is weak"]}
    path.write_text(json.dumps(summary))
    page = write_report(tmp_path).read_text(encoding="utf-8")
    lead = _lead(page)
    assert f"The run states of {first['id']} are uncertain" in lead
    assert "separation 1.4, below 2" in page and "confidence in the run states" in page


def test_headline_is_silent_when_run_states_are_clear(tmp_path):
    write_fixture(tmp_path, days=3)
    assert "uncertain" not in _lead(write_report(tmp_path).read_text(encoding="utf-8"))


def test_states_record_carries_confidence_and_concerns():
    rng = np.random.default_rng(2)
    truth = synth.weekday_truth(S, E, "Europe/Berlin", rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=S, end=E,
                                     period="15min", jitter="30s")
    c = Component(id="supply", unit="AHU-9", role="supply_fan", sensor="S1", power_kw=3.0,
                  speed=1.0)
    rec = component_record(classify.classify_component(c, r, S, E, pd.Timedelta("5min")))
    assert rec["confidence"] == "high" and rec["concerns"] == []
    assert 0 <= rec["near_share"] < 0.02
    assert any("short cycling" in w for w in rec["warnings"])

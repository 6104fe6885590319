"""The episodes of summary.json: written as interface.md section 10 says, and a damaged record
refused with one line naming the field when the report reads the folder back."""

from __future__ import annotations

import datetime as dt
import json

import pytest

from schedcheck.changes.capa import Episode
from schedcheck.errors import InputError
from schedcheck.outputs.episode_records import episode_records
from schedcheck.outputs.saved import read_summary
from tests.report_fixture import write_fixture


def test_records_have_the_interface_fields():
    ep = Episode(dt.date(2026, 4, 20), dt.date(2026, 5, 17), "collective", 15.517, 0.0)
    assert episode_records([ep]) == [{"start": "2026-04-20", "end": "2026-05-17",
                                      "kind": "collective", "mean_h_per_day": 15.517,
                                      "usual_h_per_day": 0.0}]


@pytest.mark.parametrize(("damage", "message"), [
    (lambda c: c.pop("episodes"), "components[0].episodes: missing"),
    (lambda c: c.update(episodes={}), "components[0].episodes: must be a list"),
    (lambda c: c.update(episodes=[{"start": "soon", "end": "2026-04-01", "kind": "point",
                                   "mean_h_per_day": 1, "usual_h_per_day": 0}]),
     "components[0].episodes[0]: start and end must be local dates"),
    (lambda c: c.update(episodes=[{"start": "2026-04-02", "end": "2026-04-01", "kind": "point",
                                   "mean_h_per_day": 1, "usual_h_per_day": 0}]),
     "components[0].episodes[0]: ends (2026-04-01) before it starts (2026-04-02)"),
    (lambda c: c.update(episodes=[{"start": "2026-04-01", "end": "2026-04-01", "kind": "odd",
                                   "mean_h_per_day": 1, "usual_h_per_day": 0}]),
     "components[0].episodes[0]: kind 'odd' is not one of collective, point"),
    (lambda c: c.update(episodes=[{"start": "2026-04-01", "end": "2026-04-01", "kind": "point",
                                   "mean_h_per_day": 99, "usual_h_per_day": 0}]),
     "components[0].episodes[0]: mean_h_per_day 99 is not hours per day"),
])
def test_a_damaged_episode_is_one_line_naming_the_field(tmp_path, damage, message):
    write_fixture(tmp_path)
    path = tmp_path / "summary.json"
    data = json.loads(path.read_text(encoding="utf-8"))
    damage(data["components"][0])
    path.write_text(json.dumps(data), encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_summary(path)
    text = str(err.value)
    assert message in text and "\n" not in text and text.startswith(str(path))

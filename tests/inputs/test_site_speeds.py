"""Site-file keys of reduced-speed running: speeds, design_rpm, allowed windows with
max_speed, standby_speed and [run_state] speed_exponent, with their ranges."""

from __future__ import annotations

import pytest

from schedcheck.inputs.site_file import load_site
from tests.test_site import BASE, one, write

SUPPLY = "power_kw = 7.5\nspeed = 0.85\n"


def with_supply(extra: str) -> str:
    return BASE.replace(SUPPLY, SUPPLY + extra, 1)


def test_speed_keys_load_with_their_types(tmp_path):
    (tmp_path / "weekend.ics").write_text("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN"
                                          "\r\nEND:VCALENDAR\r\n")
    text = with_supply("speeds = [0.45, 1.0]\ndesign_rpm = 1450\n").replace(
        'late_stop = "30min"\n', 'late_stop = "30min"\nstandby_speed = 0.4\nallowed = '
        '["office.ics", { file = "weekend.ics", max_speed = 0.5 }]\n'
    ) + "\n[run_state]\nspeed_exponent = 1.5\n"
    site = load_site(write(tmp_path, text))
    sup = site.units[0].components[0]
    assert sup.speeds == (0.45, 1.0) and sup.design_rpm == 1450.0
    assert site.schedule.standby_speed == 0.4
    assert [p.name for p in site.schedule.allowed] == ["office.ics", "weekend.ics"]
    assert site.schedule.allowed_limits == (None, 0.5)
    # a unit's override without `allowed` keeps the site's windows and their limits
    assert site.units[0].schedule.allowed_limits == (None, 0.5)
    assert site.units[0].schedule.standby_speed == 0.4
    assert site.run_state.speed_exponent == 1.5


@pytest.mark.parametrize(("extra", "key", "words"), [
    ("speeds = [1.0, 0.45]\n", "speeds", ("ascending",)),
    ("speeds = [0.0, 0.5]\n", "speeds", ("out of range",)),
    ("speeds = [0.5, 1.3]\n", "speeds", ("out of range",)),
    ("speeds = 0.5\n", "speeds", ("list",)),
    ("design_rpm = 0\n", "design_rpm", ("out of range",)),
])
def test_component_speed_keys_out_of_range(tmp_path, extra, key, words):
    one(tmp_path, with_supply(extra), f"unit[AHU-1].component[supply].{key}", *words)


@pytest.mark.parametrize(("line", "key"), [
    ("standby_speed = 0\n", "schedule.standby_speed"),
    ("standby_speed = 1.5\n", "schedule.standby_speed"),
    ('allowed = [{ file = "office.ics", max_speed = 1.3 }]\n', "schedule.allowed.max_speed"),
    ('allowed = [{ file = "office.ics", max_speed = 0 }]\n', "schedule.allowed.max_speed"),
    ('allowed = [{ file = "office.ics", fastest = 0.5 }]\n', "schedule.allowed.fastest"),
])
def test_schedule_speed_limits_out_of_range(tmp_path, line, key):
    one(tmp_path, BASE.replace('late_stop = "30min"\n', 'late_stop = "30min"\n' + line), key)


def test_speed_exponent_range(tmp_path):
    one(tmp_path, BASE + "\n[run_state]\nspeed_exponent = 9\n", "run_state.speed_exponent",
        "out of range")

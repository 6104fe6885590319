"""`schedcheck states` as a new user runs it, on a small site of our own written from scratch."""

import datetime as dt
import json
import xml.etree.ElementTree as ET

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth
from schedcheck.outputs.histogram import histogram_svg
from tests.helpers import local_to_utc, run_cli, weekday_calendar

TZ = "Europe/Berlin"
FIRST, LAST = dt.date(2026, 9, 7), dt.date(2026, 9, 27)

SITE = """
[site]
name = "Quarry Lane Studio Block (fictional)"
timezone = "Europe/Berlin"

[readings]
files = ["readings/*.parquet"]
unit = "mm/s"

[schedule]
occupied = "studio.ics"

[[unit]]
id = "AHU-A"
name = "Studios"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "QL-01"
power_kw = 7.5
speed = 0.9

[[unit.component]]
id = "wheel"
role = "heat_wheel"
sensor = "QL-02"
power_kw = 0.25
speed = 1.0

[[unit]]
id = "AHU-B"
name = "Server corridor"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "QL-03"
power_kw = 3.0
speed = 0.7

[[unit.component]]
id = "exhaust"
role = "exhaust_fan"
sensor = "QL-04"
power_kw = 2.2
speed = 0.7
threshold = 0.4
"""

CAL = weekday_calendar(TZ, "studio", "Studio hours")


def local(text: str) -> pd.Timestamp:
    return local_to_utc(text, TZ)


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("studio")
    (folder / "site.toml").write_text(SITE)
    (folder / "studio.ics").write_bytes(CAL.encode())
    (folder / "readings").mkdir()
    start, end = local(str(FIRST)), local(str(LAST + dt.timedelta(days=1)))
    rng = np.random.default_rng(21)
    truth = synth.weekday_truth(start, end, TZ, rng, on="06:00", off="18:30")
    wheel = synth.truth_from_runs(
        [(a, a + pd.Timedelta("2h")) for a in truth.loc[truth.state == "run", "start"]],
        start, end)
    always = synth.truth_from_runs([(start, end)], start, end)
    idx = pd.date_range(start, end, freq="6h")
    speed = pd.Series(np.tile([0.6, 1.0], idx.size)[: idx.size], index=idx)   # two speeds
    kw = dict(rng=rng, start=start, end=end)
    frames = [
        synth.readings_for_component(truth, sensor="QL-01", running_level=2.0, **kw),
        synth.readings_for_component(wheel, sensor="QL-02", running_level=0.8, carried=truth,
                                     carried_level=0.25, **kw),
        synth.readings_for_component(always, sensor="QL-03", running_level=1.5, speed=speed,
                                     **kw),
        synth.readings_for_component(always, sensor="QL-04", running_level=1.0, **kw),
    ]
    rows = pd.concat(frames, ignore_index=True)
    rows["timestamp"] = rows["timestamp"].dt.floor("s")
    rows.to_parquet(folder / "readings" / "studio.parquet", index=False)
    return folder, truth


run = run_cli


def test_json_tells_each_level_and_why(site, capsys):
    folder, truth = site
    code, out, err = run(["states", str(folder / "site.toml"), "--format", "json"], capsys)
    assert code == 0, err
    recs = {r["component"]: r for r in json.loads(out)}
    assert list(recs) == ["AHU-A/supply", "AHU-A/wheel", "AHU-B/supply", "AHU-B/exhaust"]
    sup = recs["AHU-A/supply"]
    assert sup["source"] == "learned" and sup["separation"] > 2
    runs = truth[truth.state == "run"]
    true_share = float((runs.end - runs.start).sum() / (truth.end.iloc[-1] - truth.start.iloc[0]))
    assert sup["running_share"] == pytest.approx(true_share, abs=0.005)
    assert sup["starts"] == len(runs) and sup["starts_per_day"] == pytest.approx(15 / 21, abs=0.01)
    assert sup["off_level"] < sup["level"] < sup["on_level"]
    wheel = recs["AHU-A/wheel"]
    assert len(wheel["groups"]) == 3 and "carried" in wheel["reason"]
    assert wheel["level"] > 0.25 and wheel["starts"] == len(runs)
    server = recs["AHU-B/supply"]   # never stops, two speeds: not split into run and off
    assert server["source"] == "floor" and server["running_share"] == 1.0
    assert server["starts"] == 0 and server["warnings"]
    exh = recs["AHU-B/exhaust"]
    assert exh["source"] == "configured" and exh["level"] == 0.4 and exh["running_share"] == 1.0
    for r in recs.values():
        assert r["known_hours"] + r["no_data_hours"] == pytest.approx(21 * 24)


def test_table_and_pictures(site, tmp_path, capsys):
    folder, _ = site
    pics = tmp_path / "levels"
    code, out, err = run(["states", str(folder / "site.toml"), "--plot", str(pics)], capsys)
    assert code == 0, err
    for word in ("AHU-A/supply", "AHU-B/exhaust", "learned", "floor", "configured",
                 "Separation", "carried"):
        assert word in out
    names = sorted(p.name for p in pics.iterdir())
    assert names == ["AHU-A_supply.svg", "AHU-A_wheel.svg", "AHU-B_exhaust.svg",
                     "AHU-B_supply.svg"]
    root = ET.fromstring((pics / "AHU-A_wheel.svg").read_text())
    text = " ".join(t.text or "" for t in root.iter("{http://www.w3.org/2000/svg}text"))
    assert "on/off level" in text and "(learned)" in text and "mm/s" in text


def test_plot_into_a_file_or_unwritable_place_is_one_error_line(site, tmp_path, capsys):
    # both ended as "internal error: FileExistsError ..." with exit status 1
    folder, _ = site
    taken = tmp_path / "taken.svg"
    taken.write_text("x")
    code, _, err = run(["states", str(folder / "site.toml"), "--plot", str(taken)], capsys)
    assert (code, err) == (2, f"error: {taken}: exists and is not a folder; give another --plot\n")
    below = taken / "levels"
    code, _, err = run(["states", str(folder / "site.toml"), "--plot", str(below)], capsys)
    assert code == 2 and err.startswith(f"error: {below}: cannot write the pictures here (")
    assert err.count("\n") == 1
    # a file name that does not exist yet became a folder of that name
    named = tmp_path / "levels.svg"
    code, _, err = run(["states", str(folder / "site.toml"), "--plot", str(named)], capsys)
    assert (code, err) == (2, f"error: {named}: looks like a file name; --plot takes a folder "
                              "and writes one picture per component into it\n")
    assert not named.exists()


def test_window_options(site, capsys):
    folder, _ = site
    code, out, err = run(["states", str(folder / "site.toml"), "--from", "2026-09-14",
                          "--to", "2026-09-20", "--format", "json"], capsys)
    assert code == 0, err
    sup = json.loads(out)[0]
    assert sup["known_hours"] + sup["no_data_hours"] == pytest.approx(7 * 24)
    assert sup["starts"] == 5


@pytest.mark.parametrize("args, words", [
    (["--format", "xml"], "--format"),
    (["--from", "14/09/2026"], "--from"),
    (["--from", "2026-09-20", "--to", "2026-09-14"], "before"),
])
def test_bad_options_are_one_line_errors(site, capsys, args, words):
    folder, _ = site
    code, out, err = run(["states", str(folder / "site.toml"), *args], capsys)
    assert code == 2 and out == ""
    assert err.startswith("error: ") and words in err and err.count("\n") == 1


def test_histogram_svg_escapes_and_checks_shapes():
    svg = histogram_svg([1, 5, 0, 2], [-2, -1.5, -1, -0.5, 0], 0.1, 0.12, 0.08, "<b> & co",
                        source="floor")
    root = ET.fromstring(svg)
    assert root.tag.endswith("svg") and "&lt;b&gt; &amp; co" in svg
    assert sum(1 for r in root.iter("{http://www.w3.org/2000/svg}rect")) == 1 + 1 + 3
    with pytest.raises(ValueError):
        histogram_svg([1, 2], [0, 1], 0.1, 0.1, 0.1, "x")

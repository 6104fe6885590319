"""What the bounds of issue 15 (round 2) say, beyond the corpus's clean refusal: the hostile
corpus's cases refused for the right reason, and the figures behind them (lines, counts).
"""

from __future__ import annotations

import datetime as dt
import re
import time
from pathlib import Path

import pandas as pd
import pytest

from tests.cli.test_hostile_corpus import CASES
from tests.helpers import run_cli
from tests.small_site import write_site

EXPECTED = {
    "gz-bomb-newlines": r"r\.csv\.gz: unpacks to more than 200 times its compressed size",
    "gz-damaged-deflate": (r"r\.csv\.gz: the compressed data is damaged and cannot be unpacked "
                           r"\((after [0-9.]+ MiB of text, near line \d+|in its first 64 kB of "
                           r"text)\); copy or download the file again$"),
    "gz-corrupt-middle": r"r\.csv\.gz: the compressed data is damaged",
    "header-10000-columns": r"readings\.csv:1: the header has 10,003 columns; a readings file "
                            r"may have at most 1,000",
    "header-40000-columns-dup": r"readings\.csv:1: the header has 40,003 columns",
    "header-dup-used-column": r"readings\.csv:1: column 'x_rms' appears 2 times in the header "
                              r"\(columns 3, 5\)",
    "header-line-no-break": r"readings\.csv:1: line 1 is longer than 1 MiB without a line break",
    "header-line-no-break-gz": r"r\.csv\.gz:1: line 1 is longer than 1 MiB without a line break",
    "data-line-no-break": r"readings\.csv:101: line 101 is longer than 1 MiB without a line break",
    "years-narrowed": r"readings\.csv:2: timestamp '2026-03-01T23:00:00Z' is outside the years "
                      r"2027 to 2035",
    "years-reversed": r"site\.toml:\d+: readings\.years: \[2035, 2020\] must be two years from "
                      r"1900 to 2199",
    "years-too-wide": r"readings\.years: \[1800, 2300\] must be two years from 1900 to 2199",
    "years-text": r"readings\.years: must be two whole years \[first, last\]",
    # 3 header lines, then 5 lines an event: event 20,001 begins on line 3 + 5 x 20,000 + 1
    "cal-330000-events": r"occupied\.ics:100004:.*than 20,000 events \(VEVENT\)",
    "cal-interval-never-100": (r"RRULE 'FREQ=DAILY;INTERVAL=7;BYDAY=MO' can never occur: "
                               r"stepping INTERVAL=7 from DTSTART \(2026-03-03, a Tuesday\)"),
    "cal-interval-never-monthly": r"RRULE 'FREQ=MONTHLY;INTERVAL=2;BYMONTH=2' can never occur",
    "cal-zone-minutely-folded": r"occupied\.ics:\d+: a VTIMEZONE rule repeats more often than "
                                r"weekly",
    "site-38000-problems": r"site\.toml:\d+: unit\[U0\]\.bad0: unknown key",
}


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_refused_for_its_reason(name, tmp_path, capsys):
    argv, _ = CASES[name](tmp_path / "site")
    code, out, err = run_cli(argv, capsys)
    first = next(ln for ln in err.splitlines() if ln.startswith("error:"))
    assert code == 2 and re.search(EXPECTED[name], first), (name, first[:400])


def test_many_problems_listed_first_fifty_and_counted(tmp_path, capsys):
    argv, _ = CASES["site-38000-problems"](tmp_path / "site")
    t0 = time.monotonic()
    code, out, err = run_cli(argv, capsys)
    elapsed = time.monotonic() - t0
    lines = err.splitlines()
    errors = [ln for ln in lines if ln.startswith("error:")]
    # 1,999 units of 19 unknown keys each (plus the [energy] of the small site: none)
    assert code == 2 and len(errors) == 50
    assert "... and 37,931 more problems (the first 50 are listed" in err
    assert "37,981 problems found in the inputs of" in err
    # each problem's line is found: the 50th is unit U2's 12th bad key (bad11), on its line
    text = Path(argv[1]).read_text().splitlines()
    m = re.match(r"error: .*site\.toml:(\d+): unit\[U2\]\.bad11: unknown key", errors[49])
    assert m and text[int(m.group(1)) - 1] == "bad11 = 1"
    assert elapsed < 60      # was 112 s; finding lines is one look-up each (the corpus: 30 s)


def test_calendar_fifo_is_not_a_regular_file(tmp_path, capsys):
    import os

    p = write_site(tmp_path)
    (tmp_path / "occupied.ics").unlink()
    os.mkfifo(tmp_path / "occupied.ics")
    code, out, err = run_cli(["check", p], capsys)
    assert code == 2
    assert ("schedule.occupied: calendar file 'occupied.ics' is not a regular file (a device, "
            "pipe or socket)") in err and "does not exist" not in err


def test_calendar_device_link_is_not_a_regular_file(tmp_path, capsys):
    p = write_site(tmp_path)
    (tmp_path / "occupied.ics").unlink()
    (tmp_path / "occupied.ics").symlink_to("/dev/null")
    code, out, err = run_cli(["schedule", p, "--from", "2026-03-02", "--to", "2026-03-03"],
                             capsys)
    assert code == 2 and "is not a regular file" in err and "does not exist" not in err


def test_schedule_table_escapes_line_breaks_from_a_summary(tmp_path, capsys):
    """RFC 5545 section 3.3.11: ``\\n`` in a TEXT value is a line break; shown in the terminal
    table, it would split the row (and a CR could overwrite it)."""
    p = write_site(tmp_path)
    ics = (tmp_path / "occupied.ics").read_text()
    (tmp_path / "occupied.ics").write_text(ics.replace("SUMMARY:Office hours",
                                                       "SUMMARY:Office\\nINJECTED\\rrow"))
    code, out, err = run_cli(["schedule", p, "--from", "2026-03-02", "--to", "2026-03-02"],
                             capsys)
    assert code == 0, err
    rows = [ln for ln in out.splitlines() if "Office" in ln]
    assert rows and all("Office\\nINJECTED\\rrow" in ln for ln in rows), out
    assert "\r" not in out and not any(ln.strip().startswith("INJECTED") for ln in out.splitlines())


def test_add_row_escapes_every_control_character_but_keeps_our_text():
    from rich.table import Table
    from rich.text import Text

    from schedcheck.cli._common import add_row

    t = Table()
    t.add_column("a")
    t.add_column("b")
    add_row(t, "x\ny\r\x1b[2Jz\x85", Text("1.0 to\n2.0"))
    cells = [c._cells[0] for c in t.columns]
    assert cells[0] == "x\\ny\\r\\x1b[2Jz\\x85"
    assert isinstance(cells[1], Text) and cells[1].plain == "1.0 to\n2.0"


def _apia_site(folder: Path) -> Path:
    """A site in Pacific/Apia running 06:30-18:30 local every day, 26 Dec 2011 to 1 Jan 2012:
    Samoa moved across the date line, so 30 Dec 2011 did not exist there (IANA tz database,
    'australasia' file: 'Samoa ... skipped Friday, December 30, 2011')."""
    import numpy as np

    from tests.small_site import site_toml

    tz = "Pacific/Apia"
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "occupied.ics").write_text(
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//test//x//EN\r\nBEGIN:VEVENT\r\n"
        "UID:apia@test.invalid\r\nDTSTART;TZID=Pacific/Apia:20111205T070000\r\n"
        "DTEND;TZID=Pacific/Apia:20111205T180000\r\nRRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR\r\n"
        "SUMMARY:Office hours\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n")
    idx = pd.date_range("2011-12-26", "2012-01-02", freq="1min", tz="UTC",
                        inclusive="left").tz_convert(tz)
    hour = idx.hour + idx.minute / 60
    level = np.where((hour >= 6.5) & (hour < 18.5), 2.0, 0.05)
    level = level * (1 + 0.05 * np.random.default_rng(3).standard_normal(len(idx)))
    pd.DataFrame({"timestamp": idx.tz_convert("UTC").strftime("%Y-%m-%dT%H:%M:%SZ"),
                  "sensor": "S-1", "x_rms": np.round(np.abs(level), 4)}).to_csv(
        folder / "readings.csv", index=False)
    path = folder / "site.toml"
    path.write_text(site_toml().replace('"Europe/Oslo"', f'"{tz}"'))
    return path


def test_a_skipped_local_day_has_no_daily_row(tmp_path, capsys):
    site = _apia_site(tmp_path / "site")
    out = tmp_path / "out"
    code, _, err = run_cli(["audit", site, "--from", "2011-12-27", "--to", "2012-01-01",
                            "--out", out], capsys)
    assert code == 0, err
    daily = pd.read_csv(out / "daily.csv")
    assert "2011-12-30" not in set(daily["date"])
    assert list(daily["date"]) == ["2011-12-27", "2011-12-28", "2011-12-29", "2011-12-31",
                                   "2012-01-01"]
    # every day that exists was 24 h long; the window, 27 Dec 00:00 -10:00 to 2 Jan 00:00
    # +14:00, is 120 h of real time
    assert daily["period_h"].tolist() == [24.0] * 5
    assert daily["period_h"].sum() == pytest.approx(120.0)
    assert (daily[["running_h", "off_h", "no_data_h"]].sum(axis=1) == daily["period_h"]).all()
    # the fan ran 12 h every day (06:30-18:30 local)
    assert daily["running_h"].tolist() == pytest.approx([12.0] * 5, abs=0.05)


def test_local_midnight_after_a_skipped_day():
    from schedcheck.window import day_edges, local_midnight

    # 31 Dec 2011 00:00 +14:00 = 30 Dec 10:00 UTC, the end of the skipped day
    end = pd.Timestamp("2011-12-30 10:00", tz="UTC")
    assert local_midnight(dt.date(2011, 12, 30), "Pacific/Apia") == end
    assert local_midnight(dt.date(2011, 12, 31), "Pacific/Apia") == end
    dates, edges = day_edges(dt.date(2011, 12, 29), dt.date(2011, 12, 31), "Pacific/Apia")
    assert dates == [dt.date(2011, 12, 29), dt.date(2011, 12, 31)] and len(edges) == 3
    # a midnight inside an ordinary one-hour gap: Havana springs forward at 00:00 (IANA
    # 'northamerica' file, Cuba rules: second Sunday of March at 0:00s)
    assert local_midnight(dt.date(2026, 3, 8), "America/Havana") == pd.Timestamp(
        "2026-03-08 05:00", tz="UTC")

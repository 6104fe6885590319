"""Text from the inputs in the outputs: CSV formula cells, ICS text, terminal text
(schedcheck.outputs.cells, schedcheck.errors.terminal_text)."""

from __future__ import annotations

import re

import icalendar
from hypothesis import given
from hypothesis import strategies as st

from schedcheck.errors import excerpt, terminal_text
from schedcheck.outputs.cells import csv_cell, csv_uncell, ics_text
from tests.helpers import run_cli
from tests.small_site import write_site

# OWASP "CSV Injection": cells starting with these are read as formulas by spreadsheets
PAYLOADS = ['=HYPERLINK("x")', "+cmd|' /C calc'!A0", "@SUM(1)", "-2+3", "\t=1", "\r=1"]


def test_formula_cells_get_an_apostrophe_numbers_do_not():
    for p in PAYLOADS:
        assert csv_cell(p) == "'" + p
    assert csv_cell(-2.5) == -2.5 and csv_cell("AHU-1") == "AHU-1" and csv_cell("") == ""


@given(st.text(max_size=12))
def test_cell_round_trip_is_exact(text):
    assert csv_uncell(csv_cell(text)) == text


def test_ics_text_has_no_bare_cr_and_escapes_controls():
    cal = icalendar.Calendar()
    cal.add("summary", ics_text("a\rEND:VEVENT\rBEGIN:VEVENT\x1b[2J" + "x" * 200))
    raw = cal.to_ical()
    assert not re.search(rb"\r(?!\n)", raw) and b"\x1b" not in raw
    assert all(len(line) <= 75 for line in raw.split(b"\r\n"))     # RFC 5545 section 3.1


def test_terminal_text_and_excerpt():
    assert terminal_text("a\x1b]0;t\x07b\rc") == "a\\x1b]0;t\\x07b\\rc"
    assert terminal_text("Nordlys kontor æøå") == "Nordlys kontor æøå"
    assert len(excerpt("x" * 10_000)) < 70


def test_hostile_names_and_ids_reach_no_output_raw(tmp_path, capsys):
    site = write_site(tmp_path / "s", name="Evil\r\nEND:VEVENT\rUID:e@x\x1b]0;t\x07 [/] [bold]",
                      unit='=HYPERLINK("x")', component="@SUM(1)", sensor="+cmd|' /C calc'!A0")
    out = tmp_path / "out"
    code, stdout, err = run_cli(["audit", site, "--out", out, "--from", "2026-03-02",
                                 "--to", "2026-03-08"], capsys)
    assert code == 0, err
    assert "\x1b" not in stdout and "\r" not in stdout and "[/]" in stdout
    for name in ("daily.csv", "runs.csv", "schedule.csv"):
        rows = (out / name).read_text(encoding="utf-8").splitlines()[1:]
        assert rows and all(r.startswith("\"'=HYPERLINK") for r in rows), name
    ics = (out / "findings.ics").read_bytes()
    assert not re.search(rb"\r(?!\n)", ics) and b"\x1b" not in ics
    assert b"\nUID:e@x" not in ics
    code, _, err = run_cli(["report", out], capsys)     # reads its own files back
    assert code == 0, err
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "'=HYPERLINK" not in html and "=HYPERLINK(&#34;x&#34;)" in html


def test_slash_and_control_in_ids_refused(tmp_path, capsys):
    for n, kw in enumerate([{"unit": "A/B"}, {"component": "B/c"}, {"unit": "A\rB"},
                            {"sensor": "S\x1b1"}]):
        site = write_site(tmp_path / f"s{n}", **kw)
        code, _, err = run_cli(["check", site], capsys)
        assert code == 2 and f"{site}:" in err and "\x1b" not in err and "\r" not in err, err


def test_sensor_with_surrounding_spaces_matches(tmp_path, capsys):
    site = write_site(tmp_path / "s", sensor="S-1 ")
    code, _, err = run_cli(["audit", site, "--out", tmp_path / "o"], capsys)
    assert code == 0, err
    assert '"sensor": "S-1"' in (tmp_path / "o" / "summary.json").read_text()

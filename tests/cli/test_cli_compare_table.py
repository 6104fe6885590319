"""cli.compare: the table fits an 80-column terminal and carries its notes (no JSON needed)."""

from __future__ import annotations

import datetime as dt
from types import SimpleNamespace as NS

from rich.console import Console

from schedcheck.changes.compare import FEW_DAYS, LEFT_OUT, CompareNote
from schedcheck.cli.compare import compare_table, note_lines


def fig(b, a, lo, hi):
    return NS(before_mean=b, after_mean=a, difference=a - b, ci95=(lo, hi))


def comp(cid, notes=(), points=()):
    return NS(id=cid, notes=list(notes), change_points=list(points), figures={
        "off_schedule_h_per_day": fig(0.2, 14.1, 12.8, 15.0),
        "kwh_per_day": fig(1.1, 190.3, 0, 0), "missed_h_per_day": fig(0.0, 4.1, 3.0, 5.2)})


def result():
    few = CompareNote("only 4 usable day(s) after the change (fewer than 7): the interval "
                      "rests on too few days to trust; a period of whole weeks is better",
                      FEW_DAYS)
    gap = CompareNote("2 day(s) before the change left out: more than 2 h of no data", LEFT_OUT)
    cp = NS(date=dt.date(2026, 4, 20), latest=dt.date(2026, 4, 22), before_mean=0.2,
            after_mean=14.1)
    cp2 = NS(date=dt.date(2026, 5, 4), latest=dt.date(2026, 5, 4), before_mean=14.1,
             after_mean=0.3)
    return NS(site_name="Lindeskar Learning House, Vellesund (fictional)", before_days=28,
              after_days=28, change=dt.date(2026, 4, 20),
              components=[comp("AHU-4/supply", [few], [cp, cp2]), comp("AHU-4/exhaust", [few]),
                          comp("AHU-12/return", [gap])])


def render(res, width=80) -> str:
    console = Console(width=width, record=True, highlight=False)
    with console.capture() as cap:
        console.print(compare_table(res))
    return cap.get()


def test_table_fits_80_columns_without_cutting_ids_or_dates():
    text = render(result())
    assert max(len(line) for line in text.splitlines()) <= 80
    # dates in the change's year are shown as MM-DD, with the year in the legend
    for whole in ("AHU-4/supply", "AHU-4/exhaust", "AHU-12/return", "04-20..22", "05-04",
                  "+12.8..+15.0", "dates in 2026"):
        assert whole in text, (whole, text)
    assert "…" not in text


def test_notes_are_marked_in_the_table_and_listed_once_per_group():
    res = result()
    text = render(res)
    assert "AHU-4/supply*1" in text and "AHU-4/exhaust*1" in text and "AHU-12/return*2" in text
    lines = note_lines(res)
    assert lines[0].startswith("*1 AHU-4/supply, AHU-4/exhaust: only 4 usable day(s) after")
    assert lines[1].startswith("*2 AHU-12/return: 2 day(s) before the change left out")
    assert len(lines) == 2


def test_too_few_days_holds_back_the_verdict():
    text = render(result(), width=120)
    rows = {line.split()[0]: line for line in text.splitlines() if line.startswith("AHU")}
    assert "too few days" in rows["AHU-4/supply*1"] and "more off-schedule" not in rows[
        "AHU-4/supply*1"]
    assert "more off-schedule running" in rows["AHU-12/return*2"]

"""cli.states: the table fits an 80-column terminal; reasons are paragraphs under it."""

from __future__ import annotations

from types import SimpleNamespace as NS

from rich.console import Console

from schedcheck.cli.states import reason_lines, states_table

REASON = ("two groups of readings (at 0.05 and 2.1 mm/s) with a clear valley between them; "
          "the level is at the lowest point of the valley, 0.41 mm/s, and the running group "
          "lies well above the noise floor of the sensor")


def result():
    rec = {"component": "AHU-12/exhaust", "level": 0.4123, "source": "learned",
           "separation": 1000.0, "confidence": "medium", "running_share": 0.4567,
           "starts_per_day": 1.04, "reason": REASON,
           "warnings": ["50.7 h without readings (2.3% of the window; longest silence 50.7 h)"]}
    site = NS(name="Lindeskar Learning House, Vellesund (fictional)", timezone="Europe/Oslo",
              readings=NS(unit="mm/s"))
    return NS(site=site, first="2026-03-01", last="2026-03-31",
              records=[rec, dict(rec, component="AHU-1/supply", warnings=[])])


def test_states_table_fits_80_columns_and_reasons_wrap_as_paragraphs():
    res = result()
    console = Console(width=80, record=True, highlight=False)
    with console.capture() as cap:
        console.print(states_table(res))
        for line in reason_lines(res):
            console.print(line, markup=False)
    text = cap.get()
    lines = text.splitlines()
    assert max(len(line) for line in lines) <= 80
    assert "AHU-12/exhaust" in text and ">1000" in text and "45.7%" in text and "[mm/s]" in text
    assert "…" not in text
    # the reason reads as a paragraph of a few full-width lines, not 13 lines in a column
    first = next(i for i, line in enumerate(lines) if line.startswith("*1 AHU-12/exhaust: two"))
    assert lines[first + 3].startswith("   warning: 50.7 h without readings")
    assert reason_lines(res)[2].startswith("*2 AHU-1/supply: two groups")

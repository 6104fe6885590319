"""inputs.site_sections: ``[holidays] drop`` and ``add`` are checked with file:line and key."""

from __future__ import annotations

import datetime as dt

from schedcheck.inputs.site_file import load_site
from tests.test_site import BASE, one, problems, write

US = BASE.replace('country = "NO"', 'country = "US"')


def with_lists(text: str, lists: str) -> str:
    return text.replace('closed = ["2026-12-24", "2026-07-13/2026-07-31"]', lists)


def test_drop_by_name_and_date_and_add_dates_load(tmp_path):
    text = with_lists(US, 'drop = ["Columbus Day", "2026-11-11"]\nadd = ["2026-11-27"]')
    h = load_site(write(tmp_path, text)).holidays
    assert h.drop_names == ("Columbus Day",)
    assert h.drop_dates == (dt.date(2026, 11, 11),)
    assert h.add == (dt.date(2026, 11, 27),)


def test_unknown_holiday_name_lists_the_countrys_names(tmp_path):
    text = with_lists(US, 'drop = ["Columbus day"]')
    msg = one(tmp_path, text, "holidays.drop[1]", "'Columbus day' is not a holiday name of US",
              "Columbus Day", "Veterans Day", "Thanksgiving Day")
    line = msg.split(":")[1]
    assert line.isdigit() and text.splitlines()[int(line) - 1].startswith("drop")


def test_dropped_date_that_is_no_holiday_and_bad_added_date(tmp_path):
    text = with_lists(US, 'drop = ["2026-11-12"]\nadd = ["27.11.2026"]')
    out = problems(tmp_path, text)
    assert len(out) == 2, out
    assert ": holidays.drop[1]: " in out[0] and "2026-11-11" in out[0]   # the year's list
    assert ": holidays.add[1]: " in out[1] and "not a date" in out[1]


def test_drop_needs_a_country_but_add_does_not(tmp_path):
    text = BASE.replace('country = "NO"\n', "").replace(
        'closed = ["2026-12-24", "2026-07-13/2026-07-31"]', 'drop = ["Christmas Day"]')
    one(tmp_path, text, "holidays.drop", "needs holidays.country")
    ok = BASE.replace('country = "NO"\n', "").replace(
        'closed = ["2026-12-24", "2026-07-13/2026-07-31"]', "add = [2026-11-27]")
    assert load_site(write(tmp_path, ok)).holidays.add == (dt.date(2026, 11, 27),)

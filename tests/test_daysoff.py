"""schedcheck.daysoff: public holidays against official 2026 lists, closures, pinned language."""

from __future__ import annotations

import datetime as dt

import pytest

from schedcheck.daysoff import closure_days, days_off, pinned_language, public_holidays
from schedcheck.errors import InputError
from schedcheck.site import HolidaySettings

D = dt.date
YEAR = (D(2026, 1, 1), D(2026, 12, 31))


def working_day_holidays(frame) -> list[dt.date]:
    return sorted({d for d in frame["date"] if d.weekday() < 5})


# Norway 2026: the public holidays (helligdager) of the Act on public holidays and days of rest
# (helligdagsfredloven) plus 1 and 17 May under "Lov om 1. og 17. mai som høgtidsdager"; Easter
# Sunday is 5 April 2026. Dates written from memory of the act's list: New Year's Day,
# Maundy Thursday, Good Friday, Easter Sunday and Monday, 1 May, Ascension Day, 17 May,
# Whit Sunday and Monday, Christmas Day, Boxing Day. Working days (Mon-Fri) among them:
NORWAY_2026_WORKING_DAYS = [D(2026, 1, 1), D(2026, 4, 2), D(2026, 4, 3), D(2026, 4, 6),
                            D(2026, 5, 1), D(2026, 5, 14), D(2026, 5, 25), D(2026, 12, 25)]

# England and Wales 2026 bank holidays as published by the UK government (gov.uk/bank-holidays),
# written from memory: 1 Jan, Good Friday 3 Apr, Easter Monday 6 Apr, Early May 4 May, Spring
# 25 May, Summer 31 Aug, Christmas 25 Dec, Boxing Day (substitute day) Monday 28 Dec.
ENGLAND_2026 = [D(2026, 1, 1), D(2026, 4, 3), D(2026, 4, 6), D(2026, 5, 4), D(2026, 5, 25),
                D(2026, 8, 31), D(2026, 12, 25), D(2026, 12, 28)]

# US federal holidays 2026 under 5 U.S.C. 6103, with the observed day for one on a weekend
# (Independence Day, Saturday 4 July, is observed Friday 3 July), from memory of the OPM list.
US_FEDERAL_2026 = [D(2026, 1, 1), D(2026, 1, 19), D(2026, 2, 16), D(2026, 5, 25),
                   D(2026, 6, 19), D(2026, 7, 3), D(2026, 9, 7), D(2026, 10, 12),
                   D(2026, 11, 11), D(2026, 11, 26), D(2026, 12, 25)]


@pytest.mark.parametrize("country,subdivision,expected", [
    ("NO", None, NORWAY_2026_WORKING_DAYS),
    ("GB", "ENG", ENGLAND_2026),
    ("US", None, US_FEDERAL_2026),
])
def test_2026_public_holidays_match_official_lists_on_working_days(country, subdivision,
                                                                   expected):
    got = public_holidays(country, *YEAR, subdivision=subdivision)
    assert working_day_holidays(got) == expected
    assert set(got["kind"]) == {"holiday"}


def test_names_are_pinned_to_one_language():
    # English names for Norway although the country's own language is Norwegian
    frame = public_holidays("NO", D(2026, 5, 17), D(2026, 5, 17))
    assert frame["name"].tolist() == ["Constitution Day"]
    assert pinned_language("NO", "en_US") == "en_US"
    # a language the country does not offer falls back to the country's default
    assert pinned_language("NO", "xx_XX") == "no"


def test_observed_day_is_included():
    frame = public_holidays("US", D(2026, 7, 3), D(2026, 7, 4))
    assert frame["name"].tolist() == ["Independence Day (observed)", "Independence Day"]


def test_closures_expand_inclusive_ranges_and_clip_to_window():
    closed = ((D(2026, 7, 13), D(2026, 7, 31)), (D(2026, 12, 24), D(2026, 12, 24)))
    frame = closure_days(closed, D(2026, 7, 20), D(2026, 12, 31))
    assert frame["date"].tolist()[0] == D(2026, 7, 20)
    assert len(frame) == 12 + 1
    assert frame["name"].iloc[-1] == "site closure" and set(frame["kind"]) == {"closure"}


def test_days_off_merges_and_sorts_with_both_kinds_on_one_date():
    settings = HolidaySettings(country="NO", closed=((D(2026, 12, 24), D(2026, 12, 26)),))
    frame = days_off(settings, D(2026, 12, 20), D(2026, 12, 31))
    assert [(d.day, k) for d, k in zip(frame["date"], frame["kind"], strict=True)] == [
        (24, "closure"), (25, "holiday"), (25, "closure"), (26, "holiday"), (26, "closure")]


def test_no_country_means_only_closures():
    frame = days_off(HolidaySettings(), D(2026, 1, 1), D(2026, 12, 31))
    assert len(frame) == 0 and list(frame.columns) == ["date", "name", "kind"]


@pytest.mark.parametrize("settings,key", [
    (HolidaySettings(country="ZZ"), "holidays.country"),
    (HolidaySettings(country="NO", subdivision="99"), "holidays.subdivision"),
    (HolidaySettings(country="NO", categories=("bank",)), "holidays.categories"),
])
def test_bad_settings_name_the_key(settings, key):
    with pytest.raises(InputError) as err:
        days_off(settings, *YEAR, path="site.toml")
    assert str(err.value).startswith(f"site.toml: {key}: ")

"""schedule.daysoff: public holidays against official 2026 lists, closures, pinned language."""

from __future__ import annotations

import datetime as dt

import pytest

from schedcheck.errors import InputError
from schedcheck.schedule.daysoff import closure_days, days_off, pinned_language, public_holidays
from schedcheck.site import HolidaySettings

D = dt.date
YEAR = (D(2026, 1, 1), D(2026, 12, 31))


def working_day_holidays(frame) -> list[dt.date]:
    return sorted({d for d in frame["date"] if d.weekday() < 5})


# Norway 2026. Checked against the text of the Act on public holidays and holiday peace
# (lov 24. februar 1995 nr. 12 om helligdager og helligdagsfred, section 2), which lists as
# helligdager, besides ordinary Sundays: New Year's Day (1 January), Maundy Thursday ("last
# Thursday before Easter Sunday"), Good Friday ("last Friday before Easter Sunday"), Easter
# Sunday, Easter Monday, Ascension Day ("sixth Thursday after Easter Sunday"), Whit Sunday
# ("seventh Sunday after Easter Sunday"), Whit Monday, 25 and 26 December; 1 and 17 May are
# public high days (hoytidsdager) under their own act (lov om 1. og 17. mai som hoytidsdager),
# as a national news report listing the twelve days confirms. Easter Sunday 2026 is 5 April
# (a published 2026 holiday list for Norway and a 2026 US calendar agree). Applying the act's
# rules: 2 Apr, 3 Apr, 5 Apr, 6 Apr, 14 May (the sixth Thursday after 5 Apr), 24 and 25 May; a
# published 2026 list for Norway gives the same dates.
NORWAY_2026_ALL = [D(2026, 1, 1), D(2026, 4, 2), D(2026, 4, 3), D(2026, 4, 5), D(2026, 4, 6),
                   D(2026, 5, 1), D(2026, 5, 14), D(2026, 5, 17), D(2026, 5, 24),
                   D(2026, 5, 25), D(2026, 12, 25), D(2026, 12, 26)]
NORWAY_2026_WORKING_DAYS = [D(2026, 1, 1), D(2026, 4, 2), D(2026, 4, 3), D(2026, 4, 6),
                            D(2026, 5, 1), D(2026, 5, 14), D(2026, 5, 25), D(2026, 12, 25)]

# England and Wales 2026 bank holidays. The GOV.UK list itself was not found in the stored
# material we could search, so this is checked two ways: (1) the statute, Banking and Financial
# Dealings Act 1971, Schedule 1 paragraph 1 (official legislation text): Easter Monday (6 Apr),
# the last Monday in May (25 May), the last Monday in August (31 Aug), "26th December, if it be
# not a Sunday" (Saturday 26 Dec); Good Friday (3 Apr) and Christmas Day are common-law
# holidays; (2) for the days set each year by royal proclamation - New Year's Day (1 Jan),
# the early May bank holiday (4 May) and Boxing Day's substitute day (Monday 28 Dec) - press
# reports quoting the GOV.UK 2026 list (secondary sources, not the list itself).
ENGLAND_2026_ALL = [D(2026, 1, 1), D(2026, 4, 3), D(2026, 4, 6), D(2026, 5, 4), D(2026, 5, 25),
                    D(2026, 8, 31), D(2026, 12, 25), D(2026, 12, 26), D(2026, 12, 28)]
ENGLAND_2026 = [D(2026, 1, 1), D(2026, 4, 3), D(2026, 4, 6), D(2026, 5, 4), D(2026, 5, 25),
                D(2026, 8, 31), D(2026, 12, 25), D(2026, 12, 28)]

# US federal holidays 2026 under 5 U.S.C. 6103(a), with the observed day for one on a weekend
# (a Saturday holiday is observed the Friday before: Independence Day, Saturday 4 July, is
# observed Friday 3 July). Checked against the 2026 federal holiday lists published by the US
# federal courts (Court of Appeals for the Eleventh Circuit; Bankruptcy Court for the Western
# District of New York), which give exactly these eleven weekdays, and against the statute's
# rules as quoted by a federal court (third Monday in January and February, last Monday in May,
# first Monday in September, second Monday in October, fourth Thursday in November; the
# Juneteenth Act of 2021 added June 19). The OPM page itself was not found in the stored
# material we could search.
US_FEDERAL_2026 = [D(2026, 1, 1), D(2026, 1, 19), D(2026, 2, 16), D(2026, 5, 25),
                   D(2026, 6, 19), D(2026, 7, 3), D(2026, 9, 7), D(2026, 10, 12),
                   D(2026, 11, 11), D(2026, 11, 26), D(2026, 12, 25)]
US_FEDERAL_2026_ALL = sorted(US_FEDERAL_2026 + [D(2026, 7, 4)])


@pytest.mark.parametrize("country,subdivision,expected", [
    ("NO", None, NORWAY_2026_WORKING_DAYS),
    ("GB", "ENG", ENGLAND_2026),
    ("US", None, US_FEDERAL_2026),
])
@pytest.mark.validation   # expected values from the outside source named in the comments
def test_2026_public_holidays_match_official_lists_on_working_days(country, subdivision,
                                                                   expected):
    got = public_holidays(country, *YEAR, subdivision=subdivision)
    assert working_day_holidays(got) == expected
    assert set(got["kind"]) == {"holiday"}


@pytest.mark.parametrize("country,subdivision,expected", [
    ("NO", None, NORWAY_2026_ALL),
    ("GB", "ENG", ENGLAND_2026_ALL),
    ("US", None, US_FEDERAL_2026_ALL),
])
@pytest.mark.validation   # expected values from the outside source named in the comments
def test_2026_public_holidays_match_official_lists_including_weekend_days(country, subdivision,
                                                                         expected):
    # the same sources as above; weekend days matter for a site that runs on Saturdays
    got = public_holidays(country, *YEAR, subdivision=subdivision)
    assert sorted(set(got["date"])) == expected


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


# US federal holidays 2026 (5 U.S.C. 6103(a); the list US_FEDERAL_2026 above and its sources)
# for an office that works on Columbus Day (12 Oct) and Veterans Day (11 Nov, dropped by date)
# and keeps the day after Thanksgiving (27 Nov) off.
@pytest.mark.validation   # expected values from 5 U.S.C. 6103(a), as US_FEDERAL_2026 above
def test_us_federal_2026_with_holidays_dropped_and_added():
    settings = HolidaySettings(country="US", drop_names=("Columbus Day",),
                               drop_dates=(D(2026, 11, 11),), add=(D(2026, 11, 27),))
    got = days_off(settings, *YEAR)
    expected = sorted(set(US_FEDERAL_2026) - {D(2026, 10, 12), D(2026, 11, 11)}
                      | {D(2026, 11, 27)})
    assert working_day_holidays(got) == expected
    assert got.loc[got["date"] == D(2026, 11, 27), "name"].tolist() == ["site holiday"]
    assert set(got["kind"]) == {"holiday"}


def test_dropping_a_name_drops_its_observed_day_too():
    # Independence Day 2026 is a Saturday, observed on Friday 3 July (5 U.S.C. 6103(b))
    settings = HolidaySettings(country="US", drop_names=("Independence Day",))
    got = days_off(settings, *YEAR)
    assert not {D(2026, 7, 3), D(2026, 7, 4)} & set(got["date"])
    assert D(2026, 12, 25) in set(got["date"])


def test_added_date_on_a_holiday_is_not_listed_twice_and_outside_window_ignored():
    settings = HolidaySettings(country="US", add=(D(2026, 12, 25), D(2027, 1, 2)))
    got = days_off(settings, *YEAR)
    assert (got["date"] == D(2026, 12, 25)).sum() == 1
    assert D(2027, 1, 2) not in set(got["date"])

"""Days off: public holidays (the ``holidays`` package) and the site's own closure dates.

Public holidays come from the ``holidays`` package for the site's country, optional
subdivision and categories (default ``public``), with observed days included (e.g. a US
federal holiday on a Saturday is also observed on the Friday before). Holiday names are always
in one pinned language, so that output does not change with the machine's locale: the site's
``language`` (default ``en_US``) where the country's data offers it, else the country's own
default language. Closure dates come from the site file's ``closed`` list of inclusive local
date ranges. The site's ``drop`` list takes public holidays it works on away (by name as the
package gives it in the pinned language, which also drops that holiday's observed day, or by
date), and its ``add`` list keeps extra dates off as holidays (named :data:`ADDED_NAME`).

The result is a DataFrame ``date, name, kind`` with ``kind`` ``holiday`` or ``closure``: one
row per local date and reason (a date that is both a holiday and a closure appears twice, once
for each reason), sorted by date.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import holidays as holidays_lib
import pandas as pd

from schedcheck.errors import InputError
from schedcheck.schedule.kinds import CLOSURE, HOLIDAY
from schedcheck.site import HolidaySettings

DAYS_OFF_COLUMNS = ["date", "name", "kind"]
ADDED_NAME = "site holiday"     # the name of a date of the site's own ``add`` list
NAME_SEPARATOR = "; "           # the package joins several names of one date with this
# the years whose holiday names ``[holidays] drop`` accepts (common practice, no source: wide
# enough for any audit of recorded readings)
NAME_YEARS = range(2000, 2051)


def pinned_language(country: str, language: str = HolidaySettings.language) -> str | None:
    """The language holiday names are given in for ``country``.

    ``language`` when the country's data supports it, else the country's default language
    (None when the package names no languages for the country, which then uses its only one).
    """
    cls = holidays_lib.country_holidays(country)
    supported = tuple(getattr(cls, "supported_languages", ()) or ())
    if language in supported:
        return language
    return getattr(cls, "default_language", None)


def public_holidays(
    country: str,
    first: dt.date,
    last: dt.date,
    *,
    subdivision: str | None = None,
    categories: tuple[str, ...] = HolidaySettings.categories,
    language: str = HolidaySettings.language,
    path: str | Path | None = None,
) -> pd.DataFrame:
    """Public holidays (observed days included) on local dates ``first..last``, inclusive.

    Parameters
    ----------
    country : str
        ISO 3166-1 alpha-2 code, e.g. ``NO``.
    first, last : datetime.date
        The window's local dates, both inclusive.
    subdivision : str, optional
        The package's subdivision code, e.g. ``03`` (Oslo) or ``ENG``.
    categories : tuple of str
        Holiday categories of the package (``public``, ``bank``, ...).
    language : str
        Preferred language of the names; see :func:`pinned_language`.
    path : str or Path, optional
        The site file, for error messages.

    Returns
    -------
    pandas.DataFrame
        ``date`` (datetime.date), ``name``, ``kind`` (always ``holiday``), sorted by date.
    """
    years = list(range(first.year, last.year + 1))
    try:
        probe = holidays_lib.country_holidays(country)
    except (NotImplementedError, KeyError):
        raise InputError(f"country {country!r} is not known to the holidays package; use an "
                         "ISO 3166-1 alpha-2 code such as 'NO', 'GB' or 'US'",
                         path=path, key="holidays.country") from None
    subdivisions = tuple(getattr(probe, "subdivisions", ()) or ())
    aliases = tuple(getattr(probe, "subdivisions_aliases", {}) or {})
    if subdivision is not None and subdivision not in subdivisions + aliases:
        shown = ", ".join(subdivisions[:12]) + (" ..." if len(subdivisions) > 12 else "")
        raise InputError(f"subdivision {subdivision!r} is not one of {country}'s: {shown}",
                         path=path, key="holidays.subdivision")
    supported_cats = tuple(getattr(probe, "supported_categories", ("public",)))
    bad = [c for c in categories if c not in supported_cats]
    if bad:
        raise InputError(f"categories {bad} are not offered for {country}; choose from "
                         f"{list(supported_cats)}", path=path, key="holidays.categories")
    lang = pinned_language(country, language)
    table = holidays_lib.country_holidays(
        country, subdiv=subdivision, years=years, language=lang,
        categories=tuple(categories), observed=True,
    )
    rows = []
    for day, name in sorted(table.items()):
        if first <= day <= last:
            rows.append((day, str(name), HOLIDAY))
    return pd.DataFrame(rows, columns=DAYS_OFF_COLUMNS)


def holiday_names(
    country: str,
    years: range,
    *,
    subdivision: str | None = None,
    categories: tuple[str, ...] = HolidaySettings.categories,
    language: str = HolidaySettings.language,
) -> list[str]:
    """Every holiday name the package gives ``country`` over ``years``, sorted (observed-day
    names included), in the pinned language: the names ``[holidays] drop`` accepts."""
    table = holidays_lib.country_holidays(
        country, subdiv=subdivision, years=list(years), language=pinned_language(country, language),
        categories=tuple(categories), observed=True,
    )
    return sorted({part for name in table.values() for part in str(name).split(NAME_SEPARATOR)})


def _kept_name(name: str, dropped: tuple[str, ...]) -> str:
    """``name`` (maybe several joined) without the dropped names and their observed days."""
    def gone(part: str) -> bool:
        # an observed day is named after its holiday: "Veterans Day (observed)"
        return any(part == d or part.startswith(d + " (") for d in dropped)
    return NAME_SEPARATOR.join(p for p in name.split(NAME_SEPARATOR) if not gone(p))


def site_holiday_changes(
    frame: pd.DataFrame, settings: HolidaySettings, first: dt.date, last: dt.date
) -> pd.DataFrame:
    """The public holidays of ``frame`` after the site's ``drop`` and ``add`` lists."""
    rows = []
    for day, name, kind in frame.itertuples(index=False):
        kept = _kept_name(name, settings.drop_names)
        if kept and day not in settings.drop_dates:
            rows.append((day, kept, kind))
    have = {r[0] for r in rows}
    rows += [(d, ADDED_NAME, HOLIDAY) for d in settings.add
             if first <= d <= last and d not in have]
    return pd.DataFrame(sorted(rows, key=lambda r: r[0]), columns=DAYS_OFF_COLUMNS)


def closure_days(
    closed: tuple[tuple[dt.date, dt.date], ...], first: dt.date, last: dt.date
) -> pd.DataFrame:
    """The closure dates of ``closed`` (inclusive ranges) that fall on ``first..last``."""
    rows = []
    for a, b in closed:
        name = "site closure" if a == b else f"site closure {a.isoformat()} to {b.isoformat()}"
        day = max(a, first)
        while day <= min(b, last):
            rows.append((day, name, CLOSURE))
            day += dt.timedelta(days=1)
    return pd.DataFrame(rows, columns=DAYS_OFF_COLUMNS)


def days_off(
    settings: HolidaySettings,
    first: dt.date,
    last: dt.date,
    *,
    path: str | Path | None = None,
) -> pd.DataFrame:
    """Public holidays and closure dates on local dates ``first..last`` (inclusive).

    Parameters
    ----------
    settings : schedcheck.site.HolidaySettings
        Country (None for no public holidays), subdivision, categories, closures, language,
        and the site's ``drop`` and ``add`` lists.
    first, last : datetime.date
        The window's local dates, both inclusive.
    path : str or Path, optional
        The site file, for error messages.

    Returns
    -------
    pandas.DataFrame
        ``date, name, kind`` sorted by date, holidays before closures on the same date.
    """
    parts = [closure_days(settings.closed, first, last)]
    public = pd.DataFrame(columns=DAYS_OFF_COLUMNS)
    if settings.country:
        public = public_holidays(
            settings.country, first, last, subdivision=settings.subdivision,
            categories=tuple(settings.categories), language=settings.language, path=path)
    parts.insert(0, site_holiday_changes(public, settings, first, last))
    frame = pd.concat([p for p in parts if len(p)], ignore_index=True) if any(
        len(p) for p in parts) else pd.DataFrame(columns=DAYS_OFF_COLUMNS)
    if len(frame):
        frame = frame.sort_values(["date", "kind"], kind="stable",
                                  key=lambda s: s.map({HOLIDAY: 0, CLOSURE: 1})
                                  if s.name == "kind" else s).reset_index(drop=True)
    return frame

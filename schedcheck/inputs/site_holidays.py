"""The site file's [holidays] table: country, subdivision, categories, closures, and the
public holidays a site drops or adds (a part of the site validator, :mod:`.site_sections`).
"""

from __future__ import annotations

import datetime as dt
import difflib

from schedcheck.errors import InputError
from schedcheck.inputs.site_values import ValueReader, hint
from schedcheck.site import (
    HolidaySettings,
)


class HolidaySections(ValueReader):
    """The [holidays] table's validators (mixed into the site validator)."""

    def holidays(self, h: dict) -> HolidaySettings:
        country = self.string(h, "country", "holidays.country")
        if isinstance(h.get("subdivision"), int) and not isinstance(h["subdivision"], bool):
            # subdivision = 3 would lose the leading zero of "03": ask for text
            self.err("holidays.subdivision", f"write it as text in quotes, e.g. "
                     f"\"{h['subdivision']:0>2}\"")
            subdiv = None
        else:
            subdiv = self.string(h, "subdivision", "holidays.subdivision")
        cats = h.get("categories", list(HolidaySettings.categories))
        cats = [cats] if isinstance(cats, str) else cats   # one name needs no list
        if not isinstance(cats, list) or not cats or not all(isinstance(c, str) for c in cats):
            self.err("holidays.categories", f"must be a list of names such as [\"public\"], "
                     f"not {cats!r}")
            cats = list(HolidaySettings.categories)
        language = self.string(h, "language", "holidays.language", default=HolidaySettings.language)
        if country is not None:
            self.holiday_country(country, subdiv, cats, language, "language" in h)
        elif subdiv is not None:
            self.err("holidays.subdivision", "needs holidays.country")
        closed = []
        raw = h.get("closed", [])
        raw = [raw] if isinstance(raw, (str, dt.date)) else raw   # one date needs no list
        if not isinstance(raw, list):
            self.err("holidays.closed", "must be a list of dates or ranges, e.g. "
                     "[\"2026-12-24\", \"2026-07-13/2026-07-31\"]")
            raw = []
        for i, item in enumerate(raw, 1):
            rng = self.closed_item(item, f"holidays.closed[{i}]")
            if rng is not None:
                closed.append(rng)
        names, dates = self.holiday_drop(h, country, subdiv, cats, language)
        add = [d for i, x in enumerate(self.listed(h, "add"), 1)
               if (d := self.one_date(x, f"holidays.add[{i}]")) is not None]
        return HolidaySettings(country=country, subdivision=subdiv, categories=tuple(cats),
                               closed=tuple(closed), language=language, drop_names=names,
                               drop_dates=dates, add=tuple(add))

    def listed(self, h: dict, name: str) -> list:
        raw = h.get(name, [])
        if isinstance(raw, (str, dt.date)):
            return [raw]     # one item needs no list
        if not isinstance(raw, list):
            self.err(f"holidays.{name}", f"must be a list, e.g. [\"2026-11-27\"], not {raw!r}")
            return []
        return raw

    def one_date(self, x, key: str, *, quiet: bool = False) -> dt.date | None:
        if isinstance(x, dt.date) and not isinstance(x, dt.datetime):
            return x
        try:
            return dt.date.fromisoformat(str(x).strip())
        except ValueError:
            if not quiet:
                self.err(key, f"{x!r} is not a date (\"2026-11-27\")")
            return None

    def holiday_drop(self, h, country, subdiv, cats, language):
        """``[holidays] drop``: public holiday names (checked against the country's) or dates."""
        from schedcheck.schedule.daysoff import NAME_YEARS, holiday_names, public_holidays

        names, dates = [], []
        items = self.listed(h, "drop")
        if items and country is None:
            self.err("holidays.drop", "needs holidays.country")
            return (), ()
        known = None
        for i, x in enumerate(items, 1):
            key = f"holidays.drop[{i}]"
            day = self.one_date(x, key, quiet=True)
            if day is not None:
                try:
                    year = public_holidays(country, dt.date(day.year, 1, 1),
                                           dt.date(day.year, 12, 31), subdivision=subdiv,
                                           categories=tuple(cats), language=language)
                except InputError:
                    return (), ()     # the country's own keys are reported already
                if day not in set(year["date"]):
                    shown = ", ".join(d.isoformat() for d in year["date"])
                    self.err(key, f"{day} is not a public holiday of {country}; "
                             f"its {day.year} holidays: {shown}")
                dates.append(day)
            elif isinstance(x, str) and x.strip():
                try:
                    known = known or holiday_names(country, NAME_YEARS, subdivision=subdiv,
                                                   categories=tuple(cats), language=language)
                except (NotImplementedError, KeyError, ValueError):
                    return (), ()     # the country's own keys are reported already
                if x.strip() not in known:
                    near = difflib.get_close_matches(x.strip(), known, n=1, cutoff=0.8)
                    where = country + (f"-{subdiv}" if subdiv else "")
                    self.err(key, f"{x!r} is not a holiday name of {where}"
                             + (f' (did you mean "{near[0]}"?)' if near else "")
                             + "; its names: " + "; ".join(known))
                names.append(x.strip())
            else:
                self.err(key, f"{x!r} must be a holiday name or a date")
        return tuple(names), tuple(dates)

    def holiday_country(self, country, subdiv, cats, language, language_given) -> None:
        import holidays as hol

        supported = hol.list_supported_countries(include_aliases=False)
        if country not in supported:
            self.err("holidays.country", f"{country!r} is not a country the holidays package "
                     "knows (ISO 3166-1 alpha-2 code such as 'NO')" + hint(country, supported))
            return
        cal = hol.country_holidays(country)
        subs = list(supported[country])
        aliases = getattr(cal, "subdivisions_aliases", {}) or {}
        if subdiv is not None and subdiv not in subs and subdiv not in aliases:
            listing = ", ".join(subs[:40]) + (" ..." if len(subs) > 40 else "")
            self.err("holidays.subdivision", f"{subdiv!r} is not a subdivision of {country}"
                     + (f"; valid: {listing}" if subs else f"; {country} has none"))
        for c in cats:
            if c not in cal.supported_categories:
                self.err("holidays.categories", f"{c!r} is not a holiday category for {country}"
                         f"; valid: {', '.join(cal.supported_categories)}")
        langs = cal.supported_languages or ()
        if language_given and langs and language not in langs:
            self.err("holidays.language", f"{language!r} is not available for {country}; "
                     f"valid: {', '.join(langs)}")

    def closed_item(self, item, key):
        def one(x):
            if isinstance(x, dt.date) and not isinstance(x, dt.datetime):
                return x
            return dt.date.fromisoformat(str(x).strip())

        try:
            if isinstance(item, str) and "/" in item:
                a, b = item.split("/", 1)
                first, last = one(a), one(b)
            elif isinstance(item, (str, dt.date)) and not isinstance(item, dt.datetime):
                first = last = one(item)
            else:
                raise ValueError
        except ValueError:
            self.err(key, f"{item!r} is not a date (\"2026-12-24\") or an inclusive range "
                     "(\"2026-07-13/2026-07-31\")")
            return None
        if last < first:
            self.err(key, f"{item!r}: the range ends before it starts")
            return None
        return (first, last)

"""Checks on the ids of a site file (unit, component and sensor ids).

Ids are keys: they join into ``unit/component`` keys, name files and rows, and are matched to
the readings. A control character in one (a CR or an ESC sequence) would break a CSV row, a
calendar line or a terminal, and a ``/`` in a unit or component id would let ``A/B`` + ``c``
and ``A`` + ``B/c`` both become ``A/B/c``; both are refused where the id is read. Names (free
text) are not refused: every writer escapes them (docs/site-file.md, "Ids and names").
"""

from __future__ import annotations

from schedcheck.errors import excerpt

#: the fields whose values are ids (checked by :func:`id_problem`)
ID_FIELDS = ("id", "sensor")

#: joins a unit id and a component id into a component key (``AHU-1/supply``)
KEY_SEPARATOR = "/"


def _control(ch: str) -> bool:
    o = ord(ch)
    return o < 0x20 or 0x7F <= o < 0xA0 or ch in "\u2028\u2029"


def id_problem(value: str, field: str) -> str | None:
    """What is wrong with id ``value`` of field ``field`` (``id`` or ``sensor``), or None."""
    if any(_control(ch) for ch in value):
        return (f"{excerpt(value)} holds a control character (a line break, tab or escape "
                f"code); an id must be plain text")
    if field == "id" and KEY_SEPARATOR in value:
        return (f"{excerpt(value)} holds {KEY_SEPARATOR!r}, which joins unit and component ids "
                f"(AHU-1/supply), so two different pairs could give the same key; use another "
                f"character, such as '-'")
    return None


#: the most per kWh [currency/kWh]: far above any tariff, so that totals stay finite
#: (common practice, no source)
MAX_PRICE = 1e6

#: the most kg CO2e per kWh [kg/kWh]: the dirtiest generation is about 1 (common practice,
#: no source)
MAX_CO2_PER_KWH = 100.0

#: the longest time zone name [characters]; IANA names are at most about 30 (common practice,
#: no source)
MAX_TIMEZONE_CHARS = 64


def timezone_problem(tz: str) -> str | None:
    """Why ``tz`` is refused before it is looked up, or None.

    ``localtime`` (and a path) names the host's zone, so results would depend on the computer;
    a very long name is refused before the zone database is searched for it.
    """
    if len(tz) > MAX_TIMEZONE_CHARS:
        return f"{excerpt(tz)} is longer than {MAX_TIMEZONE_CHARS} characters; give an IANA name"
    if tz.lower() in ("localtime", "local") or tz.startswith(("/", ".")) or ".." in tz:
        return (f"{excerpt(tz)} names this computer's zone, so results would depend on where "
                "they are computed; give an IANA name such as 'Europe/Oslo'")
    return None


#: the most units in one site file: a large campus has a few hundred air handling units; more
#: belong in several site files audited with ``schedcheck portfolio`` (common practice, no
#: source)
MAX_UNITS = 2000

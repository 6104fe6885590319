"""Reading the site file (TOML): every problem is collected, none stops the rest.

:func:`load_site` reads and decodes the file, parses it with :mod:`tomllib` and hands it to the
section validators (:mod:`schedcheck.inputs.site_sections`); the typed settings it returns are
the dataclasses of :mod:`schedcheck.site`. The accepted keys and ranges are in
:mod:`schedcheck.inputs.site_rules`.

Keys in error messages: dotted TOML keys (``readings.max_gap``, ``holidays.closed[2]``); units
and components are named by id where the id is known (``unit[AHU-1].component[supply].power_kw``)
and by 1-based position otherwise (``unit[#2].component[#1].id``). The line of the key in the
file is added where it can be found (``site.toml:23: energy.exponent: ...``).
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.file_limits import MAX_SITE_FILE_BYTES, read_regular
from schedcheck.inputs.site_sections import SiteValidator
from schedcheck.site import Site


def load_site(path: str | Path, *, require_readings: bool = True) -> Site:
    """Read and validate a site file; every problem found is reported at once.

    Parameters
    ----------
    path : str or Path
        The site file (TOML). Relative paths inside it are relative to its folder.
    require_readings : bool
        When False, readings patterns that match no file yet are not a problem (for commands
        that do not read readings, such as ``schedcheck schedule`` on a site being set up).

    Returns
    -------
    Site
        Typed settings; calendar paths resolved, readings patterns as written.

    Raises
    ------
    InputProblems
        With one :class:`~schedcheck.errors.InputError` per problem
        (``FILE:LINE: key: what is wrong``; the line where it can be found).
    """
    path = Path(path)
    text = _read_text(path)
    try:
        data = tomllib.loads(text)
    except RecursionError:
        # tables or arrays nested thousands deep: no site file needs more than a few levels
        raise InputProblems([InputError("not valid TOML: nested too deeply", path=path)]
                            ) from None
    except tomllib.TOMLDecodeError as e:
        msg = str(e)
        m = re.search(r"\(at line (\d+), column \d+\)", msg)
        line = int(m.group(1)) if m else None
        msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg) or "not valid TOML"
        hint = ("" if path.suffix.lower() == ".toml" else
                "; commands take the site file (TOML, such as site.toml) first")
        err = InputError(f"not valid TOML: {msg}{hint}", path=path, line=line)
        raise InputProblems([err]) from None
    v = SiteValidator(path, text, require_readings=require_readings)
    site = v.site(data)
    if v.problems:
        raise InputProblems(v.problems)
    assert site is not None
    return site


def _read_text(path: Path) -> str:
    """The site file's text; a missing, unreadable or non-UTF-8 file raises InputProblems."""
    try:
        raw = read_regular(path, MAX_SITE_FILE_BYTES, "site file")
    except InputError as e:
        raise InputProblems([e]) from None
    except FileNotFoundError:
        raise InputProblems([InputError("the site file does not exist", path=path)]) from None
    except IsADirectoryError:
        raise InputProblems([InputError("is a folder; give the site file (TOML) inside it",
                                        path=path)]) from None
    except OSError as e:
        raise InputProblems([InputError(f"cannot read the site file ({e.strerror or e})",
                                        path=path)]) from None
    try:
        # utf-8-sig: editors on Windows often start UTF-8 files with a byte order mark
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        line = raw[:e.start].count(b"\n") + 1
        raise InputProblems([InputError(
            f"not UTF-8 text (byte 0x{raw[e.start]:02x}); save the site file as UTF-8",
            path=path, line=line)]) from None

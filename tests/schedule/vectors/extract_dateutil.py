"""Extract recurrence test vectors from python-dateutil's own test suite (tests/test_rrule.py).

Run by hand against a checkout of dateutil (not in CI):

    python tests/schedule/vectors/extract_dateutil.py DATEUTIL_CHECKOUT COMMIT > \
        tests/schedule/vectors/dateutil_rrule.json

Each case is an ``assertEqual(list(rrule(...)), [datetime(...), ...])`` of the suite, rewritten
as an RFC 5545 RRULE string with a floating DTSTART, with the file, line and test name it came
from. Calls that use dateutil-only parts (``byeaster``, ``cache``, time zones, rrulestr text,
``_rrulestr_reverse_test`` wrappers) are skipped. dateutil is dual-licensed Apache-2.0 /
BSD-3-Clause; the vectors are reused with that attribution (its LICENSE file).
"""

from __future__ import annotations

import ast
import json
import sys
from pathlib import Path

FREQS = {"YEARLY", "MONTHLY", "WEEKLY", "DAILY", "HOURLY", "MINUTELY", "SECONDLY"}
DAYS = {"MO", "TU", "WE", "TH", "FR", "SA", "SU"}
PARTS = {  # dateutil keyword -> RRULE part
    "count": "COUNT", "interval": "INTERVAL", "until": "UNTIL", "wkst": "WKST",
    "bysetpos": "BYSETPOS", "bymonth": "BYMONTH", "bymonthday": "BYMONTHDAY",
    "byyearday": "BYYEARDAY", "byweekno": "BYWEEKNO", "byweekday": "BYDAY",
    "byhour": "BYHOUR", "byminute": "BYMINUTE", "bysecond": "BYSECOND",
}


class Skip(Exception):
    pass


def _datetime(node: ast.AST) -> str:
    if not (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
            and node.func.id in ("datetime", "date") and not node.keywords):
        raise Skip("not a plain datetime")
    nums = [ast.literal_eval(a) for a in node.args]
    nums += [0] * (6 - len(nums))
    y, mo, d, h, mi, s = nums[:6]
    return f"{y:04d}{mo:02d}{d:02d}T{h:02d}{mi:02d}{s:02d}"


def _day(node: ast.AST) -> str:
    if isinstance(node, ast.Name) and node.id in DAYS:
        return node.id
    if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id in DAYS
            and len(node.args) == 1):
        n = ast.literal_eval(node.args[0])
        return f"{n:+d}{node.func.id}".replace("+", "")
    raise Skip("unknown weekday form")


def _value(key: str, node: ast.AST) -> str:
    if key == "until":
        return _datetime(node)
    if key in ("wkst",):
        return _day(node)
    if key == "byweekday":
        items = node.elts if isinstance(node, ast.Tuple | ast.List) else [node]
        return ",".join(_day(i) for i in items)
    value = ast.literal_eval(node)
    if isinstance(value, tuple | list):
        return ",".join(str(int(v)) for v in value)
    return str(int(value))


def _rule(call: ast.Call) -> tuple[str, str]:
    if not (isinstance(call.func, ast.Name) and call.func.id == "rrule"):
        raise Skip("not rrule(...)")
    if not call.args or not isinstance(call.args[0], ast.Name) or call.args[0].id not in FREQS:
        raise Skip("no frequency")
    parts = [f"FREQ={call.args[0].id}"]
    dtstart = None
    for kw in call.keywords:
        if kw.arg == "dtstart":
            dtstart = _datetime(kw.value)
        elif kw.arg in PARTS:
            parts.append(f"{PARTS[kw.arg]}={_value(kw.arg, kw.value)}")
        else:
            raise Skip(f"dateutil-only keyword {kw.arg}")
    if dtstart is None:
        raise Skip("no dtstart")
    return ";".join(parts), dtstart


def extract(source: str, commit: str, path: str = "tests/test_rrule.py") -> list[dict]:
    tree = ast.parse(source)
    cases = []
    for cls in (n for n in tree.body if isinstance(n, ast.ClassDef)):
        for fn in (n for n in cls.body if isinstance(n, ast.FunctionDef)):
            for node in ast.walk(fn):
                if not (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                        and node.func.attr == "assertEqual" and len(node.args) == 2):
                    continue
                got, want = node.args
                try:
                    if not (isinstance(got, ast.Call) and isinstance(got.func, ast.Name)
                            and got.func.id == "list" and len(got.args) == 1
                            and isinstance(got.args[0], ast.Call)):
                        raise Skip("not list(rrule(...))")
                    rule, dtstart = _rule(got.args[0])
                    if not isinstance(want, ast.List) or not want.elts:
                        raise Skip("expected value is not a list of datetimes")
                    expected = [_datetime(e) for e in want.elts]
                except (Skip, ValueError, SyntaxError):
                    continue
                cases.append({
                    "id": f"dateutil:{fn.name}:{node.lineno}",
                    "source": {"repository": "dateutil/dateutil", "commit": commit,
                               "file": path, "line": node.lineno, "test": f"{cls.name}.{fn.name}"},
                    "dtstart": dtstart, "rrule": rule, "expected": expected,
                })
    return cases


if __name__ == "__main__":
    checkout, commit = Path(sys.argv[1]), sys.argv[2]
    text = (checkout / "tests" / "test_rrule.py").read_text(encoding="utf-8")
    json.dump(extract(text, commit), sys.stdout, indent=1)
    sys.stdout.write("\n")

"""Extract recurrence test vectors from libical's own test data (src/test/icalrecur_test.txt).

Run by hand against a checkout of libical (not in CI):

    python tests/schedule/vectors/extract_libical.py LIBICAL_CHECKOUT COMMIT > \
        tests/schedule/vectors/libical_recur.json

The file lists cases as a comment, an ``RRULE:`` line, a ``DTSTART:`` line and an
``INSTANCES:`` line (the instances libical expects). Cases with a ``START-AT:`` line (libical's
iterator started mid-series), an RSCALE rule, an empty instance list or one that libical marks
``UNIMPLEMENTED`` are skipped, as are
DTSTARTs with parameters other than ``VALUE=DATE``. libical is licensed MPL-2.0 / LGPL-2.1; the
vectors are reused with that attribution (its LICENSE.txt).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

PATH = "src/test/icalrecur_test.txt"


def extract(text: str, commit: str) -> list[dict]:
    cases, block, comment = [], {}, ""

    def flush():
        if {"RRULE", "DTSTART", "INSTANCES"} <= block.keys() and "START-AT" not in block:
            rule, line = block["RRULE"]
            start, _ = block["DTSTART"]
            inst = [x for x in block["INSTANCES"][0].split(",") if x]
            plain = ":" not in start or start.startswith("VALUE=DATE:")
            if inst and "UNIMPLEMENTED" not in inst[0] and "RSCALE" not in rule and plain:
                cases.append({
                    "id": f"libical:{line}",
                    "source": {"repository": "libical/libical", "commit": commit,
                               "file": PATH, "line": line, "test": comment.strip()},
                    "dtstart": start.removeprefix("VALUE=DATE:"), "rrule": rule,
                    "expected": inst,
                })
        block.clear()

    for n, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            if "RRULE" in block:
                flush()
            comment = line.lstrip("# ")
            continue
        key, _, value = line.partition(":")
        name = key.split(";")[0]
        if name == "RRULE" and "RRULE" in block:
            flush()
        if name == "DTSTART" and ";" in key:
            value = key.split(";", 1)[1] + ":" + value
        block[name] = (value, n)
    flush()
    return cases


if __name__ == "__main__":
    checkout, commit = Path(sys.argv[1]), sys.argv[2]
    json.dump(extract((checkout / PATH).read_text(encoding="utf-8"), commit), sys.stdout,
              indent=1)
    sys.stdout.write("\n")

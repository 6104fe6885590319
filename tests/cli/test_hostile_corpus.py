"""The hostile corpus: broken and malicious inputs on every family (site files, calendars,
readings, outputs, time). Each must end with exit status 2 and one ``error:`` line that names
the file (and line or key), no traceback, within seconds. Large inputs are made on the fly.
"""

from __future__ import annotations

import gzip
import os
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from tests.helpers import run_cli
from tests.small_site import readings_frame, write_site

SECONDS = 30      # each case, on a shared and busy machine; most take well under 2 s


def _sub(site: Path, text: str, new: str) -> None:
    site.write_text(site.read_text(encoding="utf-8").replace(text, new, 1), encoding="utf-8")


# -- builders: each returns (argv, the text the error line must name) -----------------------

def site_key(**toml):
    def build(d: Path):
        p = write_site(d, **toml)
        return ["check", p], str(p)
    return build


def site_text(old: str, new: str):
    def build(d: Path):
        p = write_site(d)
        _sub(p, old, new)
        return ["check", p], f"{p}:"
    return build


def site_file(make):
    def build(d: Path):
        write_site(d)
        p = d / "other.toml"
        make(p)
        return ["check", p], str(p)
    return build


def calendar(make):
    def build(d: Path):
        p = write_site(d)
        make(d / "occupied.ics")
        return ["schedule", p, "--from", "2026-03-02", "--to", "2026-03-03"], "occupied.ics"
    return build


def readings(edit, name="readings.csv"):
    def build(d: Path):
        f = readings_frame()
        p = write_site(d, frame=f)
        edit(d / "readings.csv", f)
        if name != "readings.csv":
            _sub(p, '"readings.csv"', f'"{name}"')
        return ["audit", p, "--out", d / "out"], name
    return build


def row(col: str, value):
    def edit(path: Path, f: pd.DataFrame):
        f = f.astype({col: object})
        f.loc[3, col] = value
        f.to_csv(path, index=False)
    return edit


def parquet(make_col):
    def edit(path: Path, f: pd.DataFrame):
        f["x_rms"] = make_col(len(f))
        f.to_parquet(path.with_suffix(".parquet"))
    return edit


def gz(cut):
    def edit(path: Path, f: pd.DataFrame):
        raw = gzip.compress(path.read_bytes())
        (path.parent / "r.csv.gz").write_bytes(cut(raw))
    return edit


def _link(target):
    return lambda p: p.symlink_to(target)


def _big(n):
    return lambda p: p.write_bytes(b"#" * n)


def options(*extra, name="--"):
    def build(d: Path):
        p = write_site(d)
        return ["audit", p, "--out", d / "out", *extra], name
    return build


def report_folder(make):
    def build(d: Path):
        out = d / "out"
        out.mkdir(parents=True)
        make(out)
        return ["report", out], str(out)
    return build


def _zone(ics: str, freq: str) -> str:
    """``ics`` with its events read in a made-up zone whose daylight rule repeats at ``freq``."""
    block = ("BEGIN:VTIMEZONE\r\nTZID:Foo\r\nBEGIN:DAYLIGHT\r\nDTSTART:19700101T000000\r\n"
             f"RRULE:FREQ={freq}\r\nTZOFFSETFROM:+0000\r\nTZOFFSETTO:+0100\r\n"
             "END:DAYLIGHT\r\nEND:VTIMEZONE\r\n")
    return ics.replace("BEGIN:VEVENT", block + "BEGIN:VEVENT", 1).replace(
        "TZID=Europe/Oslo", "TZID=Foo")


CONTROL = ["\x00", "\x01", "\x07", "\x08", "\t", "\n", "\x0b", "\x0c", "\r", "\x1b[2J",
           "\x1b]0;title\x07", "\x7f", "\x85", "\x9b"]

CASES = {
    # site files: keys and values
    "tz-localtime": site_text('"Europe/Oslo"', '"localtime"'),
    "tz-path": site_text('"Europe/Oslo"', '"/etc/localtime"'),
    "tz-long": site_text('"Europe/Oslo"', '"' + "A" * 5000 + '"'),
    "tz-unknown": site_text('"Europe/Oslo"', '"Mars/Olympus"'),
    "price-huge": site_key(energy="price = 1e308"),
    "price-inf": site_key(energy="price = inf"),
    "price-nan": site_key(energy="price = nan"),
    "price-negative": site_key(energy="price = -1"),
    "price-text": site_key(energy='price = "1.2"'),
    "co2-huge": site_key(energy="price = 1\nco2_per_kwh = 1e300"),
    "duration-days": site_text('early_start = "1h"', 'early_start = "106752d"'),
    "duration-garbage": site_text('early_start = "1h"', 'early_start = "' + "9" * 400 + 'h"'),
    "unit-slash": site_key(unit="A/B"),
    "component-slash": site_key(component="B/c"),
    "sensor-escape": site_key(sensor="S\x1b[31m1"),
    "glob-root": site_key(readings='files = ["/**/*.parquet"]'),
    "glob-root-deep": site_key(readings='files = ["/tmp/**/*.csv"]'),
    "glob-dotdot": site_key(readings='files = ["../../../../etc/*"]'),
    "glob-none": site_key(readings='files = ["nothing-*.csv"]'),
    "readings-empty-list": site_key(readings="files = []"),
    "unknown-key": site_text("[energy]", "[energy]\nprize = 3"),
    "toml-broken": site_text("[energy]", "[energy"),
    "toml-deep": site_file(lambda p: p.write_text("a = " + "[" * 50_000 + "]" * 50_000)),
    "toml-deep-tables": site_file(lambda p: p.write_text("a = " + "{b = " * 5000 + "1"
                                                         + "}" * 5000)),
    "site-dev-zero": site_file(_link("/dev/zero")),
    "site-dev-urandom": site_file(_link("/dev/urandom")),
    "site-fifo": site_file(lambda p: os.mkfifo(p)),
    "site-big": site_file(_big(5 * 1024 * 1024)),
    "site-not-utf8": site_file(lambda p: p.write_bytes(b"[site]\nname = \"\xff\xfe\"\n")),
    "site-folder": site_file(lambda p: p.mkdir()),
    "site-missing": site_file(lambda p: None),
    "site-dangling": site_file(_link("/nonexistent/site.toml")),
    # calendars
    "cal-dev-zero": calendar(lambda p: (p.unlink(), p.symlink_to("/dev/zero"))),
    "cal-fifo": calendar(lambda p: (p.unlink(), os.mkfifo(p))),
    "cal-big": calendar(_big(33 * 1024 * 1024)),
    "cal-tzid-long": calendar(lambda p: p.write_text(
        p.read_text().replace("TZID=Europe/Oslo", "TZID=" + "Z" * 5000))),
    "cal-zone-secondly": calendar(lambda p: p.write_text(_zone(p.read_text(), "SECONDLY"))),
    "cal-zone-minutely": calendar(lambda p: p.write_text(_zone(p.read_text(), "MINUTELY"))),
    "cal-not-utf8": calendar(lambda p: p.write_bytes(b"BEGIN:VCALENDAR\r\nX:\xff\r\n")),
    "cal-not-ics": calendar(lambda p: p.write_text("hello\n")),
    "cal-missing": calendar(lambda p: p.unlink()),
    # readings
    "ts-2300": readings(row("timestamp", "2300-01-01T00:00:00Z")),
    "ts-year-1": readings(row("timestamp", "0001-01-01T00:00:00Z")),
    "ts-1960": readings(row("timestamp", "1960-06-01T00:00:00Z")),
    "ts-2250": readings(row("timestamp", "2250-06-01T00:00:00Z")),
    "ts-epoch-ms": readings(row("timestamp", "1772409600000")),
    "ts-naive": readings(row("timestamp", "2026-03-02T10:00:00")),
    "ts-garbage-long": readings(row("timestamp", "x" * 100_000)),
    "level-1e300": readings(row("x_rms", "1e300")),
    "level-inf": readings(row("x_rms", "inf")),
    "level-negative": readings(row("x_rms", "-1")),
    "level-text-long": readings(row("x_rms", "=HYPERLINK(" + "y" * 100_000)),
    "level-bool-parquet": readings(parquet(lambda n: [True, False] * (n // 2)),
                                   "readings.parquet"),
    "level-time-parquet": readings(parquet(lambda n: pd.date_range("2026-01-01", periods=n,
                                                                   freq="1min")),
                                   "readings.parquet"),
    "gz-truncated": readings(gz(lambda raw: raw[: len(raw) // 2]), "r.csv.gz"),
    "gz-corrupt-middle": readings(gz(lambda raw: raw[: len(raw) // 2] + b"\0" * 64
                                     + raw[len(raw) // 2 + 64:]), "r.csv.gz"),
    "readings-empty-file": readings(lambda p, f: p.write_text(""), "readings.csv"),
    "readings-no-sensor-col": readings(lambda p, f: f.drop(columns="sensor").to_csv(
        p, index=False)),
    # options and time
    "from-2300": options("--from", "2300-01-01", name="--from"),
    "from-garbage": options("--from", "yesterday", name="--from"),
    "to-year-0": options("--to", "0000-01-01", name="--to"),
    # outputs
    "out-is-file": lambda d: (write_site(d), (d / "f").write_text("x"),
                              ["audit", d / "site.toml", "--out", d / "f"], str(d / "f"))[2:],
    "out-dangling": lambda d: (write_site(d), (d / "dl").symlink_to(d / "nowhere"),
                               ["audit", d / "site.toml", "--out", d / "dl"], str(d / "dl"))[2:],
    "report-empty": report_folder(lambda out: None),
    "report-incomplete": report_folder(lambda out: (out / "INCOMPLETE").write_text("x")),
    "report-bad-json": report_folder(lambda out: (out / "summary.json").write_text("{")),
    "report-wrong-types": report_folder(lambda out: (out / "summary.json").write_text(
        '{"schema": 2, "site": [], "period": 3, "components": {}}')),
}
def _gz_stream(head: bytes, block: bytes, blocks: int) -> bytes:
    """gzip data of ``head`` then ``blocks`` copies of ``block``, made without holding the text."""
    import zlib

    c = zlib.compressobj(1, zlib.DEFLATED, 31)
    return b"".join([c.compress(head), *(c.compress(block) for _ in range(blocks)), c.flush()])


def gz_bomb(path: Path, f: pd.DataFrame):
    # 256 MiB of line breaks after a real header and rows: about 1,000 times its packed size
    head = f.head(50).to_csv(index=False).encode()
    (path.parent / "r.csv.gz").write_bytes(_gz_stream(head, b"\n" * 2**20, 256))


def gz_damaged(path: Path, f: pd.DataFrame):
    """A byte in the middle of the deflate data flipped where zlib itself fails (not only the
    check sum): the seeded data make the first such offset the same on every run."""
    import zlib

    raw = gzip.compress(path.read_bytes())
    for off in range(len(raw) // 2, len(raw) - 8):
        bad = raw[:off] + bytes([raw[off] ^ 0xFF]) + raw[off + 1:]
        try:
            gzip.decompress(bad)
        except zlib.error:
            (path.parent / "r.csv.gz").write_bytes(bad)
            return
        except Exception:  # noqa: BLE001 - a check-sum failure: try the next byte
            continue
    raise AssertionError("no offset makes zlib fail")


def header_columns(n: int, dup: bool = False):
    def edit(path: Path, f: pd.DataFrame):
        extra = ",".join(("x_rms" if dup and i % 2 else f"c{i}") for i in range(n))
        path.write_text(f"timestamp,sensor,x_rms,{extra}\n2026-03-02T00:00:00Z,S-1,1\n")
    return edit


def long_line(where: str, packed: bool = False):
    def edit(path: Path, f: pd.DataFrame):
        big = b"y" * (3 * 2**20)
        text = f.to_csv(index=False).encode()
        if where == "header":
            data = b"timestamp,sensor,x_rms" + big
        else:
            lines = text.splitlines(keepends=True)
            data = b"".join(lines[:100]) + b"2026-03-02T02:00:00Z,S-1," + big
        if packed:
            (path.parent / "r.csv.gz").write_bytes(gzip.compress(data, 1))
        else:
            path.write_bytes(data)
    return edit


def _events(n: int, rule: str = "") -> str:
    body = "".join(f"BEGIN:VEVENT\r\nUID:e{i}@test.invalid\r\nDTSTART:20260303T070000Z\r\n"
                   f"DTEND:20260303T170000Z\r\n{rule}END:VEVENT\r\n" for i in range(n))
    return ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//test//x//EN\r\n" + body
            + "END:VCALENDAR\r\n")


def _folded_zone(ics: str) -> str:
    """A VTIMEZONE whose MINUTELY rule is folded over two lines (RFC 5545 section 3.1)."""
    return _zone(ics, "YEARLY").replace("RRULE:FREQ=YEARLY\r\n",
                                        "RRULE:BYMONTH=3;\r\n FREQ=MINUTELY\r\n")


def _many_problems(d: Path):
    p = write_site(d)
    more = "".join(f'\n[[unit]]\nid = "U{i}"\n' + "".join(f"bad{k} = 1\n" for k in range(19))
                   + f'[[unit.component]]\nid = "s"\nrole = "supply_fan"\nsensor = "X{i}"\n'
                   "power_kw = 1\nspeed = 1\n" for i in range(1999))
    p.write_text(p.read_text() + more)
    return ["check", p], f"{p}:"


def _many_units(d: Path):
    p = write_site(d)
    more = "".join(f'\n[[unit]]\nid = "U{i}"\n[[unit.component]]\nid = "s"\nrole = "supply_fan"\n'
                   f'sensor = "X{i}"\npower_kw = 1\nspeed = 1\n' for i in range(10_000))
    p.write_text(p.read_text() + more)
    return ["check", p], "unit:"


CASES["units-too-many"] = _many_units
CASES.update({
    # bounds on readings files (docs/readings.md, "Limits")
    "gz-bomb-newlines": readings(gz_bomb, "r.csv.gz"),
    "gz-damaged-deflate": readings(gz_damaged, "r.csv.gz"),
    "header-10000-columns": readings(header_columns(10_000)),
    "header-40000-columns-dup": readings(header_columns(40_000, dup=True)),
    "header-dup-used-column": readings(header_columns(3, dup=True)),
    "header-line-no-break": readings(long_line("header")),
    "header-line-no-break-gz": readings(long_line("header", packed=True), "r.csv.gz"),
    "data-line-no-break": readings(long_line("data")),
    "years-narrowed": lambda d: (write_site(d, readings='files = ["readings.csv"]\n'
                                            "years = [2027, 2035]"),
                                 ["audit", d / "site.toml", "--out", d / "out"],
                                 "readings.csv:2")[1:],
    "years-reversed": site_key(readings='files = ["readings.csv"]\nyears = [2035, 2020]'),
    "years-too-wide": site_key(readings='files = ["readings.csv"]\nyears = [1800, 2300]'),
    "years-text": site_key(readings='files = ["readings.csv"]\nyears = "2020-2030"'),
    # calendars
    "cal-330000-events": calendar(lambda p: p.write_text(_events(330_000))),
    "cal-interval-never-100": calendar(lambda p: p.write_text(
        _events(100, "RRULE:FREQ=DAILY;INTERVAL=7;BYDAY=MO\r\n"))),
    "cal-interval-never-monthly": calendar(lambda p: p.write_text(
        _events(100, "RRULE:FREQ=MONTHLY;INTERVAL=2;BYMONTH=2\r\n"))),
    "cal-zone-minutely-folded": calendar(lambda p: p.write_text(_folded_zone(p.read_text()))),
    # site files
    "site-38000-problems": _many_problems,
})

for _i, _c in enumerate(CONTROL):
    CASES[f"unit-control-{_i}"] = site_key(unit=f"AHU{_c}1")
    CASES[f"component-control-{_i}"] = site_key(component=f"sup{_c}ply")


def test_corpus_is_large_enough():
    assert len(CASES) >= 60


@pytest.mark.parametrize("name", sorted(CASES))
def test_refused_cleanly(name, tmp_path, capsys):
    built = CASES[name](tmp_path / "site")
    argv, must_name = built
    t0 = time.monotonic()
    code, out, err = run_cli(argv, capsys)
    elapsed = time.monotonic() - t0
    lines = [ln for ln in err.splitlines() if ln.startswith("error:")]
    assert code == 2, (name, code, err[-500:])
    assert len(lines) >= 1 and "Traceback" not in err and "internal error" not in err
    first = lines[0]
    assert str(must_name) in first, (name, first[:300])
    assert len(first) < 1000 and "\x1b" not in err and "\r" not in err
    assert elapsed < SECONDS, (name, elapsed)


@pytest.mark.parametrize("name", ["site-dev-zero", "cal-fifo", "glob-root", "ts-2300"])
def test_refused_in_a_subprocess_within_seconds(name, tmp_path):
    argv, must_name = CASES[name](tmp_path / "site")
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    code = "import sys; from schedcheck.cli import main; sys.exit(main(sys.argv[1:]))"
    proc = subprocess.run([sys.executable, "-c", code, *map(str, argv)],
                          capture_output=True, text=True, timeout=90, env=env)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr, proc.stderr[-500:]
    assert str(must_name) in proc.stderr

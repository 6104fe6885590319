"""Site file loading and validation: one test per rule; each asserts the file and the key."""

import datetime as dt
from pathlib import Path

import pandas as pd
import pytest

from schedcheck.errors import InputProblems
from schedcheck.inputs.site_file import load_site

BASE = """\
[site]
name = "Harbour Lane Test Building"
timezone = "Europe/Oslo"

[readings]
files = ["readings/*.csv"]
max_gap = "4min"

[holidays]
country = "NO"
closed = ["2026-12-24", "2026-07-13/2026-07-31"]

[schedule]
occupied = "office.ics"
early_start = "2h"
late_stop = "30min"

[energy]
price = 1.2
currency = "NOK"
co2_per_kwh = 0.017
exponent = 2.5

[[unit]]
id = "AHU-1"
name = "North wing"
schedule = { occupied = "shop.ics", early_start = "1h" }

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "VS-1"
power_kw = 7.5
speed = 0.85

[[unit.component]]
id = "wheel"
role = "heat_wheel"
sensor = "VS-2"
power_kw = 0.4
speed = 1.0
threshold = 0.3

[[unit]]
id = "AHU-2"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "VS-3"
power_kw = 4
speed = 0.9
"""

CAL = "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//test//EN\r\nEND:VCALENDAR\r\n"


def write(tmp_path: Path, text: str = BASE) -> Path:
    (tmp_path / "readings").mkdir(exist_ok=True)
    (tmp_path / "readings" / "r.csv").write_text("timestamp,sensor,x_rms\n")
    for name in ("office.ics", "shop.ics"):
        (tmp_path / name).write_text(CAL)
    p = tmp_path / "site.toml"
    p.write_text(text, encoding="utf-8")
    return p


def problems(tmp_path: Path, text: str) -> list[str]:
    p = write(tmp_path, text)
    with pytest.raises(InputProblems) as exc:
        load_site(p)
    out = [str(e) for e in exc.value.problems]
    for line in out:
        assert line.startswith(f"{p}"), line       # every message names the file
        assert "\n" not in line
    return out


def one(tmp_path: Path, text: str, key: str, *words: str) -> str:
    """Exactly one problem, naming ``key`` and containing ``words``."""
    out = problems(tmp_path, text)
    assert len(out) == 1, out
    assert f": {key}: " in out[0], out[0]
    for w in words:
        assert w in out[0], out[0]
    return out[0]


def test_valid_site_loads_with_types_defaults_and_resolved_paths(tmp_path):
    site = load_site(write(tmp_path))
    assert site.name == "Harbour Lane Test Building" and site.timezone == "Europe/Oslo"
    assert site.readings.files == ("readings/*.csv",)
    assert site.readings.max_gap == pd.Timedelta("4min")
    assert site.readings.naive_time is None and site.readings.skip_bad_rows is False
    assert site.holidays.country == "NO" and site.holidays.categories == ("public",)
    assert site.holidays.closed == ((dt.date(2026, 12, 24), dt.date(2026, 12, 24)),
                                    (dt.date(2026, 7, 13), dt.date(2026, 7, 31)))
    assert site.schedule.occupied == ((tmp_path / "office.ics").resolve(),)
    assert site.energy.exponent == 2.5 and site.energy.price == 1.2
    a1, a2 = site.units
    # per-unit schedule overrides the site default key by key
    assert a1.schedule.occupied == ((tmp_path / "shop.ics").resolve(),)
    assert a1.schedule.early_start == pd.Timedelta("1h")
    assert a1.schedule.late_stop == pd.Timedelta("30min")
    assert a2.schedule.occupied == ((tmp_path / "office.ics").resolve(),)
    assert a2.schedule.early_start == pd.Timedelta("2h") and a2.name == "AHU-2"
    assert [c.key for c in site.components] == ["AHU-1/supply", "AHU-1/wheel", "AHU-2/supply"]
    assert a1.components[1].threshold == 0.3 and a2.components[0].power_kw == 4.0


def test_toml_syntax_error_names_the_line(tmp_path):
    out = problems(tmp_path, BASE.replace('price = 1.2', 'price = '))
    line = BASE.splitlines().index("price = 1.2") + 1
    assert len(out) == 1 and out[0].startswith(f"{tmp_path / 'site.toml'}:{line}: not valid TOML")


def test_messages_name_the_line_of_the_key_or_of_its_table(tmp_path):
    text = (BASE.replace("speed = 0.9", "speed = 9").replace('timezone = "Europe/Oslo"\n', "")
            .replace("threshold = 0.3", "threshold = -1"))
    out = problems(tmp_path, text)
    p = tmp_path / "site.toml"
    lines = text.splitlines()
    assert f"{p}:{lines.index('[site]') + 1}: site.timezone: missing" in out[0]
    third = [i for i, x in enumerate(lines) if x == "speed = 9"][0] + 1
    assert any(o.startswith(f"{p}:{third}: unit[AHU-2].component[supply].speed:") for o in out)
    thr = lines.index("threshold = -1") + 1
    assert any(o.startswith(f"{p}:{thr}: unit[AHU-1].component[wheel].threshold:") for o in out)
    sched = BASE.replace('schedule = { occupied = "shop.ics", early_start = "1h" }',
                         'schedule = { occupied = "shop.ics", earlystart = "1h" }')
    (msg,) = problems(tmp_path, sched)
    row = sched.splitlines().index('schedule = { occupied = "shop.ics", earlystart = "1h" }') + 1
    assert msg.startswith(f"{p}:{row}: unit[AHU-1].schedule.earlystart: unknown key")


def test_missing_file(tmp_path):
    with pytest.raises(InputProblems, match="does not exist"):
        load_site(tmp_path / "nope.toml")


def test_site_file_saved_with_a_byte_order_mark_and_crlf_is_read(tmp_path):
    # Windows editors save "UTF-8" with a byte order mark and CRLF line ends
    p = write(tmp_path)
    p.write_bytes(b"\xef\xbb\xbf" + BASE.replace("\n", "\r\n").encode())
    assert load_site(p).name == "Harbour Lane Test Building"
    # a key problem in such a file still names the right line
    bad = BASE.replace('early_start = "2h"', 'earlystart = "2h"')
    p.write_bytes(b"\xef\xbb\xbf" + bad.replace("\n", "\r\n").encode())
    with pytest.raises(InputProblems) as exc:
        load_site(p)
    row = bad.splitlines().index('earlystart = "2h"') + 1
    assert str(exc.value.problems[0]).startswith(f"{p}:{row}: schedule.earlystart:")


def test_site_file_not_utf8_names_the_line(tmp_path):
    p = write(tmp_path)
    text = BASE.replace("Harbour Lane Test Building", "Harbour L\u00e5ne")
    p.write_bytes(text.encode("latin-1"))
    with pytest.raises(InputProblems) as exc:
        load_site(p)
    (msg,) = [str(e) for e in exc.value.problems]
    row = text.splitlines().index('name = "Harbour L\u00e5ne"') + 1
    assert msg == f"{p}:{row}: not UTF-8 text (byte 0xe5); save the site file as UTF-8"


def test_a_readings_file_given_as_the_site_file_gets_a_hint(tmp_path):
    p = tmp_path / "r.csv"
    p.write_text("timestamp,sensor,x_rms\n2026-03-02T00:00:00Z,S1,0.1\n")
    with pytest.raises(InputProblems) as exc:
        load_site(p)
    msg = str(exc.value.problems[0])
    assert msg.startswith(f"{p}:1: not valid TOML: ")
    assert msg.endswith("; commands take the site file (TOML, such as site.toml) first")


def test_calendar_path_that_is_a_folder(tmp_path):
    (tmp_path / "calendars").mkdir()
    one(tmp_path, BASE.replace('occupied = "office.ics"', 'occupied = "calendars"'),
        "schedule.occupied", "'calendars' is a folder; name the calendar file (.ics) in it")


def test_huge_power_and_threshold_are_out_of_range(tmp_path):
    # threshold = 1e308 overflowed inside the classifier (an internal error, exit status 1)
    one(tmp_path, BASE.replace("power_kw = 7.5", "power_kw = 7.5\nthreshold = 1e308", 1),
        "unit[AHU-1].component[supply].threshold",
        "1e+308 is out of range: must be > 0 and <= 1e+06")
    one(tmp_path, BASE.replace("power_kw = 7.5", "power_kw = 1e308", 1),
        "unit[AHU-1].component[supply].power_kw",
        "1e+308 is out of range: must be > 0 and <= 100000")


def test_allowance_longer_than_a_day_is_refused(tmp_path):
    # "100000D" overflowed the clock while padding the calendar window (internal error)
    one(tmp_path, BASE.replace('early_start = "2h"', 'early_start = "100000D"'),
        "schedule.early_start", "2400000h is longer than the most, 24h")
    assert load_site(write(tmp_path, BASE.replace('early_start = "2h"', 'early_start = "24h"')))


def test_a_numeric_sensor_id_is_asked_for_in_quotes(tmp_path):
    one(tmp_path, BASE.replace('sensor = "VS-1"', "sensor = 1011"),
        "unit[AHU-1].component[supply].sensor",
        'must be a non-empty text, not 1011; write it in quotes: sensor = "1011"')


def test_site_file_that_is_a_folder(tmp_path):
    with pytest.raises(InputProblems) as exc:
        load_site(tmp_path)
    want = f"{tmp_path}: is a folder; give the site file (TOML) inside it"
    assert str(exc.value.problems[0]) == want


def test_unknown_key_gets_a_did_you_mean_hint(tmp_path):
    one(tmp_path, BASE.replace('early_start = "2h"', 'earlystart = "2h"'),
        "schedule.earlystart", 'did you mean "early_start"')


def test_unknown_key_in_a_component_and_a_top_level_table(tmp_path):
    out = problems(tmp_path, BASE.replace("power_kw = 4", "powerkw = 4") + "\n[energie]\n")
    assert any(": unit[AHU-2].component[supply].powerkw: unknown key" in o
               and 'did you mean "power_kw"' in o for o in out)
    assert any(": unit[AHU-2].component[supply].power_kw: missing" in o for o in out)
    assert any(": energie: unknown key" in o and '"energy"' in o for o in out)


def test_timezone_must_be_an_iana_name(tmp_path):
    one(tmp_path, BASE.replace("Europe/Oslo", "Europe/Olso"), "site.timezone",
        "not an IANA time zone", "Europe/Oslo")


def test_timezone_is_required(tmp_path):
    one(tmp_path, BASE.replace('timezone = "Europe/Oslo"\n', ""), "site.timezone", "missing")


@pytest.mark.parametrize("value", ["0", "-1.5", '"7.5"', "true"])
def test_power_must_be_a_positive_number(tmp_path, value):
    one(tmp_path, BASE.replace("power_kw = 7.5", f"power_kw = {value}"),
        "unit[AHU-1].component[supply].power_kw")


@pytest.mark.parametrize("value,ok", [("0", False), ("1.21", False), ("1.2", True),
                                      ("0.01", True), ("-0.5", False)])
def test_speed_range(tmp_path, value, ok):
    text = BASE.replace("speed = 0.85", f"speed = {value}")
    if ok:
        assert load_site(write(tmp_path, text)).units[0].components[0].speed == float(value)
    else:
        one(tmp_path, text, "unit[AHU-1].component[supply].speed", "out of range")


@pytest.mark.parametrize("value,ok", [("1.4", False), ("1.5", True), ("3.5", True),
                                      ("3.6", False)])
def test_exponent_range(tmp_path, value, ok):
    text = BASE.replace("exponent = 2.5", f"exponent = {value}")
    if ok:
        assert load_site(write(tmp_path, text)).energy.exponent == float(value)
    else:
        one(tmp_path, text, "energy.exponent", "out of range")


def test_negative_price_and_threshold(tmp_path):
    out = problems(tmp_path, BASE.replace("price = 1.2", "price = -1")
                   .replace("threshold = 0.3", "threshold = 0"))
    assert len(out) == 2
    assert ": energy.price: " in out[0]
    assert ": unit[AHU-1].component[wheel].threshold: " in out[1]


def test_holiday_country_must_be_known_to_the_holidays_package(tmp_path):
    one(tmp_path, BASE.replace('country = "NO"', 'country = "XX"'), "holidays.country",
        "'XX' is not a country")


def test_holiday_subdivision_must_exist(tmp_path):
    text = BASE.replace('country = "NO"', 'country = "NO"\nsubdivision = "99"')
    one(tmp_path, text, "holidays.subdivision", "'99' is not a subdivision of NO", "03")
    ok = BASE.replace('country = "NO"', 'country = "DE"\nsubdivision = "BY"')
    assert load_site(write(tmp_path, ok)).holidays.subdivision == "BY"


def test_holiday_category_must_exist_for_the_country(tmp_path):
    text = BASE.replace('country = "NO"', 'country = "NO"\ncategories = ["bank"]')
    one(tmp_path, text, "holidays.categories", "'bank'", "public")


def test_closed_dates_and_ranges(tmp_path):
    text = BASE.replace('closed = ["2026-12-24", "2026-07-13/2026-07-31"]',
                        'closed = ["2026-12-24", "2026-07-31/2026-07-13", "24.12.2026"]')
    out = problems(tmp_path, text)
    assert len(out) == 2
    assert ": holidays.closed[2]: " in out[0] and "ends before it starts" in out[0]
    assert ": holidays.closed[3]: " in out[1] and "not a date" in out[1]
    native = BASE.replace('closed = ["2026-12-24", "2026-07-13/2026-07-31"]',
                          "closed = [2026-12-24]")  # TOML's own date type is accepted too
    assert load_site(write(tmp_path, native)).holidays.closed == (
        (dt.date(2026, 12, 24), dt.date(2026, 12, 24)),)


def test_duplicate_unit_id(tmp_path):
    one(tmp_path, BASE.replace('id = "AHU-2"', 'id = "AHU-1"'), "unit[AHU-1].id",
        "'AHU-1' is used twice")


def test_duplicate_component_id_within_a_unit(tmp_path):
    one(tmp_path, BASE.replace('id = "wheel"', 'id = "supply"'),
        "unit[AHU-1].component[supply].id", "'supply' is used twice in unit AHU-1")


def test_same_component_id_in_two_units_is_fine(tmp_path):
    site = load_site(write(tmp_path))
    assert [c.id for c in site.components].count("supply") == 2


def test_sensor_mapped_twice(tmp_path):
    one(tmp_path, BASE.replace('sensor = "VS-3"', 'sensor = "VS-1"'),
        "unit[AHU-2].component[supply].sensor", "'VS-1' is already mapped to AHU-1/supply")


def test_readings_glob_that_matches_nothing(tmp_path):
    text = BASE.replace('files = ["readings/*.csv"]', 'files = ["readings/*.csv", "old/*.gz"]')
    one(tmp_path, text, "readings.files[2]", "'old/*.gz' matches no file")


def test_readings_files_required(tmp_path):
    one(tmp_path, BASE.replace('files = ["readings/*.csv"]\n', ""), "readings.files", "missing")


def test_calendar_file_that_does_not_exist(tmp_path):
    one(tmp_path, BASE.replace('occupied = "shop.ics"', 'occupied = "shops.ics"'),
        "unit[AHU-1].schedule.occupied", "'shops.ics' does not exist")


def test_unit_without_any_occupied_calendar(tmp_path):
    text = BASE.replace('occupied = "office.ics"\n', "")
    one(tmp_path, text, "unit[AHU-2].schedule.occupied", "no occupied calendar")


def test_bad_durations(tmp_path):
    out = problems(tmp_path, BASE.replace('max_gap = "4min"', 'max_gap = "0min"')
                   .replace('late_stop = "30min"', 'late_stop = "half an hour"'))
    assert len(out) == 2
    assert ": readings.max_gap: must be longer than zero" in out[0]
    assert ": schedule.late_stop: 'half an hour' is not a duration" in out[1]
    # a bridge of days would hide a dead sensor's silence as running or off
    out = problems(tmp_path, BASE.replace('max_gap = "4min"', 'max_gap = "100000D"'))
    assert len(out) == 1 and ": readings.max_gap: " in out[0] and "longer than the most" in out[0]


def test_naive_time_choices(tmp_path):
    text = BASE.replace('max_gap = "4min"', 'max_gap = "4min"\nnaive_time = "CET"')
    one(tmp_path, text, "readings.naive_time", "'CET' is not allowed", "local")


def test_column_mapping_keys_and_values(tmp_path):
    text = BASE.replace('max_gap = "4min"', 'max_gap = "4min"\n'
                        'columns = { timestamp = "Time", sensr = "Dev", x_rms = "Time" }')
    out = problems(tmp_path, text)
    assert any(': readings.columns.sensr: unknown column; did you mean "sensor"' in o
               for o in out)
    assert any(": readings.columns.x_rms: column 'Time' is already used" in o for o in out)


def test_column_mapping_may_list_names_tried_in_order(tmp_path):
    # two gateways' exports with different names for the same column
    text = BASE.replace('max_gap = "4min"', 'max_gap = "4min"\n'
                        'columns = { timestamp = ["Time", "ts_utc"], sensor = "Device" }')
    site = load_site(write(tmp_path, text))
    assert site.readings.columns == {"timestamp": ("Time", "ts_utc"), "sensor": "Device"}
    bad = BASE.replace('max_gap = "4min"', 'max_gap = "4min"\n'
                       'columns = { timestamp = ["Time", "ts"], sensor = ["Dev", "ts"], '
                       'x_rms = ["VX", 3], y_rms = [] }')
    out = problems(tmp_path, bad)
    assert any(": readings.columns.sensor: column 'ts' is already used for timestamp" in o
               for o in out)
    assert any(": readings.columns.x_rms: must be the column name in the file, or a list" in o
               for o in out)
    assert any(": readings.columns.y_rms: must be the column name" in o for o in out)


def test_role_must_be_one_of_the_roles(tmp_path):
    one(tmp_path, BASE.replace('role = "heat_wheel"', 'role = "wheel"'),
        "unit[AHU-1].component[wheel].role", "'wheel' is not allowed", "heat_wheel")


def test_component_without_id_is_named_by_position(tmp_path):
    one(tmp_path, BASE.replace('id = "wheel"\n', ""), "unit[AHU-1].component[#2].id", "missing")


def test_no_units(tmp_path):
    one(tmp_path, BASE.split("[[unit]]")[0], "unit", "at least one unit")


def test_run_state_and_findings_keys_come_from_the_dataclasses(tmp_path):
    text = BASE + ('\n[run_state]\nmin_run = "3min"\nfloor = 0.02\n'
                   '[findings]\nmax_starts_per_day = 6\ncontinuous = "PT24H"\n')
    site = load_site(write(tmp_path, text))
    assert site.run_state.min_run == pd.Timedelta("3min") and site.run_state.floor == 0.02
    assert site.findings.max_starts_per_day == 6
    assert site.findings.continuous == pd.Timedelta("24h")
    bad = BASE + '\n[run_state]\nmin_runn = "3min"\n[findings]\nmax_starts_per_day = 2.5\n'
    out = problems(tmp_path, bad)
    assert any(': run_state.min_runn: unknown key; did you mean "min_run"' in o for o in out)
    assert any(": findings.max_starts_per_day: must be a whole number" in o for o in out)
    # a rule that needs at least one day or start says so in the site file, not at audit time
    out = problems(tmp_path, BASE + "\n[findings]\nrepeat_days = 0\nmax_starts_per_day = 0\n")
    assert any(": findings.repeat_days: " in o and "0" in o for o in out)
    assert any(": findings.max_starts_per_day: " in o for o in out)


def test_every_problem_is_reported_in_one_run(tmp_path):
    text = (BASE.replace("Europe/Oslo", "Mars/Olympus").replace("power_kw = 7.5", "power_kw = 0")
            .replace('sensor = "VS-3"', 'sensor = "VS-1"').replace("exponent = 2.5", "exponent = 9")
            .replace('early_start = "2h"', 'earlystart = "2h"'))
    out = problems(tmp_path, text)
    keys = ["site.timezone", "schedule.earlystart", "energy.exponent",
            "unit[AHU-1].component[supply].power_kw", "unit[AHU-2].component[supply].sensor"]
    assert len(out) == len(keys)
    for k in keys:
        assert any(f": {k}: " in o for o in out), k


def test_the_site_file_reference_names_every_key():
    import dataclasses

    from schedcheck import site as s
    from schedcheck.inputs import site_rules as sf

    doc = (Path(__file__).resolve().parents[1] / "docs" / "site-file.md").read_text()
    keys = [*sf._SITE, *sf._READINGS, *sf._HOLIDAYS, *sf._SCHEDULE, *sf._ENERGY, *sf._UNIT,
            *sf._COMPONENT, *s.READING_COLUMNS]
    keys += [f.name for cls in (s.RunStateSettings, s.FindingSettings)
             for f in dataclasses.fields(cls)]
    missing = [k for k in keys if f"`{k}`" not in doc]
    assert not missing, f"docs/site-file.md does not describe: {missing}"


def test_single_values_need_no_list_and_near_misses_get_hints(tmp_path):
    text = BASE.replace('country = "NO"', 'country = "NO"\ncategories = "public"').replace(
        'closed = ["2026-12-24", "2026-07-13/2026-07-31"]', 'closed = "2026-12-24"')
    h = load_site(write(tmp_path, text)).holidays
    assert h.categories == ("public",)
    assert h.closed == ((dt.date(2026, 12, 24), dt.date(2026, 12, 24)),)
    one(tmp_path, BASE.replace('country = "NO"', 'country = "no"'), "holidays.country",
        'did you mean "NO"?')
    one(tmp_path, BASE.replace('country = "NO"', 'country = "NO"\nsubdivision = 3'),
        "holidays.subdivision", 'in quotes, e.g. "03"')

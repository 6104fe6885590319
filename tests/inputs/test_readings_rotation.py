"""The optional rotation_hz readings column: read, mapped, blank while stopped."""

from __future__ import annotations

import numpy as np
import pytest

from schedcheck.errors import InputProblems
from schedcheck.inputs.site_file import load_site
from schedcheck.jobs.common import load_readings
from tests.inputs.test_readings_files import minutes, site_file


def test_rotation_column_is_read_through_the_mapping_and_may_be_blank(tmp_path):
    data = minutes("S1")
    hz = np.where(np.arange(len(data)) < 30, 20.0, np.nan)      # stopped: no estimate
    data["Shaft"] = hz
    path = site_file(tmp_path, sensors=("S1",), extra='columns = { rotation_hz = "Shaft" }')
    data.to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(path)
    r = load_readings(site)
    s1 = r.by_sensor["S1"]
    assert "rotation_hz" in s1.columns and len(s1) == 60     # blank cells drop no reading
    assert s1["rotation_hz"].iloc[:30].tolist() == [20.0] * 30
    assert s1["rotation_hz"].iloc[30:].isna().all()


def test_a_rotation_cell_that_is_no_number_is_a_bad_row_named_by_line_and_column(tmp_path):
    # the readings' rule for bad level cells (named by file:line, exit status 2; counted and
    # skipped with skip_bad_rows): "fast" in rotation_hz was read as blank before
    data = minutes("S1")
    data["Shaft"] = [20.0] * 30 + [""] * 29 + ["fast"]       # line 61: header + 60 rows
    path = site_file(tmp_path, sensors=("S1",), extra='columns = { rotation_hz = "Shaft" }')
    data.to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(path)
    with pytest.raises(InputProblems) as exc:
        load_readings(site)
    (msg,) = [str(e) for e in exc.value.problems]
    assert "r.csv:61" in msg and "rotation_hz is 'fast', not a number" in msg, msg
    r = load_readings(site, skip_bad_rows=True)
    assert len(r.by_sensor["S1"]) == 59 and r.bad_rows_count == 1     # counted, not silent
    assert "rotation_hz is 'fast'" in r.bad_rows_warning
    assert r.by_sensor["S1"]["rotation_hz"].iloc[30:].isna().all()    # blank cells stay blank


def test_a_true_false_rotation_column_in_parquet_is_no_frequency(tmp_path):
    data = minutes("S1")
    data["rotation_hz"] = True
    path = site_file(tmp_path, sensors=("S1",))
    data.to_parquet(tmp_path / "readings" / "r.parquet", index=False)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(path))
    (msg,) = [str(e) for e in exc.value.problems]
    assert "r.parquet" in msg and "rotation_hz is a true/false value" in msg, msg

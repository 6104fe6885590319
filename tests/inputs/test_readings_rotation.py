"""The optional rotation_hz readings column: read, mapped, blank while stopped."""

from __future__ import annotations

import numpy as np

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

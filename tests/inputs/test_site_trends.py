"""The site file's [trends] table and a component's command/status: file:line errors, a
command without [trends], points absent from the exports named with the nearest names."""

from __future__ import annotations

import pytest

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.site_file import load_site
from schedcheck.inputs.trend_files import load_site_trends
from tests.small_site import write_site

TRENDS = '[trends]\nfiles = ["bms.csv"]\nnaive_time = "local"\n'
EXPORT = "timestamp,point,value\n2026-03-02 06:30:00,AHU1.SF.CMD,on\n" \
         "2026-03-02 06:31:00,AHU1.SF.STS,on\n"


def _site(tmp_path, extra=TRENDS, points='command = "AHU1.SF.CMD"\n'):
    path = write_site(tmp_path, extra=extra)
    path.write_text(path.read_text() + points, encoding="utf-8")
    (tmp_path / "bms.csv").write_text(EXPORT, encoding="utf-8")
    return path


def _problems(path) -> list[str]:
    with pytest.raises(InputProblems) as exc:
        load_site(path)
    return [str(p) for p in exc.value.problems]


def test_a_command_and_status_are_read_into_the_settings(tmp_path):
    site = load_site(_site(tmp_path, points='command = "AHU1.SF.CMD"\nstatus = "AHU1.SF.STS"\n'))
    c = site.components[0]
    assert (c.command, c.status) == ("AHU1.SF.CMD", "AHU1.SF.STS")
    assert site.trends.max_gap.total_seconds() == 24 * 3600       # the documented default
    assert sorted(load_site_trends(site).samples) == ["AHU1.SF.CMD", "AHU1.SF.STS"]


def test_a_command_without_a_trends_table_is_an_error_on_its_line(tmp_path):
    path = _site(tmp_path, extra="")
    (msg,) = _problems(path)
    line = path.read_text().splitlines().index('command = "AHU1.SF.CMD"') + 1
    assert msg.startswith(f"{path}:{line}: unit[AHU-1].component[supply].command:")
    assert "[trends]" in msg


def test_a_status_without_a_command_and_bad_trend_keys_are_each_named(tmp_path):
    path = _site(tmp_path, extra=TRENDS + 'max_gap = "30D"\ncolumns = { pont = "P" }\n',
                 points='status = "AHU1.SF.STS"\n')
    msgs = _problems(path)
    assert any("component[supply].status: needs a command point" in m for m in msgs)
    assert any("trends.max_gap" in m and "longer than the most" in m for m in msgs)
    assert any("trends.columns.pont: unknown column" in m for m in msgs)


def test_a_trends_pattern_that_matches_nothing_is_an_error(tmp_path):
    path = _site(tmp_path, extra='[trends]\nfiles = ["nothing/*.csv"]\n')
    assert any("trends.files" in m and "matches no file" in m for m in _problems(path))


def test_a_point_absent_from_the_exports_names_the_nearest_and_its_line(tmp_path):
    path = _site(tmp_path, points='command = "AHU1.SF.CMND"\n')
    site = load_site(path)
    with pytest.raises(InputError) as exc:
        load_site_trends(site)
    line = path.read_text().splitlines().index('command = "AHU1.SF.CMND"') + 1
    msg = str(exc.value)
    assert msg.startswith(f"{path}:{line}: unit[AHU-1].component[supply].command:")
    assert "'AHU1.SF.CMND' is not in the trend files; nearest found: AHU1.SF.CMD" in msg


def test_check_lists_coverage_per_point_and_the_unused_points(tmp_path, capsys):
    from tests.helpers import run_cli

    path = _site(tmp_path)
    with (tmp_path / "bms.csv").open("a", encoding="utf-8") as f:
        # the command silent for three days, then a repeat (duplicate) sample; a wheel point
        f.write("2026-03-05 06:30:00,AHU1.SF.CMD,off\n2026-03-05 06:30:00,AHU1.SF.CMD,off\n"
                "2026-03-02 07:00:00,AHU1.HW.CMD,on\n")
    code, out, err = run_cli(["check", path], capsys)
    assert code == 0, err
    row = next(line for line in out.splitlines() if "AHU1.SF.CMD" in line)
    # 2 Mar 06:30 -> 5 Mar 06:30: 72 h silent, 48 h of it past max_gap (24 h); 1 duplicate
    assert row.split()[-4:] == ["72.0", "1", "48.0", "1"]
    assert "AHU-1/supply command" in row
    assert "Trend points that no component names: AHU1.HW.CMD, AHU1.SF.STS" in out

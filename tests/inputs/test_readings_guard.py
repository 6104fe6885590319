"""readings_guard on real files: sound files pass; bounds refuse, naming file and line."""

from __future__ import annotations

import gzip
from pathlib import Path

import pytest

from schedcheck.errors import InputError
from schedcheck.inputs import readings_guard as rg
from tests.small_site import readings_frame


def _gz(tmp_path: Path) -> tuple[Path, bytes]:
    text = readings_frame().to_csv(index=False).encode()
    p = tmp_path / "r.csv.gz"
    p.write_bytes(gzip.compress(text, 9))
    return p, text


def test_sound_gzip_passes_with_the_ratio_applied_from_the_first_byte(tmp_path, monkeypatch):
    p, text = _gz(tmp_path)
    assert len(text) / p.stat().st_size < 10        # the seeded site's readings pack ~7 times
    monkeypatch.setattr(rg, "RATIO_FROM_BYTES", 0)
    rg.scan_packed(p)
    with rg.open_guarded(p) as f:
        assert f.read() == text


def test_absolute_unpacked_cap(tmp_path, monkeypatch):
    p, text = _gz(tmp_path)
    monkeypatch.setattr(rg, "MAX_UNPACKED_BYTES", 100_000)
    with pytest.raises(InputError, match=r"r\.csv\.gz: unpacks to more than 0 GiB"):
        rg.scan_packed(p)


def test_stream_counts_lines_and_refuses_a_long_one(tmp_path):
    p = tmp_path / "r.csv"
    p.write_bytes(b"a,b\n" * 1000 + b"x" * (rg.MAX_LINE_BYTES + 10))
    with pytest.raises(InputError) as exc:
        with rg.open_guarded(p) as f:
            while f.read(100_000):
                pass
    assert exc.value.line == 1001 and "line 1001 is longer than 1 MiB" in str(exc.value)


def test_a_line_of_exactly_the_bound_is_read(tmp_path):
    p = tmp_path / "r.csv"
    body = b"a,b\n" + b"y" * rg.MAX_LINE_BYTES + b"\n1,2\n"
    p.write_bytes(body)
    with rg.open_guarded(p) as f:
        assert f.read() == body


def test_header_problem_is_linear_and_names_columns():
    names = [f"c{i}" for i in range(999)] + ["x_rms"]
    assert rg.header_problem(names, {"x_rms"}) is None
    assert "1,001 columns" in rg.header_problem(names + ["y"], set())
    dup = ["timestamp", "x_rms", "x_rms", "z"]
    assert rg.header_problem(dup, {"x_rms"}).startswith(
        "column 'x_rms' appears 2 times in the header (columns 2, 3)")
    assert rg.header_problem(dup, {"z"}) is None      # a column not read may repeat

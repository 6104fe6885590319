"""The output folder: staged, moved into place with the completing file last, never through a
link, never half-complete (schedcheck.outputs.folder)."""

from __future__ import annotations

import os

import pytest

from schedcheck.errors import InputError
from schedcheck.outputs.folder import INCOMPLETE_NAME, PARTIAL_PREFIX, output_folder


def _write_set(out, text="new"):
    with output_folder(out) as stage:
        for name in ("daily.csv", "runs.csv", "summary.json"):
            stage.write_text(name, text)


def _leftovers(folder):
    return [p.name for p in folder.iterdir() if p.name.startswith(PARTIAL_PREFIX)]


def test_new_folder_appears_whole(tmp_path):
    _write_set(tmp_path / "out")
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == [
        "daily.csv", "runs.csv", "summary.json"]
    assert _leftovers(tmp_path) == []


@pytest.mark.parametrize("name", ["summary.json", "runs.csv"])
def test_link_planted_in_out_is_replaced_not_followed(tmp_path, name):
    out = tmp_path / "out"
    _write_set(out, "old")
    victim = tmp_path / "victim.txt"
    victim.write_text("precious")
    (out / name).unlink()
    (out / name).symlink_to(victim)
    _write_set(out, "new")
    assert victim.read_text() == "precious"
    assert not (out / name).is_symlink() and (out / name).read_text() == "new"


def test_dangling_link_creates_nothing_outside(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "summary.json").symlink_to(tmp_path / "elsewhere" / "made.json")
    (out / "daily.csv").symlink_to(tmp_path / "made.csv")
    _write_set(out)
    assert not (tmp_path / "made.csv").exists() and not (tmp_path / "elsewhere").exists()
    assert (out / "summary.json").read_text() == "new"


def test_linked_subfolder_is_replaced(tmp_path):
    out, away = tmp_path / "out", tmp_path / "away"
    out.mkdir()
    away.mkdir()
    (out / "readings").symlink_to(away)
    with output_folder(out, complete="site.toml") as stage:
        stage.write_text("readings/a.csv", "x")
        stage.write_text("site.toml", "y")
    assert list(away.iterdir()) == [] and (out / "readings" / "a.csv").read_text() == "x"


def test_failure_while_writing_last_file_keeps_old_set(tmp_path):
    out = tmp_path / "out"
    _write_set(out, "old")
    with pytest.raises(RuntimeError), output_folder(out) as stage:
        stage.write_text("daily.csv", "new")
        raise RuntimeError("disk on fire")
    assert (out / "summary.json").read_text() == "old"
    assert (out / "daily.csv").read_text() == "old"
    assert _leftovers(tmp_path) == []


def test_failure_while_moving_leaves_marker_and_no_summary(tmp_path, monkeypatch):
    out = tmp_path / "out"
    _write_set(out, "old")
    real = os.replace
    calls = []

    def flaky(src, dest):
        calls.append(dest)
        if str(dest).endswith("runs.csv"):
            raise OSError(28, "No space left on device")
        return real(src, dest)

    monkeypatch.setattr(os, "replace", flaky)
    with pytest.raises(InputError, match=INCOMPLETE_NAME):
        _write_set(out, "new")
    assert not (out / "summary.json").exists() and (out / INCOMPLETE_NAME).exists()


def test_file_or_dangling_link_as_out_is_refused(tmp_path):
    (tmp_path / "f").write_text("x")
    with pytest.raises(InputError, match="not a folder"):
        _write_set(tmp_path / "f")
    (tmp_path / "dl").symlink_to(tmp_path / "nowhere")
    with pytest.raises(InputError, match="link to nothing"):
        _write_set(tmp_path / "dl")
    assert not (tmp_path / "nowhere").exists()


def test_refused_write_names_the_file(tmp_path, monkeypatch):
    def refuse(*_a, **_k):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr("pathlib.Path.write_text", refuse)
    with pytest.raises(InputError, match=r"out/daily\.csv: cannot write"):
        _write_set(tmp_path / "out")

"""Interrupted and failed audits: the folder holds the previous complete set, or a set with no
summary.json (and the INCOMPLETE marker), never a complete-looking half (docs/outputs.md).

Each case runs the CLI in a subprocess on a small site and stops it at a chosen point: a signal
sent to itself from inside a writer (staging) or from the Nth ``os.replace`` (moving into place).
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from schedcheck.outputs.folder import INCOMPLETE_NAME
from tests.small_site import write_site

AUDIT_FILES = ("summary.json", "daily.csv", "runs.csv", "findings.csv", "findings.ics",
               "schedule.csv", "report.html")

HARNESS = textwrap.dedent("""
    import os, signal, sys
    sig = getattr(signal, sys.argv[1]); point = sys.argv[2]; argv = sys.argv[3:]
    def die():
        os.kill(os.getpid(), sig)
    if point == "staging":
        import schedcheck.outputs.files as f
        real = f.findings_calendar
        def patched(result):
            die()
            return real(result)
        f.findings_calendar = patched
    elif point == "report":
        import schedcheck.outputs.report as r
        real = r.render_report
        def patched(data):
            die()
            return real(data)
        r.render_report = patched
    elif point.startswith("move"):
        n = int(point[4:]); real = os.replace; calls = [0]
        def patched(src, dest):
            if "partial" not in str(dest):
                calls[0] += 1
                if calls[0] == n:
                    die()
            return real(src, dest)
        os.replace = patched
    from schedcheck.cli import main
    sys.exit(main(argv))
""")


def _run(sig: str, point: str, args: list[str]) -> subprocess.CompletedProcess:
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    return subprocess.run([sys.executable, "-c", HARNESS, sig, point, *args], env=env,
                          capture_output=True, text=True, timeout=120)


def _assert_consistent(out: Path) -> str:
    """Either a complete set (every file, no marker) or nothing that looks complete."""
    names = {p.name for p in out.iterdir()} if out.exists() else set()
    if "summary.json" in names:
        assert INCOMPLETE_NAME not in names
        assert set(AUDIT_FILES) <= names
        json.loads((out / "summary.json").read_text(encoding="utf-8"))
        return "complete"
    return "incomplete"


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    return write_site(tmp_path_factory.mktemp("interrupts") / "site")


def _old_set(site: Path, out: Path) -> dict[str, bytes]:
    from schedcheck.cli import main

    assert main(["audit", str(site), "--out", str(out)]) == 0
    return {n: (out / n).read_bytes() for n in AUDIT_FILES}


@pytest.mark.slow
@pytest.mark.parametrize("point", ["staging", "report", "move1", "move2", "move4", "move8"])
def test_sigint(site, tmp_path, point):
    out = tmp_path / "out"
    old = _old_set(site, out)
    proc = _run("SIGINT", point, ["audit", str(site), "--out", str(out)])
    assert proc.returncode == 130, proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert lines[-1].startswith("error: interrupted") and "Traceback" not in proc.stderr
    state = _assert_consistent(out)
    if point in ("staging", "report"):   # nothing moved yet: the old set, byte for byte
        assert {n: (out / n).read_bytes() for n in AUDIT_FILES} == old
    elif state == "incomplete":
        assert (out / INCOMPLETE_NAME).exists()     # and says so
    else:                                # stopped before the first move: the old set
        assert (out / "summary.json").read_bytes() == old["summary.json"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".schedcheck-partial-")]


@pytest.mark.slow
@pytest.mark.parametrize("point", ["staging", "move2", "move8"])
def test_sigkill(site, tmp_path, point):
    out = tmp_path / "out"
    _old_set(site, out)
    proc = _run("SIGKILL", point, ["audit", str(site), "--out", str(out)])
    assert proc.returncode == -signal.SIGKILL
    _assert_consistent(out)


def test_sigkill_into_new_folder_leaves_no_audit_folder(site, tmp_path):
    out = tmp_path / "out"
    proc = _run("SIGKILL", "report", ["audit", str(site), "--out", str(out)])
    assert proc.returncode == -signal.SIGKILL
    assert not out.exists()       # only a .schedcheck-partial-* folder beside it
    assert [p.name for p in tmp_path.iterdir()][0].startswith(".schedcheck-partial-out-")


def test_failed_last_file_keeps_old_set(site, tmp_path, monkeypatch, capsys):
    from schedcheck.cli import main

    out = tmp_path / "out"
    old = _old_set(site, out)

    def broken(*_a, **_k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("schedcheck.outputs.files.findings_calendar", broken)
    assert main(["audit", str(site), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("error:") == 1 and "No space left" in err
    assert {n: (out / n).read_bytes() for n in AUDIT_FILES} == old


def test_report_rerender_through_link_replaces_link(site, tmp_path, capsys):
    from schedcheck.cli import main

    out = tmp_path / "out"
    _old_set(site, out)
    victim = tmp_path / "victim.html"
    victim.write_text("keep me")
    (out / "report.html").unlink()
    (out / "report.html").symlink_to(victim)
    assert main(["report", str(out)]) == 0
    assert victim.read_text() == "keep me" and not (out / "report.html").is_symlink()

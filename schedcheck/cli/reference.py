"""Generate the CLI reference (docs/cli.md) from the commands themselves, so it cannot drift.

Run ``python -m schedcheck.cli.reference > docs/cli.md``; ``tests/test_docs.py`` fails when the
file is out of date.
"""

from __future__ import annotations

import contextlib
import io
import os

HEADER = """# Command reference

Generated from the commands' own `--help` by `python -m schedcheck.cli.reference > docs/cli.md`
(typer {typer_version}); do not edit by hand. Dates are local dates of the site (`YYYY-MM-DD`),
both ends inclusive.
Exit status: 0 success (findings are not errors), 2 bad input or usage (one line `error: ...`
on stderr), 1 an unexpected internal error.
"""


def _help(args: list[str]) -> str:
    from schedcheck.cli import main

    buf = io.StringIO()
    old = os.environ.get("COLUMNS")
    os.environ["COLUMNS"] = "100"
    try:
        with contextlib.redirect_stdout(buf):
            main([*args, "--help"])
    finally:
        if old is None:
            os.environ.pop("COLUMNS", None)
        else:
            os.environ["COLUMNS"] = old
    return buf.getvalue().rstrip() + "\n"


def command_names() -> list[str]:
    """Every registered command, in alphabetical order."""
    from typer.main import get_command

    from schedcheck.cli import app

    return sorted(get_command(app).commands)  # type: ignore[attr-defined]


def typer_version() -> str:
    """major.minor of the installed typer (help layout differs between its releases)."""
    from importlib.metadata import version

    return ".".join(version("typer").split(".")[:2])


def reference() -> str:
    parts = [HEADER.format(typer_version=typer_version()), "```text\n" + _help([]) + "```\n"]
    for name in command_names():
        parts.append(f"## schedcheck {name}\n\n```text\n{_help([name])}```\n")
    return "\n".join(parts)


if __name__ == "__main__":
    print(reference(), end="")

"""`schedcheck check SITE`: validate every input and report every problem found."""

from pathlib import Path

import typer

from schedcheck.cli._app import app


@app.command()
def check(site: Path = typer.Argument(..., help="The site file (TOML).")) -> int:
    """Validate the site file, readings and calendars; report every problem found.

    Example: schedcheck check site.toml
    """
    raise NotImplementedError("check is being written")

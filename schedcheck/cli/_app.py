"""The typer application object; command modules register on it."""

import typer

app = typer.Typer(
    name="schedcheck",
    help=(
        "Find air handling units that run outside their intended schedule, from fan vibration "
        "readings, and price the waste with the fan affinity laws."
    ),
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)


def _show_version(value: bool) -> None:
    if value:
        from schedcheck import __version__

        print(f"schedcheck {__version__}")
        raise typer.Exit()


@app.callback()
def _root(
    version: bool = typer.Option(False, "--version", callback=_show_version, is_eager=True,
                                 help="Print the version and exit."),
) -> None:
    """Find air handling units that run outside their intended schedule, from fan vibration
    readings, and price the waste with the fan affinity laws."""

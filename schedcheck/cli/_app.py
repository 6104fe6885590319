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


@app.callback()
def _root() -> None:
    """Find air handling units that run outside their intended schedule, from fan vibration
    readings, and price the waste with the fan affinity laws."""

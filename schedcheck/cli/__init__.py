"""Command-line interface: each command parses its options, calls one library function and renders.

Errors: an :class:`~schedcheck.errors.InputError` (or a usage error) prints one line
``error: ...`` on stderr and exits 2; anything unexpected prints ``internal error: ...`` and
exits 1 (set ``SCHEDCHECK_DEBUG=1`` to see the traceback).
"""

from __future__ import annotations

import os
import sys
import traceback

# command modules register themselves on `app` when imported
from schedcheck.cli import audit as _audit  # noqa: E402,F401
from schedcheck.cli import check as _check  # noqa: E402,F401
from schedcheck.cli import compare as _compare  # noqa: E402,F401
from schedcheck.cli import demo as _demo  # noqa: E402,F401
from schedcheck.cli import portfolio as _portfolio  # noqa: E402,F401
from schedcheck.cli import report as _report  # noqa: E402,F401
from schedcheck.cli import schedule as _schedule  # noqa: E402,F401
from schedcheck.cli import states as _states  # noqa: E402,F401
from schedcheck.cli._app import app
from schedcheck.errors import SchedcheckError, terminal_text

__all__ = ["app", "main"]

# typer >= 0.2x vendors its own copy of click; older ones use click itself. Take the classes
# from whichever copy builds our commands.
try:  # pragma: no cover - depends on the installed typer
    from typer._click import exceptions as _cx
except ImportError:  # pragma: no cover
    from click import exceptions as _cx
_Abort = getattr(_cx, "Abort", None) or __import__("typer.exceptions").exceptions.Abort


#: the line an interrupted command (Ctrl-C, SIGINT) ends with; exit status 130 = 128 + SIGINT
INTERRUPTED = ("interrupted; an output folder being written was left as it was (or marked "
               "INCOMPLETE, see docs/outputs.md)")


def _one_line(text: str) -> str:
    """One line, control characters from input text shown as visible escapes."""
    return terminal_text(" ".join(str(text).split()))


def main(argv: list[str] | None = None) -> int:
    """Run the CLI; returns the exit status (0 fine, 1 internal error, 2 bad input or usage)."""
    try:
        rv = app(args=argv, prog_name="schedcheck", standalone_mode=False)
    except _cx.NoArgsIsHelpError as e:
        print(e.format_message(), file=sys.stderr)
        return 2
    except _Abort:
        print(f"error: {INTERRUPTED}", file=sys.stderr)
        return 130
    except _cx.ClickException as e:  # usage errors, bad parameters
        print(f"error: {_one_line(e.format_message())}", file=sys.stderr)
        return 2
    except SchedcheckError as e:
        print(f"error: {_one_line(str(e))}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"error: {INTERRUPTED}", file=sys.stderr)
        return 130
    except Exception as e:  # noqa: BLE001 - the last line of defence
        if os.environ.get("SCHEDCHECK_DEBUG"):
            traceback.print_exc()
        print(
            f"internal error: {type(e).__name__}: {_one_line(str(e))} "
            "(set SCHEDCHECK_DEBUG=1 for details)",
            file=sys.stderr,
        )
        return 1
    if rv == 130:
        # typer turns a KeyboardInterrupt inside a command into exit code 130 with no word;
        # no command returns 130 itself
        print(f"error: {INTERRUPTED}", file=sys.stderr)
        return 130
    return rv if isinstance(rv, int) else 0

"""The CLI's error contract: one line on stderr; exit 2 for bad input or usage, 1 internal."""

import pytest

from schedcheck.cli import main
from schedcheck.errors import InputError, InputProblems


def test_unknown_command_is_a_usage_error(capsys):
    assert main(["no-such-command"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and err.count("\n") == 1 and "Traceback" not in err


def test_missing_argument_is_a_usage_error(capsys):
    assert main(["check"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "Traceback" not in err


def test_help_lists_every_command(capsys):
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for cmd in ["audit", "schedule", "states", "check", "demo", "report"]:
        assert cmd in out


def test_input_error_text_names_file_line_and_key():
    assert str(InputError("not a number", path="r.csv", line=17)) == "r.csv:17: not a number"
    assert str(InputError("must be > 0", path="site.toml", key="unit AHU-1: power_kw")) == (
        "site.toml: unit AHU-1: power_kw: must be > 0"
    )
    assert str(InputError("two\nlines")) == "two lines"


def test_input_problems_is_one_line_with_a_count():
    e = InputProblems([InputError("a", path="x"), InputError("b", path="y")])
    assert str(e) == "x: a (and 1 more problem)" and len(e.problems) == 2
    with pytest.raises(ValueError):
        InputProblems([])


def test_version_option_prints_the_installed_version(capsys):
    from schedcheck import __version__

    assert main(["--version"]) == 0
    assert capsys.readouterr().out == f"schedcheck {__version__}\n"

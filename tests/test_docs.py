"""The documentation describes the tool as it is (the CLI reference is generated from --help)."""

from pathlib import Path

import pytest

from schedcheck.cli.reference import command_names, reference, typer_version

ROOT = Path(__file__).resolve().parents[1]


def test_cli_reference_is_current():
    current = (ROOT / "docs" / "cli.md").read_text(encoding="utf-8")
    made_with = f"(typer {typer_version()})"
    if made_with not in current.splitlines()[3]:
        # typer lays out --help differently from release to release; the reference is compared
        # only under the typer release it was generated with
        pytest.skip(f"docs/cli.md was generated with another typer release than {made_with}")
    assert current == reference(), (
        "docs/cli.md is stale: python -m schedcheck.cli.reference > docs/cli.md"
    )


def test_every_command_is_in_the_readme_and_has_an_example():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    for name in command_names():
        assert f"schedcheck {name}" in readme, f"README does not mention `schedcheck {name}`"
        assert (
            "Example" in reference().split(f"## schedcheck {name}")[1].split("## schedcheck")[0]
        ), f"`schedcheck {name} --help` carries no example"


def test_readme_opens_with_the_job_then_the_two_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = text.split("```bash\n")
    assert len(blocks) >= 3
    first, second = blocks[1].split("```")[0].strip(), blocks[2].split("```")[0].strip()
    assert "schedcheck demo" in first and "pip install ." in first
    assert "pytest" in second and "'.[test]'" in second
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert second in ci, ".ci/run must run exactly the README's test command"


def test_readme_carries_the_safety_cautions():
    text = (ROOT / "README.md").read_text(encoding="utf-8").lower()
    for word in ["ventilation minimums", "freeze protection", "smoke-control", "local codes"]:
        assert word in text

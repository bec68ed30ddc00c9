"""The README stays true: its CLI reference is what the commands say, and it names the two set-up commands."""

from pathlib import Path

from bankbuild.cli.readme import readme_block, reference

README = Path(__file__).resolve().parents[2] / "README.md"


def test_cli_reference_matches_the_commands():
    assert readme_block(README.read_text(encoding="utf-8")) == reference(), (
        "README CLI reference is stale: run `python -m bankbuild.cli.readme --write`")


def test_readme_opens_with_the_job_then_the_two_commands():
    text = README.read_text(encoding="utf-8")
    first_block = text.split("```sh", 1)[1].split("```", 1)[0]
    assert "make demo" in first_block and "make test" in first_block


def test_every_command_in_the_reference_has_an_example():
    for section in reference().split("### ")[1:]:
        assert "Example: bankbuild " in section, section.splitlines()[0]

"""Every option and positional argument of every subcommand says what it does in --help."""

from __future__ import annotations

import argparse

from auditor.cli.main import build_parser


def _walk(parser: argparse.ArgumentParser, trail: str) -> list[tuple[str, argparse.Action]]:
    found: list[tuple[str, argparse.Action]] = []
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, child in action.choices.items():
                found += _walk(child, f"{trail} {name}")
        else:
            found.append((trail, action))
    return found


def test_every_option_of_every_subcommand_has_help_text() -> None:
    bare = [
        f"{trail} {'/'.join(action.option_strings) or action.dest}"
        for trail, action in _walk(build_parser(), "regaudit")
        if not (action.help or "").strip() or action.help == argparse.SUPPRESS
    ]
    assert bare == []


def test_the_walk_reaches_nested_subcommands() -> None:
    trails = {trail for trail, _ in _walk(build_parser(), "regaudit")}
    # The test above proves nothing unless it sees the nested parsers too.
    wanted = {"regaudit audit", "regaudit demo", "regaudit rules", "regaudit baseline create"}
    assert wanted <= trails


def test_a_closed_pipe_ends_a_listing_quietly() -> None:
    """`regaudit rules | head -1`: no traceback when the reader stops early."""
    import subprocess
    import sys

    done = subprocess.run(
        f"{sys.executable} -m auditor rules | head -1",
        shell=True,
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.stdout.startswith("check")
    assert "Traceback" not in done.stderr

"""Every option and argument of every `fieldkit` command says what it is for in `--help`.

The parser tree is walked, not a list kept by hand: a new option without help fails here.
"""

from __future__ import annotations

import argparse

from fieldkit.cli import _parser


def _walk(parser: argparse.ArgumentParser, path: str) -> tuple[list[str], list[str]]:
    """(every option checked, the ones without help), for this parser and all below it."""
    checked: list[str] = []
    missing: list[str] = []
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            helps = {choice.dest: choice.help for choice in action._choices_actions}
            for name, sub in action.choices.items():
                checked.append(f"{path} {name}")
                if not (helps.get(name) or "").strip():
                    missing.append(f"{path} {name} (command)")
                c, m = _walk(sub, f"{path} {name}")
                checked += c
                missing += m
            continue
        if isinstance(action, argparse._HelpAction):
            continue
        label = "/".join(action.option_strings) or action.dest
        checked.append(f"{path} {label}")
        if action.help is None or action.help is argparse.SUPPRESS or not str(action.help).strip():
            missing.append(f"{path} {label}")
    return checked, missing


def test_every_option_and_argument_of_every_command_has_help() -> None:
    checked, missing = _walk(_parser(), "fieldkit")
    assert len(checked) > 80, checked  # the walk reached the sub-commands' options
    assert missing == []


def test_the_walk_finds_an_option_without_help() -> None:
    # The check above can fail: a parser with one bare option is caught.
    p = argparse.ArgumentParser()
    sub = p.add_subparsers()
    s = sub.add_parser("thing", help="does a thing")
    s.add_argument("--bare")
    _checked, missing = _walk(p, "x")
    assert missing == ["x thing --bare"]

"""fieldkit's commands in the command search (F3).

A screen or the app offers commands by deriving from :class:`Commanded` and overriding
``palette_commands()``; this provider lists the current screen's and then the app's. Names may
hold a job number or a customer, so they are drawn as plain Content with the matched letters
styled, never through markup (Textual's own highlighter parses markup, which a job number like
``[/`` would break).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider
from textual.content import Content
from textual.fuzzy import FuzzySearch
from textual.style import Style

from fieldkit.tui.safe_text import visible

Command = tuple[str, str, Callable[[], object]]


class Commanded:
    """Something that offers commands in the command search: a name, a help line, what it runs."""

    def palette_commands(self) -> Iterable[Command]:
        return ()


def _commands(provider: Provider) -> list[Command]:
    out: list[Command] = []
    for node in (provider.screen, provider.app):
        if isinstance(node, Commanded):
            out.extend(node.palette_commands())
    return out


def _display(name: str, offsets: Iterable[int] = ()) -> Content:
    content = Content(visible(name))
    for i in offsets:
        if i < len(name) and not name[i].isspace():
            content = content.stylize(Style(bold=True, underline=True), i, i + 1)
    return content


class FieldkitCommands(Provider):
    """Commands of the current screen and of the app, by fuzzy name."""

    async def discover(self) -> Hits:
        for name, help_text, run in _commands(self):
            yield DiscoveryHit(_display(name), partial(run), text=name, help=help_text)

    async def search(self, query: str) -> Hits:
        fuzzy = FuzzySearch()
        for name, help_text, run in _commands(self):
            score, offsets = fuzzy.match(query, name)
            if score > 0:
                yield Hit(score, _display(name, offsets), partial(run), text=name, help=help_text)

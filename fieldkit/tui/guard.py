"""The app's edge: an unexpected error in a screen's handler is logged and shown as one plain
sentence, and the technician carries on; the visit and every saved reading stay as they were
(each reading was committed before the screen said 'saved')."""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any, TypeVar

from fieldkit.crash_log import plain_message, write_crash_log

F = TypeVar("F", bound=Callable[..., Any])


def guarded(doing: str) -> Callable[[F], F]:
    """Wrap a screen method so an unexpected error is logged and shown instead of closing the app."""

    def wrap(method: F) -> F:
        @functools.wraps(method)
        def run(self: Any, *args: Any, **kwargs: Any) -> Any:
            try:
                return method(self, *args, **kwargs)
            except Exception as exc:  # the edge: anything unforeseen, logged with its traceback
                report_problem(self, exc, doing)
                return None

        return run  # type: ignore[return-value]

    return wrap


def report_problem(screen: Any, exc: BaseException, doing: str) -> str:
    """Log the error and tell the person in plain words, on the screen's message line if it has
    one and as a notification; returns the sentence shown."""
    log = write_crash_log(exc, doing)
    text = plain_message(exc, log, doing)
    show = getattr(screen, "show_problem", None)
    try:
        if callable(show):
            show(text)
        screen.app.notify(text, title="Unexpected problem", severity="error", timeout=30, markup=False)
    except Exception:  # the screen itself is broken: the log and the app-level guard remain
        pass
    return text

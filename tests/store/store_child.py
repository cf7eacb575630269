"""Other fieldkit processes, run by the concurrency and crash tests.

    python store_child.py batch STORE VISIT N    say 'ready', wait for 'go', log N readings, exit
    python store_child.py hold-lock STORE        take the write lock, say 'locked', hold it until stdin closes
    python store_child.py zygote                 import fieldkit once, then run crash-test writers on request

Every reading id is printed (and flushed) right after ``add_reading`` returns, i.e. only once the
store has reported it saved; the parent holds the store to every id it sees.

The zygote exists because importing fieldkit costs most of a second of CPU: it imports once and
forks one writer process per request. Each writer opens its own store connection after the
fork, writes, and is SIGKILLed by the test. Requests on stdin:

    log STORE VISIT       writer says 'start PID', then logs readings until killed
    import STORE N        writer builds a visit of N readings, says 'start PID', imports it, says 'done'

After each writer ends the zygote says 'end STATUS' (negative: killed by that signal).
"""

from __future__ import annotations

import os
import sys


def _say(text: str) -> None:
    sys.stdout.write(text + "\n")
    sys.stdout.flush()


def _log_forever(path: str, visit_id: str, limit: int | None = None) -> None:
    from fieldkit.model.visit import Reading
    from fieldkit.store.sqlite import SqliteVisitStore

    store = SqliteVisitStore(path)
    if limit is None:
        _say(f"start {os.getpid()}")
    n = 0
    while limit is None or n < limit:
        n += 1
        saved = store.add_reading(
            visit_id,
            Reading(test_point="drive.charge", value=f"{20 + n % 9}.5 bar", note=f"child reading {n}"),
        )
        _say(saved.id)
    store.close()


def _import(path: str, count: int) -> None:
    from fieldkit.model.visit import Reading, Visit
    from fieldkit.store.sqlite import SqliteVisitStore

    store = SqliteVisitStore(path)
    big = Visit(
        job_number="BPH-0999",
        machine="demo-crawler-7",
        readings=[
            Reading(test_point="drive.charge", value=f"{20 + n % 9}.5 bar", note="logger batch " * 20)
            for n in range(count)
        ],
    )
    _say(f"start {os.getpid()}")
    store.import_visit(big)
    _say("done")
    store.close()


def _zygote() -> None:
    import fieldkit.model.visit  # noqa: F401  - the expensive imports, done once before forking
    import fieldkit.store.sqlite  # noqa: F401

    _say("warm")
    for request in sys.stdin:
        words = request.split()
        pid = os.fork()
        if pid == 0:  # the writer: never returns into the zygote's loop
            code = 0
            try:
                if words[0] == "log":
                    _log_forever(words[1], words[2])
                elif words[0] == "import":
                    _import(words[1], int(words[2]))
            except BaseException as exc:  # report, then leave without running the zygote's cleanup
                sys.stderr.write(f"writer failed: {exc!r}\n")
                sys.stderr.flush()
                code = 1
            os._exit(code)
        _pid, status = os.waitpid(pid, 0)
        _say(f"end {-os.WTERMSIG(status) if os.WIFSIGNALED(status) else os.WEXITSTATUS(status)}")


def _batch(path: str, visit_id: str, count: int) -> None:
    import fieldkit.store.sqlite  # noqa: F401  - import before 'ready' so both children start together

    _say("ready")
    if sys.stdin.readline().strip() != "go":
        raise SystemExit("parent did not say go")
    _log_forever(path, visit_id, count)


def _hold_lock(path: str) -> None:
    import sqlite3

    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("BEGIN IMMEDIATE")
    _say("locked")
    sys.stdin.read()  # until the parent closes our stdin
    conn.execute("ROLLBACK")
    conn.close()


if __name__ == "__main__":
    mode, *args = sys.argv[1:]
    if mode == "batch":
        _batch(args[0], args[1], int(args[2]))
    elif mode == "hold-lock":
        _hold_lock(args[0])
    elif mode == "zygote":
        _zygote()
    else:
        raise SystemExit(f"unknown mode {mode}")

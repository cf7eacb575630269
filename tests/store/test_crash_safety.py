"""Pulling the plug mid-visit: every reading fieldkit reported saved must be there afterwards.

A writer process logs readings one by one and prints each id right after ``add_reading``
returns. The test kills it with SIGKILL at a random moment (seeded, so a failure can be
replayed): either 5–60 ms after it starts writing, or after a random number of reported ids.
Then the store is reopened: every reported id must be present and SQLite's own
``PRAGMA integrity_check`` must say ``ok``.

The writers are forked from one helper process (``store_child.py zygote``, run with
``sys.executable``) that imported fieldkit once; each writer opens its own store connection
after the fork, exactly as a freshly started fieldkit would. That keeps 20 runs to a few
seconds instead of paying a second of imports each.

SIGKILL stops the process but not the operating system, so this checks fieldkit's and SQLite's
side (transactions, write-ahead-log recovery); surviving a power cut additionally relies on
``synchronous=FULL`` making each commit reach the disk before ``add_reading`` returns.
"""

from __future__ import annotations

import os
import random
import signal
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path

import pytest
from store_builders import MACHINE, integrity, visit

from fieldkit.store.sqlite import SqliteVisitStore

pytestmark = pytest.mark.skipif(
    not hasattr(os, "fork") or not hasattr(signal, "SIGKILL"), reason="needs POSIX fork and SIGKILL"
)

CHILD = Path(__file__).with_name("store_child.py")
SEEDS = range(20)


class Zygote:
    """The helper process; :meth:`run` asks it for one writer and returns the writer's pid."""

    def __init__(self, home: Path) -> None:
        env = {**os.environ, "FIELDKIT_HOME": str(home), "FIELDKIT_STORE": str(home / "unused.sqlite3")}
        self.proc = subprocess.Popen(
            [sys.executable, str(CHILD), "zygote"],
            stdin=subprocess.PIPE,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            bufsize=1,
            env=env,
        )
        assert self.line() == "warm", self.proc.communicate()[1]

    def line(self) -> str:
        assert self.proc.stdout is not None
        text = self.proc.stdout.readline()
        if not text.endswith("\n"):
            self.proc.kill()
            raise AssertionError(f"helper stopped: {text!r}; stderr: {self.proc.communicate()[1]}")
        return text.rstrip("\n")

    def run(self, *request: str) -> int:
        assert self.proc.stdin is not None
        self.proc.stdin.write(" ".join(request) + "\n")
        self.proc.stdin.flush()
        first = self.line()
        assert first.startswith("start "), f"writer did not start: {first!r}"
        return int(first.split()[1])

    def rest_of_run(self) -> tuple[list[str], int]:
        """Lines the writer printed before it ended, and how it ended (negative: signal)."""
        lines: list[str] = []
        while not (line := self.line()).startswith("end "):
            lines.append(line)
        return lines, int(line.split()[1])

    def close(self) -> None:
        self.proc.communicate(timeout=30)  # closes stdin; the helper's loop ends


@pytest.fixture(scope="module")
def zygote(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Zygote]:
    helper = Zygote(tmp_path_factory.mktemp("zygote-home"))
    try:
        yield helper
    finally:
        helper.close()


@pytest.mark.parametrize("seed", SEEDS)
def test_reading_survives_power_cut_mid_visit(zygote: Zygote, tmp_path: Path, seed: int) -> None:
    rng = random.Random(seed)
    path = tmp_path / "visits.sqlite3"
    with SqliteVisitStore(path) as store:
        visit_id = store.create_visit(visit()).id

    pid = zygote.run("log", str(path), visit_id)
    reported: list[str] = []
    if rng.random() < 0.5:
        time.sleep(rng.uniform(0.005, 0.060))
    else:
        wanted = rng.randint(1, 40)
        while len(reported) < wanted:
            reported.append(zygote.line())
    os.kill(pid, signal.SIGKILL)
    more, ended = zygote.rest_of_run()
    reported += more
    assert ended == -signal.SIGKILL, "the writer was not killed mid-visit"

    with SqliteVisitStore(path) as store:
        stored = {r.id for r in store.get_visit(visit_id).readings}
        assert store.list_visits(machine=MACHINE)[0].reading_count == len(stored)
    missing = [rid for rid in reported if rid not in stored]
    assert not missing, f"seed {seed}: reported saved but lost: {missing}"
    assert integrity(path) == ["ok"]


@pytest.mark.parametrize("seed", range(3))
def test_an_import_cut_off_by_a_crash_is_all_or_nothing(zygote: Zygote, tmp_path: Path, seed: int) -> None:
    rng = random.Random(1000 + seed)
    path = tmp_path / "visits.sqlite3"
    SqliteVisitStore(path).close()
    count = 1500
    pid = zygote.run("import", str(path), str(count))
    time.sleep(rng.uniform(0.005, 0.080))
    os.kill(pid, signal.SIGKILL)
    said, _ended = zygote.rest_of_run()
    with SqliteVisitStore(path) as store:
        visits = store.list_visits()
        if "done" in said:
            assert len(visits) == 1
        assert len(visits) in (0, 1)
        if visits:
            assert len(store.get_visit(visits[0].id).readings) == count
    assert integrity(path) == ["ok"]

"""A sync killed with SIGKILL at random moments, again and again, loses and duplicates nothing:
after one clean sync at the end every laptop and the server hold every record exactly once and
the laptops' states are equal (the property fieldkit.store.sync promises). Kit items are added,
edited and retired between the syncs too, on two laptops of one technician and on another's."""

from __future__ import annotations

import os
import random
import select
import signal
import time
import traceback
from pathlib import Path

import pytest
from pg_cluster import Shop
from shop_builders import RIG, kit_gauge, laptop, reading, state, visit

from fieldkit.store.kit_log import KitVersion, standing
from fieldkit.store.pg_server import ShopServer, connect
from fieldkit.store.replica import Replica
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.sync import sync

KILLS = 60


def _sync_in_child(path: Path, conninfo: str) -> tuple[int, bytes, bool]:
    """Fork a sync (small batches, so there are many commit points) and return its pid, a pipe
    to read its progress from, and nothing else; the parent decides when to kill it."""
    rfd, wfd = os.pipe()
    pid = os.fork()
    if pid == 0:  # the child: its own store connection and server connection
        os.close(rfd)
        code = 1
        try:
            store = SqliteVisitStore(path)
            with ShopServer(conninfo) as server:
                sync(store, server, batch=7, progress=lambda *_: os.write(wfd, b"."))
            os.write(wfd, b"!")
            code = 0
        except BaseException:
            traceback.print_exc()
        os._exit(code)
    os.close(wfd)
    return pid, rfd  # type: ignore[return-value]


def _drain(rfd: int) -> bytes:
    got = b""
    while select.select([rfd], [], [], 0)[0]:
        chunk = os.read(rfd, 4096)
        if not chunk:
            break
        got += chunk
    return got


def _run(path: Path, conninfo: str, kill: tuple[int, float] | None) -> tuple[bool, int]:
    """Run a sync; ``kill`` = (batches to let commit, then seconds to wait) before SIGKILL.
    Returns (finished, batches committed before the end or the kill)."""
    pid, rfd = _sync_in_child(path, conninfo)
    seen = b""
    if kill is not None:
        batches, delay = kill
        while seen.count(b".") < batches and not seen.endswith(b"!"):
            chunk = os.read(rfd, 1)
            if not chunk:
                break
            seen += chunk
        time.sleep(delay)
        os.kill(pid, signal.SIGKILL)
    _, status = os.waitpid(pid, 0)
    seen += _drain(rfd)
    os.close(rfd)
    if os.WIFEXITED(status):
        assert os.WEXITSTATUS(status) == 0, "the sync failed on its own (see the captured stderr)"
    return seen.endswith(b"!"), seen.count(b".")


class Laptop:
    """One technician's laptop; the store is closed whenever a sync child runs."""

    def __init__(self, folder: Path, name: str, login: str, shop: Shop) -> None:
        with laptop(folder, name) as store:
            self.path = store.path
        self.login = login
        self.conninfo = shop.login(login)
        self.visits: list[str] = []

    def work(self, rng: random.Random, made: set[tuple[str, str]], minute: int) -> None:
        with SqliteVisitStore(self.path) as store:
            if not self.visits or rng.random() < 0.2:
                self.visits.append(store.create_visit(visit(f"RHF-{minute:04d}")).id)
            vid = rng.choice(self.visits)
            for i in range(rng.randint(3, 15)):
                r = store.add_reading(vid, reading(f"{20 + rng.random() * 5:.2f} bar", minute + i))
                made.add((vid, r.id))
            standing = store.get_visit(vid).current_readings()
            if rng.random() < 0.4:
                fixed = store.correct_reading(vid, standing[0].id, reading("24.0 bar", minute))
                made.add((vid, fixed.id))
            if rng.random() < 0.4 and len(standing) > 2:
                store.delete_reading(vid, standing[-1].id)
            if rng.random() < 0.5:
                store.update_visit(vid, notes=f"note {minute}", hour_meter=float(minute))
            kit = store.kit()
            if not kit or rng.random() < 0.3:
                store.add_kit_item(kit_gauge(f"k{minute}"))
            elif rng.random() < 0.2:
                store.retire_kit_item(rng.choice(kit).id)
            else:
                store.edit_kit_item(rng.choice(kit).id, serial=f"RHF-G-{minute:04d}")


@pytest.mark.slow
def test_a_sync_killed_at_random_moments_loses_and_duplicates_nothing(shop: Shop, tmp_path: Path) -> None:
    rng = random.Random(15)
    ana, ben = shop.add("ana"), shop.add("ben")
    laptops = [
        Laptop(tmp_path, "ana", ana, shop),
        Laptop(tmp_path, "ben", ben, shop),
        Laptop(tmp_path, "ana-spare", ana, shop),
    ]
    made: set[tuple[str, str]] = set()
    killed_midway = 0
    for n in range(1, KILLS + 1):
        lap = rng.choice(laptops)
        lap.work(rng, made, n * 20)
        # kill after a random number of committed batches (0: while connecting or in the first),
        # then a random few milliseconds more, so the kill lands inside a transaction as often as between
        finished, batches = _run(lap.path, lap.conninfo, (rng.randint(0, 4), rng.uniform(0, 0.004)))
        killed_midway += (not finished) and batches > 0
        if n % 12 == 0:  # now and then every laptop finishes a sync, so each edits what the others made
            for other in laptops:
                assert _run(other.path, other.conninfo, None)[0]
    print(f"kills after one batch or more and before the end: {killed_midway} of {KILLS}")
    assert killed_midway >= KILLS // 3, f"only {killed_midway} kills landed inside a sync"

    for lap in (*laptops, *laptops):
        assert _run(lap.path, lap.conninfo, None)[0]

    with (
        SqliteVisitStore(laptops[0].path) as a,
        SqliteVisitStore(laptops[1].path) as b,
        SqliteVisitStore(laptops[2].path) as a2,
    ):
        sa, sb = state(a), state(b)
        on_a = {(vid, r["id"]) for vid, v in sa.items() for r in v["readings"]}
        assert on_a == made
        assert sa == sb == state(a2)
        with connect(shop.admin_url) as conn:
            rows = conn.execute("SELECT visit_id, id FROM fieldkit.reading").fetchall()
            kit_rows = conn.execute(
                "SELECT id, item_id, item_json, retired_on, changed_at, origin, owner::text, author::text "
                "FROM fieldkit.kit_item_version"
            ).fetchall()
        assert sorted(rows) == sorted(made)  # every reading once on the server, none missing
        with ShopServer(shop.admin_url) as server:
            on_server = server.machine_history(RIG)
        assert {h["header"]["id"]: h["header"]["notes"] for h in on_server} == {
            vid: v["notes"] for vid, v in sa.items()
        }
        deleted_server = {
            (h["header"]["id"], rid) for h in on_server for rid, _, gone in h["readings"] if gone
        }
        deleted_a = {(vid, r["id"]) for vid, v in sa.items() for r in v["readings"] if r["deleted_at"]}
        assert deleted_server == deleted_a

        # the kit: every version made on a laptop is on the server once, and on every laptop
        kit_server = {str(r[0]) for r in kit_rows}
        made_kit: set[str] = set()
        for store in (a, b, a2):
            with store.snapshot() as conn:
                local = {row[0] for row in conn.execute("SELECT id FROM kit_change")}
                made_kit |= {
                    row[0] for row in conn.execute("SELECT id FROM kit_change WHERE from_server = 0")
                }
            assert local == kit_server
        assert made_kit == kit_server and len(kit_rows) == len(kit_server)
        # each laptop's kit is what its login's versions on the server stand for (kit_log's rule)
        by_item: dict[tuple[str, str], list[KitVersion]] = {}
        for row in kit_rows:
            by_item.setdefault((row[6], row[1]), []).append(KitVersion(*row))
        assert any(len({v.origin for v in vs}) > 1 for vs in by_item.values()), (
            "no gauge edited on two laptops"
        )
        for lap, store in zip(laptops, (a, b, a2), strict=True):
            expected = {item: standing(v) for (owner, item), v in by_item.items() if owner == lap.login}
            with store.snapshot() as conn:
                assert dict(conn.execute("SELECT id, item_json FROM kit_item").fetchall()) == expected
        assert a.kit(include_retired=True) == a2.kit(include_retired=True)
        assert Replica(b).company_kit(include_retired=True)[ana] == a.kit(include_retired=True)

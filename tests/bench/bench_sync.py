"""How the shop server scales: one laptop's sync, one machine's history, three laptops at once.

Starts a throw-away PostgreSQL cluster (as tests/server does), so it needs PostgreSQL's server
programs; run from the repository root (a script, not a test; pytest never collects it):

    python tests/bench/bench_sync.py                 # all three, at the default sizes
    python tests/bench/bench_sync.py --only history --visits 10000 30000 100000

* ``sync``: a laptop with N readings (100 per visit) syncs them up, then a second laptop pulls
  them all down; each side timed, for several N.
* ``history``: the server holds V visits spread over 1000 machines (about V/1000 each, three
  readings and five header changes a visit, bulk-loaded); the history query for one machine
  (ShopServer.machine_history) is timed, median of 20, for several V.
* ``three``: three laptops with R readings each sync at the same moment (three processes);
  wall time beside one laptop alone.
"""

from __future__ import annotations

import argparse
import datetime as dt
import importlib
import multiprocessing
import statistics
import sys
import tempfile
import time
import uuid
from datetime import UTC
from pathlib import Path

from fieldkit.model.visit import Gauge, Reading, Visit
from fieldkit.store.header_log import canonical
from fieldkit.store.pg_server import ShopServer, add_technician, connect, init_server
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.sync import sync

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "server"))
_pg_cluster = importlib.import_module("pg_cluster")  # tests/server is a folder, not a package
Cluster, start_cluster = _pg_cluster.Cluster, _pg_cluster.start_cluster

T0 = dt.datetime(2026, 3, 14, 9, 0, tzinfo=UTC)


def _shop(cluster: Cluster) -> str:
    dbname = f"bench_{uuid.uuid4().hex[:8]}"
    with connect(cluster.conninfo(), autocommit=True) as conn:
        conn.execute(f'CREATE DATABASE "{dbname}"')
    init_server(cluster.conninfo(dbname))
    return dbname


def _login(cluster: Cluster, dbname: str, base: str) -> str:
    name = f"{base}_{uuid.uuid4().hex[:6]}"
    add_technician(cluster.conninfo(dbname), name)
    return cluster.conninfo(dbname, name)


def _laptop(path: Path, readings: int, per_visit: int = 100) -> SqliteVisitStore:
    store = SqliteVisitStore(path)
    gauge = Gauge(id="g60", label="bench gauge", full_scale="60 bar", accuracy_class=1.0)
    made = 0
    while made < readings:
        v = store.create_visit(
            Visit(job_number=f"B-{made}", machine="bench-rig", customer="bench", gauges=[gauge])
        )
        batch = [
            Reading(
                test_point="drive.charge",
                value=f"{20 + (i % 50) / 10} bar",
                taken_at=T0 + dt.timedelta(seconds=made + i),
                gauge="g60",
            )
            for i in range(min(per_visit, readings - made))
        ]
        store.add_readings(v.id, batch)
        made += len(batch)
    return store


def bench_sync(cluster: Cluster, sizes: list[int], folder: Path) -> None:
    print("sync of one laptop's readings (100 a visit):")
    print(f"  {'readings':>9} {'up s':>7} {'down s':>7} {'readings/s up':>14}")
    for n in sizes:
        dbname = _shop(cluster)
        up_url, down_url = _login(cluster, dbname, "up"), _login(cluster, dbname, "down")
        store = _laptop(folder / f"up-{n}.sqlite3", n)
        with ShopServer(up_url) as server:
            started = time.perf_counter()
            report = sync(store, server)
            up = time.perf_counter() - started
        assert report.sent["reading"] == n
        other = SqliteVisitStore(folder / f"down-{n}.sqlite3")
        with ShopServer(down_url) as server:
            started = time.perf_counter()
            report = sync(other, server)
            down = time.perf_counter() - started
        assert report.received["reading"] == n
        store.close()
        other.close()
        print(f"  {n:>9} {up:>7.2f} {down:>7.2f} {n / up:>14.0f}")


def _bulk_load(cluster: Cluster, dbname: str, start: int, stop: int, machines: int) -> None:
    gauge = canonical(
        Gauge(id="g60", label="bench gauge", full_scale="60 bar", accuracy_class=1.0).model_dump(mode="json")
    )
    reading = Reading(test_point="drive.charge", value="24.5 bar", taken_at=T0, gauge="g60")
    with connect(cluster.conninfo(dbname)) as conn, conn.cursor() as cur:
        with cur.copy("COPY fieldkit.visit (id, machine, origin, created_at) FROM STDIN") as cp:
            for i in range(start, stop):
                cp.write_row(
                    (f"v{i}", f"m{i % machines}", "bulk", (T0 + dt.timedelta(minutes=i)).isoformat())
                )
        with cur.copy(
            "COPY fieldkit.header_change (id, visit_id, field, value_json, changed_at, origin) FROM STDIN"
        ) as cp:
            for i in range(start, stop):
                at = (T0 + dt.timedelta(minutes=i)).isoformat()
                for field, value in (
                    ("job_number", canonical(f"J-{i}")),
                    ("customer", canonical("bench")),
                    ("status", canonical("closed")),
                    ("date", canonical("2026-03-14")),
                    ("gauge:g60", gauge),
                ):
                    cp.write_row((f"h{i}-{field}", f"v{i}", field, value, at, "bulk"))
        with cur.copy(
            "COPY fieldkit.reading (visit_id, id, test_point, taken_at, replaces, reading_json, origin) "
            "FROM STDIN"
        ) as cp:
            for i in range(start, stop):
                for k in range(3):
                    r = reading.model_copy(update={"id": f"r{k}"})
                    cp.write_row(
                        (f"v{i}", f"r{k}", "drive.charge", T0.isoformat(), None, r.model_dump_json(), "bulk")
                    )
        conn.commit()
        conn.execute("ANALYZE")
        conn.commit()


def bench_history(cluster: Cluster, sizes: list[int], machines: int = 1000) -> None:
    print(f"history query for one machine, {machines} machines on the server:")
    print(f"  {'visits':>9} {'load s':>7} {'visits/machine':>15} {'median ms':>10} {'max ms':>8}")
    dbname = _shop(cluster)
    url = _login(cluster, dbname, "reader")
    loaded = 0
    for total in sorted(sizes):
        started = time.perf_counter()
        _bulk_load(cluster, dbname, loaded, total, machines)
        load = time.perf_counter() - started
        loaded = total
        with ShopServer(url) as server:
            times = []
            for run in range(22):
                t = time.perf_counter()
                history = server.machine_history(f"m{run % 7}")
                times.append(time.perf_counter() - t)
            times = times[2:]
        print(
            f"  {total:>9} {load:>7.1f} {len(history):>15} {statistics.median(times) * 1000:>10.1f} "
            f"{max(times) * 1000:>8.1f}"
        )
    with connect(cluster.conninfo(dbname)) as conn:
        plan = conn.execute(
            "EXPLAIN SELECT id FROM fieldkit.visit WHERE machine = 'm1' ORDER BY created_at, id"
        ).fetchall()
    print("  plan of the visit lookup: " + " / ".join(str(row[0]).strip().split("  (")[0] for row in plan))


def _sync_one(args: tuple[str, str]) -> tuple[float, float]:
    """(seconds sending, seconds in all) for one laptop's sync."""
    path, url = args
    store = SqliteVisitStore(path)
    first_down: list[float] = []

    def progress(phase: str, done: int, total: int) -> None:
        if phase == "down" and not first_down:
            first_down.append(time.perf_counter())

    with ShopServer(url) as server:
        started = time.perf_counter()
        sync(store, server, progress=progress)
        took = time.perf_counter() - started
    store.close()
    return (first_down[0] - started if first_down else took), took


def bench_three(cluster: Cluster, readings: int, folder: Path) -> None:
    print(f"three laptops with {readings} readings each, syncing at the same moment:")
    dbname = _shop(cluster)
    alone_path = folder / "alone.sqlite3"
    _laptop(alone_path, readings).close()
    alone = _sync_one((str(alone_path), _login(cluster, dbname, "alone")))[1]
    dbname = _shop(cluster)
    jobs = []
    for k in range(3):
        path = folder / f"three-{k}.sqlite3"
        _laptop(path, readings).close()
        jobs.append((str(path), _login(cluster, dbname, f"lap{k}")))
    ctx = multiprocessing.get_context("fork")
    started = time.perf_counter()
    with ctx.Pool(3) as pool:
        each = pool.map(_sync_one, jobs)
    wall = time.perf_counter() - started
    print(f"  one laptop alone: {alone:.2f} s")
    print(f"  three at once: wall {wall:.2f} s")
    print(
        "  each (sending / whole sync incl. receiving the other two): "
        + ", ".join(f"{u:.2f} / {t:.2f}" for u, t in each)
        + " s"
    )
    # after the three, every laptop syncs again and must hold all 3 × readings
    for path, url in jobs:
        _sync_one((path, url))
    for path, _ in jobs:
        with SqliteVisitStore(path) as store:
            count = sum(s.reading_count for s in store.list_visits())
        assert count == 3 * readings, count
    print(f"  afterwards each laptop holds {3 * readings} readings")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", choices=["sync", "history", "three"])
    parser.add_argument("--readings", type=int, nargs="+", default=[1000, 3000, 10000])
    parser.add_argument("--visits", type=int, nargs="+", default=[10000, 30000, 100000])
    parser.add_argument("--three", type=int, default=3000, help="readings on each of the three laptops")
    args = parser.parse_args()
    cluster = start_cluster()
    try:
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            if args.only in (None, "sync"):
                bench_sync(cluster, args.readings, folder)
            if args.only in (None, "history"):
                bench_history(cluster, args.visits)
            if args.only in (None, "three"):
                bench_three(cluster, args.three, folder)
    finally:
        cluster.stop()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

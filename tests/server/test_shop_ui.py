"""The shop server in the terminal UI: the start screen says when the last sync was and what
waits to go up, a sync runs in a worker while readings are still saved at once, and a machine's
history shows other technicians' visits with who took them."""

from __future__ import annotations

import threading
from pathlib import Path

import pytest
from pg_cluster import Shop
from shop_builders import RIG, laptop, reading, visit

from fieldkit.session import Workbench
from fieldkit.store.pg_server import ShopServer
from fieldkit.store.sync import sync
from fieldkit.tui.app import make_app
from fieldkit.tui.screens.history import HistoryScreen


def _text(widget: object) -> str:
    content = widget.content  # type: ignore[attr-defined]
    return getattr(content, "plain", str(content))


async def test_the_start_screen_syncs_in_the_background_and_history_names_who_took_each_visit(
    shop: Shop, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    a = laptop(tmp_path, "a")
    theirs = a.create_visit(visit("RHF-0201"))
    a.add_reading(theirs.id, reading())
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    monkeypatch.setenv("FIELDKIT_SERVER", shop.login(ben))
    bench = Workbench.open(tmp_path / "ben.sqlite3")
    mine = bench.store.create_visit(visit("RHF-0202"))
    bench.store.add_reading(mine.id, reading("23.0 bar", 5))
    app = make_app(bench)
    try:
        async with app.run_test(size=(130, 36)) as pilot:
            await pilot.pause()
            status = _text(app.screen.query_one("#sync-status"))
            assert "never synced · waiting to go up: 1 visit, 1 reading" in status
            await pilot.press("y")
            await app.workers.wait_for_complete()
            await pilot.pause()
            status = _text(app.screen.query_one("#sync-status"))
            assert f"UTC as {ben} · nothing waits to go up" in status
            assert _text(app.screen.query_one("#start-msg")).startswith("✓ synced · sent: 1 visits")
            app.push_screen(HistoryScreen(bench, bench.library.get(RIG), None))
            await pilot.pause()
            heads = [col.label.plain for col in app.screen.query_one("#history").columns.values()]
            assert any("RHF-0201" in h and ana in h for h in heads), heads
            assert any("RHF-0202" in h and ben in h for h in heads), heads
    finally:
        bench.close()


def test_readings_are_saved_at_once_while_a_sync_is_under_way(shop: Shop, tmp_path: Path) -> None:
    """The sync is held in the middle (between two batches) while the technician saves readings
    from another thread; each save returns at once, and the next sync sends them."""
    ana = shop.add("ana")
    store = laptop(tmp_path, "a")
    v = store.create_visit(visit())
    store.add_readings(v.id, [reading(f"{20 + i / 10:.1f} bar", i) for i in range(30)])
    in_the_middle, carry_on = threading.Event(), threading.Event()

    def progress(phase: str, done: int, total: int) -> None:
        if phase == "up" and done >= 10 and not in_the_middle.is_set():
            in_the_middle.set()
            carry_on.wait(30)

    def run() -> None:
        with ShopServer(shop.login(ana)) as server:
            sync(store, server, batch=5, progress=progress)

    worker = threading.Thread(target=run)
    worker.start()
    try:
        assert in_the_middle.wait(30)
        saved = [store.add_reading(v.id, reading("21.5 bar", 100 + i)) for i in range(3)]
    finally:
        carry_on.set()
        worker.join(60)
    assert len(store.get_visit(v.id).readings) == 33
    with ShopServer(shop.login(ana)) as server:
        second = sync(store, server)
    assert second.sent["reading"] == len(saved)

"""Two laptops and a shop server (a real PostgreSQL): records travel both ways by global id."""

from __future__ import annotations

from pathlib import Path

import pytest
from pg_cluster import Shop
from shop_builders import CHARGE, laptop, reading, state, visit

from fieldkit.errors import StoreError
from fieldkit.store.pg_schema import latest_server_version
from fieldkit.store.pg_server import ShopServer, connect
from fieldkit.store.replica import Replica
from fieldkit.store.sync import sync


def test_two_laptops_share_a_machines_history_through_the_server(shop: Shop, tmp_path: Path) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    a, b = laptop(tmp_path, "a"), laptop(tmp_path, "b")
    first = a.create_visit(visit("RHF-0101"))
    a.add_readings(first.id, [reading("24.5 bar", 0), reading("23.9 bar", 1)])
    with ShopServer(shop.login(ana)) as server:
        report = sync(a, server)
    assert report.sent["reading"] == 2
    with ShopServer(shop.login(ben)) as server:
        sync(b, server)
    history = b.machine_history(first.machine, [CHARGE])
    assert [(s.job_number, s.taken_by, len(r)) for s, r in history] == [("RHF-0101", ana, 2)]
    # ben's own visit to the same rig goes the other way
    second = b.create_visit(visit("RHF-0102"))
    b.add_reading(second.id, reading("21.0 bar", 30))
    with ShopServer(shop.login(ben)) as server:
        sync(b, server)
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    assert [(s.job_number, s.taken_by) for s, _ in a.machine_history(first.machine)] == [
        ("RHF-0101", ana),
        ("RHF-0102", ben),
    ]
    assert state(a) == state(b)


def test_a_second_sync_with_nothing_new_changes_nothing(shop: Shop, tmp_path: Path) -> None:
    ana = shop.add("ana")
    a = laptop(tmp_path, "a")
    v = a.create_visit(visit())
    a.add_reading(v.id, reading())
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
        before = state(a)
        again = sync(a, server)
    assert sum(again.sent.values()) == 0 and sum(again.received.values()) == 0
    assert state(a) == before
    assert Replica(a).status().waiting_total == 0


def test_corrections_and_deletions_travel_as_history(shop: Shop, tmp_path: Path) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    a, b = laptop(tmp_path, "a"), laptop(tmp_path, "b")
    v = a.create_visit(visit())
    typo = a.add_reading(v.id, reading("245 bar", 0))
    gone = a.add_reading(v.id, reading("30 bar", 1))
    fixed = a.correct_reading(v.id, typo.id, reading("24.5 bar", 0))
    a.delete_reading(v.id, gone.id)
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    with ShopServer(shop.login(ben)) as server:
        sync(b, server)
    seen = b.get_visit(v.id)
    assert [r.id for r in seen.current_readings()] == [fixed.id]
    assert {r.id for r in seen.readings} == {typo.id, gone.id, fixed.id}
    assert [r.id for r in b.reading_history(v.id, CHARGE)] == [typo.id, gone.id, fixed.id]
    assert state(a) == state(b)


def test_a_server_with_a_newer_layout_is_refused_with_nothing_sent(shop: Shop, tmp_path: Path) -> None:
    ana = shop.add("ana")
    a = laptop(tmp_path, "a")
    a.create_visit(visit())
    with connect(shop.admin_url) as conn:
        conn.execute(
            "INSERT INTO fieldkit.schema_version (version, why) VALUES (99, 'from a later fieldkit')"
        )
        conn.commit()
    ours = latest_server_version()
    with pytest.raises(
        StoreError, match=rf"layout is version 99, newer than this fieldkit understands \(up to {ours}\)"
    ):
        ShopServer(shop.login(ana))
    with connect(shop.admin_url) as conn:
        assert conn.execute("SELECT count(*) FROM fieldkit.visit").fetchone() == (0,)
    assert Replica(a).status().waiting["visit"] == 1


def test_a_store_restored_from_a_backup_gets_back_what_it_had_sent_since(shop: Shop, tmp_path: Path) -> None:
    ana = shop.add("ana")
    a = laptop(tmp_path, "a")
    v = a.create_visit(visit())
    first = a.add_reading(v.id, reading("24.5 bar", 0))
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    a.close()  # the backup: a plain copy of the closed store file
    backup = a.path.read_bytes()
    a = laptop(tmp_path, "a")
    later = a.add_reading(v.id, reading("23.1 bar", 9))
    a.delete_reading(v.id, later.id)
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    a.close()
    a.path.write_bytes(backup)  # the laptop is restored from the backup
    restored = laptop(tmp_path, "a")
    assert len(restored.get_visit(v.id).readings) == 1
    with ShopServer(shop.login(ana)) as server:
        sync(restored, server)
    back = restored.get_visit(v.id)
    assert sorted(r.id for r in back.readings) == sorted([first.id, later.id])
    assert [r.id for r in back.readings if r.deleted_at] == [later.id]

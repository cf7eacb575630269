"""Two laptops edit the same visit header offline, then both sync: the merge documented in
fieldkit.store.sync (field by field, newest change wins, the loser kept in the history)."""

from __future__ import annotations

import json
from pathlib import Path

from pg_cluster import Shop
from shop_builders import laptop, reading, state, visit

from fieldkit.store.pg_server import ShopServer
from fieldkit.store.replica import Replica
from fieldkit.store.sync import sync


def test_header_edits_made_offline_merge_field_by_field_and_keep_the_loser(
    shop: Shop, tmp_path: Path
) -> None:
    ana, boss = shop.add("ana"), shop.add("boss", supervisor=True)
    a, s = laptop(tmp_path, "ana"), laptop(tmp_path, "office")
    v = a.create_visit(visit(customer="Ravensgill quarry"))
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    with ShopServer(shop.login(boss)) as server:
        sync(s, server)
    # both offline now: ana changes customer and notes; a moment later the office changes customer and site
    a.update_visit(v.id, customer="Ravensgill quarry (east pit)", notes="hose chafed at boom pivot")
    s.update_visit(v.id, customer="Ravensgill Quarries Ltd", site="east pit")
    a.add_reading(v.id, reading("22.0 bar", 3))
    s.add_gauge(v.id, visit().gauges[0].model_copy(update={"id": "g250", "full_scale": "250 bar"}))
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    with ShopServer(shop.login(boss)) as server:
        sync(s, server)
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)

    merged = a.get_visit(v.id)
    assert merged.customer == "Ravensgill Quarries Ltd"  # the office's edit was the newer one
    assert merged.notes == "hose chafed at boom pivot"  # only ana changed notes: kept
    assert merged.site == "east pit"  # only the office changed site: kept
    assert [g.id for g in merged.gauges] == ["g60", "g250"]  # gauges are merged one by one
    assert len(merged.readings) == 1
    assert state(a) == state(s)
    customers = [json.loads(c.value) for c in Replica(a).header_history(v.id, "customer")]
    assert customers == ["Ravensgill quarry", "Ravensgill quarry (east pit)", "Ravensgill Quarries Ltd"]
    assert Replica(s).header_history(v.id, "customer") == Replica(a).header_history(v.id, "customer")


def test_an_edit_made_after_seeing_a_value_wins_even_with_a_slow_clock(shop: Shop, tmp_path: Path) -> None:
    """A laptop whose clock is behind still overrides a value it has seen: its change is timed
    just after the newest change of that field (fieldkit.store.sqlite._log_header)."""
    ana = shop.add("ana")
    a, a2 = laptop(tmp_path, "ana"), laptop(tmp_path, "ana-spare")
    v = a.create_visit(visit())
    a.update_visit(v.id, notes="first")
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
        sync(a2, server)
    future = "2099-01-01T00:00:00.000000Z"
    with a.transaction() as conn:  # a change from a laptop whose clock ran far ahead
        conn.execute(
            "INSERT INTO header_change (id, visit_id, field, value_json, changed_at, origin) "
            "VALUES ('ahead1', ?, 'notes', '\"from a fast clock\"', ?, 'x')",
            (v.id, future),
        )
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
        sync(a2, server)
        assert a2.get_visit(v.id).notes == "from a fast clock"
        a2.update_visit(v.id, notes="seen and replaced")
        sync(a2, server)
        sync(a, server)
    assert a.get_visit(v.id).notes == a2.get_visit(v.id).notes == "seen and replaced"

"""The gauge kit through the shop server (a real PostgreSQL): a technician's instruments go up
and come back down on that technician's other laptops, the company reads everyone's kit, and
two edits of one instrument follow the rule of fieldkit.store.kit_log (the whole newest version
stands, a retirement sticks, older versions stay as history)."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import psycopg
import pytest
from pg_cluster import Shop
from shop_builders import kit_gauge, laptop

from fieldkit.model.kit import KitItem
from fieldkit.store.migrations import MIGRATIONS
from fieldkit.store.pg_server import ShopServer, connect
from fieldkit.store.replica import Replica
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.sync import sync


def _sync(store: SqliteVisitStore, shop: Shop, login: str) -> None:
    with ShopServer(shop.login(login)) as server:
        sync(store, server)


def test_a_kit_goes_up_and_comes_down_on_the_same_technicians_other_laptop(
    shop: Shop, tmp_path: Path
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    van, spare, bens = laptop(tmp_path, "ana-van"), laptop(tmp_path, "ana-spare"), laptop(tmp_path, "ben")
    van.add_kit_item(kit_gauge("k60"))
    van.add_kit_item(
        KitItem(
            id="t1", kind="thermometer", full_scale="120 degC", scale_start="-20 degC", accuracy_class=1.0
        )
    )
    bens.add_kit_item(kit_gauge("k60", serial="RHF-G-0999", full_scale="250 bar"))
    assert Replica(van).status().waiting["kit_item_version"] == 2
    with ShopServer(shop.login(ana)) as server:
        report = sync(van, server)
    assert report.sent["kit_item_version"] == 2
    assert Replica(van).status().waiting_total == 0
    _sync(bens, shop, ben)
    _sync(spare, shop, ana)

    assert spare.kit() == van.kit()  # ana's kit on ana's second laptop
    assert [i.serial for i in bens.kit()] == ["RHF-G-0999"]  # ben's own k60 is not replaced by ana's
    # …but ben reads the company's kit, ana's included, kept apart by login
    company = Replica(bens).company_kit()
    assert sorted(company) == sorted([ana, ben])
    assert company[ana] == van.kit()
    assert [i.serial for i in company[ben]] == ["RHF-G-0999"]
    with connect(shop.admin_url) as conn:
        rows = conn.execute(
            "SELECT owner::text, item_id FROM fieldkit.kit_item_version ORDER BY owner, item_id"
        ).fetchall()
    assert rows == sorted([(ana, "k60"), (ana, "t1"), (ben, "k60")])
    # nothing comes back as a new version: a second round sends and logs nothing more
    with ShopServer(shop.login(ana)) as server:
        again = sync(spare, server)
    assert again.sent["kit_item_version"] == 0
    assert len(Replica(spare).kit_history("k60")) == 1


def test_two_edits_of_one_gauge_the_whole_newest_version_stands_and_the_older_is_history(
    shop: Shop, tmp_path: Path
) -> None:
    """Both laptops are ana's, both offline: the van records a new calibration date, a moment
    later the spare corrects the serial. The rule is whole-item newest-wins (fields of an
    instrument are never mixed), so the spare's version stands with the *old* calibration date,
    and the van's version is kept in the history, where a person can see and re-enter it."""
    ana = shop.add("ana")
    van, spare = laptop(tmp_path, "van"), laptop(tmp_path, "spare")
    van.add_kit_item(kit_gauge("k60"))
    _sync(van, shop, ana)
    _sync(spare, shop, ana)
    van.edit_kit_item("k60", calibration_due=dt.date(2027, 9, 30))
    spare.edit_kit_item("k60", serial="RHF-G-0061")  # later in time than the van's edit
    _sync(van, shop, ana)
    _sync(spare, shop, ana)
    _sync(van, shop, ana)

    for store in (van, spare):
        item = store.kit_item("k60")
        assert (item.serial, item.calibration_due) == ("RHF-G-0061", dt.date(2026, 9, 30))
    dues = [KitItem.model_validate_json(v.item_json).calibration_due for v in Replica(van).kit_history("k60")]
    assert dues == [dt.date(2026, 9, 30), dt.date(2027, 9, 30), dt.date(2026, 9, 30)]
    assert Replica(van).kit_history("k60") == Replica(spare).kit_history("k60")


def test_a_retirement_sticks_even_when_an_unaware_laptop_edits_the_gauge_later(
    shop: Shop, tmp_path: Path
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    van, spare, bens = laptop(tmp_path, "van"), laptop(tmp_path, "spare"), laptop(tmp_path, "ben")
    van.add_kit_item(kit_gauge("k60"))
    _sync(van, shop, ana)
    _sync(spare, shop, ana)
    van.retire_kit_item("k60", on=dt.date(2026, 4, 2))  # dropped on the quarry floor
    spare.edit_kit_item("k60", label="charge gauge, bezel cracked")  # later, not knowing
    _sync(van, shop, ana)
    _sync(spare, shop, ana)
    _sync(van, shop, ana)
    _sync(bens, shop, ben)

    for store in (van, spare):
        assert store.kit() == []  # out of service on both laptops
        (kept,) = store.kit(include_retired=True)  # and still readable
        assert (kept.retired_on, kept.label) == (dt.date(2026, 4, 2), "charge gauge, bezel cracked")
    assert Replica(bens).company_kit() == {}
    assert [(i.id, i.retired_on) for i in Replica(bens).company_kit(include_retired=True)[ana]] == [
        ("k60", dt.date(2026, 4, 2))
    ]


def test_an_edit_made_after_seeing_a_version_stands_even_with_a_slow_clock(
    shop: Shop, tmp_path: Path
) -> None:
    ana = shop.add("ana")
    van, spare = laptop(tmp_path, "van"), laptop(tmp_path, "spare")
    van.add_kit_item(kit_gauge("k60"))
    with van.transaction() as conn:  # a version from a laptop whose clock ran far ahead
        conn.execute(
            "UPDATE kit_item SET item_json = json_set(item_json, '$.label', 'from a fast clock'), "
            "updated_at = '2099-01-01T00:00:00.000000Z' WHERE id = 'k60'"
        )
    _sync(van, shop, ana)
    _sync(spare, shop, ana)
    assert spare.kit_item("k60").label == "from a fast clock"
    spare.edit_kit_item("k60", label="seen and replaced")
    _sync(spare, shop, ana)
    _sync(van, shop, ana)
    assert van.kit_item("k60").label == spare.kit_item("k60").label == "seen and replaced"


def _as(shop: Shop, login: str, statement: str, args: tuple[object, ...] = ()) -> None:
    with psycopg.connect(shop.login(login)) as conn:
        conn.execute(statement, args)


_ADD_VERSION = (
    "INSERT INTO fieldkit.kit_item_version (id, item_id, item_json, retired_on, changed_at, origin{owner}) "
    "SELECT 'x-' || id, item_id, item_json, '2099-01-01', '2099-01-01T00:00:00.000000Z', 'by-hand'{value} "
    "FROM fieldkit.kit_item_version WHERE item_id = 'k60'"
)


@pytest.mark.parametrize(
    ("what", "statement", "refusal"),
    [
        ("retire ana's gauge", _ADD_VERSION.format(owner=", owner", value=", %s"), "permission denied"),
        (
            "rewrite a version",
            "UPDATE fieldkit.kit_item_version SET item_json = '{}' WHERE owner = %s",
            "denied",
        ),
        ("delete ana's kit", "DELETE FROM fieldkit.kit_item_version WHERE owner = %s", "permission denied"),
    ],
)
def test_a_technician_cannot_change_another_technicians_kit_by_hand(
    shop: Shop, tmp_path: Path, what: str, statement: str, refusal: str
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    van = laptop(tmp_path, "van")
    van.add_kit_item(kit_gauge("k60"))
    _sync(van, shop, ana)
    with pytest.raises(psycopg.Error, match=refusal):
        _as(shop, ben, statement, (ana,))
    with connect(shop.admin_url) as conn:
        assert conn.execute("SELECT owner::text, author::text FROM fieldkit.kit_item_version").fetchall() == [
            (ana, ana)
        ], what


def test_a_technicians_hand_written_version_lands_in_their_own_kit_only(shop: Shop, tmp_path: Path) -> None:
    """Without naming an owner the row is ben's own (the default), so row-level security lets it
    in, and it cannot touch ana's k60."""
    ana, ben = shop.add("ana"), shop.add("ben")
    van = laptop(tmp_path, "van")
    van.add_kit_item(kit_gauge("k60"))
    _sync(van, shop, ana)
    _as(shop, ben, _ADD_VERSION.format(owner="", value=""))
    _sync(van, shop, ana)
    assert van.kit_item("k60").retired_on is None
    with connect(shop.admin_url) as conn:
        assert conn.execute(
            "SELECT owner::text, author::text FROM fieldkit.kit_item_version WHERE id LIKE 'x-%'"
        ).fetchall() == [(ben, ben)]


def test_a_supervisor_may_retire_a_technicians_gauge_and_the_laptop_follows(
    shop: Shop, tmp_path: Path
) -> None:
    ana, boss = shop.add("ana"), shop.add("boss", supervisor=True)
    van = laptop(tmp_path, "van")
    van.add_kit_item(kit_gauge("k60"))
    _sync(van, shop, ana)
    _as(
        shop,
        boss,
        "INSERT INTO fieldkit.kit_item_version "
        "(id, item_id, item_json, retired_on, changed_at, origin, owner) "
        "SELECT 'office-1', item_id, json_set_retired, '2026-05-01', '2099-01-01T00:00:00.000000Z', "
        "'office', %s "
        "FROM (SELECT item_id, jsonb_set(item_json::jsonb, '{retired_on}', '\"2026-05-01\"')::text "
        "AS json_set_retired FROM fieldkit.kit_item_version WHERE item_id = 'k60') AS v",
        (ana,),
    )
    _sync(van, shop, ana)
    assert van.kit() == []
    assert van.kit_item("k60").retired_on == dt.date(2026, 5, 1)
    assert Replica(van).kit_history("k60")[-1].author == boss


def test_a_store_with_a_kit_from_before_the_shop_server_sends_it_once(shop: Shop, tmp_path: Path) -> None:
    path = tmp_path / "old.sqlite3"
    old = SqliteVisitStore(path, migrations=MIGRATIONS[:4])  # layout 4: the kit, no kit log yet
    with old.transaction() as conn:  # as the layout-4 program wrote it
        conn.execute(
            "INSERT INTO kit_item (id, kind, retired_on, created_at, updated_at, origin, item_json) "
            "VALUES ('k60', 'pressure_gauge', '2026-01-05', '2025-06-01T08:00:00.000000+00:00', "
            "'2026-01-05T16:00:00.000000+00:00', ?, ?)",
            (old.origin, kit_gauge("k60", retired_on=dt.date(2026, 1, 5)).model_dump_json()),
        )
    old.close()
    ana = shop.add("ana")
    upgraded, spare = SqliteVisitStore(path), laptop(tmp_path, "spare")
    assert Replica(upgraded).status().waiting["kit_item_version"] == 1  # the item as it stands
    _sync(upgraded, shop, ana)
    _sync(upgraded, shop, ana)
    _sync(spare, shop, ana)
    assert spare.kit(include_retired=True) == upgraded.kit(include_retired=True)
    assert spare.kit_item("k60").retired_on == dt.date(2026, 1, 5)
    with connect(shop.admin_url) as conn:
        assert conn.execute("SELECT count(*) FROM fieldkit.kit_item_version").fetchone() == (1,)

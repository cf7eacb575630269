"""Row-level security with the real roles: a technician's login reads the company's history and
adds only to its own visits, whatever SQL it writes by hand; a supervisor may add to any visit."""

from __future__ import annotations

from pathlib import Path

import psycopg
import pytest
from pg_cluster import Shop
from shop_builders import laptop, reading, visit

from fieldkit.errors import StoreError
from fieldkit.store.pg_server import ShopServer, add_technician, connect
from fieldkit.store.sync import sync


@pytest.fixture
def anas_visit(shop: Shop, tmp_path: Path) -> tuple[str, str]:
    """ana's visit with one reading, on the server; returns (ana's login, visit id)."""
    ana = shop.add("ana")
    a = laptop(tmp_path, "a")
    v = a.create_visit(visit())
    a.add_reading(v.id, reading())
    with ShopServer(shop.login(ana)) as server:
        sync(a, server)
    return ana, v.id


def _as(shop: Shop, login: str, statement: str, args: tuple[object, ...] = ()) -> None:
    with psycopg.connect(shop.login(login)) as conn:
        conn.execute(statement, args)


def test_another_technician_reads_the_visit(shop: Shop, anas_visit: tuple[str, str]) -> None:
    ben = shop.add("ben")
    with psycopg.connect(shop.login(ben)) as conn:
        assert conn.execute(
            "SELECT owner::text FROM fieldkit.visit WHERE id = %s", (anas_visit[1],)
        ).fetchone() == (anas_visit[0],)
        assert conn.execute("SELECT count(*) FROM fieldkit.reading").fetchone() == (1,)


@pytest.mark.parametrize(
    ("what", "statement", "refusal"),
    [
        (
            "change a header",
            "UPDATE fieldkit.visit SET machine = 'other' WHERE id = %(v)s",
            "permission denied",
        ),
        ("delete the visit", "DELETE FROM fieldkit.visit WHERE id = %(v)s", "permission denied"),
        (
            "rewrite a reading",
            "UPDATE fieldkit.reading SET reading_json = '{}' WHERE visit_id = %(v)s",
            "permission denied",
        ),
        ("delete readings", "DELETE FROM fieldkit.reading WHERE visit_id = %(v)s", "permission denied"),
        (
            "add a header change",
            "INSERT INTO fieldkit.header_change (id, visit_id, field, value_json, changed_at, origin) "
            "VALUES ('x1', %(v)s, 'customer', '\"someone else\"', '2099-01-01T00:00:00.000000Z', 'ben')",
            "row-level security",
        ),
        (
            "add a reading",
            "INSERT INTO fieldkit.reading (visit_id, id, test_point, taken_at, replaces, reading_json, "
            "origin) "
            "VALUES (%(v)s, 'r1', 'drive.charge', '2099-01-01T00:00:00Z', NULL, '{}', 'ben')",
            "row-level security",
        ),
        (
            "delete a reading by record",
            "INSERT INTO fieldkit.reading_deletion (visit_id, reading_id, deleted_at, origin) "
            "SELECT visit_id, id, '2099-01-01T00:00:00Z', 'ben' FROM fieldkit.reading WHERE visit_id = %(v)s",
            "row-level security",
        ),
        (
            "forge the sender",
            "INSERT INTO fieldkit.visit (id, machine, origin, created_at, owner) VALUES ('v9', 'm', 'o', "
            "'t', 'ana')",
            "permission denied",
        ),
        ("take over the numbering", "SELECT setval('fieldkit.change_seq', 1)", "permission denied"),
    ],
)
def test_a_technician_cannot_change_another_technicians_visit_by_hand(
    shop: Shop, anas_visit: tuple[str, str], what: str, statement: str, refusal: str
) -> None:
    ben = shop.add("ben")
    with pytest.raises(psycopg.Error, match=refusal):
        _as(shop, ben, statement.replace("%(v)s", "%s"), (anas_visit[1],) * statement.count("%(v)s"))
    with connect(shop.admin_url) as conn:
        assert conn.execute("SELECT count(*) FROM fieldkit.reading").fetchone() == (1,), what
        assert conn.execute("SELECT count(*) FROM fieldkit.reading_deletion").fetchone() == (0,), what
        assert conn.execute(
            "SELECT count(*) FROM fieldkit.header_change WHERE author <> %s", (anas_visit[0],)
        ).fetchone() == (0,), what


def test_a_supervisor_may_add_to_any_visit(shop: Shop, anas_visit: tuple[str, str]) -> None:
    boss = shop.add("boss", supervisor=True)
    _as(
        shop,
        boss,
        "INSERT INTO fieldkit.header_change (id, visit_id, field, value_json, changed_at, origin) "
        "VALUES ('s1', %s, 'notes', '\"checked by the office\"', '2099-01-01T00:00:00.000000Z', 'office')",
        (anas_visit[1],),
    )
    with connect(shop.admin_url) as conn:
        assert conn.execute("SELECT author::text FROM fieldkit.header_change WHERE id = 's1'").fetchone() == (
            boss,
        )


def test_a_technicians_own_visit_accepts_their_rows_and_stamps_them(
    shop: Shop, anas_visit: tuple[str, str]
) -> None:
    ana, vid = anas_visit
    _as(
        shop,
        ana,
        "INSERT INTO fieldkit.header_change (id, visit_id, field, value_json, changed_at, origin) "
        "VALUES ('own1', %s, 'notes', '\"own note\"', '2099-01-01T00:00:00.000000Z', 'ana-laptop')",
        (vid,),
    )
    with connect(shop.admin_url) as conn:
        assert conn.execute(
            "SELECT author::text FROM fieldkit.header_change WHERE id = 'own1'"
        ).fetchone() == (ana,)


def test_edits_to_another_technicians_visit_stay_on_the_laptop(
    shop: Shop, anas_visit: tuple[str, str], tmp_path: Path
) -> None:
    ben = shop.add("ben")
    b = laptop(tmp_path, "b")
    with ShopServer(shop.login(ben)) as server:
        sync(b, server)
        b.add_reading(anas_visit[1], reading("25.1 bar", 5))
        report = sync(b, server)
    assert report.held_back == 1
    assert any("stay on this laptop" in line for line in report.lines())


def test_a_login_name_that_is_not_a_plain_word_is_refused(shop: Shop) -> None:
    with pytest.raises(StoreError, match="cannot be a login name"):
        add_technician(shop.admin_url, 'ana"; DROP TABLE fieldkit.visit; --')

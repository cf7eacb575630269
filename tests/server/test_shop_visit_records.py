"""Every kind of record a visit now holds travels through the shop server (a real PostgreSQL):
the complaint and picked symptoms, observations, the repair work, after-repair readings, the
machine's state on departure and the closed status. Observations and work items carry their own
ids, so items added offline on two laptops both stay (fieldkit.store.header_log.ITEM_LISTS)."""

from __future__ import annotations

from pathlib import Path

from pg_cluster import Shop
from shop_builders import CHARGE, T0, laptop, reading, state, visit

from fieldkit.model.repair import Departure, MachineStatus, WorkItem, WorkKind
from fieldkit.model.visit import Observation
from fieldkit.store.pg_server import ShopServer
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.sync import sync


def _sync(store: SqliteVisitStore, shop: Shop, login: str) -> None:
    with ShopServer(shop.login(login)) as server:
        sync(store, server)


def test_complaint_observations_repair_and_departure_reach_the_next_technician(
    shop: Shop, tmp_path: Path
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    a, b = laptop(tmp_path, "ana"), laptop(tmp_path, "ben")
    v = a.create_visit(visit(complaint="travel slow when the oil is hot", symptoms=["slow_when_hot"]))
    a.add_reading(v.id, reading("17.0 bar", 0))
    a.update_visit(
        v.id,
        observations=[Observation(check="case_drain_hose_hot", answer="yes", at=T0)],
        work=[
            WorkItem(
                kind=WorkKind.ADJUSTED,
                part="charge relief valve",
                setting="24 bar",
                done_at=T0,
                note="shimmed",
            )
        ],
    )
    a.add_reading(v.id, reading("24.2 bar", 40, after_repair=True))
    a.update_visit(
        v.id, departure=Departure(status=MachineStatus.LIMITED, limits="no travel on slopes", decided_at=T0)
    )
    a.close_visit(v.id, "charge relief reset; charge pump to be watched")
    _sync(a, shop, ana)
    _sync(b, shop, ben)

    seen = b.get_visit(v.id)
    assert (seen.complaint, seen.symptoms) == ("travel slow when the oil is hot", ["slow_when_hot"])
    assert [(o.check, o.answer) for o in seen.observations] == [("case_drain_hose_hot", "yes")]
    assert [(w.part, w.setting.m_as("bar") if w.setting else None, w.note) for w in seen.work] == [
        ("charge relief valve", 24.0, "shimmed")
    ]
    assert seen.departure is not None and seen.departure.limits == "no travel on slopes"
    assert [r.value.magnitude for r in seen.retest_readings()] == [24.2]
    assert (seen.status.value, seen.summary) == ("closed", "charge relief reset; charge pump to be watched")
    ((summary, standing),) = b.machine_history(v.machine, [CHARGE])
    assert summary.taken_by == ana and len(standing) == 2
    assert state(a) == state(b)


def test_observations_and_work_added_offline_on_two_laptops_both_stay(shop: Shop, tmp_path: Path) -> None:
    """ana's van and the office (a supervisor) both add to one open visit while offline."""
    ana, boss = shop.add("ana"), shop.add("boss", supervisor=True)
    van, office = laptop(tmp_path, "van"), laptop(tmp_path, "office")
    v = van.create_visit(visit())
    _sync(van, shop, ana)
    _sync(office, shop, boss)
    first = Observation(check="pump_whines", answer="yes", at=T0)
    van.update_visit(
        v.id,
        observations=[first],
        work=[WorkItem(kind=WorkKind.FITTED, part="suction hose clamp", done_at=T0)],
    )
    office.update_visit(
        v.id,
        observations=[Observation(check="foam_in_tank", answer="no", at=T0)],
        work=[WorkItem(kind=WorkKind.INSPECTED, part="suction strainer", done_at=T0)],
        complaint="noise from the pump at start-up",
    )
    _sync(van, shop, ana)
    _sync(office, shop, boss)
    _sync(van, shop, ana)

    for store in (van, office):
        got = store.get_visit(v.id)
        assert sorted(o.check for o in got.observations) == ["foam_in_tank", "pump_whines"]
        assert sorted(w.part for w in got.work) == ["suction hose clamp", "suction strainer"]
        assert got.complaint == "noise from the pump at start-up"
    assert state(van) == state(office)
    # taking one observation back on the van travels as a removal of that item only
    van.update_visit(v.id, observations=[o for o in van.get_visit(v.id).observations if o.id != first.id])
    _sync(van, shop, ana)
    _sync(office, shop, boss)
    assert [o.check for o in office.get_visit(v.id).observations] == ["foam_in_tank"]

"""The demo store: built from the bundled sample visits, rebuilt whole when an earlier fieldkit made it."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

from fieldkit.model.kit import calibration_warning
from fieldkit.model.visit import Visit
from fieldkit.resources import samples_dir
from fieldkit.session import (
    demo_store_is_stale,
    demo_store_path,
    read_visit_file,
    retire_demo_store,
    seed_demo,
)
from fieldkit.settings import default_library
from fieldkit.store import open_store


def _sample(name: str) -> Visit:
    visit, _ = read_visit_file(samples_dir() / "visits" / name)
    return visit


def test_a_fresh_demo_store_holds_every_sample_visit_on_known_machines() -> None:
    library = default_library()
    with open_store(demo_store_path()) as store:
        seed_demo(store)
        machines = {s.machine for s in store.list_visits()}
        assert not demo_store_is_stale(store, library)
    assert machines == {"tarnhollow-fellborer", "oskerfield-loamshifter", "brindlecombe-pebblerun"}


def test_a_demo_store_naming_a_machine_the_demo_no_longer_has_is_moved_aside_and_rebuilt() -> None:
    path = demo_store_path()
    old = _sample("fellborer-no-fault.json").model_copy(
        update={"id": "old-visit", "machine": "an-earlier-demo-rig"}
    )
    with open_store(path) as store:
        store.import_visit(old)
        assert demo_store_is_stale(store, default_library())
    kept = retire_demo_store(path)
    assert kept.exists() and not path.exists()
    with open_store(kept) as store:  # the earlier store is kept, untouched, beside the new one
        assert [s.id for s in store.list_visits()] == ["old-visit"]
    with open_store(path) as store:
        seed_demo(store)
        assert "old-visit" not in {s.id for s in store.list_visits()}
        assert not demo_store_is_stale(store, default_library())


def test_the_demo_command_rebuilds_an_outdated_demo_store_before_the_ui_opens(monkeypatch, capsys) -> None:
    from fieldkit import cli

    path = demo_store_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    old = _sample("fellborer-no-fault.json").model_copy(
        update={"id": "old-visit", "machine": "an-earlier-demo-rig"}
    )
    with open_store(path) as store:
        store.import_visit(old)
    seen: list[set[str]] = []

    class _App:
        def run(self) -> None:
            pass

    def fake_make_app(bench, demo: bool) -> _App:  # noqa: ANN001 - stands in for the Textual app
        seen.append({s.machine for s in bench.store.list_visits()})
        return _App()

    monkeypatch.setattr("fieldkit.tui.app.make_app", fake_make_app)
    assert cli.main(["demo"]) == 0
    assert seen and "an-earlier-demo-rig" not in seen[0] and "tarnhollow-fellborer" in seen[0]
    assert "earlier version" in capsys.readouterr().err
    assert list(Path(path.parent).glob(f"{path.name}.replaced-*"))


def test_the_demo_kit_has_serials_and_calibration_dates_and_one_gauge_overdue() -> None:
    """sample_readings/kit.json (invented): every instrument the sample visits use, with a serial
    and a calibration date; G25 was due on 2025-06-30, before the open demo visit of 2025-08-19."""
    with open_store(demo_store_path()) as store:
        seed_demo(store)
        kit = {item.id: item for item in store.kit()}
        used = {g.id for s in store.list_visits() for g in store.get_visit(s.id).gauges}
    assert used <= set(kit)
    assert all(item.serial and item.calibration_due for item in kit.values())
    open_visit_day = dt.date(2025, 8, 19)
    overdue = [i for i, item in kit.items() if calibration_warning(item, open_visit_day)]
    assert overdue == ["G25"]
    assert "calibration was due on 2025-06-30" in calibration_warning(kit["G25"], open_visit_day)

"""Machine profiles through the shop server: one line of edits travels; two edits of the same
version are shown as a conflict and never merged; a person's choice settles it everywhere."""

from __future__ import annotations

from pathlib import Path

import pytest
from pg_cluster import Shop
from shop_builders import laptop

from fieldkit.errors import FieldkitError
from fieldkit.profile_sync import keep, sync_with_profiles
from fieldkit.store.pg_server import ShopServer
from fieldkit.store.replica import Replica
from fieldkit.store.sqlite import SqliteVisitStore

RIG = 'id = "rig-7"\nname = "Fellborer test rig"\nrated_max_pressure = "{p} bar"\n'


def _sync(store: SqliteVisitStore, login: str, shop: Shop, folder: Path) -> list[str]:
    with ShopServer(shop.login(login)) as server:
        report, profiles = sync_with_profiles(store, server, folder)
    return profiles.lines()


def test_profile_edits_travel_and_a_double_edit_is_a_conflict_until_someone_chooses(
    shop: Shop, tmp_path: Path
) -> None:
    ana, ben = shop.add("ana"), shop.add("ben")
    a, b = laptop(tmp_path, "a"), laptop(tmp_path, "b")
    pa, pb = tmp_path / "a-profiles", tmp_path / "b-profiles"
    pa.mkdir()
    (pa / "rig7.toml").write_text(RIG.format(p=250), encoding="utf-8")
    assert _sync(a, ana, shop, pa) == ["profile edits recorded: rig-7"]
    assert _sync(b, ben, shop, pb) == ["profiles updated from the server: rig-7"]
    assert (pb / "rig-7.toml").read_text(encoding="utf-8") == RIG.format(p=250)

    (pb / "rig-7.toml").write_text(RIG.format(p=260), encoding="utf-8")  # one line of edits: no conflict
    _sync(b, ben, shop, pb)
    assert _sync(a, ana, shop, pa) == ["profiles updated from the server: rig-7"]
    assert (pa / "rig7.toml").read_text(encoding="utf-8") == RIG.format(p=260)

    (pa / "rig7.toml").write_text(RIG.format(p=270), encoding="utf-8")  # both offline, same version
    (pb / "rig-7.toml").write_text(RIG.format(p=280), encoding="utf-8")
    _sync(a, ana, shop, pa)
    said = _sync(b, ben, shop, pb)
    assert said[1].startswith("profile 'rig-7' was edited twice from the same version; nothing was merged")
    assert (pb / "rig-7.toml").read_text(encoding="utf-8") == RIG.format(p=280)  # left as it is
    assert any("conflict" in line or "edited twice" in line for line in _sync(a, ana, shop, pa))
    assert (pa / "rig7.toml").read_text(encoding="utf-8") == RIG.format(p=270)

    ana_version = next(
        v for v in Replica(b).profile_versions("rig-7") if v.author == ana and "270" in v.toml_text
    )
    with pytest.raises(FieldkitError, match="no single version 'nope'"):
        keep(Replica(b), pb, "rig-7", "nope")
    keep(Replica(b), pb, "rig-7", ana_version.id[:8])
    assert (pb / "rig-7.toml").read_text(encoding="utf-8") == RIG.format(p=270)
    assert not any("edited twice" in line for line in _sync(b, ben, shop, pb))
    assert _sync(a, ana, shop, pa) == ["profiles updated from the server: rig-7"]
    assert (pa / "rig7.toml").read_text(encoding="utf-8") == RIG.format(p=270)
    texts = [v.toml_text for v in Replica(a).profile_versions("rig-7")]
    assert RIG.format(p=280) in texts  # the version not kept is still in the history


def test_a_broken_profile_file_is_not_sent_and_says_why(shop: Shop, tmp_path: Path) -> None:
    ana = shop.add("ana")
    folder = tmp_path / "profiles"
    folder.mkdir()
    (folder / "broken.toml").write_text('id = "half\n', encoding="utf-8")
    lines = _sync(laptop(tmp_path, "a"), ana, shop, folder)
    assert len(lines) == 1 and lines[0].startswith(
        f"{folder / 'broken.toml'}: not sent: not a readable profile"
    )

"""CI never skips the shop-server tests: .ci/ensure-postgres installs PostgreSQL on a fresh
Debian/Ubuntu machine, and FIELDKIT_REQUIRE_PG=1 (set by .ci/run) turns a missing server into a
failure. A fresh machine cannot be re-made here, so the script runs with a stand-in apt-get (a
shell script that logs what it was asked and "installs" an initdb into a temporary folder) and a
PATH without PostgreSQL."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SCRIPT = ROOT / ".ci" / "ensure-postgres"
#: A PATH with the shell's ordinary tools and no PostgreSQL (this machine has one in /usr/local/bin).
BASE_PATH = "/usr/bin:/bin"

pytestmark = pytest.mark.skipif(
    shutil.which("initdb", path=BASE_PATH) is not None, reason="initdb is in /usr/bin or /bin here"
)


def _tool(folder: Path, name: str, body: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text("#!/bin/sh\n" + body, encoding="utf-8")
    path.chmod(0o755)
    return path


def _fake_apt(tmp_path: Path, *, installs: bool = True) -> tuple[Path, Path]:
    """A stand-in apt-get: logs its arguments and DEBIAN_FRONTEND; 'install' makes an initdb."""
    log, lib = tmp_path / "apt.log", tmp_path / "pglib"
    make = f"mkdir -p {lib}/16/bin && touch {lib}/16/bin/initdb && chmod +x {lib}/16/bin/initdb\n"
    body = f'echo "$DEBIAN_FRONTEND $*" >> {log}\n' + (
        f'case "$1" in install) {make};; esac\n' if installs else ""
    )
    return _tool(tmp_path / "bin", "fake-apt-get", body), log


def _ensure(
    tmp_path: Path, *, uid: int = 0, extra_path: str = "", **env: str
) -> subprocess.CompletedProcess[str]:
    apt, _ = _fake_apt(tmp_path, installs=env.pop("installs", "yes") == "yes")
    full = {
        "PATH": f"{extra_path}:{BASE_PATH}" if extra_path else BASE_PATH,
        "FIELDKIT_PG_LIB": str(tmp_path / "pglib"),
        "FIELDKIT_APT": str(apt),
        "FIELDKIT_CI_UID": str(uid),
        **env,
    }
    return subprocess.run(
        ["bash", str(SCRIPT)], capture_output=True, text=True, env=full, timeout=60, check=False
    )


def test_a_fresh_machine_gets_postgresql_from_apt_get(tmp_path: Path) -> None:
    done = _ensure(tmp_path)
    assert done.returncode == 0, done.stderr
    lines = (tmp_path / "apt.log").read_text().splitlines()
    assert lines == [
        "noninteractive update -qq",
        "noninteractive install -y -qq --no-install-recommends postgresql",
    ]
    assert (tmp_path / "pglib" / "16" / "bin" / "initdb").exists()


def test_a_machine_with_postgresql_is_left_alone(tmp_path: Path) -> None:
    (tmp_path / "pglib" / "15" / "bin").mkdir(parents=True)
    (tmp_path / "pglib" / "15" / "bin" / "initdb").touch()
    done = _ensure(tmp_path)
    assert done.returncode == 0, done.stderr
    assert not (tmp_path / "apt.log").exists()
    assert "server programs are installed" in done.stdout


def test_an_install_that_brings_no_initdb_fails_ci(tmp_path: Path) -> None:
    done = _ensure(tmp_path, installs="no")
    assert done.returncode == 1
    assert "finished but no initdb" in done.stderr


def test_an_ordinary_user_installs_through_sudo(tmp_path: Path) -> None:
    sudo_log = tmp_path / "sudo.log"
    _tool(tmp_path / "sudo-bin", "sudo", f'echo "$*" >> {sudo_log}\nshift\nexec "$@"\n')
    done = _ensure(tmp_path, uid=1000, extra_path=str(tmp_path / "sudo-bin"))
    assert done.returncode == 0, done.stderr
    calls = sudo_log.read_text().splitlines()
    assert len(calls) == 2 and all(c.startswith("-n env DEBIAN_FRONTEND=noninteractive ") for c in calls)
    assert (tmp_path / "apt.log").read_text().splitlines()[1].startswith("noninteractive install")


def test_an_ordinary_user_without_sudo_is_told_what_to_install(tmp_path: Path) -> None:
    if shutil.which("sudo", path=BASE_PATH):
        pytest.skip("sudo is installed here")
    done = _ensure(tmp_path, uid=1000)
    assert done.returncode == 1
    assert "install the 'postgresql' package" in done.stderr
    assert not (tmp_path / "apt.log").exists()


def test_ci_runs_the_script_and_requires_postgresql_before_the_tests() -> None:
    text = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    lines = [line.strip() for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    assert lines.index(".ci/ensure-postgres") < lines.index("export FIELDKIT_REQUIRE_PG=1")
    assert lines.index("export FIELDKIT_REQUIRE_PG=1") < len(lines) - 1
    assert lines[-1].endswith("python -m pytest")
    assert os.access(SCRIPT, os.X_OK)


def _server_test(tmp_path: Path, **env: str) -> subprocess.CompletedProcess[str]:
    """One shop-server test in a fresh pytest, with no PostgreSQL to be found."""
    full = {k: v for k, v in os.environ.items() if k != "FIELDKIT_REQUIRE_PG"}
    full.update(
        PATH=f"{Path(sys.executable).parent}:{BASE_PATH}", FIELDKIT_PG_LIB=str(tmp_path / "none"), **env
    )
    return subprocess.run(
        [
            sys.executable,
            "-m",
            "pytest",
            "-q",
            "-p",
            "no:xdist",
            "-p",
            "no:randomly",
            "tests/server/test_shop_sync.py::test_a_second_sync_with_nothing_new_changes_nothing",
        ],
        cwd=ROOT,
        capture_output=True,
        text=True,
        env=full,
        timeout=300,
        check=False,
    )


def test_without_postgresql_the_server_tests_are_skipped_with_the_reason(tmp_path: Path) -> None:
    done = _server_test(tmp_path)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "1 skipped" in done.stdout
    assert (
        "no PostgreSQL to test the shop server against: no PostgreSQL server programs (initdb)" in done.stdout
    )


def test_with_fieldkit_require_pg_a_missing_postgresql_fails_instead(tmp_path: Path) -> None:
    done = _server_test(tmp_path, FIELDKIT_REQUIRE_PG="1")
    assert done.returncode == 1, done.stdout + done.stderr
    assert "skipped" not in done.stdout
    assert "PostgreSQL is required here (FIELDKIT_REQUIRE_PG=1) but could not start" in done.stdout

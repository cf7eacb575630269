"""A throw-away PostgreSQL cluster for the server tests: initdb in a temporary folder, a unix
socket in that folder (no TCP port at all), stopped and removed afterwards.

PostgreSQL refuses to run as root, so when the tests run as root (CI does) the cluster is made
and run by an unprivileged system user (``postgres``, which the Debian package creates) through
``runuser``. Without PostgreSQL the tests are skipped with the reason, unless
``FIELDKIT_REQUIRE_PG=1`` (set by ``.ci/run``) turns that into a failure.
"""

from __future__ import annotations

import glob
import os
import pwd
import shutil
import subprocess
import tempfile
import uuid
from dataclasses import dataclass
from pathlib import Path

from fieldkit.store.pg_server import add_technician

PORT = 5432


#: Where the distribution keeps PostgreSQL's versions; FIELDKIT_PG_LIB overrides it (the tests of
#: .ci/ensure-postgres and of FIELDKIT_REQUIRE_PG point it at an empty folder).
PG_LIB_ENV = "FIELDKIT_PG_LIB"


def find_bindir() -> Path | None:
    lib = os.environ.get(PG_LIB_ENV, "/usr/lib/postgresql")
    candidates = sorted(
        glob.glob(f"{glob.escape(lib)}/*/bin"),
        key=lambda p: int(p.split("/")[-2]) if p.split("/")[-2].isdigit() else 0,
        reverse=True,
    )
    for found in candidates:
        if Path(found, "initdb").exists():
            return Path(found)
    initdb = shutil.which("initdb")
    return Path(initdb).parent if initdb else None


@dataclass
class Cluster:
    bindir: Path
    folder: Path
    run_as: str | None
    admin: str = "fieldkit_admin"

    @property
    def data(self) -> Path:
        return self.folder / "data"

    def conninfo(self, dbname: str = "postgres", user: str | None = None) -> str:
        return f"host={self.folder} port={PORT} dbname={dbname} user={user or self.admin}"

    def _run(self, *args: str) -> subprocess.CompletedProcess[str]:
        cmd = list(args)
        if self.run_as:
            cmd = ["runuser", "-u", self.run_as, "--", *cmd]
        return subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=False)

    def start(self) -> None:
        done = self._run(
            str(self.bindir / "initdb"),
            "-D",
            str(self.data),
            "-U",
            self.admin,
            "-A",
            "trust",
            "--no-sync",
            "-E",
            "UTF8",
        )
        if done.returncode:
            raise RuntimeError(f"initdb failed: {done.stderr.strip()}")
        options = f"-k {self.folder} -c listen_addresses='' -p {PORT} -c fsync=off -c max_connections=60"
        done = self._run(
            str(self.bindir / "pg_ctl"),
            "-D",
            str(self.data),
            "-o",
            options,
            "-l",
            str(self.folder / "log"),
            "-w",
            "start",
        )
        if done.returncode:
            log = (self.folder / "log").read_text(errors="replace") if (self.folder / "log").exists() else ""
            raise RuntimeError(f"pg_ctl start failed: {done.stderr.strip()} {log[-500:]}")

    def stop(self) -> None:
        self._run(str(self.bindir / "pg_ctl"), "-D", str(self.data), "-m", "immediate", "-w", "stop")
        shutil.rmtree(self.folder, ignore_errors=True)


@dataclass
class Shop:
    cluster: Cluster
    dbname: str

    @property
    def admin_url(self) -> str:
        return self.cluster.conninfo(self.dbname)

    def login(self, name: str) -> str:
        return self.cluster.conninfo(self.dbname, user=name)

    def add(self, base: str, *, supervisor: bool = False) -> str:
        """A new login (unique in the cluster); returns its name."""
        name = f"{base}_{uuid.uuid4().hex[:6]}"
        add_technician(self.admin_url, name, supervisor=supervisor)
        return name


def start_cluster() -> Cluster:
    """A running cluster, or RuntimeError saying why not."""
    bindir = find_bindir()
    if bindir is None:
        raise RuntimeError("no PostgreSQL server programs (initdb) found; install the postgresql package")
    run_as: str | None = None
    if os.geteuid() == 0:
        try:
            pwd.getpwnam("postgres")
        except KeyError:
            raise RuntimeError(
                "running as root and there is no 'postgres' system user to run the server"
            ) from None
        run_as = "postgres"
    folder = Path(tempfile.mkdtemp(prefix="fkpg-", dir="/tmp"))  # short: a socket path has a length limit
    if run_as:
        entry = pwd.getpwnam(run_as)
        os.chown(folder, entry.pw_uid, entry.pw_gid)
    cluster = Cluster(bindir, folder, run_as)
    try:
        cluster.start()
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    return cluster

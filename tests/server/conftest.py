"""Fixtures for the shop-server tests: one PostgreSQL cluster per test process, one fresh
database (a shop) per test, technicians with names unique in the cluster (roles are cluster-wide)."""

from __future__ import annotations

import os
import uuid
from collections.abc import Iterator
from pathlib import Path

import pytest
from pg_cluster import Cluster, Shop, start_cluster

from fieldkit.store.pg_server import connect, init_server


@pytest.fixture(scope="session")
def cluster() -> Iterator[Cluster]:
    try:
        running = start_cluster()
    except RuntimeError as exc:
        if os.environ.get("FIELDKIT_REQUIRE_PG") == "1":
            pytest.fail(f"PostgreSQL is required here (FIELDKIT_REQUIRE_PG=1) but could not start: {exc}")
        pytest.skip(f"no PostgreSQL to test the shop server against: {exc}")
    try:
        yield running
    finally:
        running.stop()


@pytest.fixture
def shop(cluster: Cluster) -> Iterator[Shop]:
    dbname = f"shop_{uuid.uuid4().hex[:10]}"
    with connect(cluster.conninfo(), autocommit=True) as conn:
        conn.execute(f'CREATE DATABASE "{dbname}"')
    init_server(cluster.conninfo(dbname))
    yield Shop(cluster, dbname)
    with connect(cluster.conninfo(), autocommit=True) as conn:
        conn.execute(f'DROP DATABASE "{dbname}" WITH (FORCE)')


@pytest.fixture
def laptop_path(tmp_path: Path) -> Path:
    return tmp_path / "laptops"

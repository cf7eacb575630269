"""The shop server's layout in PostgreSQL: versioned steps, the two group roles and their policies.

The server is PostgreSQL itself; there is no program of ours in front of it. So everything a
technician may or may not do is said here, in the database, where a hand-written query meets
it too:

* Every table is append-only for the technicians: they get SELECT and column-listed INSERT,
  never UPDATE or DELETE. A correction, a deletion, a header edit is a new row.
* A trigger stamps every new row with the login that sent it (``author``/``owner``) and a
  number from one sequence (``server_seq``), taking a transaction-level advisory lock first, so
  rows become visible in number order and a laptop can pull "everything after N" without
  missing a row committed late. The columns it sets are not in the INSERT grant, so nobody can
  forge them.
* Row-level security: members of ``fieldkit_technician`` read everything and insert rows only
  for visits whose ``owner`` they are; members of ``fieldkit_supervisor`` insert for any visit.

Roles are cluster-wide in PostgreSQL: one company per cluster (or database server).
"""

from __future__ import annotations

from dataclasses import dataclass

TECHNICIAN_ROLE = "fieldkit_technician"
SUPERVISOR_ROLE = "fieldkit_supervisor"
GROUP_ROLES = (TECHNICIAN_ROLE, SUPERVISOR_ROLE)
SCHEMA = "fieldkit"
#: The advisory lock key that orders writers (``b"FKSQ"`` as an integer).
SEQ_LOCK = int.from_bytes(b"FKSQ", "big")


@dataclass(frozen=True, slots=True)
class ServerMigration:
    version: int
    why: str
    statements: tuple[str, ...]


_BOTH = f"{TECHNICIAN_ROLE}, {SUPERVISOR_ROLE}"

# Child tables: rows that belong to a visit. (table, columns a client may send)
_CHILDREN = {
    "header_change": "id, visit_id, field, value_json, changed_at, origin",
    "reading": "visit_id, id, test_point, taken_at, replaces, reading_json, origin",
    "reading_deletion": "visit_id, reading_id, deleted_at, origin",
}


def _policies() -> tuple[str, ...]:
    out: list[str] = [
        f"ALTER TABLE {SCHEMA}.visit ENABLE ROW LEVEL SECURITY",
        f"CREATE POLICY read_all ON {SCHEMA}.visit FOR SELECT TO {_BOTH} USING (true)",
        f"CREATE POLICY insert_own ON {SCHEMA}.visit FOR INSERT TO {_BOTH} WITH CHECK (owner = current_user)",
        f"GRANT INSERT (id, machine, origin, created_at) ON {SCHEMA}.visit TO {_BOTH}",
    ]
    for table, columns in _CHILDREN.items():
        out += [
            f"ALTER TABLE {SCHEMA}.{table} ENABLE ROW LEVEL SECURITY",
            f"CREATE POLICY read_all ON {SCHEMA}.{table} FOR SELECT TO {_BOTH} USING (true)",
            f"CREATE POLICY technician_own_visits ON {SCHEMA}.{table} FOR INSERT TO {TECHNICIAN_ROLE} "
            f"WITH CHECK (author = current_user AND {SCHEMA}.owns_visit(visit_id))",
            f"CREATE POLICY supervisor_any_visit ON {SCHEMA}.{table} FOR INSERT TO {SUPERVISOR_ROLE} "
            "WITH CHECK (author = current_user)",
            f"GRANT INSERT ({columns}) ON {SCHEMA}.{table} TO {_BOTH}",
        ]
    return tuple(out)


_V1 = ServerMigration(
    1,
    "visits, header change log, readings, deletions; stamps, roles' rights and row-level security",
    (
        f"CREATE SCHEMA IF NOT EXISTS {SCHEMA}",
        f"""CREATE TABLE {SCHEMA}.schema_version (
            version integer PRIMARY KEY,
            why text NOT NULL,
            applied_at timestamptz NOT NULL DEFAULT now()
        )""",
        f"CREATE TABLE {SCHEMA}.server_info (id text PRIMARY KEY DEFAULT gen_random_uuid()::text)",
        f"INSERT INTO {SCHEMA}.server_info DEFAULT VALUES",
        f"CREATE SEQUENCE {SCHEMA}.change_seq",
        f"""CREATE TABLE {SCHEMA}.visit (
            id text PRIMARY KEY,
            machine text NOT NULL,
            origin text NOT NULL,
            created_at text NOT NULL,
            owner name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now()
        )""",
        f"CREATE INDEX visit_by_machine ON {SCHEMA}.visit (machine, created_at)",
        f"""CREATE TABLE {SCHEMA}.header_change (
            id text PRIMARY KEY,
            visit_id text NOT NULL REFERENCES {SCHEMA}.visit (id),
            field text NOT NULL,
            value_json text NOT NULL,
            changed_at text NOT NULL,
            origin text NOT NULL,
            author name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now()
        )""",
        f"CREATE INDEX header_change_by_visit ON {SCHEMA}.header_change (visit_id)",
        f"""CREATE TABLE {SCHEMA}.reading (
            visit_id text NOT NULL REFERENCES {SCHEMA}.visit (id),
            id text NOT NULL,
            test_point text NOT NULL,
            taken_at text NOT NULL,
            replaces text,
            reading_json text NOT NULL,
            origin text NOT NULL,
            author name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now(),
            PRIMARY KEY (visit_id, id)
        )""",
        f"""CREATE TABLE {SCHEMA}.reading_deletion (
            visit_id text NOT NULL,
            reading_id text NOT NULL,
            deleted_at text NOT NULL,
            origin text NOT NULL,
            author name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now(),
            PRIMARY KEY (visit_id, reading_id, origin),
            FOREIGN KEY (visit_id, reading_id) REFERENCES {SCHEMA}.reading (visit_id, id)
        )""",
        f"""CREATE FUNCTION {SCHEMA}.stamp_visit() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN
            PERFORM pg_advisory_xact_lock({SEQ_LOCK});
            NEW.owner := current_user;
            NEW.server_seq := nextval('{SCHEMA}.change_seq');
            NEW.received_at := now();
            RETURN NEW;
        END $$""",
        f"""CREATE FUNCTION {SCHEMA}.stamp_row() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN
            PERFORM pg_advisory_xact_lock({SEQ_LOCK});
            NEW.author := current_user;
            NEW.server_seq := nextval('{SCHEMA}.change_seq');
            NEW.received_at := now();
            RETURN NEW;
        END $$""",
        f"""CREATE TRIGGER stamp BEFORE INSERT ON {SCHEMA}.visit
            FOR EACH ROW EXECUTE FUNCTION {SCHEMA}.stamp_visit()""",
        *(
            f"""CREATE TRIGGER stamp BEFORE INSERT ON {SCHEMA}.{table}
            FOR EACH ROW EXECUTE FUNCTION {SCHEMA}.stamp_row()"""
            for table in _CHILDREN
        ),
        f"""CREATE FUNCTION {SCHEMA}.owns_visit(visit text) RETURNS boolean LANGUAGE sql STABLE AS $$
            SELECT EXISTS (SELECT 1 FROM {SCHEMA}.visit v WHERE v.id = visit AND v.owner = current_user)
        $$""",
        f"REVOKE ALL ON SCHEMA {SCHEMA} FROM PUBLIC",
        f"GRANT USAGE ON SCHEMA {SCHEMA} TO {_BOTH}",
        f"GRANT SELECT ON ALL TABLES IN SCHEMA {SCHEMA} TO {_BOTH}",
        f"GRANT USAGE ON SEQUENCE {SCHEMA}.change_seq TO {_BOTH}",
        *_policies(),
    ),
)

#: Machine profiles are the company's, not one technician's: any login may add a version (stamped
#: with its name); nobody may change or remove one.
_V2 = ServerMigration(
    2,
    "machine profile versions",
    (
        f"""CREATE TABLE {SCHEMA}.profile_version (
            id text PRIMARY KEY,
            profile_id text NOT NULL,
            parents_json text NOT NULL,
            toml_text text NOT NULL,
            made_at text NOT NULL,
            origin text NOT NULL,
            author name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now()
        )""",
        f"""CREATE TRIGGER stamp BEFORE INSERT ON {SCHEMA}.profile_version
            FOR EACH ROW EXECUTE FUNCTION {SCHEMA}.stamp_row()""",
        f"ALTER TABLE {SCHEMA}.profile_version ENABLE ROW LEVEL SECURITY",
        f"CREATE POLICY read_all ON {SCHEMA}.profile_version FOR SELECT TO {_BOTH} USING (true)",
        f"CREATE POLICY signed ON {SCHEMA}.profile_version FOR INSERT TO {_BOTH} WITH CHECK (author = "
        "current_user)",
        f"GRANT SELECT ON {SCHEMA}.profile_version TO {_BOTH}",
        "GRANT INSERT (id, profile_id, parents_json, toml_text, made_at, origin) ON "
        f"{SCHEMA}.profile_version "
        f"TO {_BOTH}",
    ),
)

#: The gauge kit: append-only versions of kit items (fieldkit.store.kit_log says which stands).
#: A kit belongs to a login (``owner``): a technician adds versions to its own kit only and reads
#: the company's; a supervisor may add to anyone's (by naming the owner). ``author`` is who sent it.
_V3 = ServerMigration(
    3,
    "gauge kit item versions, owned by a login",
    (
        f"""CREATE TABLE {SCHEMA}.kit_item_version (
            id text PRIMARY KEY,
            item_id text NOT NULL,
            item_json text NOT NULL,
            retired_on text,
            changed_at text NOT NULL,
            origin text NOT NULL,
            owner name NOT NULL DEFAULT current_user,
            author name NOT NULL DEFAULT current_user,
            server_seq bigint NOT NULL UNIQUE,
            received_at timestamptz NOT NULL DEFAULT now()
        )""",
        f"CREATE INDEX kit_item_version_by_item ON {SCHEMA}.kit_item_version (owner, item_id)",
        f"""CREATE TRIGGER stamp BEFORE INSERT ON {SCHEMA}.kit_item_version
            FOR EACH ROW EXECUTE FUNCTION {SCHEMA}.stamp_row()""",
        f"ALTER TABLE {SCHEMA}.kit_item_version ENABLE ROW LEVEL SECURITY",
        f"CREATE POLICY read_all ON {SCHEMA}.kit_item_version FOR SELECT TO {_BOTH} USING (true)",
        f"CREATE POLICY technician_own_kit ON {SCHEMA}.kit_item_version FOR INSERT TO {TECHNICIAN_ROLE} "
        "WITH CHECK (author = current_user AND owner = current_user)",
        f"CREATE POLICY supervisor_any_kit ON {SCHEMA}.kit_item_version FOR INSERT TO {SUPERVISOR_ROLE} "
        "WITH CHECK (author = current_user)",
        f"GRANT SELECT ON {SCHEMA}.kit_item_version TO {_BOTH}",
        f"GRANT INSERT (id, item_id, item_json, retired_on, changed_at, origin) ON {SCHEMA}.kit_item_version "
        f"TO {_BOTH}",
        f"GRANT INSERT (owner) ON {SCHEMA}.kit_item_version TO {SUPERVISOR_ROLE}",
    ),
)

SERVER_MIGRATIONS: tuple[ServerMigration, ...] = (_V1, _V2, _V3)


def latest_server_version(migrations: tuple[ServerMigration, ...] = SERVER_MIGRATIONS) -> int:
    return migrations[-1].version if migrations else 0

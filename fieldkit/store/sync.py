"""``fieldkit sync``: the laptop's store and the shop server exchange records by global id.

The rules (also in the README):

* Every record has a global id (visit id; visit id + reading id; header change id; visit id +
  reading id + origin for a deletion) and its origin (the store that made it).
* Readings are append-only; corrections are new readings, deletions are records. Two laptops
  never conflict on them: both sets simply end up on both sides.
* Header fields merge field by field: the newest change wins, ties broken by the change id; the
  losing value stays in the header's change log (:mod:`fieldkit.store.header_log`).
* Kit items (the technician's instruments) travel as versions: every local write is logged and
  sent; the newest version of an item stands, a retirement sticks, the older versions stay as
  history (:mod:`fieldkit.store.kit_log`). A login's kit comes back onto that login's laptops;
  other technicians' kits are kept for reading only.
* Up first, then down. Each batch is one transaction on the receiving side together with its
  cursor (down) or is skipped there by its global ids when sent twice (up), so a sync killed at
  any moment and run again ends where one clean sync would.
* A technician's login may only add to its own visits (row-level security on the server). Edits
  made on this laptop to another technician's visit stay here and are counted in the report.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from fieldkit.store.pg_server import KINDS, VISIT_KINDS, ShopServer
from fieldkit.store.replica import Replica
from fieldkit.store.sqlite import SqliteVisitStore

BATCH = 500

#: ``progress(phase, done, total)``: phase is "up" or "down"; total may grow while pulling.
Progress = Callable[[str, int, int], None]


@dataclass
class SyncReport:
    login: str
    sent: dict[str, int] = field(default_factory=dict)
    received: dict[str, int] = field(default_factory=dict)
    held_back: int = 0
    cursors_reset: bool = False

    def lines(self) -> list[str]:
        out = [f"synced as {self.login}"]
        up = ", ".join(f"{n} {k.replace('_', ' ')}s" for k, n in self.sent.items() if n) or "nothing"
        down = ", ".join(f"{n} {k.replace('_', ' ')}s" for k, n in self.received.items() if n) or "nothing"
        out.append(f"sent: {up}")
        out.append(f"received: {down}")
        if self.held_back:
            out.append(
                f"{self.held_back} change(s) to other technicians' visits stay on this laptop "
                "(only the technician who took a visit, or a supervisor, may change it)"
            )
        if self.cursors_reset:
            out.append("this laptop met a different shop server than last time: everything was offered again")
        return out


def sync(
    store: SqliteVisitStore, server: ShopServer, *, batch: int = BATCH, progress: Progress | None = None
) -> SyncReport:
    """Send what this laptop has that the server lacks, then take what the server has."""
    replica = Replica(store)
    report = SyncReport(server.login.name)
    report.cursors_reset = replica.meet_server(server.server_id, server.login.name)
    _push(replica, server, report, batch, progress)
    _pull(replica, server, report, batch, progress)
    replica.finished()
    return report


def _push(
    replica: Replica, server: ShopServer, report: SyncReport, batch: int, progress: Progress | None
) -> None:
    marks = replica.marks()
    total = sum(replica.status().waiting.values())
    done = 0
    sent_with_visit: set[str] = set()
    report.sent = dict.fromkeys(KINDS, 0)
    for kind in KINDS:
        key = f"push:{kind}"
        while True:
            after = replica.cursor(key)
            rows, last = replica.outgoing(kind, after, marks[kind], batch)
            if not rows:
                break
            keep = rows
            if kind in VISIT_KINDS:
                visit_col = 1 if kind == "header_change" else 0
                visit_ids = sorted({str(r[visit_col]) for r in rows})
                owners = server.owners(visit_ids)
                mine = server.login.supervisor
                allowed = {
                    v for v in visit_ids if mine or owners.get(v, server.login.name) == server.login.name
                }
                keep = [r for r in rows if r[visit_col] in allowed]
            report.held_back += len(rows) - len(keep)
            payload = {kind: keep}
            if kind == "visit":
                changes = replica.header_changes_of([str(r[0]) for r in keep])
                payload["header_change"] = changes
                sent_with_visit.update(str(c[0]) for c in changes)
                report.sent["header_change"] += len(changes)
            elif kind == "header_change":
                payload[kind] = [r for r in keep if str(r[0]) not in sent_with_visit]
            server.push(payload)
            replica.sent(kind, last, server.login.name)
            report.sent[kind] += len(payload[kind])
            done += len(rows)
            if progress:
                progress("up", done, max(total, done))


def _pull(
    replica: Replica, server: ShopServer, report: SyncReport, batch: int, progress: Progress | None
) -> None:
    own = replica.store.origin
    done = 0
    with server.pulling() as snap:
        total = snap.count_after({kind: replica.cursor(f"pull:{kind}") for kind in KINDS}, own)
        # This laptop's own records need not come back down, unless the server holds more of them
        # than the laptop does: a store restored from a backup gets back what it made since.
        skip = {
            kind: own if kind != "visit" and snap.count_from(kind, own) <= replica.own_count(kind) else None
            for kind in KINDS
        }
        for kind in KINDS:
            key = f"pull:{kind}"
            report.received[kind] = 0
            while True:
                after = replica.cursor(key)
                rows = snap.fetch(kind, after, batch, skip_origin=skip[kind])
                if not rows:
                    break
                last = int(rows[-1][-1])
                if kind == "visit":
                    changes = snap.header_changes_of([str(r[0]) for r in rows])
                    report.received[kind] += replica.take_visits(rows, changes, key, last)
                elif kind == "header_change":
                    replica.take_header_changes(rows, key, last)
                    report.received[kind] += len(rows)
                elif kind == "reading":
                    report.received[kind] += replica.take_readings(rows, key, last)
                elif kind == "profile_version":
                    report.received[kind] += replica.take_profile_versions(rows, key, last)
                elif kind == "kit_item_version":
                    report.received[kind] += replica.take_kit_versions(rows, server.login.name, key, last)
                else:
                    replica.take_deletions(rows, key, last)
                    report.received[kind] += len(rows)
                done += len(rows)
                if progress:
                    progress("down", done, max(total, done))

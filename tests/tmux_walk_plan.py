"""Prepare tests/tmux_walk.sh: one store per machine (the bundled demo profiles and a profile
built from each circuit template), each with one open visit carrying the gauge kit, and a plan
of what to type at every test point and what the screen must answer.

    python tests/tmux_walk_plan.py WORKDIR    # writes WORKDIR/profiles, WORKDIR/*.sqlite3, WORKDIR/plan.tsv
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

from entry.every_point import GAUGE_KIT, inputs_for, open_visits, write_template_profiles  # noqa: E402

from fieldkit.session import Workbench  # noqa: E402

#: What the screen must answer to each kind of input (see tests/entry/test_every_point_walk.py).
EXPECT = {
    "typical": "ok|ask",
    "other-system": "ok|ask",
    "beyond-gauge": "ask",
    "large, nothing to judge it by": "ok",
    "wrong-kind": "error",
    "garbage": "error",
    "extreme": "error",
}


def main(work: Path) -> None:
    profiles = work / "profiles"
    write_template_profiles(profiles)
    lines = []
    probe = Workbench.open(work / "probe.sqlite3", profile_dirs=[profiles])
    ids = probe.library.ids()
    probe.close()
    for pid in ids:
        bench = Workbench.open(work / f"{pid}.sqlite3", profile_dirs=[profiles])
        visits = open_visits(bench)
        for key in list(visits):
            if key != pid:  # one open visit per store: 'r' resumes it
                bench.store.close_visit(visits[key], "not walked in this store")
        profile = bench.library.get(pid)
        for _c, point in profile.all_test_points():
            fitting = [g for g in GAUGE_KIT if g.kind is point.kind]
            largest = max(fitting, key=lambda g: g.full_scale.to_base_units().magnitude) if fitting else None
            for typed in inputs_for(point, largest):  # past the largest gauge: past whichever is chosen
                lines.append(f"{pid}\t{point.id}\t{typed.what}\t{typed.text}\t{EXPECT[typed.what]}")
        bench.close()
    (work / "plan.tsv").write_text("\n".join(lines) + "\n", encoding="utf-8")


if __name__ == "__main__":
    main(Path(sys.argv[1]))

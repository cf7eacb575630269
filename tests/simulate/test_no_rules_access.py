"""The simulator writes readings from physics alone: it never opens anything under rules/.

Loading a profile merges circuit templates from rules/templates; that is the profile loader's
job and happens before the audit starts. From then on, importing the simulator and simulating
every fault on every demo machine must open no path under rules/.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

CHILD = textwrap.dedent(
    """
    import json, sys
    from pathlib import Path
    from fieldkit.model.loading import ProfileLibrary
    from fieldkit.resources import rules_dir, samples_dir

    profiles = ProfileLibrary([samples_dir() / "profiles"], rules_dir() / "templates").profiles()
    rules = str(rules_dir().resolve())
    opened = []

    def audit(event, args):
        if event == "open" and args and isinstance(args[0], (str, bytes, Path)):
            path = args[0].decode() if isinstance(args[0], bytes) else str(args[0])
            opened.append(str(Path(path).resolve()) if path else path)

    sys.addaudithook(audit)
    from fieldkit.simulate.simulator import Simulator
    from fieldkit.simulate.faults import FAULTS

    count = 0
    for profile in profiles:
        sim = Simulator(profile)
        for fault in [None, *sim.injectable()]:
            sim.simulate(fault, 1.0, 5).visit.model_dump_json()
            count += 1
    if "--control" in sys.argv:  # a deliberate read, to show the audit would catch one
        (rules_dir() / "faults.toml").read_text(encoding="utf-8")
    print(json.dumps({"rules": rules, "opened": opened, "visits": count,
                      "diagnosis_loaded": "fieldkit.diagnosis.engine" in sys.modules}))
    """
)


def _run(*flags: str) -> dict:
    done = subprocess.run(
        [sys.executable, "-c", CHILD, *flags], capture_output=True, text=True, timeout=300, check=True
    )
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_simulator_never_opens_anything_under_rules():
    result = _run()
    assert result["visits"] > 30
    assert result["opened"], "the audit hook saw no file opened at all: it is not working"
    under_rules = [p for p in result["opened"] if p.startswith(result["rules"])]
    assert under_rules == []
    assert not result["diagnosis_loaded"]  # nor does it pull in the rule engine


def test_the_audit_catches_a_read_under_rules():
    result = _run("--control")
    assert any(p.startswith(result["rules"]) for p in result["opened"])

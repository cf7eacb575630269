"""A valve bank's repeated work sections: a machine with fewer omits the later sections' points."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.model.loading import load_templates
from fieldkit.resources import rules_dir

SECTIONS_LINE = 'sections = [["s1_a", "s1_b"], ["s2_a", "s2_b"], ["s3_a", "s3_b"]]'


def test_the_valve_bank_counts_its_sections_from_what_a_machine_omits() -> None:
    tmpl, _raw = load_templates(rules_dir() / "templates")["open_centre_sections"]
    assert len(tmpl.sections) == 3
    assert tmpl.sections_fitted([]) == 3
    assert tmpl.sections_fitted(["s3_a", "s3_b"]) == 2
    assert tmpl.sections_fitted(["s3_a"]) == 3  # one port of section 3 left out: still three sections
    assert tmpl.sections_fitted(["s2_a", "s2_b", "s3_a", "s3_b", "pump_flow"]) == 1


def test_a_section_naming_a_point_the_template_lacks_is_an_error_with_file_and_line(tmp_path: Path) -> None:
    folder = tmp_path / "templates"
    shutil.copytree(rules_dir() / "templates", folder)
    path = folder / "open_centre_sections.toml"
    text = path.read_text(encoding="utf-8")
    assert SECTIONS_LINE in text
    path.write_text(text.replace(SECTIONS_LINE, 'sections = [["s1_a", "s1_b"], ["s4_a"]]'), encoding="utf-8")
    with pytest.raises(FieldkitError) as err:
        load_templates(folder)
    message = str(err.value)
    line = next(i for i, row in enumerate(text.splitlines(), start=1) if row.startswith("sections ="))
    assert "open_centre_sections.toml" in message and "s4_a" in message
    assert f":{line}" in message or f"line {line}" in message, message

"""The text and Markdown job cards of the worn-charge-pump demo visit, byte for byte.

Golden files (syrupy, one file per card under ``__snapshots__``): any change to what a card says
or how it is laid out fails here. The meaning is checked by the other tests of this folder; these
only make every change visible in review. After a deliberate change, regenerate them
(DEVELOPERS.md, "Snapshots and golden files") and read the diff before committing.
"""

from __future__ import annotations

import pytest
from syrupy.extensions.single_file import SingleFileSnapshotExtension, WriteMode

from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.report.build import job_card
from fieldkit.report.jobcard import render_card


class _TextFile(SingleFileSnapshotExtension):
    _write_mode = WriteMode.TEXT


class _Markdown(_TextFile):
    _file_extension = "md"


class _PlainText(_TextFile):
    _file_extension = "txt"


@pytest.mark.parametrize(("fmt", "extension"), [("text", _PlainText), ("markdown", _Markdown)])
def test_the_job_card_reads_as_its_golden_file(
    worn: tuple[Visit, MachineProfile, Diagnosis], snapshot, fmt: str, extension: type
) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    text = render_card(card, fmt).decode("utf-8")
    assert text.strip(), "a job card has something to say"
    assert text == snapshot(extension_class=extension)

"""Registers tests/diagnosis/helpers.py as the module ``diagnosis_helpers``: test folders run
without packages here, so a plain ``helpers`` could be shadowed by another folder's module."""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

_NAME = "diagnosis_helpers"

if _NAME not in sys.modules:
    _spec = importlib.util.spec_from_file_location(_NAME, Path(__file__).with_name("helpers.py"))
    assert _spec is not None and _spec.loader is not None
    _module = importlib.util.module_from_spec(_spec)
    sys.modules[_NAME] = _module
    _spec.loader.exec_module(_module)

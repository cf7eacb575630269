"""Shared model configuration: strict files, no unknown keys, a schema version."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict

#: Bumped when a saved visit or profile changes shape; the store migrates older ones.
SCHEMA_VERSION = 1


class Strict(BaseModel):
    """Unknown keys are mistakes (a misspelt ``expeced``), never silently ignored."""

    model_config = ConfigDict(extra="forbid", arbitrary_types_allowed=True, str_strip_whitespace=True)

"""The one pydantic base every record model shares.

Kept apart from records.py so the run models and the outcome models
(outcome_records.py) refuse unknown fields and strip text the same way
without importing each other.
"""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict


class RecordModel(BaseModel):
    """Unknown fields are refused, so a misspelt key is an error, never silently dropped."""

    model_config = ConfigDict(extra="forbid", str_strip_whitespace=True, validate_assignment=False)

"""Kept for imports written before the readers moved: see :mod:`protolint.data`."""

from __future__ import annotations

from protolint.data import read_rating_table as read_table
from protolint.data.table import RatingTable

__all__ = ["RatingTable", "read_table"]

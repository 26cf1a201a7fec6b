"""Bulk work on a workbook with Python's cycle collector paused.

Reading, planning and writing a large workbook create hundreds of thousands of
objects that live on (cells, formulas, units, edits) and almost no reference
cycles. The cycle collector scans every tracked object each time a generation
fills, so its cost grows with the objects already built: about a third of the
time of a workbook at the formula-cell limit went into full collections that
found nothing. While paused, objects are still freed the moment their last
reference goes; the collector is back as it was when the block ends, even on
an error. The work inside is bounded by the file limits (:mod:`udfs.xlsx.guard`),
so the pause is too.

>>> import gc
>>> with collector_paused():
...     gc.isenabled()
False
>>> gc.isenabled()
True
"""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["collector_paused"]


@contextmanager
def collector_paused() -> Iterator[None]:
    """Pause automatic cycle collection for the block (nested blocks are fine)."""
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()

"""The cyclic garbage collector during long work that makes many small objects.

Python's cyclic collector runs after every so many new container objects, and its
oldest generation's collections walk every object the process holds: at a ranking of
a whole library that is the library's parts, the design, numpy's and pydantic's
objects, again and again (measured on ranking 1,000 SPI parts at the demo's display
position: 3.4-4.2 ms a candidate with the collector as it is, 3.0-3.3 ms with the
objects that existed before set aside).  :func:`older_objects_aside` moves the objects
that exist when it starts out of the collector's sight (:func:`gc.freeze`) and puts
them back when it ends (:func:`gc.unfreeze`): objects made inside the block are
collected as before, so garbage cycles made by the work are still freed; objects from
before the block are freed by reference counting as always, only a cycle among them
waits for the block's end.

The command line turns the collector off for the whole process
(:func:`pinlib.cli.entry`); this is for callers in a process that goes on (the Python
API, the notebooks).
"""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["older_objects_aside"]


@contextmanager
def older_objects_aside() -> Iterator[bool]:
    """Set the objects that exist now aside from the cyclic collector until the block
    ends.

    Yields
    ------
    bool
        Whether they were set aside: not when the collector is off (nothing to spare)
        or when some objects were already set aside by the caller (a
        :func:`gc.freeze` of its own, which the block's end must not undo). [1]
    """
    if not gc.isenabled() or gc.get_freeze_count():
        yield False
        return
    gc.freeze()
    try:
        yield True
    finally:
        gc.unfreeze()

"""The cyclic garbage collector paused while a step makes many objects that live on.

Python's cyclic collector runs whenever enough objects have been made since its last pass, and each pass over
the older generations looks at every object that has survived so far. A step that builds a large structure
which survives (a 10,000-bus site read from its files; an uncertainty chunk's many short-lived objects) then
pays passes over a heap that keeps growing: time that grows faster than the work (measured: a quarter of the
time to read a 10,000-bus site). Pausing the collector for the step leaves the objects to reference counting
(none of these steps makes reference cycles it relies on the collector to free) and restores it as it was.
"""

from __future__ import annotations

import contextlib
import gc


@contextlib.contextmanager
def collector_paused():
    """The cyclic garbage collector paused within the block, and restored as it was after it."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()

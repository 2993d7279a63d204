"""What a study remembers about a site while the site lives.

Some work depends on the site alone, not on the scenario: the branches no scenario changes, the LU factors
of a network part several scenarios share. :func:`site_memory` gives a dict per site and purpose, kept while
the site object lives (an uncertainty run's stacked site: one chunk) and dropped with it; nothing is stored on
the site itself (a site is sent to other processes as it is).
"""

from __future__ import annotations

import weakref

#: (purpose, id(site)) -> (weak reference to the site, its dict).
_MEMORY = {}


def site_memory(purpose, site):
    """The dict ``purpose`` of ``site``: the same dict for the same site object while it lives [-]."""
    key = (purpose, id(site))
    entry = _MEMORY.get(key)
    if entry is not None and entry[0]() is site:
        return entry[1]
    memory = {}
    _MEMORY[key] = (weakref.ref(site, lambda _, key=key: _MEMORY.pop(key, None)), memory)
    return memory

"""Many variants of one site run as one study: the sample axis of an uncertainty run.

The variants (samples of :func:`arcflash.study.uncertainty.sample_site`) are put side by side as one site
of disconnected copies: every element's id gets the copy's suffix, and so does every reference to an id
(buses of sources and branches, branches and buses of devices, the elements a scenario names). One study of
that site solves the faults, follows the clearing stage by stage and evaluates every arc of every copy in
the same array operations, so a chunk of samples costs one study's overhead, not one per sample.

Nothing in a copy's arithmetic depends on the other copies: the fault solve keeps the parts of a network
apart (node by node where it is radial, part by part where it has loops: :mod:`arcflash.models.network`),
the staged clearing factorises each connected part on its own (:mod:`arcflash.models.network_stages`), and
every other step works row by row; so each copy's results equal, bit for bit, those of its variant studied
alone (tested).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass, field

#: Per section, the fields holding ids of other elements (a list or one id).
REFERENCES = {
    "buses": ("arc_not_cleared_by",), "utilities": ("bus",), "generators": ("bus",), "motors": ("bus",),
    "transformers": ("primary_bus", "secondary_bus"), "cables": ("from_bus", "to_bus"),
    "impedances": ("from_bus", "to_bus"), "switches": ("from_bus", "to_bus"), "devices": ("branch", "at_bus"),
}

#: Scenario fields naming elements.
SCENARIO_REFERENCES = ("close", "open", "generators_running", "generators_stopped", "utilities_off",
                       "motors_off", "energy_reducing_maintenance_switching")

#: What joins an id and its copy's number (a character no id of the site data is expected to hold).
SEPARATOR = "\x1f"

#: Buses in one stacked site at most [-]: a chunk of samples of a large site is studied in several stacks.
#: Each stack has a fixed cost (a plain study's work done once), shared by its copies.
STACK_BUSES = 20000
#: A site of more buses is stacked alone, one copy a stack [-]: a network part that large may solve several
#: right-hand sides in one call (:data:`arcflash.models.network_factors.COLUMNS_TOGETHER_ROWS`), which must
#: never depend on what else shares its stack.
ALONE_BUSES = 2000


def tagged(ident, copy):
    """The id of ``ident`` in copy number ``copy``."""
    return f"{ident}{SEPARATOR}{copy}"


@dataclass(frozen=True, eq=False)
class Stack:
    """What a stacked site is made of: the ``base`` site and its variants (``copies``, in copy order), each
    variant holding the base's own element objects wherever it leaves them unchanged; ``memory`` holds
    what the study builds from them once (:mod:`.stack_tiling`)."""

    base: object
    copies: tuple
    memory: dict = field(default_factory=dict)


def stacked_site(sites, base=None):
    """One site holding every site of ``sites`` (variants of one site: the same ids, scenarios and curves)
    as disconnected copies, copy k's ids tagged with k (:func:`tagged`). With ``base`` (the site they are
    variants of, sharing its unchanged elements), the stacked site records them (:class:`Stack`) and the
    study builds its network arrays and equipment copy by copy from the base's (:mod:`.stack_tiling`)."""
    first = sites[0]
    if base is None:
        sections = {name: _tagged_section(sites, name) for name in REFERENCES}
    else:  # the study reads the arrays built from the base site; the elements are tagged if ever read
        sections = {name: _LazySection(sites, name) for name in REFERENCES}
    scenarios = {
        name: scenario.model_copy(update={
            **{field: [tagged(v, copy) for copy in range(len(sites)) for v in getattr(scenario, field)]
               for field in SCENARIO_REFERENCES},
            "maintenance_mode": None})
        for name, scenario in first.scenarios.items()}
    return dataclasses.replace(first, **sections, scenarios=scenarios, origin={},
                               stack=None if base is None else Stack(base, tuple(sites)))


def _tagged_section(sites, name):
    """Section ``name`` of the stacked site: every site's elements, copy by copy, tagged."""
    fields, into = REFERENCES[name], {}
    ends = (getattr(sites[0], name), getattr(sites[-1], name))
    for copy, site in enumerate(sites):
        for ident, element in getattr(site, name).items():
            # Remembered only if the samples share it (a sampled element is met once).
            shared = len(sites) > 1 and ends[0].get(ident) is element and ends[1].get(ident) is element
            into[tagged(ident, copy)] = _tagged_element(element, copy, fields, shared)
    return into


class _LazySection(Mapping):
    """A section of a stacked site, tagged (:func:`_tagged_section`) when first read."""

    def __init__(self, sites, name):
        self._sites, self._name, self._made = sites, name, None

    def _section(self):
        if self._made is None:
            self._made = _tagged_section(self._sites, self._name)
        return self._made

    def __getitem__(self, key):
        return self._section()[key]

    def __iter__(self):
        return iter(self._section())

    def __len__(self):
        return len(self._section())


#: Tagged copies made so far: (id of the element, copy) -> (element, its copy). An element the samples leave
#: unchanged (the site's own object) is tagged once per copy number, not once per stack, and stays the same
#: object from stack to stack (so what is remembered by identity, such as a device's clearing thresholds, is
#: found again). The entry keeps the element alive, so its identity is not reused while it is kept.
_TAGGED = {}
_TAGGED_KEPT = 100_000


def _tagged_element(element, copy, fields, remember):
    """``element`` with its id and the ids it refers to (``fields``) tagged with ``copy`` (kept for the next
    stack with ``remember``)."""
    known = _TAGGED.get((id(element), copy)) if remember else None
    if known is not None and known[0] is element:
        return known[1]
    update = {"id": tagged(element.id, copy)}
    for name in fields:
        value = getattr(element, name)
        update[name] = [tagged(v, copy) for v in value] if isinstance(value, list) else tagged(value, copy)
    made = element.replaced(update)
    if not remember:
        return made
    if len(_TAGGED) >= _TAGGED_KEPT:
        _TAGGED.clear()
    _TAGGED[(id(element), copy)] = (element, made)
    return made


def stack_size(site):
    """Copies of ``site`` in one stacked site (:data:`STACK_BUSES` buses at most, one copy at least; one for
    a site of more than :data:`ALONE_BUSES` buses) [-]."""
    buses = max(1, len(site.buses))
    return 1 if buses > ALONE_BUSES else max(1, STACK_BUSES // buses)

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
STACK_BUSES = 4000


def tagged(ident, copy):
    """The id of ``ident`` in copy number ``copy``."""
    return f"{ident}{SEPARATOR}{copy}"


def stacked_site(sites):
    """One site holding every site of ``sites`` (variants of one site: the same ids, scenarios and curves)
    as disconnected copies, copy k's ids tagged with k (:func:`tagged`)."""
    first = sites[0]
    sections = {name: {} for name in REFERENCES}
    for copy, site in enumerate(sites):
        for name, fields in REFERENCES.items():
            into = sections[name]
            ends = (getattr(sites[0], name), getattr(sites[-1], name))
            for ident, element in getattr(site, name).items():
                # Remembered only if the samples share it (a sampled element is met once).
                shared = len(sites) > 1 and ends[0].get(ident) is element and ends[1].get(ident) is element
                into[tagged(ident, copy)] = _tagged_element(element, copy, fields, shared)
    scenarios = {
        name: scenario.model_copy(update={
            **{field: [tagged(v, copy) for copy in range(len(sites)) for v in getattr(scenario, field)]
               for field in SCENARIO_REFERENCES},
            "maintenance_mode": None})
        for name, scenario in first.scenarios.items()}
    return dataclasses.replace(first, **sections, scenarios=scenarios, origin={})


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
    for field in fields:
        value = getattr(element, field)
        update[field] = [tagged(v, copy) for v in value] if isinstance(value, list) else tagged(value, copy)
    made = element.replaced(update)
    if not remember:
        return made
    if len(_TAGGED) >= _TAGGED_KEPT:
        _TAGGED.clear()
    _TAGGED[(id(element), copy)] = (element, made)
    return made


def stack_size(site):
    """Copies of ``site`` in one stacked site (:data:`STACK_BUSES` buses at most, one copy at least) [-]."""
    return max(1, STACK_BUSES // max(1, len(site.buses)))

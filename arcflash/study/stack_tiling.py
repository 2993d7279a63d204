"""The arrays of a stacked site built copy by copy from its base site's (an uncertainty run's chunk).

A stacked site (:mod:`.stacking`) holds many variants of one site; each variant keeps the base site's own
element objects wherever the sample leaves them unchanged. Its network arrays and equipment table are
those of the base site repeated once per copy (bus numbers shifted, ids tagged), with the values of the
elements a copy changes computed again for that copy, by the very functions the study uses for any site
(:mod:`.faults`, :func:`.arcing.equipment_row`): the same numbers, in the same order, as building them from
the stacked site element by element (tested), in a fraction of the time.

Order of the stacked site's elements (:func:`.stacking.stacked_site`): each section holds copy 0's elements,
then copy 1's, and so on; the network's branches are the sections one after another (transformers,
cables, impedances, closed switches), its shunts likewise (utilities, generators, motors).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..models.network_tiles import Tiling
from .device_bank import DeviceBank
from .stacking import tagged

#: Tagged id lists kept (by the base ids and the number of copies) [-].
_IDS_KEPT = 64
_IDS = {}


def tagged_ids(ids, copies):
    """``ids`` tagged copy by copy (copy 0's, then copy 1's, ...), remembered: every scenario and every stack
    of a run asks for the same lists [-]."""
    key = (tuple(ids), copies)
    found = _IDS.get(key)
    if found is None:
        if len(_IDS) >= _IDS_KEPT:
            _IDS.clear()
        found = _IDS[key] = [tagged(ident, copy) for copy in range(copies) for ident in ids]
    return found


def _changed(stack, section):
    """Per copy, the ids of ``section`` whose element the copy changed (remembered on the stack) [-]."""
    key = ("changed", section)
    if key not in stack.memory:
        base = getattr(stack.base, section)
        stack.memory[key] = [[ident for ident, element in getattr(copy, section).items() if element is not base[ident]]
                             for copy in stack.copies]
    return stack.memory[key]


def _values(stack, section, ids, base_values, value_of, variant):
    """(copies, len(ids)) values of the elements ``ids`` of ``section``: the base's, and ``value_of(copy site,
    element)`` for those a copy changed; remembered on the stack by ``variant`` (what else the values depend
    on: the side of the transformers' tolerance, the utilities' level), as scenarios share them."""
    key = ("values", section, variant, tuple(ids))
    if key not in stack.memory:
        stack.memory[key] = _computed(stack, section, ids, base_values, value_of)
    return stack.memory[key]


def _computed(stack, section, ids, base_values, value_of):
    """The work of :func:`_values`."""
    values = np.tile(np.asarray(base_values, dtype=complex), (len(stack.copies), 1))
    where = {ident: j for j, ident in enumerate(ids)}
    for k, changed in enumerate(_changed(stack, section)):
        copy = stack.copies[k]
        for ident in changed:
            j = where.get(ident)
            if j is not None:
                values[k, j] = value_of(copy, getattr(copy, section)[ident])
    return values


def stacked_network(site, scenario):
    """:func:`~arcflash.study.faults.build_network` of a stacked site (``site.stack`` set), built copy by copy
    from its base site's network (see the module docstring)."""
    from .faults import (NetworkArrays, SWITCH_Z_PU, build_network, cable_z_pu, impedance_z_pu, machine_z_pu,
                         transformer_z_pu, utility_z_pu)

    stack = site.stack
    base = build_network(stack.base, stack.base.scenario(scenario.name))
    copies, n = len(stack.copies), len(base.bus_ids)
    side = scenario.transformer_z_side
    branch_value = {
        "transformers": lambda copy, t: transformer_z_pu(copy, t, side),
        "cables": cable_z_pu,
        "impedances": impedance_z_pu,
        "switches": lambda copy, s: SWITCH_Z_PU,
    }
    shunt_value = {
        "utilities": lambda copy, u: utility_z_pu(copy, u, scenario),
        "generators": machine_z_pu,
        "motors": machine_z_pu,
    }

    variant = {"transformers": side, "utilities": scenario.utility}

    def tiled(ids, ends, values, sections, value_of):
        """Stacked ids, bus numbers of ``ends`` and values (None: none), section by section, and each base
        entry's position in the stacked arrays for copy 0 with the step between copies."""
        out_ids, out_ends, out_values = [], [[] for _ in ends], []
        start_of, step_of = np.zeros(len(ids), dtype=np.intp), np.zeros(len(ids), dtype=np.intp)
        lo = position = 0
        shift = (np.arange(copies, dtype=np.intp) * n)[:, None]
        for section, width in sections:
            hi = lo + width
            out_ids += tagged_ids(ids[lo:hi], copies)
            for into, end in zip(out_ends, ends):
                into.append((end[lo:hi][None, :] + shift).ravel())
            if values is not None:
                out_values.append(_values(stack, section, ids[lo:hi], values[lo:hi], value_of[section],
                                          variant.get(section)).ravel())
            start_of[lo:hi] = position + np.arange(width)
            step_of[lo:hi] = width
            position += width * copies
            lo = hi
        empty = np.zeros(0, dtype=np.intp)
        return (out_ids, [np.concatenate(e) if e else empty for e in out_ends],
                np.concatenate(out_values) if out_values else np.zeros(0, dtype=complex), start_of, step_of)

    branch_ids, (branch_from, branch_to), branch_z, branch_start, branch_step = tiled(
        base.branch_ids, (base.branch_from, base.branch_to), base.branch_z_pu, base.branch_sections, branch_value)
    shunt_ids, (shunt_bus,), shunt_z, _, _ = tiled(base.shunt_ids, (base.shunt_bus,), base.shunt_z_pu,
                                                    base.shunt_sections, shunt_value)
    source_ids, (source_bus,), _, _, _ = tiled(base.source_ids, (base.source_bus,), None, base.shunt_sections[:2],
                                               None)
    copy = np.arange(copies, dtype=np.intp)[:, None]
    device_branch = branch_start[base.device_branch][None, :] + copy * branch_step[base.device_branch][None, :]
    return NetworkArrays(
        bus_ids=tagged_ids(base.bus_ids, copies),
        base_kv=np.tile(base.base_kv, copies),
        branch_ids=branch_ids,
        branch_from=branch_from,
        branch_to=branch_to,
        branch_z_pu=branch_z,
        shunt_ids=shunt_ids,
        shunt_bus=shunt_bus,
        shunt_z_pu=shunt_z,
        source_ids=source_ids,
        source_bus=source_bus,
        device_ids=tagged_ids(base.device_ids, copies),
        device_branch=device_branch.ravel(),
        device_kv=np.tile(base.device_kv, copies),
        branch_sections=tuple((section, count * copies) for section, count in base.branch_sections),
        shunt_sections=tuple((section, count * copies) for section, count in base.shunt_sections),
        tiling=Tiling(copies, n, branch_start, branch_step, len(base.device_ids)),
    )


def stacked_equipment(site):
    """:func:`~arcflash.study.arcing.equipment_table` of a stacked site (``site.stack`` set): the base site's
    rows once per copy, a bus a copy changed (its gap or working distance) computed again."""
    from .arcing import equipment_row, equipment_table
    from .faults import bus_index

    stack = site.stack
    if "equipment" not in stack.memory:
        base = equipment_table(stack.base)
        copies = len(stack.copies)
        table = pd.DataFrame({column: np.tile(base[column].to_numpy(), copies) for column in base.columns},
                             index=bus_index(tagged_ids(list(base.index), copies)))
        table = table.astype(base.dtypes.to_dict())
        position = {ident: j for j, ident in enumerate(base.index)}
        for k, changed in enumerate(_changed(stack, "buses")):
            for ident in changed:
                row = equipment_row(stack.copies[k].buses[ident])
                table.iloc[k * len(base) + position[ident], [table.columns.get_loc(c) for c in row]] = list(row.values())
        stack.memory["equipment"] = table
    return stack.memory["equipment"]


def stacked_bank(site, scenario, device_ids):
    """:func:`~arcflash.study.device_bank.device_bank` of a stacked site (``site.stack`` set): the base site's
    bank repeated once per copy, with the trip units, curve positions and thresholds of the devices a copy
    changed (their place in their band) taken from one bank of every changed device of the stack
    (:func:`_changed_bank`, made once for all the stack's scenarios; remembered on the stack)."""
    from .device_bank import device_bank
    from .faults import build_network

    stack = site.stack
    chosen = stack.base.scenario(scenario.name)
    ids = build_network(stack.base, chosen).device_ids
    copies = len(stack.copies)
    assert len(device_ids) == copies * len(ids), "a stacked site's devices are its base's, copy by copy"
    maintenance = frozenset(chosen.energy_reducing_maintenance_switching)
    key = ("bank", tuple(ids), maintenance)  # what a bank depends on: scenarios alike in these share it
    if key in stack.memory:
        return stack.memory[key]
    base = device_bank(stack.base, chosen, ids)
    bank = object.__new__(_TiledBank)
    bank._base, bank._copies = base, copies
    bank.kind = np.tile(base.kind, copies)
    counts = [int(np.count_nonzero(base.kind == code)) for code in range(3)]
    step = np.array(counts, dtype=np.intp)[base.kind]
    bank.row = (base.row[None, :] + np.arange(copies, dtype=np.intp)[:, None] * step[None, :]).ravel()

    def repeated(parameters):  # the parameters themselves (the curves' own derived arrays are made again)
        return None if parameters is None else {name: np.tile(values, (copies,) + (1,) * (values.ndim - 1))
                                                for name, values in parameters.items() if isinstance(name, str)}

    bank.relays, bank.units = repeated(base.relays), repeated(base.units)
    bank.curve_names, bank.curves = base.curve_names, base.curves
    bank.point_curve = np.tile(base.point_curve, copies)
    bank.curve_position = np.tile(base.curve_position, copies)
    copy_of, idents, _, plain = _changed_bank(stack, frozenset())  # every changed device, maintenance off
    position = {ident: j for j, ident in enumerate(ids)}
    j = np.array([position.get(ident, -1) for ident in idents], dtype=np.intp)
    on = np.array([ident in maintenance for ident in idents], dtype=bool) if maintenance else np.zeros(j.size, bool)
    bank._parts = []  # (bank of changed devices, their rows in it, their positions in this bank)
    for chosen_on in (False, True):
        changed = np.flatnonzero((j >= 0) & (on == chosen_on))
        if not changed.size:
            continue
        if chosen_on:  # with their maintenance settings on: a bank of their own (its rows: these, in order)
            source = _changed_bank(stack, frozenset(idents[e] for e in changed.tolist()))[3]
            assert np.array_equal(source.entries, changed)
            rows = np.arange(changed.size)
        else:
            source, rows = plain, changed
        at = copy_of[changed] * len(ids) + j[changed]
        if not _tileable(base, j[changed], source, rows):  # a changed kind, curve or relay layout (a
            # mitigation candidate, not an uncertainty sample): the bank built device by device
            stack.memory[key] = DeviceBank(site, scenario, device_ids)
            return stack.memory[key]
        for group, code in (("relays", 0), ("units", 1)):
            picked = source.kind[rows] == code
            if picked.any():
                mine, theirs = getattr(bank, group), getattr(source, group)
                for name in [name for name in mine if isinstance(name, str)]:
                    mine[name][bank.row[at[picked]]] = theirs[name][source.row[rows[picked]]]
        curves = source.kind[rows] == 2
        bank.curve_position[at[curves]] = source.curve_position[rows[curves]]
        bank._parts.append((source, rows, at))
    stack.memory[key] = bank
    return bank


def _tileable(base, positions, source, rows):
    """Whether the changed devices (``rows`` of the bank ``source``, at ``positions`` of the ``base`` bank)
    keep their base device's kind, digitised curve and relay parameter layout, so that their parameters
    can be written over the base's repeated ones."""
    if not np.array_equal(source.kind[rows], base.kind[positions]):
        return False
    curves = source.kind[rows] == 2
    if curves.any():
        names = np.array(source.curve_names + [""], dtype=object)[source.point_curve[rows[curves]]]
        if not np.array_equal(names, np.array(base.curve_names + [""], dtype=object)[base.point_curve[positions[curves]]]):
            return False
    if (source.kind[rows] == 0).any():
        return all(name in base.relays and np.shape(base.relays[name])[1:] == np.shape(values)[1:]
                   for name, values in source.relays.items() if isinstance(name, str))
    return True


def _changed_bank(stack, maintenance):
    """Every device a copy of ``stack`` changed, with the maintenance settings of those of ``maintenance``
    (ids) on, as one bank (remembered on the stack): (copy of each changed device, its id, the entries of
    the bank among all changed devices, the bank: a :class:`~arcflash.study.device_bank.DeviceBank` of
    those of them that are in ``maintenance``, or of all with none given, whose thresholds are found for all
    its devices at once)."""
    from types import SimpleNamespace

    key = ("changed devices", maintenance)
    if key not in stack.memory:
        copy_of, idents, devices = [], [], []
        for k, changed in enumerate(_changed(stack, "devices")):
            mine = stack.copies[k].devices
            for ident in changed:
                copy_of.append(k)
                idents.append(ident)
                devices.append(mine[ident])
        entries = [e for e, ident in enumerate(idents) if ident in maintenance] if maintenance else \
            list(range(len(idents)))
        names = [str(e) for e in entries]
        site = SimpleNamespace(devices={name: devices[e] for name, e in zip(names, entries)},
                               facility=stack.base.facility, curves=stack.base.curves)
        bank = _ChangedBank(site, SimpleNamespace(energy_reducing_maintenance_switching=names if maintenance else ()),
                            names)
        bank.entries = np.array(entries, dtype=np.intp)
        stack.memory[key] = (np.array(copy_of, dtype=np.intp), idents, bank.entries, bank)
    return stack.memory[key]


class _ChangedBank(DeviceBank):
    """The bank of a stack's changed devices (:func:`_changed_bank`): each a sample's own object, never met
    again, so their thresholds are found for all at once, without looking them up."""

    def _threshold_a(self, within_s):
        return self._bisect(np.arange(self.kind.size), within_s)


class _TiledBank(DeviceBank):
    """A stacked site's device bank (:func:`stacked_bank`): a device a copy leaves unchanged is the base's own
    object, with the base's threshold; those of the changed devices are read from the stack's bank of them."""

    def _threshold_a(self, within_s):
        found = np.tile(self._base.threshold_a(within_s), self._copies)
        for source, rows, at in self._parts:
            found[at] = source.threshold_a(within_s)[rows]
        return found

"""Filling the faults of a network in changing states from its base state's factors (the arithmetic of
:meth:`~arcflash.models.network_stages.NetworkStates.solve_pairs`): a mixin of
:class:`~arcflash.models.network_stages.NetworkStates`, kept apart for length.

Pure: numpy only, no I/O.
"""

from __future__ import annotations

import numpy as np

from .network import base_current_ka
from .network_factors import COLUMNS_TOGETHER_ROWS, DenseInverse, solve_each


class StateFills:
    """The fills of :meth:`NetworkStates.solve_pairs` (the class using it provides the network's arrays,
    ``_topology``, ``_prepared``, ``_base_parts``, ``_base_columns``, ``_update_columns``,
    ``_update_column_list``, ``_base_local``, ``_tiles`` and ``_BASE``, the base state)."""

    def _part_at(self, key, point):
        """(whether a source reaches ``point``, its part: a hashable token) in state ``key``."""
        if self._tiles is not None and key.split is None:
            found = self._tiles.part_at(key, point)
            if found is not None:
                return found
        _, _, _, energized, label = self._topology(key)
        return bool(energized[point]), int(label[point])

    def _carrying(self, key, part, b, position):
        """Positions (ascending) among the wanted devices (branches ``b``; ``position``: each device's
        position, -1 where not wanted) of those closed, energised and in ``part`` (of :meth:`_part_at`) in
        state ``key``: those that may carry a fault's current there."""
        if isinstance(part, tuple):
            return self._tiles.carrying(key, part, position)
        f, _, closed, energized, label = self._topology(key)
        return np.flatnonzero(closed[b] & (label[f[b]] == part) & energized[f[b]])

    def solve_copies(self, base_key, base_bus, copies):
        """Faults at bus ``base_bus`` of each of ``copies`` of a tiled network (:mod:`.network_tiles`), all in
        the state ``base_key`` of the base network, by the arithmetic :meth:`solve_pairs` gives each of them
        (the base state's columns, updated by the state's one opened branch): the copies' rows of its
        results, bolted current [kA] per copy and the current of each device of a copy [kA] (copies × devices
        of a copy, 0 for those that carry none); None for a fault no source reaches, or a state
        :meth:`solve_pairs` takes otherwise (a split, motors ended, several branches to remove, a branch the
        update would lose digits on): solve it there."""
        tiles = self._tiles
        n0, d0 = tiles.n0, tiles.d0
        if base_key.split is not None or base_key.motors_off:
            return None
        f0, _, closed, energized, label = tiles.base._topology(base_key)
        if not energized[base_bus]:
            return None
        branch = None
        if base_key.opened:
            plan = tiles.base_plan(base_key)
            if plan is None or any((np.abs(self.branch_z_pu[tiles.start[b] + copies * tiles.step[b]])
                                    < tiles.low_rank_min_z_pu).any() for b in plan):
                return None  # factorised by solve_pairs (in every copy, or in some: not taken together here)
            base_part = tiles.base.part_of_node()
            plan = [b for b in plan if base_part[f0[b]] == base_part[base_bus]]  # as solve_pairs filters
            if len(plan) > 1:
                return None
            if plan:
                branch = tiles.start[plan[0]] + copies * tiles.step[plan[0]]
        index, _ = self._prepared(self._BASE)
        local = self._base_local()
        points = copies * n0 + base_bus
        col = index[points]
        z, w = self._copy_columns(col, branch)  # one row per copy, on the rows of its part
        rows = np.arange(copies.size)
        point = local[col]
        f_all, t_all = self.branch_from, self.branch_to
        if branch is not None:
            z -= self._rank_one(w, branch, point)
        i_fault = self.voltage_factor / z[rows, point]  # [pu]
        bolted = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[points])
        carrying = tiles.base_carrying(base_key, int(label[base_bus]))
        device = copies[:, None] * d0 + carrying[None, :]
        b = self.device_branch[device]
        at = rows[:, None]
        i_dev = np.abs(z[at, local[index[f_all[b]]]] - z[at, local[index[t_all[b]]]])
        i_dev *= np.abs(i_fault)[:, None]
        i_dev *= self._device_scale[device]
        current = np.zeros((copies.size, d0))
        current[:, carrying] = i_dev
        return bolted, current

    def _copy_columns(self, col, branch):
        """The base state's columns Z[:, c] at positions ``col``, and with ``branch`` (a branch per column, or
        None) the update columns Z u_b, one row per column on its part's rows: read from the parts' inverses
        where those are dense (the values their solves give: a column, or the difference of two), else solved
        (:meth:`_base_columns`, :meth:`_update_column_list`) [pu]."""
        index, _ = self._prepared(self._BASE)
        row_part, factors = self._base_parts()
        found = [factors[p][1] for p in row_part[col].tolist()]
        if all(isinstance(lu, DenseInverse) for lu in found) and len({lu.shape for lu in found}) == 1:
            local = self._base_local()
            z = np.stack([lu.inverse[:, c] for lu, c in zip(found, local[col].tolist())])
            if branch is None:
                return z, None
            ends = zip(local[index[self.branch_from[branch]]].tolist(), local[index[self.branch_to[branch]]].tolist())
            return z, np.stack([lu.inverse[:, f] - lu.inverse[:, t] for lu, (f, t) in zip(found, ends)])
        z = np.stack(self._base_columns(col))
        return z, None if branch is None else np.stack(self._update_column_list(branch.tolist()))

    def _fill(self, solved_key, rows, fault_bus, keys, plans, devices, bolted, current, on):
        """Solve faults ``rows`` with the factorisation of ``solved_key``, each updated by its plan; currents of
        ``devices`` (the columns of ``current``)."""
        index, lu = self._prepared(solved_key)
        b = self.device_branch[devices]
        scale = self._device_scale[devices]
        points, live_rows, parts = [], [], []
        for row, key in zip(rows, keys):
            point = self.n if key.split is not None else int(fault_bus[row])
            energized, part = self._part_at(key, point)
            if energized:
                points.append(point)
                live_rows.append(row)
                parts.append(part)
        if not live_rows:
            return
        wanted = np.full(self.device_branch.size, -1, dtype=np.intp)  # each device's column (-1: not wanted)
        wanted[devices] = np.arange(devices.size)
        live_rows = np.array(live_rows, dtype=np.intp)
        by_row = dict(zip(rows.tolist(), zip(keys, plans)))
        col = index[np.array(points, dtype=np.intp)]
        from_base = solved_key == self._BASE
        if from_base:  # columns on the rows of their part only (a stack of many parts: each copy's own)
            row_part, factors = self._base_parts()
            position = np.full(lu.shape[0], -1, dtype=np.intp)
            base_columns = self._base_columns(col)
        else:
            rhs = np.zeros((lu.shape[0], col.size), dtype=complex)
            rhs[col, np.arange(col.size)] = 1.0
            z_all = solve_each(lu, rhs)  # Z[:, k] of each fault in the factorised state
            position = np.arange(lu.shape[0])
        base_f, base_t = index[self.branch_from[b]], index[self.branch_to[b]]
        # Faults in the same state and the same part of the network are taken together.
        groups, in_base = {}, []
        for j, (row, part) in enumerate(zip(live_rows.tolist(), parts)):
            key = by_row[row][0]
            if from_base and key == solved_key:  # faults in the base state itself: taken together below
                in_base.append(j)
                continue
            groups.setdefault((key, part), []).append(j)
        if in_base:
            self._fill_base(np.array(in_base, dtype=np.intp), col, np.array(points, dtype=np.intp), live_rows,
                            fault_bus, base_columns, b, scale, bolted, current, on)
        if from_base:  # states one branch (or none) away from the base state: every such group at once
            single = {g: js for g, js in groups.items() if len(by_row[int(live_rows[js[0]])][1]) <= 1}
            if single:
                self._fill_rank_one(single, by_row, col, live_rows, fault_bus, base_columns, b, wanted, scale,
                                    bolted, current, on)
                groups = {g: js for g, js in groups.items() if g not in single}
        for (key, part), js in groups.items():
            js = np.array(js, dtype=np.intp)
            plan = by_row[int(live_rows[js[0]])][1]
            if from_base:
                rows = factors[row_part[col[js[0]]]][0]  # the faults' part of the base state
                position[rows] = np.arange(rows.size)
                z = np.column_stack([base_columns[j] for j in js])
            else:
                z = z_all[:, js]
            if plan:
                # Y' = Y - U diag(y) U^T: Z' = Z - W (-diag(z_b) + U^T W)^-1 W^T, W = Z U (Woodbury).
                w = self._update_columns(plan)
                ends = (position[index[self.branch_from[plan]]], position[index[self.branch_to[plan]]])
                small = np.diag(-self.branch_z_pu[plan]) + (w[ends[0]] - w[ends[1]])
                rhs = w[position[col[js]]].T  # two branches or more (one or none: _fill_rank_one)
                if w.shape[0] >= COLUMNS_TOGETHER_ROWS:  # a part alone in its stack: its batch is its own
                    z = z - w @ np.linalg.solve(small, rhs)
                else:  # each fault on its own: a batch's make-up would reach the last digits of its sums
                    z = z - np.column_stack([w @ np.linalg.solve(small, rhs[:, [c]]) for c in range(js.size)])
            i_fault = self.voltage_factor / z[position[col[js]], np.arange(js.size)]  # [pu]
            rows_js = live_rows[js]
            on[rows_js] = True
            bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
            # A device carries current only if closed and in the faulted point's part of the network.
            idx = self._carrying(key, part, b, wanted)
            if key.split is not None:  # the split state's own numbering
                f, t = self._topology(key)[:2]
                ends_f, ends_t = position[index[f[b[idx]]]], position[index[t[b[idx]]]]
            else:
                ends_f, ends_t = position[base_f[idx]], position[base_t[idx]]
            # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV, one row per fault.
            zt = np.ascontiguousarray(z.T)
            i_dev = np.abs(zt[:, ends_f] - zt[:, ends_t])
            i_dev *= np.abs(i_fault)[:, None]
            i_dev *= scale[idx][None, :]
            if idx.size == b.size:
                current[rows_js] = i_dev
            else:
                current[np.ix_(rows_js, idx)] = i_dev

    def _fill_rank_one(self, groups, by_row, col, live_rows, fault_bus, base_columns, b, wanted, scale, bolted,
                       current, on):
        """Faults ``groups`` ((state, part) -> positions) in states that differ from the base state by one
        opened branch or none (their plans), all at once: each fault's base column (``base_columns``, on its
        part's rows) updated by its branch (Woodbury, rank one), element by element as :meth:`_fill` does
        for one group; faults whose parts differ in size are taken size by size."""
        index, _ = self._prepared(self._BASE)
        local = self._base_local()
        f_all, t_all = self.branch_from, self.branch_to
        ends_f, ends_t = local[index[f_all[b]]], local[index[t_all[b]]]  # each device's rows in its part
        faults, branch, pairs = [], [], []  # pairs: (fault, device) of each fault's devices
        for (key, part), js in groups.items():
            plan = by_row[int(live_rows[js[0]])][1]
            idx = self._carrying(key, part, b, wanted)
            for j in js:
                pairs.append((len(faults), idx))
                faults.append(j)
                branch.append(plan[0] if plan else -1)
        faults, branch = np.array(faults, dtype=np.intp), np.array(branch, dtype=np.intp)
        pair_fault = np.repeat([k for k, _ in pairs], [idx.size for _, idx in pairs])
        pair_device = np.concatenate([idx for _, idx in pairs])
        sizes = np.array([base_columns[j].size for j in faults.tolist()], dtype=np.intp)
        kinds = np.unique(sizes)
        for size in kinds.tolist():
            mine = np.flatnonzero(sizes == size) if kinds.size > 1 else np.arange(faults.size)
            z = np.stack([base_columns[j] for j in faults[mine].tolist()])  # one row per fault
            point = local[col[faults[mine]]]
            updated = np.flatnonzero(branch[mine] >= 0)
            if updated.size:
                opened = branch[mine][updated]
                w = np.stack(self._update_column_list(opened.tolist()))
                if updated.size == z.shape[0]:  # every fault updated (the usual case): in place
                    z -= self._rank_one(w, opened, point[updated])
                else:
                    z[updated] = z[updated] - self._rank_one(w, opened, point[updated])
            i_fault = self.voltage_factor / z[np.arange(mine.size), point]  # [pu]
            rows_js = live_rows[faults[mine]]
            on[rows_js] = True
            bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
            # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV, for each fault's devices
            if kinds.size > 1:
                position = np.full(faults.size, -1, dtype=np.intp)
                position[mine] = np.arange(mine.size)
                pick = np.flatnonzero(position[pair_fault] >= 0)
                at, d = position[pair_fault[pick]], pair_device[pick]
            else:
                at, d = pair_fault, pair_device
            i_dev = np.abs(z[at, ends_f[d]] - z[at, ends_t[d]])
            i_dev *= np.abs(i_fault)[at]
            i_dev *= scale[d]
            current[rows_js[at], d] = i_dev

    def _rank_one(self, w, branch, point):
        """The correction of base-state columns (one per row) for one opened branch each, Woodbury rank one:
        Z' = Z - w (w[point] / (-z_b + w[f] - w[t])), ``w`` = Z u_b on the rows of the branch's part (one row
        per column), ``point`` each column's position in its part [pu]."""
        index, local = self._prepared(self._BASE)[0], self._base_local()
        rows = np.arange(branch.size)
        small = -self.branch_z_pu[branch] + (w[rows, local[index[self.branch_from[branch]]]]
                                            - w[rows, local[index[self.branch_to[branch]]]])
        return w * (w[rows, point] / small)[:, None]

    def _fill_base(self, js, col, points, live_rows, fault_bus, base_columns, b, scale, bolted, current, on):
        """Faults ``js`` in the base state, every part at once: each fault's column on the rows of its own part
        (``base_columns``), the currents of the devices ``b`` (branches; ``scale`` [kA/pu]) closed and
        energised in its part; the arithmetic of each value is that of :meth:`_fill`'s groups."""
        f, _, closed, energized, label = self._topology(self._BASE)
        index, _ = self._prepared(self._BASE)
        local = self._base_local()
        sizes = np.array([base_columns[j].size for j in js.tolist()], dtype=np.intp)
        offsets = np.cumsum(sizes) - sizes
        flat = np.concatenate([base_columns[j] for j in js.tolist()])
        i_fault = self.voltage_factor / flat[offsets + local[col[js]]]  # [pu]
        rows_js = live_rows[js]
        on[rows_js] = True
        bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
        # (fault, device) pairs: the devices closed and energised in the fault's part, sorted by part
        usable = np.flatnonzero(closed[b] & energized[f[b]])
        part = label[f[b[usable]]]
        order = np.argsort(part, kind="stable")
        usable, part = usable[order], part[order]
        fault_part = label[points[js]]
        lo = np.searchsorted(part, fault_part, "left")
        count = np.searchsorted(part, fault_part, "right") - lo
        fault = np.repeat(np.arange(js.size), count)
        d = usable[np.repeat(lo, count) + np.arange(fault.size) - np.repeat(np.cumsum(count) - count, count)]
        start = offsets[fault]
        ends_f, ends_t = local[index[self.branch_from[b]]], local[index[self.branch_to[b]]]  # per device
        # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV
        i_dev = np.abs(flat[start + ends_f[d]] - flat[start + ends_t[d]])
        i_dev *= np.abs(i_fault)[fault]
        i_dev *= scale[d]
        current[rows_js[fault], d] = i_dev

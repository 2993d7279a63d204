"""Three-phase bolted faults on a per-unit network (positive sequence).

The network is given as arrays: bus voltage bases, series branches with their
per-unit impedances, and shunt sources (utility, generator and motor
impedances behind a 1 pu internal voltage). For every bus the bolted
symmetrical fault current is I = c / Z_kk (Thevenin, superposition with a
flat prefault voltage c), and for every protective-device branch the current
it carries during that fault, I_ij = (V_i - V_j)/z_ij with
V = c - Z[:, k] I_f (common practice; the method of IEC 60909 without its
correction factors).

Pure: numpy and scipy only, no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components
from scipy.sparse.linalg import splu

_SQRT3 = float(np.sqrt(3.0))
#: Right-hand sides solved together [-].
BLOCK_COLUMNS = 256


@dataclass(frozen=True)
class FaultSolution:
    """Bolted faults at every bus and device currents (long table).

    Attributes
    ----------
    z_thevenin_pu : numpy.ndarray of complex
        Thevenin impedance at each bus, NaN where de-energised [pu]
    bolted_ka : numpy.ndarray
        Bolted three-phase fault current, 0 where de-energised [kA]
    x_over_r : numpy.ndarray
        X/R of the Thevenin impedance [-]
    energized : numpy.ndarray of bool
        The bus is connected to a source [-]
    device_fault_bus, device : numpy.ndarray of int
        Rows of the device table: faulted bus, device index [-]
    device_current_ka : numpy.ndarray
        Current through the device, in the device's own kV base [kA]
    device_share : numpy.ndarray
        Device current over the bus fault current (per unit of I_f) [-]
    device_direction : numpy.ndarray of int
        +1 where the current flows from the branch's first bus to its second,
        -1 the other way [-]
    """

    z_thevenin_pu: np.ndarray
    bolted_ka: np.ndarray
    x_over_r: np.ndarray
    energized: np.ndarray
    device_fault_bus: np.ndarray
    device: np.ndarray
    device_current_ka: np.ndarray
    device_share: np.ndarray
    device_direction: np.ndarray


def base_current_ka(s_base_mva, kv):
    """Base current I = S / (√3 V) [kA] for a base power [MVA] and voltage [kV]."""
    return s_base_mva / (_SQRT3 * np.asarray(kv, dtype=float))


def admittance_matrix(n_bus, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu):
    """Sparse bus admittance matrix Y (CSC) of series branches and shunts.

    Parameters
    ----------
    n_bus : int
        Number of buses [-]
    branch_from, branch_to : numpy.ndarray of int
        Bus indices of each series branch [-]
    branch_z_pu : numpy.ndarray of complex
        Series impedance of each branch [pu]
    shunt_bus : numpy.ndarray of int
        Bus of each shunt source [-]
    shunt_z_pu : numpy.ndarray of complex
        Impedance of each shunt source to the internal voltage [pu]

    Returns
    -------
    scipy.sparse.csc_matrix
        Y [pu]
    """
    y = 1.0 / np.asarray(branch_z_pu, dtype=complex)
    f = np.asarray(branch_from, dtype=np.intp)
    t = np.asarray(branch_to, dtype=np.intp)
    s = np.asarray(shunt_bus, dtype=np.intp)
    rows = np.concatenate([f, t, f, t, s])
    cols = np.concatenate([f, t, t, f, s])
    vals = np.concatenate([y, y, -y, -y, 1.0 / np.asarray(shunt_z_pu, dtype=complex)])
    return sp.coo_matrix((vals, (rows, cols)), shape=(n_bus, n_bus)).tocsc()


def energized_buses(n_bus, branch_from, branch_to, source_bus):
    """Buses connected through branches to at least one source bus [-]."""
    graph = sp.coo_matrix(
        (np.ones(len(branch_from)), (np.asarray(branch_from, dtype=np.intp), np.asarray(branch_to, dtype=np.intp))),
        shape=(n_bus, n_bus),
    )
    _, label = connected_components(graph, directed=False)
    return np.isin(label, label[np.asarray(source_bus, dtype=np.intp)])


def solve_faults(base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, source_bus,
                 device_branch=(), device_kv=(), voltage_factor=1.0, s_base_mva=100.0, min_share=1e-3):
    """Bolted three-phase faults at every bus and the current through each device.

    Parameters
    ----------
    base_kv : numpy.ndarray
        Voltage base (nominal kV) of each bus [kV]
    branch_from, branch_to, branch_z_pu
        Series branches, see :func:`admittance_matrix` [-], [-], [pu]
    shunt_bus, shunt_z_pu
        Shunt sources, see :func:`admittance_matrix` [-], [pu]
    source_bus : numpy.ndarray of int
        Buses with a source that energises the network (utility, running
        generator); motors alone do not energise a bus [-]
    device_branch : numpy.ndarray of int
        Branch index of each protective device [-]
    device_kv : numpy.ndarray
        Voltage base on the device's side of its branch [kV]
    voltage_factor : float
        Prefault voltage c [pu]
    s_base_mva : float
        Power base [MVA]
    min_share : float
        Device currents below this fraction of the bus fault current are
        left out of the device table [-]

    Returns
    -------
    FaultSolution
    """
    base_kv = np.asarray(base_kv, dtype=float)
    n = base_kv.size
    branch_from = np.asarray(branch_from, dtype=np.intp)
    branch_to = np.asarray(branch_to, dtype=np.intp)
    branch_z_pu = np.asarray(branch_z_pu, dtype=complex)
    shunt_bus = np.asarray(shunt_bus, dtype=np.intp)
    device_branch = np.asarray(device_branch, dtype=np.intp)
    device_kv = np.asarray(device_kv, dtype=float)
    energized = energized_buses(n, branch_from, branch_to, source_bus) if len(source_bus) else np.zeros(n, bool)
    z_th = np.full(n, np.nan + 0j)
    empty = np.array([], dtype=np.intp)
    table = ([empty], [empty], [np.array([])], [np.array([])], [empty])
    if energized.any():
        index = np.full(n, -1, dtype=np.intp)
        active = np.flatnonzero(energized)
        index[active] = np.arange(active.size)
        keep = energized[branch_from]
        f, t = index[branch_from[keep]], index[branch_to[keep]]
        shunt_keep = energized[shunt_bus]
        y = admittance_matrix(active.size, f, t, branch_z_pu[keep], index[shunt_bus[shunt_keep]],
                              np.asarray(shunt_z_pu, dtype=complex)[shunt_keep])
        lu = splu(y)
        m = active.size
        diag = np.empty(m, dtype=complex)
        for lo in range(0, m, BLOCK_COLUMNS):
            cols = np.arange(lo, min(lo + BLOCK_COLUMNS, m))
            rhs = np.zeros((m, cols.size), dtype=complex)
            rhs[cols, np.arange(cols.size)] = 1.0
            diag[cols] = lu.solve(rhs)[cols, np.arange(cols.size)]
        z_th[active] = diag
        i_fault = voltage_factor / diag  # [pu], at every active bus
        live = np.flatnonzero(energized[branch_from[device_branch]]) if device_branch.size else empty
        for lo in range(0, live.size, BLOCK_COLUMNS):
            devices = live[lo:lo + BLOCK_COLUMNS]
            b = device_branch[devices]
            rhs = np.zeros((m, devices.size), dtype=complex)
            rhs[index[branch_from[b]], np.arange(devices.size)] += 1.0
            rhs[index[branch_to[b]], np.arange(devices.size)] -= 1.0
            # (Z_ki - Z_kj) for every fault bus k; Y is symmetric.
            x = lu.solve(rhs)
            current_pu = -x * (i_fault[:, None] / branch_z_pu[b][None, :])
            share = np.abs(current_pu) / np.abs(i_fault)[:, None]
            k, d = np.nonzero(share >= min_share)
            ratio = current_pu[k, d] / i_fault[k]
            table[0].append(active[k])
            table[1].append(devices[d])
            table[2].append(np.abs(current_pu[k, d]) * base_current_ka(s_base_mva, device_kv[devices[d]]))
            table[3].append(share[k, d])
            table[4].append(np.where(ratio.real >= 0.0, 1, -1))
    bolted = np.where(energized, voltage_factor / np.abs(z_th), 0.0) * base_current_ka(s_base_mva, base_kv)
    bolted = np.nan_to_num(bolted, nan=0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        x_over_r = z_th.imag / z_th.real
    return FaultSolution(
        z_thevenin_pu=z_th,
        bolted_ka=bolted,
        x_over_r=x_over_r,
        energized=energized,
        device_fault_bus=np.concatenate(table[0]),
        device=np.concatenate(table[1]),
        device_current_ka=np.concatenate(table[2]),
        device_share=np.concatenate(table[3]),
        device_direction=np.concatenate(table[4]).astype(np.int8),
    )

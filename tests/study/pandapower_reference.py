"""Build the same network in pandapower (test-only reference for fault currents).

Both sides use the same impedances: every branch becomes a pandapower
``impedance`` element with our per-unit values on the same 100 MVA base, every
shunt source an ``ext_grid``, closed switches become bus-bus switches.
pandapower applies IEC 60909: the fault current has the voltage factor c
(cmax = 1.1 at every level with lv_tol_percent=10) and an external grid's
impedance is Z_Q = c U²/S''kQ. So each external grid is given S''kQ = c S/|z|
(its impedance is then exactly z) and the result is divided by c: the current
at c = 1, our assumption. No transformer correction factor applies since no
transformer elements are used.
"""

from __future__ import annotations

import warnings

import numpy as np

#: IEC 60909 maximum voltage factor pandapower uses with lv_tol_percent=10 (LV and MV).
PANDAPOWER_C_MAX = 1.1

def pandapower_network(net_arrays, s_base_mva=100.0, switch_z_pu=1e-6j):
    """The pandapower network of our per-unit arrays (see the module docstring)."""
    import pandapower as pp

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = pp.create_empty_network(sn_mva=s_base_mva)
        buses = [pp.create_bus(net, vn_kv=float(kv)) for kv in net_arrays.base_kv]
        for f, t, z in zip(net_arrays.branch_from, net_arrays.branch_to, net_arrays.branch_z_pu):
            if z == switch_z_pu:
                pp.create_switch(net, buses[f], buses[t], et="b", closed=True)
            else:
                pp.create_impedance(net, buses[f], buses[t], rft_pu=z.real, xft_pu=z.imag, sn_mva=s_base_mva)
        for bus, z in zip(net_arrays.shunt_bus, net_arrays.shunt_z_pu):
            s_sc = PANDAPOWER_C_MAX * s_base_mva / abs(z)
            pp.create_ext_grid(net, buses[bus], s_sc_max_mva=s_sc, rx_max=z.real / z.imag,
                               s_sc_min_mva=s_sc, rx_min=z.real / z.imag)
    return net


def pandapower_short_circuit_ka(net):
    """pandapower's IEC 60909 calculation on ``net`` (its core call), voltage factor 1 [kA]."""
    import pandapower.shortcircuit as sc

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sc.calc_sc(net, case="max", ip=False, ith=False, branch_results=False, lv_tol_percent=10,
                   check_connectivity=True)
    return np.nan_to_num(net.res_bus_sc["ikss_ka"].to_numpy() / PANDAPOWER_C_MAX, nan=0.0)


def pandapower_bolted_ka(net_arrays, s_base_mva=100.0, switch_z_pu=1e-6j):
    """Bolted fault current at every bus by pandapower, voltage factor 1 [kA]."""
    return pandapower_short_circuit_ka(pandapower_network(net_arrays, s_base_mva, switch_z_pu))

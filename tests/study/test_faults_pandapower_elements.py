"""Bolted fault currents against pandapower built from the site data's own elements (test-only reference).

Unlike ``test_faults_pandapower.py`` (pandapower fed the tool's per-unit
arrays), here pandapower gets the nameplate data and models the elements
itself: the utility as an external grid from its fault level and X/R, the
transformer from %Z and X/R (vk, vkr), the cable from NEC Chapter 9 Table 9
ohms per 1000 ft (read from tests/reference, not from the package) and its
length, motors from their rating with the locked-rotor current that makes
the IEC 60909 asynchronous-motor impedance |Z_M| equal to X'' with its X/R. So transformer, cable and motor
modelling are checked independently.

IEC 60909 details neutralised to match the tool's assumptions (voltage
factor 1, no correction factors, documented in docs/method.md): pandapower's
max case uses c = 1.1 (lv_tol_percent = 10); the external grid is given
S''kQ = c √3 U I'' so that its impedance is U/(√3 I''), and the currents are
divided by c; the transformer correction factor K_T is switched off by
marking the transformer a power-station unit (pandapower then applies none);
motors have no correction factor in IEC 60909.
"""

from __future__ import annotations

import math
import warnings

import pytest

import arcflash
from tests.conftest import load_reference
from tests.site.helpers import chain, write_site

C_MAX = 1.1
FT_PER_KM = 1000.0 / 0.3048
NEC = load_reference("nec_ch9_table9.csv").set_index("size_awg_kcmil")


def _pandapower_from_site(doc):
    import pandapower as pp

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = pp.create_empty_network(sn_mva=100.0)
        bus = {b["id"]: pp.create_bus(net, vn_kv=b["nominal_kv"], name=b["id"]) for b in doc["buses"]}
        for u in doc["utilities"]:
            ka = float(u["max"]["fault"].split()[0])
            s_sc = C_MAX * math.sqrt(3) * u["kv"] * ka
            rx = 1.0 / u["max"]["x_over_r"]
            pp.create_ext_grid(net, bus[u["bus"]], s_sc_max_mva=s_sc, rx_max=rx, s_sc_min_mva=s_sc, rx_min=rx)
        for t in doc["transformers"]:
            vkr = t["z_percent"] / math.sqrt(1.0 + t["x_over_r"] ** 2)
            index = pp.create_transformer_from_parameters(
                net, bus[t["primary_bus"]], bus[t["secondary_bus"]], sn_mva=t["kva"] / 1000.0,
                vn_hv_kv=t["primary_kv"], vn_lv_kv=t["secondary_kv"], vk_percent=t["z_percent"],
                vkr_percent=vkr, pfe_kw=0.0, i0_percent=0.0)
            net.trafo.loc[index, "power_station_unit"] = True  # pandapower then applies no K_T
        for c in doc["cables"]:
            size = str(c["size"])
            r = float(NEC.loc[size, f"r_cu_{c['conduit']}"])  # copper [ohm / 1000 ft]
            x = float(NEC.loc[size, "x_steel_conduit" if c["conduit"] == "steel" else "x_pvc_or_al_conduit"])
            feet = float(c["length"].split()[0])
            pp.create_line_from_parameters(net, bus[c["from_bus"]], bus[c["to_bus"]], length_km=feet / FT_PER_KM,
                                           r_ohm_per_km=r / 1000.0 * FT_PER_KM, x_ohm_per_km=x / 1000.0 * FT_PER_KM,
                                           c_nf_per_km=0.0, max_i_ka=1.0)
        for m in doc.get("motors", []):
            kva = float(m["size"].split()[0])  # 1 hp taken as 1 kVA (common practice): S_rM = kVA
            rx = 1.0 / m.get("x_over_r", 10.0)
            # X'' is a reactance; IEC 60909 takes |Z_M| = U_rM² / (S_rM I_LR/I_rM): I_LR/I_rM = 1/(X'' sqrt(1 + (R/X)²)).
            x_pu = m.get("subtransient_reactance_percent", 16.7) / 100.0
            pp.create_motor(net, bus[m["bus"]], pn_mech_mw=kva / 1000.0, cos_phi=1.0, efficiency_percent=100.0,
                            cos_phi_n=1.0, efficiency_n_percent=100.0, lrc_pu=1.0 / (x_pu * math.sqrt(1.0 + rx**2)),
                            rx=rx, vn_kv=m["kv"])
    return net, bus


def _pandapower_ka(net):
    import pandapower.shortcircuit as sc

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sc.calc_sc(net, case="max", ip=False, ith=False, branch_results=False, lv_tol_percent=10)
    return net.res_bus_sc["ikss_ka"].to_numpy() / C_MAX


@pytest.mark.parametrize("motors", [[], [{"id": "M1", "bus": "LV", "size": "400 hp", "kv": 0.46},
                                         {"id": "M2", "bus": "END", "size": "150 hp", "kv": 0.46,
                                          "subtransient_reactance_percent": 20, "x_over_r": 8}]])
def test_chain_with_motors_from_nameplates(tmp_path, motors):
    doc = chain(motors=motors)
    ours = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "c", doc)))
    net, bus = _pandapower_from_site(doc)
    theirs = _pandapower_ka(net)
    for name, index in bus.items():
        # Agreement seen: about 1e-12 (the same equations from different data paths); 1e-9 allows rounding only.
        assert ours.loc[name, "bolted_ka"] == pytest.approx(theirs[index], rel=1e-9), name
    if motors:  # the motors matter at these buses: a dropped motor or a doubled reactance would fail above
        plain = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "p", chain())))
        assert (ours.loc[["LV", "END"], "bolted_ka"] > 1.05 * plain.loc[["LV", "END"], "bolted_ka"]).all()

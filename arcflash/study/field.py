"""Field tools: transformer %Z from short-circuit test readings, and a quick assessment from nameplates.

The quick assessment builds a small site (source, transformer, optional
cable, the equipment, its upstream device) and runs the same study as a
facility, so its numbers are the study's numbers. Its conservative choices
are stated in the result: an unknown utility is taken as infinite (all the
fault current the transformer can pass); the transformer's %Z is taken at the
low side of its tolerance.
"""

from __future__ import annotations

import math
from pathlib import Path

import yaml

from ..models.transformer import PLAUSIBLE_Z_PERCENT, infinite_bus_fault_ka, percent_impedance_from_test
from ..models.transformer import rated_current_a
from ..models.transformer import resistance_at_temperature
from ..site.loader import load_site
from ..site.reading import read_yaml
from ..site.slips import check_unit_slips

_Z_RANGE = f"{PLAUSIBLE_Z_PERCENT[0]:g}-{PLAUSIBLE_Z_PERCENT[1]:g} %"


def _plausible(z_percent):
    return PLAUSIBLE_Z_PERCENT[0] <= z_percent <= PLAUSIBLE_Z_PERCENT[1]


#: Stand-in for an infinite utility: a fault level so large that its impedance is negligible [MVA].
INFINITE_SOURCE_MVA = 1.0e7


def transformer_from_test(kva, primary_kv, secondary_kv, applied_v, measured_a=None, r_percent=None,
                          measured_temp_c=None, reference_temp_c=85.0, conductor="copper"):
    """%Z of a transformer from its short-circuit test, with rated and fault currents.

    The secondary is shorted and the primary voltage raised until a current
    flows; %Z = V × (I_rated / I_measured) / V_rated × 100 (IEEE C57.12.90
    impedance-voltage test; the scaling to rated current is linear, common
    practice). With ``r_percent`` (the resistive part measured with the test)
    and the winding temperatures, the resistive part is corrected to the
    reference temperature and the reactive part kept:
    %Z_ref = sqrt((%Z² − %R²) + %R_ref²).

    Parameters
    ----------
    kva : float
        Rating [kVA]
    primary_kv, secondary_kv : float
        Rated voltages [kV]
    applied_v : float
        Primary voltage during the test [V]
    measured_a : float, optional
        Primary current during the test; rated current when not given [A]
    r_percent : float, optional
        Resistive part of %Z at the test temperature [%]
    measured_temp_c, reference_temp_c : float
        Winding temperature during the test and the reference temperature [°C]
    conductor : str
        'copper' or 'aluminum' [-]

    Returns
    -------
    dict
        ``z_percent`` (at the reference temperature when corrected),
        ``z_percent_measured``, ``rated_primary_a``, ``rated_secondary_a``,
        ``infinite_bus_ka`` (secondary, with ``z_percent``).
    """
    values = {"kva": kva, "primary_kv": primary_kv, "secondary_kv": secondary_kv, "applied_v": applied_v}
    for name, value in values.items():
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise ValueError(f"{name}: expected a positive number, got {value!r}")
    rated_primary = float(rated_current_a(kva, primary_kv))
    measured = rated_primary if measured_a is None else measured_a
    if not measured > 0:
        raise ValueError(f"measured_a: expected a positive number, got {measured_a!r}")
    z_measured = float(percent_impedance_from_test(applied_v, primary_kv * 1000.0, measured, rated_primary))
    z = z_measured
    if r_percent is not None:
        if measured_temp_c is None or not 0 <= r_percent < z_measured:
            raise ValueError("r_percent: expected the resistive part, below %Z, with measured_temp_c given")
        r_ref = float(resistance_at_temperature(r_percent, measured_temp_c, reference_temp_c, conductor))
        z = math.sqrt(z_measured**2 - r_percent**2 + r_ref**2)
    if not _plausible(z):
        raise ValueError(f"%Z from the test readings is {z:.2f} %: expected {_Z_RANGE} (check the readings)")
    return {
        "z_percent": z,
        "z_percent_measured": z_measured,
        "rated_primary_a": rated_primary,
        "rated_secondary_a": float(rated_current_a(kva, secondary_kv)),
        "infinite_bus_ka": float(infinite_bus_fault_ka(kva, secondary_kv, z)),
    }


def _library_curve_kinds(library):
    """Curve id -> kind of a device-library file (ValueError naming the file if it is not one)."""
    problems = []
    document = read_yaml(library, problems)
    if problems:
        raise ValueError(f"library: {problems[0]}")
    curves = document.get("curves") if isinstance(document, dict) else None
    if not isinstance(curves, list):
        raise ValueError(f"library: {library} is not a device-library file (expected a 'curves:' list)")
    return {c.get("id"): c.get("kind") for c in curves if isinstance(c, dict)}


def quick_site(folder, kva, primary_kv, secondary_kv, z_percent, x_over_r, z_tolerance_percent=7.5,
               utility_ka=None, utility_x_over_r=10.0, cable=None, equipment=None, clearing_time_s=None,
               reduced_clearing_time_s=None, curve=None, library=None, name="Quick assessment"):
    """Write the site of a quick assessment into ``folder`` and load it.

    ``cable`` is a dict of cable fields (length, size, material, conduit,
    sets); ``equipment`` of bus fields (equipment_class, config, gap_mm, ...).
    The upstream device is a digitised ``curve`` from ``library`` (placed on
    the cable, or the transformer secondary without one), or else a stated
    clearing time.

    Returns
    -------
    tuple
        (site, notes): the loaded site and the conservative choices made.
    """
    if not _plausible(z_percent):
        raise ValueError(f"z_percent: expected {_Z_RANGE}, got {z_percent!r}")
    check_unit_slips(primary_kv=primary_kv, secondary_kv=secondary_kv, utility_ka=utility_ka,
                     **{k: v for k, v in (equipment or {}).items() if k.endswith("_mm")})
    notes = []
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    if utility_ka is None:
        source = {"fault": f"{INFINITE_SOURCE_MVA:g} MVA", "x_over_r": utility_x_over_r}
        notes.append("utility fault current unknown: source taken as infinite (the largest current)")
    else:
        source = {"fault": f"{utility_ka:g} kA", "x_over_r": utility_x_over_r}
    if z_tolerance_percent:
        notes.append(f"transformer %Z taken at the low side of its {z_tolerance_percent:g} % tolerance")
    buses = [{"id": "SOURCE", "nominal_kv": primary_kv, "equipment_class": None},
             {"id": "SECONDARY", "nominal_kv": secondary_kv}]
    doc = {
        "facility": {"name": name, "study_revision": "quick", "arc_duration_cap_s": 2.0},
        "utilities": [{"id": "UTILITY", "bus": "SOURCE", "kv": primary_kv, "max": source, "min": source}],
        "transformers": [{"id": "T", "primary_bus": "SOURCE", "secondary_bus": "SECONDARY", "kva": kva,
                          "primary_kv": primary_kv, "secondary_kv": secondary_kv, "z_percent": z_percent,
                          "x_over_r": x_over_r, "z_tolerance_percent": z_tolerance_percent}],
        "scenarios": [{"name": "quick"}],
    }
    target = "SECONDARY"
    if cable:
        buses.append({"id": "EQUIPMENT", "nominal_kv": secondary_kv})
        doc["cables"] = [{"id": "CABLE", "from_bus": "SECONDARY", "to_bus": "EQUIPMENT", **cable}]
        target = "EQUIPMENT"
    for bus in buses:
        bus.pop("equipment_class", None)
        if bus["id"] == target:
            bus.update({k: v for k, v in (equipment or {}).items() if v is not None})
    doc["buses"] = buses
    if curve is not None:
        if library is None:
            raise ValueError(f"library: the device-library file that holds curve {curve!r}")
        kinds = _library_curve_kinds(library)
        if curve not in kinds:
            raise ValueError(f"curve: {curve!r} is not in {library}; it has {', '.join(map(str, kinds)) or 'none'}")
        doc["facility"]["device_library"] = [str(Path(library).resolve())]
        branch, at = ("CABLE", "SECONDARY") if cable else ("T", "SECONDARY")
        doc["devices"] = [{"id": "UPSTREAM", "branch": branch, "at_bus": at, "kind": kinds[curve], "curve": curve}]
    elif clearing_time_s is None:
        raise ValueError("give the upstream device (a library curve) or a stated clearing time")
    (folder / "site.yaml").write_text(yaml.safe_dump(doc, sort_keys=False), encoding="utf-8")
    return load_site(folder), notes, target


def quick_assessment(folder, **inputs):
    """Quick assessment of one piece of equipment from nameplate data.

    ``inputs`` are those of :func:`quick_site`. The site is written into
    ``folder`` (a scratch folder) and studied like a facility.

    Returns
    -------
    dict
        ``row`` (the study row of the equipment: currents, times, energies,
        boundaries, PPE, shock boundaries, flags), ``notes`` (the
        conservative choices made), ``not_conservative`` (choices the user
        accepted that can under-state the hazard) and ``site``.

    Raises
    ------
    ValueError
        A stated clearing time without the reduced-current time or the
        explicit ``accept_same_time`` (see
        :func:`arcflash.study.equipment.reduced_clearing_time`).
    """
    from .pipeline import study_rows

    from .equipment import reduced_clearing_time

    inputs = dict(inputs)
    accept_same_time = inputs.pop("accept_same_time", False)
    clearing = inputs.get("clearing_time_s")
    not_conservative, stated = [], None
    if inputs.get("curve") is None and clearing is not None:
        # a stated time: the reduced-current time is stated too, or the full-current time is accepted for it
        reduced, not_conservative = reduced_clearing_time(clearing, inputs.get("reduced_clearing_time_s"),
                                                          accept_same_time)
    elif accept_same_time:
        raise ValueError("accept_same_time: only with a stated clearing time (a curve gives the reduced-current "
                         "time itself)")
    site, notes, target = quick_site(folder, **inputs)
    if inputs.get("curve") is None:
        stated = {target: (clearing, reduced)}
    rows = study_rows(site, stated_times=stated)
    row = rows[rows["bus"] == target].iloc[0]
    if inputs.get("curve") is not None:
        notes.append("clearing times at both arcing currents read from the device's curve (its slower edge)")
    return {"row": row, "notes": notes, "not_conservative": not_conservative, "site": site}

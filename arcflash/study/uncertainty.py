"""How sure is each number: the study run on Latin-hypercube samples of its uncertain inputs.

The inputs sampled (``facility.tolerances``, an element may state its own): each utility's fault level
between its stated minimum and maximum, each transformer's %Z within its tolerance, each cable's length
within its tolerance, each bus's gap and working distance within theirs, each motor's running share, each
trip unit's place in its band; every one uniform over its range.
One Latin-hypercube design (``scipy.stats.qmc.LatinHypercube``) of all the inputs is drawn from the seed
before any work is split, so the results are the same, bit for bit, however the samples are split into
chunks and wherever the chunks run (in-process, a local Dask cluster, a dask.distributed scheduler).

Each sample is a copy of the site with its inputs set, run through the whole study (faults, staged
clearing, both arcing cases, the governing case over the scenarios, or in the one scenario asked for); the
samples of a chunk are studied together, as disconnected copies in one stacked site
(:mod:`arcflash.study.stacking`: the sample axis through the fault solve and clearing), each copy's
results equal to its sample studied alone.
Per bus: P5, P50, P95 and the largest incident energy and arc-flash boundary, the probability that the
energy exceeds the upper edge of the plain study's PPE category (40 cal/cm² above category 4), and the
inputs that drive the spread: the Spearman rank correlation of each input with the bus's energy (a
global sensitivity measure that needs no special sampling design; a Sobol analysis would need its own
design of several times as many runs).

Also each contributing motor's running share (between its smallest running fraction and all of it) and
each device's position inside its band (-1 the fastest edge, +1 the slowest, which the plain study uses):
an electronic trip unit's pickups and delays moved by their tolerances, a fuse's or thermal-magnetic
breaker's curve between its minimum and total-clearing curves where the library gives both. Relays have no
band in the site data (one characteristic each) and stay on it.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..collector import collector_paused
from ..models import nfpa70e
from ..site.schema import Quantity


@dataclass(frozen=True)
class UncertainInput:
    """One sampled input: its name ('utilities[U1].level'), where it sits, and its range."""

    name: str
    section: str
    ident: str
    field: str
    low: float
    high: float
    unit: str


def uncertain_inputs(site):
    """The inputs of ``site`` that its tolerances let vary (ranges of zero width are left out)."""
    from .arcing import equipment_table

    t = site.facility.tolerances
    found = []
    if t.utility_level == "between_min_and_max":
        for u in site.utilities.values():
            low, high = u.fault_mva("min"), u.fault_mva("max")
            if high > low:
                found.append(UncertainInput(f"utilities[{u.id}].level", "utilities", u.id, "level", low, high, "MVA"))
    if t.transformer_z == "within_tolerance":
        for x in site.transformers.values():
            z, tol = x.z_percent_used, x.z_tolerance_percent / 100.0
            if tol > 0:
                found.append(UncertainInput(f"transformers[{x.id}].z_percent", "transformers", x.id, "z_percent",
                                            z * (1 - tol), z * (1 + tol), "%"))
    for c in site.cables.values():
        tol = (c.length_tolerance_percent if c.length_tolerance_percent is not None
               else t.cable_length_percent) / 100.0
        if tol > 0:
            found.append(UncertainInput(f"cables[{c.id}].length", "cables", c.id, "length", c.length_ft * (1 - tol),
                                        c.length_ft * (1 + tol), "ft"))
    for m in site.motors.values():
        low = m.running_fraction_min if m.running_fraction_min is not None else t.motor_running_fraction_min
        if m.contributes and low < 1.0:
            found.append(UncertainInput(f"motors[{m.id}].running_fraction", "motors", m.id, "running_fraction",
                                        max(low, _SMALLEST_FRACTION), 1.0, "-"))
    if t.device_band == "within_band":
        for d in site.devices.values():
            unit = d.trip_unit
            banded = (unit is not None and (unit.pickup_tolerance > 0 or unit.time_tolerance > 0)
                      or d.curve is not None and site.curves[d.curve].min_time_s is not None)
            if banded:
                found.append(UncertainInput(f"devices[{d.id}].band_position", "devices", d.id, "band_position",
                                            -1.0, 1.0, "-"))
    equipment = equipment_table(site)
    for ident, bus in site.buses.items():
        for field, own, default in (("gap_mm", bus.gap_tolerance_mm, t.gap_tolerance_mm),
                                    ("working_distance_mm", bus.working_distance_tolerance_mm,
                                     t.working_distance_tolerance_mm)):
            tol = own if own is not None else default
            value = float(equipment.loc[ident, field])
            if tol > 0:
                low = max(value - tol, 1.0)
                found.append(UncertainInput(f"buses[{ident}].{field}", "buses", ident, field, low, value + tol, "mm"))
    return found


#: Samples a chunk (one task) at most by default [-]: a chunk's samples are studied together, in stacks of
#: :data:`~arcflash.study.stacking.STACK_BUSES` buses at most, and each stack has a fixed cost (about a
#: tenth of a second for the demo, a plain study's work done once): the fewer the stacks, the more samples
#: share it. On a cluster, chunks are made smaller so that each worker has two or more (see
#: :func:`chunk_samples`).
CHUNK_SAMPLES = 500


def chunk_samples(samples, workers=None, scheduler=None):
    """Samples a chunk by default [-]: :data:`CHUNK_SAMPLES` in one process; on a local cluster of ``workers``
    processes, or on a scheduler (taken as two workers), at most an even share of two chunks a worker (a
    worker left without a chunk while another finishes two would waste more than the stacks' fixed cost)."""
    if workers is None and scheduler is None:
        return CHUNK_SAMPLES
    return max(1, min(CHUNK_SAMPLES, -(-samples // (2 * (workers or 2)))))

#: Smallest running share sampled (a size must stay positive) [-].
_SMALLEST_FRACTION = 1e-3

#: The trip-unit settings a band position moves: pickups (multiples) by the pickup tolerance, delays by the
#: time tolerance (as models.curves._trip_unit_band does for its edges).
_PICKUPS = ("long_time_pickup", "instantaneous_pickup")
_DELAYS = ("long_time_delay_s", "short_time_delay_s")


def _at_band_position(device, position):
    """A copy of a device that clears at ``position`` in its band (-1 the fastest edge, +1 the slowest,
    which the study uses). A trip unit: its settings moved there, its tolerances zero (the study's slowest
    edge of the copy is that curve; maintenance settings of the same fields move alike). A digitised curve
    (fuse, thermal-magnetic breaker): the position between its minimum and total-clearing curves, which
    the study's device bank reads (:meth:`~arcflash.study.device_bank.DeviceBank.clearing_time_s`)."""
    if device.trip_unit is None:
        moved = device.replaced()
        moved.__pydantic_private__["_curve_band_position"] = float(position)  # its own dict (replaced)
        return moved
    unit = device.trip_unit
    p, d = 1.0 + position * unit.pickup_tolerance, 1.0 + position * unit.time_tolerance
    own, maintenance = _band_plan(device)
    update = {f: v * (p if pickup else d) for f, v, pickup in own}
    update["pickup_tolerance"] = update["time_tolerance"] = 0.0
    moved = dict(device.maintenance)
    moved.update({f: v * (p if pickup else d) for f, v, pickup in maintenance})
    return device.replaced({"trip_unit": unit.replaced(update), "maintenance": moved})


#: The settings a band position moves, per trip-unit device met (by identity; the entry keeps the device).
_BAND_PLANS = {}
_BAND_PLANS_KEPT = 4096


def _band_plan(device):
    """(field, value, whether a pickup) of the trip unit's settings and of the device's maintenance settings
    that a band position moves (:data:`_PICKUPS` by the pickup tolerance, :data:`_DELAYS` by the time
    tolerance; those set), remembered by the device's identity: every sample moves the same ones."""
    entry = _BAND_PLANS.get(id(device))
    if entry is None or entry[0] is not device:
        if len(_BAND_PLANS) >= _BAND_PLANS_KEPT:
            _BAND_PLANS.clear()
        unit = device.trip_unit
        kinds = {**{f: True for f in _PICKUPS}, **{f: False for f in _DELAYS}}
        own = tuple((f, getattr(unit, f), pickup) for f, pickup in kinds.items() if getattr(unit, f) is not None)
        maintenance = tuple((f, v, kinds[f]) for f, v in device.maintenance.items() if f in kinds and v is not None)
        entry = _BAND_PLANS[id(device)] = (device, own, maintenance)
    return entry[1], entry[2]


def sample_design(inputs, samples, seed):
    """The Latin-hypercube design: one row per sample, one column per input, in the inputs' units."""
    from scipy.stats import qmc

    if not inputs:
        return np.zeros((samples, 0))
    unit = qmc.LatinHypercube(d=len(inputs), seed=np.random.default_rng(seed)).random(samples)
    low = np.array([i.low for i in inputs])
    high = np.array([i.high for i in inputs])
    return low + unit * (high - low)


def _quantity(text_value, unit):
    quantity = Quantity(f"{text_value!r} {unit}")
    quantity.value, quantity.unit = float(text_value), unit
    return quantity


def sample_site(site, inputs, values):
    """A copy of ``site`` with each input set to its value in this sample."""
    from .arcing import equipment_table

    sections = {name: dict(getattr(site, name))
                for name in ("utilities", "transformers", "cables", "buses", "motors", "devices")}
    equipment = None
    for item, value in zip(inputs, values):
        element = sections[item.section][item.ident]
        if item.section == "utilities":
            level = element.max.replaced({"fault": _quantity(float(value), "MVA")})
            element = element.replaced({"max": level, "min": level})
        elif item.section == "transformers":
            element = element.replaced({"z_percent": float(value), "test": None, "z_tolerance_percent": 0.0})
        elif item.section == "cables":
            element = element.replaced({"length": _quantity(float(value), "ft")})
        elif item.section == "motors":
            size = _quantity(element.size.value * float(value), element.size.unit)
            element = element.replaced({"size": size})
        elif item.section == "devices":
            element = _at_band_position(element, float(value))
        else:
            if equipment is None:
                equipment = equipment_table(site)
            fixed = {f: (getattr(element, f) if getattr(element, f) is not None else equipment.loc[item.ident, f])
                     for f in ("config", "gap_mm", "working_distance_mm", "height_mm", "width_mm", "depth_mm")}
            fixed = {k: (None if isinstance(v, float) and math.isnan(v) else v) for k, v in fixed.items()}
            element = element.replaced({**fixed, item.field: float(value)})
        sections[item.section][item.ident] = element
    return dataclasses.replace(site, **sections)


def run_chunk(site, inputs, rows, scenario=None):
    """Governing incident energy [cal/cm²], arc-flash boundary [mm] and the bolted current of that row [kA]
    of every bus for each row of the design (arrays samples × buses, buses in the site's order).

    The samples are studied together: each sampled site a copy in one stacked site
    (:mod:`arcflash.study.stacking`, at most :data:`~arcflash.study.stacking.STACK_BUSES` buses a stack),
    each copy's results equal to its sample studied alone."""
    return _studied_variants(site, len(rows), lambda k: sample_site(site, inputs, rows[k]), scenario)


def study_variants(site, variants, scenario=None):
    """Governing incident energy [cal/cm²], arc-flash boundary [mm] and the bolted current of that row [kA]
    of every bus for each of ``variants`` (sites made from ``site`` by replacing elements: uncertainty
    samples, mitigation candidates; arrays variants × buses, buses in the site's order), studied together
    as :func:`run_chunk` studies samples: each variant's numbers are those of its own study, bit for bit."""
    return _studied_variants(site, len(variants), variants.__getitem__, scenario)


def _studied_variants(site, count, variant, scenario):
    """The variants ``variant(0)`` ... ``variant(count - 1)`` of ``site``, made a stack at a time and studied
    with the cyclic collector paused (a chunk makes many short-lived objects: its passes cost a tenth)."""
    from .arcing import equipment_table
    from .faults import bus_index
    from .pipeline import scenario_numbers
    from .stack_tiling import tagged_ids
    from .stacking import stack_size, stacked_site

    buses = list(site.buses)
    energy = np.full((count, len(buses)), np.nan)
    boundary = np.full((count, len(buses)), np.nan)
    bolted = np.full((count, len(buses)), np.nan)
    names = [site.scenario(scenario).name] if scenario is not None else list(site.scenarios)
    size = stack_size(site)
    with collector_paused():
        for lo in range(0, count, size):
            group = range(lo, min(count, lo + size))
            stacked = stacked_site([variant(k) for k in group], base=site)
            equipment = equipment_table(stacked)
            order = bus_index(tagged_ids(buses, len(group)))
            tables = [scenario_numbers(stacked, stacked.scenarios[name], equipment) for name in names]
            shape = (len(group), len(buses))
            for into, values in zip((energy, boundary, bolted), _governing_values(tables, order)):
                into[lo:lo + len(group)] = values.reshape(shape)
    return energy, boundary, bolted


def _governing_values(tables, order):
    """Governing incident energy, arc-flash boundary and bolted current of each bus of ``order`` over the
    scenarios' numbers (one each, :func:`~arcflash.study.pipeline.scenario_numbers`: arrays and the buses'
    index): per row the larger-energy arcing case, per bus the row of the largest energy, the first
    scenario's on a tie or where none is energised — the choices of :func:`~arcflash.study.pipeline._finish`
    and :func:`~arcflash.study.pipeline.governing_rows`, taken on arrays (a run's samples need these numbers,
    not the rows)."""
    energy, boundary, bolted = [], [], []
    for values, index in tables:
        full, reduced, full_boundary, reduced_boundary, bolted_ka = values
        if not index.equals(order):
            at = index.get_indexer(order)
            full, reduced, full_boundary, reduced_boundary, bolted_ka = (
                np.where(at >= 0, v[at], np.nan) for v in values)
        governs = reduced > full
        energy.append(np.where(governs, reduced, full))
        boundary.append(np.where(governs, reduced_boundary, full_boundary))
        bolted.append(bolted_ka)
    energy, boundary, bolted = np.array(energy), np.array(boundary), np.array(bolted)
    row = np.argmax(np.where(np.isnan(energy), -1.0, energy), axis=0)  # the first of the largest
    at = np.arange(order.size)
    return energy[row, at], boundary[row, at], bolted[row, at]


@dataclass(frozen=True)
class UncertaintyResult:
    """Per bus: the band of energy and boundary, the chance of exceeding the plain study's category, the
    drivers; and the samples themselves."""

    bands: pd.DataFrame
    drivers: pd.DataFrame
    energy_cal_cm2: np.ndarray
    boundary_mm: np.ndarray
    bolted_ka: np.ndarray
    design: np.ndarray
    inputs: list
    samples: int = 0
    seed: int = 0


def _category_edges(energy):
    """The upper edge of the PPE category of each energy [cal/cm²]: 1.2 below category 1, the category's
    arc rating for 1 to 4, and 40 above category 4 or where the plain study computed none."""
    energy = np.asarray(energy, dtype=float)
    category = np.where(np.isfinite(energy), nfpa70e.ppe_category(np.nan_to_num(energy)), -2)
    edges = {0: nfpa70e.BOUNDARY_ENERGY_CAL_CM2, **nfpa70e.PPE_CATEGORY_ARC_RATING_CAL_CM2}
    table = np.array([edges.get(c, nfpa70e.NO_CATEGORY_ABOVE_CAL_CM2) for c in range(-2, 5)])
    return table[category + 2]


def _standardized(columns):
    """Columns scaled to mean 0 and (population) standard deviation 1; constant columns to 0."""
    centred = columns - columns.mean(axis=0)
    spread = centred.std(axis=0)
    return np.divide(centred, spread, out=np.zeros_like(centred), where=spread > 0)


def summarize(site, plain_governing, energy, boundary, design, inputs, top=3):
    """Bands per bus and the top drivers of each bus's energy (Spearman rank correlation)."""
    from scipy.stats import rankdata

    import warnings

    buses = list(site.buses)
    plain = plain_governing.reindex(buses)["incident_energy_governing_cal_cm2"].to_numpy(float)
    edge = _category_edges(plain)
    with warnings.catch_warnings():  # a bus de-energised in every sample has NaN statistics, not a warning
        warnings.simplefilter("ignore", RuntimeWarning)
        quantiles = np.nanpercentile(energy, [5, 50, 95], axis=0)
        bounds = np.nanpercentile(boundary, [5, 50, 95], axis=0)
        exceed = np.nanmean(np.where(np.isfinite(energy), energy > edge, np.nan), axis=0)
        largest, farthest = np.nanmax(energy, axis=0), np.nanmax(boundary, axis=0)
    bands = pd.DataFrame({
        "incident_energy_plain_cal_cm2": plain,
        "incident_energy_p5_cal_cm2": quantiles[0], "incident_energy_p50_cal_cm2": quantiles[1],
        "incident_energy_p95_cal_cm2": quantiles[2], "incident_energy_max_cal_cm2": largest,
        "arc_flash_boundary_p5_mm": bounds[0], "arc_flash_boundary_p50_mm": bounds[1],
        "arc_flash_boundary_p95_mm": bounds[2], "arc_flash_boundary_max_mm": farthest,
        "category_edge_cal_cm2": edge, "probability_above_category_edge": exceed,
    }, index=pd.Index(buses, name="bus"))
    rows = []
    if inputs and len(design) > 2:
        # Spearman's rho: the correlation of ranks; ranks standardized once, then one product per block of buses
        ranked = _standardized(rankdata(design, axis=0))
        names = [i.name for i in inputs]
        for lo in range(0, len(buses), 512):
            block = energy[:, lo:lo + 512]
            usable = np.isfinite(block).all(axis=0) & (np.ptp(np.nan_to_num(block), axis=0) > 0)
            rho = ranked.T @ _standardized(rankdata(np.nan_to_num(block), axis=0)) / len(design)
            for j in np.flatnonzero(usable):
                order = np.argsort(-np.abs(rho[:, j]), kind="stable")[:top]
                rows += [(buses[lo + j], names[i], float(rho[i, j])) for i in order]
    drivers = pd.DataFrame(rows, columns=["bus", "input", "spearman_rho"])
    return bands, drivers


def uncertainty(site, samples=1000, seed=0, scenario=None, chunk_size=None, workers=None,
                scheduler=None, progress=None, plain=None):
    """The study on ``samples`` Latin-hypercube samples of the site's uncertain inputs.

    Parameters
    ----------
    site : Site
    samples : int
        Number of samples [-]
    seed : int
        Seed of the design: the same seed gives the same result, bit for bit, whatever the split [-]
    scenario : str, optional
        One scenario; default every scenario, the governing one per bus and sample [-]
    chunk_size : int, optional
        Samples per task; default :func:`chunk_samples` [-]
    workers : int, optional
        Run the chunks on a local Dask cluster of this many worker processes [-]
    scheduler : str, optional
        Address of an existing dask.distributed scheduler to run the chunks on [-]
    progress : callable, optional
        Called with the number of chunks done each time one finishes [-]
    plain : pandas.DataFrame, optional
        The plain study's governing rows when already at hand (every scenario) [-]

    Returns
    -------
    UncertaintyResult
    """
    from .pipeline import run_study

    if samples < 1:
        raise ValueError(f"samples: expected at least 1, got {samples}")
    inputs = uncertain_inputs(site)
    design = sample_design(inputs, samples, seed)
    chunk_size = chunk_samples(samples, workers, scheduler) if chunk_size is None else chunk_size
    chunks = [design[lo:lo + chunk_size] for lo in range(0, samples, chunk_size)]
    parts = _run_chunks(site, inputs, chunks, scenario, workers, scheduler, progress)
    energy = np.concatenate([p[0] for p in parts])
    boundary = np.concatenate([p[1] for p in parts])
    bolted = np.concatenate([p[2] for p in parts])
    if scenario is not None:
        plain = _scenario_governing(site, scenario)
    elif plain is None:
        plain = run_study(site).governing
    bands, drivers = summarize(site, plain, energy, boundary, design, inputs)
    return UncertaintyResult(bands, drivers, energy, boundary, bolted, design, inputs, samples, seed)


def _scenario_governing(site, scenario):
    from .pipeline import governing_rows, study_rows

    rows = study_rows(site)
    return governing_rows(rows[rows["scenario"] == site.scenario(scenario).name])


def _run_chunks(site, inputs, chunks, scenario, workers, scheduler, progress):
    """Each chunk's (energy, boundary), in order: in-process, or as Dask tasks on a cluster."""
    if workers is None and scheduler is None:
        parts = []
        for number, chunk in enumerate(chunks, start=1):
            parts.append(run_chunk(site, inputs, chunk, scenario))
            if progress:
                progress(number)
        return parts
    from distributed import Client, LocalCluster, as_completed

    cluster = None if scheduler is not None else LocalCluster(n_workers=workers, threads_per_worker=1,
                                                              processes=True, dashboard_address=None)
    try:
        with Client(scheduler if scheduler is not None else cluster) as client:
            shared = client.scatter((site, inputs), broadcast=True)
            futures = [client.submit(_chunk_task, shared, chunk, scenario, pure=False) for chunk in chunks]
            for number, _ in enumerate(as_completed(futures), start=1):
                if progress:
                    progress(number)
            return client.gather(futures)
    finally:
        if cluster is not None:
            cluster.close()


def _chunk_task(shared, chunk, scenario):
    site, inputs = shared
    return run_chunk(site, inputs, chunk, scenario)

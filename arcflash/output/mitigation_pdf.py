"""The mitigation search as a PDF (``arcflash mitigate --out``): the answer per bus, and for each bus with a
candidate that keeps selectivity and starting, the best one's time-current plots before and after."""

from __future__ import annotations

from xml.sax.saxutils import escape

from reportlab.platypus import PageBreak, Paragraph, Spacer

from .cautions import CAUTION
from .report import _STYLES, _p, _table, _tcc_data_again, build_pdf


def write_mitigation_pdf(site, found, path, model=None):
    """Write the search ``found`` (:class:`~arcflash.study.mitigation.MitigationResult`) of ``site`` to
    ``path``: the buses above the target with their best change or why none, then before/after TCC plots."""
    from ..study.pipeline import run_study
    from ..verification import status
    from .tcc_pdf import TccPage

    model = status(getattr(site, "path", None)) if model is None else model
    story = [Paragraph(f"Mitigation search: {escape(site.facility.name)}", _STYLES["Title"]),
             _p(f"Target {found.target_cal_cm2:g} cal/cm2. Changes of the searched space on the devices that end "
                "each bus's arcs, each studied through the whole chain and checked for selectivity, motor "
                "starting and transformer inrush (docs/mitigation.md)."), Spacer(1, 6), _p(escape(CAUTION)),
             Spacer(1, 8)]
    rows = [[row.bus, f"{row.incident_energy_before_cal_cm2:.3g}", row.devices or "-",
             ("best: " if row.status == "candidates" else "none: ") + row.best_or_reason]
            for row in found.buses.itertuples(index=False)]
    story.append(_table(["Bus", "Now [cal/cm2]", "Ended by", "Best change, or why none"], rows,
                        widths=[1.0, 0.8, 1.2, 4.3]) if rows else _p("Every bus is at or below the target."))
    if len(found.buses) and (found.buses["status"] == "candidates").any():
        before = run_study(site)
        for row in found.buses.itertuples(index=False):
            if row.status != "candidates":
                continue
            mine = found.candidates[found.candidates["bus"] == row.bus].iloc[0]
            candidate = found.proposals[int(mine["candidate"])]
            changed = candidate.site_of(site)
            after = run_study(changed)
            for title, where, results in (("before", site, before), (f"after: {candidate.change}", changed, after)):
                energy = results.governing.loc[row.bus, "incident_energy_governing_cal_cm2"]
                data = _with_downstream(where, _tcc_data_again(where, results, row.bus), candidate.devices)
                story += [PageBreak(), Paragraph(escape(f"{row.bus}, {title}"), _STYLES["Heading2"]),
                          _p(f"Incident energy {energy:.3g} cal/cm2. Also drawn: the devices just downstream of "
                             f"{', '.join(candidate.devices)}, with which it must stay selective."),
                          TccPage(where, data)]
    build_pdf(path, story, site, model, f"Mitigation search - {site.facility.name}")


#: Devices just downstream of a changed device drawn on its before/after pages, at most [-].
DOWNSTREAM_DRAWN = 5


def _with_downstream(site, data, changed):
    """``data`` (a TCC page's) with the devices just downstream of the ``changed`` ones added (the first
    :data:`DOWNSTREAM_DRAWN`, by the buses they feed), in the page's scenario; their currents at this bus's arc
    are not drawn (NaN)."""
    import dataclasses

    from ..study.clearing import clearing_paths
    from ..study.faults import solve_scenario
    from ..study.tcc_data import TccDevice
    from ..study.zones import first_below

    scenario = site.scenario(data.scenario)
    paths = clearing_paths(site, scenario, solve_scenario(site, scenario.name, for_clearing=True))
    ids = list(paths.device_ids)
    shown = {d.device for d in data.devices}
    extra = []
    for device in changed:
        if device in ids:
            below = first_below(paths, ids.index(device))
            fed = {int(d): int((paths.device == d).sum()) for d in below.tolist()}
            extra += [ids[d] for d in sorted(fed, key=lambda d: -fed[d]) if ids[d] not in shown]
    extra = list(dict.fromkeys(extra))[:DOWNSTREAM_DRAWN]
    maintenance = set(scenario.energy_reducing_maintenance_switching)
    nan = float("nan")
    added = tuple(TccDevice(d, site.buses[site.devices[d].at_bus].nominal_kv, d in maintenance, nan, nan)
                  for d in extra)
    return dataclasses.replace(data, devices=tuple(data.devices) + added)

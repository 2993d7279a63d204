"""The ``mitigate`` command: changes that bring buses below a target energy, with their costs."""

from __future__ import annotations

import os

import click

from .models.nfpa70e import ppe_category_words
from .output.cautions import CAUTION


@click.command("mitigate")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--target", "target_cal_cm2", type=click.FloatRange(min=0.0, min_open=True), required=True,
              help="Incident energy to bring every bus down to [cal/cm2].")
@click.option("--top", type=click.IntRange(min=1), default=3, show_default=True,
              help="Candidates shown per bus.")
@click.option("--out", "out_dir", type=click.Path(file_okay=False), default=None,
              help="Write mitigation.csv (every candidate, ranked per bus), mitigation_buses.csv and mitigation.pdf "
                   "(before/after time-current plots of each bus's best change) to this folder.")
@click.option("--apply", "apply_number", type=click.IntRange(min=0), default=None,
              help="Write a new site revision with this candidate's change (its number in mitigation.csv).")
@click.option("--to", "new_dir", type=click.Path(file_okay=False), default=None,
              help="The new folder of that revision (must not exist; the site folder is never changed).")
def mitigate_command(site_dir, target_cal_cm2, top, out_dir, apply_number, new_dir):
    """Setting and procedure changes that bring every bus above the target down to it: the devices that end
    its arcs, the changes of the search space (docs/mitigation.md), each studied through the whole chain and
    checked for selectivity, motor starting and transformer inrush."""
    from .cli import _load
    from .output.files import write_atomic
    from .output.mitigation_pdf import write_mitigation_pdf
    from .study.mitigation import mitigate

    if (apply_number is None) != (new_dir is None):
        raise click.UsageError("--apply and --to go together: the candidate's number and the new folder")
    site = _load(site_dir)
    found = mitigate(site, target_cal_cm2)
    click.echo(mitigation_text(site.facility.name, found, top))
    if apply_number is not None:
        _apply(site_dir, site, found, apply_number, new_dir)
    if out_dir:
        os.makedirs(out_dir, exist_ok=True)
        for name, table in (("mitigation.csv", found.candidates), ("mitigation_buses.csv", found.buses)):
            write_atomic(os.path.join(out_dir, name), lambda tmp, t=table: t.to_csv(tmp, index=False,
                                                                                   float_format="%.6g"))
        write_atomic(os.path.join(out_dir, "mitigation.pdf"), lambda tmp: write_mitigation_pdf(site, found, tmp))
        click.echo(f"Candidates written to {os.path.join(out_dir, 'mitigation.csv')}; before/after plots to "
                   f"{os.path.join(out_dir, 'mitigation.pdf')}")


def _apply(site_dir, site, found, number, new_dir):
    """Write the revision of candidate ``number`` to ``new_dir``, with its note."""
    import datetime as dt

    from .site.revision import RevisionError, write_revision

    rows = found.candidates[found.candidates["candidate"] == number]
    if not len(rows):
        raise click.UsageError(f"--apply {number}: no candidate has that number (see the 'candidate' column of "
                               "mitigation.csv)")
    candidate = found.proposals[number]
    lines = ["# Site revision written by arcflash mitigate", "",
             f"From: {site_dir}, on {dt.date.today().isoformat()}; target {found.target_cal_cm2:g} cal/cm2.", "",
             f"Change ({candidate.kind}): {candidate.change}", ""]
    for row in rows.itertuples(index=False):
        lines.append(f"- {row.bus}: {row.incident_energy_before_cal_cm2:.3g} -> {row.incident_energy_cal_cm2:.3g} "
                     f"cal/cm2; selectivity lost: {row.selectivity_lost or 'none'}; starting or inrush: "
                     f"{row.starting_or_inrush or 'none'}")
    lines += ["", "Run the study again on this folder, and check the change on the time-current curves, before "
              "relying on it.", "", CAUTION, ""]
    try:
        written = write_revision(site_dir, site, candidate.settings, "\n".join(lines), new_dir)
    except RevisionError as exc:
        raise click.UsageError(str(exc)) from None
    click.echo(f"Revision with candidate {number} written to {written} (see its REVISION.md)")


def mitigation_text(facility, found, top):
    """The finder's answer per bus, in words, with the cautions."""
    lines = [f"Mitigation search: {facility}", f"Target: {found.target_cal_cm2:g} cal/cm2", ""]
    if not len(found.buses):
        lines.append("Every bus is at or below the target.")
    for row in found.buses.itertuples(index=False):
        lines.append(f"{row.bus}: {row.incident_energy_before_cal_cm2:.3g} cal/cm2 now"
                     + (f"; ended by {row.devices}" if row.devices else ""))
        if row.status == "candidates":
            lines.append(f"  best: {row.best_or_reason}")
        else:
            lines.append(f"  none reaches the target: {row.best_or_reason}")
        mine = found.candidates[found.candidates["bus"] == row.bus].head(top)
        for c in mine.itertuples(index=False):
            costs = [f"loses selectivity: {c.selectivity_lost}" if c.selectivity_lost else "",
                     f"starting/inrush: {c.starting_or_inrush}" if c.starting_or_inrush else "",
                     "" if c.reduced_arcing_reaches_pickup else "the reduced arcing current stays below the new pickup"]
            costs = "; ".join(x for x in costs if x) or "selectivity and starting kept"
            lines.append(f"    - #{c.candidate} {c.change} [{c.kind}]: {c.incident_energy_cal_cm2:.3g} cal/cm2, "
                         f"{ppe_category_words(c.ppe_category)}; {costs}")
        lines.append("")
    lines.append("Changes to protective settings are engineering decisions: check them on the time-current curves "
                 "before making them.")
    lines.append(CAUTION)
    return "\n".join(lines)

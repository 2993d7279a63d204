"""Command-line interface: parse options, call the library, render. Nothing else."""

from __future__ import annotations

import io
import json
import os
import sys

import click

from .cli_options import NON_NEGATIVE, POSITIVE, QUICK_FIELDS, SIGNED, in_option_words, quick_problem_words
from .cli_options import refuse_alone, refuse_conflicts
from .cli_mitigate import mitigate_command
from .cli_selfcheck import selfcheck
from .errors import SiteDataError
from .models.errors import ModelRangeError
from .output.cautions import CAUTION
from .models.ieee1584_tables import CONFIGURATIONS, EQUIPMENT_CLASSES
from .output.files import write_atomic
from .output.text import energy_text, equipment_report, fault_table
from .site.loader import load_site
from .site.schema import site_json_schema
from .study.equipment import assess_equipment
from .study.faults import solve_scenario


class _Commands(click.Group):
    """The command group: a file that cannot be read or written is a user error (exit 2), not a traceback."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except BrokenPipeError:  # the reader went away (e.g. `| head`): stop quietly, as pipes expect
            try:
                os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
            except (OSError, ValueError, io.UnsupportedOperation):
                pass
            sys.exit(1)
        except OSError as exc:
            where = exc.filename if exc.filename is not None else "a file"
            raise click.UsageError(f"cannot use {where}: {exc.strerror or exc}") from None


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="arcflash")
def main():
    """arcflash: arc-flash hazard calculations by IEEE 1584-2018.

    Results are for qualified persons; local codes and licensed engineering
    practice govern.
    """
    from .output.memory import release_large_blocks_promptly

    release_large_blocks_promptly()


@main.command("equipment")
@click.option("--voltage-kv", type=POSITIVE, required=True, help="Nominal system voltage, line to line [kV].")
@click.option("--bolted-ka", type=POSITIVE, required=True, help="Bolted three-phase fault current [kA].")
@click.option("--clearing-time-s", type=POSITIVE, required=True,
              help="Arc duration at the full arcing current, from the protective device [s].")
@click.option("--reduced-clearing-time-s", type=POSITIVE, default=None,
              help="Arc duration at the reduced arcing current, from the device's curve [s]; required unless "
                   "--accept-same-reduced-time.")
@click.option("--accept-same-reduced-time", "accept_same_time", is_flag=True,
              help="Use the full-current time for the reduced current too (reported as not conservative).")
@click.option("--class", "equipment_class", type=click.Choice(sorted(EQUIPMENT_CLASSES)), default=None,
              help="Equipment class supplying typical gap, distance, enclosure and configuration.")
@click.option("--config", type=click.Choice(CONFIGURATIONS, case_sensitive=False), default=None,
              help="Electrode configuration (overrides the class).")
@click.option("--gap-mm", type=POSITIVE, default=None, help="Gap between conductors [mm].")
@click.option("--working-distance-mm", type=POSITIVE, default=None, help="Working distance [mm].")
@click.option("--height-mm", type=POSITIVE, default=None, help="Enclosure height [mm].")
@click.option("--width-mm", type=POSITIVE, default=None, help="Enclosure width [mm].")
@click.option("--depth-mm", type=POSITIVE, default=None, help="Enclosure depth [mm].")
@click.option("--strict", is_flag=True, help="Refuse inputs outside the range of the model instead of flagging.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
def equipment(voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s, accept_same_time, equipment_class,
              config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm, strict, as_json):
    """Incident energy, arc-flash boundary, PPE category and shock boundaries of one piece of equipment."""
    refuse_conflicts(click.get_current_context(), ["reduced_clearing_time_s"], ["accept_same_time"])
    try:
        record = assess_equipment(
            voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s,
            equipment_class=equipment_class, config=config, gap_mm=gap_mm,
            working_distance_mm=working_distance_mm, height_mm=height_mm, width_mm=width_mm,
            depth_mm=depth_mm, strict=strict, accept_same_time=accept_same_time,
        )
    except (ValueError, ModelRangeError) as exc:
        raise click.UsageError(in_option_words(str(exc), click.get_current_context())) from None
    if as_json:
        click.echo(json.dumps({**record, "model_verification": _status_words()}, indent=2))
    else:
        click.echo(equipment_report(record))
        click.echo(_status_words())


def _status_words(site_dir=None):
    """The model's verification status in words (:mod:`arcflash.verification`): printed after the limits of
    use by every command that sets PPE."""
    from .verification import status

    return status(site_dir).words


def _load(site_dir):
    """Load a site or exit 2 listing every problem (no traceback)."""
    try:
        site = load_site(site_dir)
    except SiteDataError as exc:
        click.echo(str(exc), err=True)
        sys.exit(2)
    for warning in site.warnings:
        click.echo(f"warning: {warning}", err=True)
    return site


@main.command("faults")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--scenario", default=None, help="Scenario name (default: the site's default scenario).")
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None,
              help="Write the bus fault table to this CSV file.")
@click.option("--devices-csv", type=click.Path(dir_okay=False), default=None,
              help="Write the current through each protective device, per bus fault, to this CSV file.")
def faults(site_dir, scenario, csv_path, devices_csv):
    """Bolted three-phase fault current at every bus of a site."""
    site = _load(site_dir)
    try:
        result = solve_scenario(site, scenario)
    except KeyError as exc:
        raise click.UsageError(str(exc.args[0])) from None
    if csv_path:
        write_atomic(csv_path, lambda tmp: result.buses.to_csv(tmp, float_format="%.6g"))
    if devices_csv:
        write_atomic(devices_csv, lambda tmp: result.devices.to_csv(tmp, index=False, float_format="%.6g"))
    click.echo(fault_table(site.facility.name, result.scenario, result.buses))
    if csv_path:
        click.echo(f"Bus fault table written to {csv_path}")
    if devices_csv:
        click.echo(f"Device currents written to {devices_csv}")


@main.command("tcc")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.argument("bus")
@click.option("--scenario", default=None, help="Scenario name (default: the site's default scenario).")
@click.option("--kv", "reference_kv", type=POSITIVE, default=None, help="Refer currents to this kV (default: the bus's).")
@click.option("--out", type=click.Path(dir_okay=False), required=True, help="Output file: .png, .svg or .pdf.")
def tcc(site_dir, bus, scenario, reference_kv, out):
    """Time-current plot of the devices protecting BUS, with its fault currents marked."""
    from .output.tcc import tcc_figure

    suffix = out.rsplit(".", 1)[-1].lower()
    if suffix not in ("png", "svg", "pdf"):
        raise click.UsageError(f"--out: expected a .png, .svg or .pdf file name, got {out!r}")
    site = _load(site_dir)
    if bus not in site.buses:
        raise click.UsageError(f"unknown bus {bus!r}; the site has {len(site.buses)} buses, e.g. {next(iter(site.buses))}")
    try:
        figure = tcc_figure(site, bus, scenario, reference_kv)
    except KeyError as exc:
        raise click.UsageError(str(exc.args[0])) from None
    write_atomic(out, lambda tmp: figure.savefig(tmp, format=suffix, dpi=150))
    click.echo(f"TCC plot of {bus} written to {out}")


@main.command("clearing")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--scenario", default=None, help="Scenario name (default: the site's default scenario).")
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None, help="Write the table to CSV.")
def clearing(site_dir, scenario, csv_path):
    """Arcing currents, arc duration and governing device at every bus."""
    from .output.text import clearing_report
    from .study.clearing import clearing_table

    site = _load(site_dir)
    try:
        table = clearing_table(site, scenario)
    except KeyError as exc:
        raise click.UsageError(str(exc.args[0])) from None
    click.echo(clearing_report(site.facility.name, site.scenario(scenario).name, table))
    if csv_path:
        write_atomic(csv_path, lambda tmp: table.to_csv(tmp, float_format="%.6g"))
        click.echo(f"Clearing table written to {csv_path}")


@main.command("study")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--out", "out_dir", type=click.Path(file_okay=False), required=True,
              help="Folder for results.csv, governing.csv, steps.csv, results.xlsx and report.pdf.")
@click.option("--tcc-bus", "tcc_buses", multiple=True, help="Bus with a TCC page in the report (repeatable).")
@click.option("--no-report", is_flag=True, help="Write the result tables only.")
@click.option("--quiet", is_flag=True, help="No progress bar.")
@click.option("--uncertainty", "samples", type=click.IntRange(2, 100_000), default=None,
              help="Also run this many Latin-hypercube samples of the inputs within their tolerances "
                   "(facility.tolerances) and write uncertainty.csv and drivers.csv.")
@click.option("--seed", type=int, default=0, help="Seed of the samples (the same seed, the same result).")
@click.option("--workers", type=click.IntRange(1, 256), default=None,
              help="Run the samples on a local Dask cluster of this many processes (default: in this process).")
@click.option("--scheduler", default=None, metavar="ADDRESS",
              help="Run the samples on an existing dask.distributed scheduler (tcp://host:8786).")
def study(site_dir, out_dir, tcc_buses, no_report, quiet, samples, seed, workers, scheduler):
    """Run the facility study: every scenario, both arcing cases, the governing case per bus."""
    from .output.report import ONE_LINE_IN_REPORT_MAX_BUSES
    from .study.pipeline import run_study

    ctx = click.get_current_context()
    refuse_conflicts(ctx, ["workers"], ["scheduler"])
    for name in ("workers", "scheduler"):
        refuse_alone(ctx, name, ["samples"])

    site = _load(site_dir)
    unknown = [b for b in tcc_buses if b not in site.buses]
    if unknown:
        raise click.UsageError(f"--tcc-bus: unknown bus {unknown[0]!r}")
    with click.progressbar(length=len(site.scenarios), label="Scenarios", file=sys.stderr,
                           hidden=quiet) as bar:
        results = run_study(site, None if samples else out_dir, progress=lambda name: bar.update(1),
                            report=not no_report, tcc_buses=list(tcc_buses) or None)
    if samples:  # the bands go into the tables and the report: run them before writing
        from .output.results import write_results

        result = _uncertainty(site, results.governing, samples, seed, workers, scheduler, quiet)
        write_results(site, results, out_dir, report=not no_report, tcc_buses=list(tcc_buses) or None,
                      uncertainty=result)
    governing = results.governing
    worst = governing["incident_energy_governing_cal_cm2"].idxmax()
    flagged = int((governing["flags"] != "").sum())
    click.echo(f"Study of {site.facility.name}: {len(governing)} buses, {len(site.scenarios)} scenarios.")
    click.echo(f"Highest incident energy: {energy_text(governing.loc[worst, 'incident_energy_governing_cal_cm2'])} cal/cm2 "
               f"at {worst} ({governing.loc[worst, 'scenario']}); {flagged} buses flagged.")
    drawings = ["oneline.pdf"] if not no_report and len(site.buses) > ONE_LINE_IN_REPORT_MAX_BUSES else []
    files = (["results.csv", "governing.csv", "steps.csv", "results.xlsx"] + ([] if no_report else ["report.pdf"])
             + drawings
             + ["study.json (what labels and briefings check their data against)"])
    click.echo(f"Results in {out_dir}: " + ", ".join(files + (["uncertainty.csv", "drivers.csv"] if samples else [])))
    if samples:
        widest = result.bands["incident_energy_p95_cal_cm2"].idxmax()
        click.echo(f"Uncertainty: {samples} samples of {len(result.inputs)} inputs (seed {seed}); highest P95 "
                   f"{energy_text(result.bands.loc[widest, 'incident_energy_p95_cal_cm2'])} cal/cm2 at {widest}.")
    click.echo(CAUTION)
    click.echo(_status_words(site.path))


def _uncertainty(site, governing, samples, seed, workers, scheduler, quiet):
    """The uncertainty run of ``study --uncertainty N``, with a progress bar of chunks."""
    from .study.uncertainty import chunk_samples, uncertainty

    chunk = chunk_samples(samples, workers, scheduler)
    with click.progressbar(length=-(-samples // chunk), label="Sample chunks", file=sys.stderr,
                           hidden=quiet) as bar:
        done = [0]

        def step(number):
            bar.update(number - done[0])
            done[0] = number

        return uncertainty(site, samples, seed, chunk_size=chunk, workers=workers, scheduler=scheduler,
                           progress=step, plain=governing)


@main.group("labels")
def labels():
    """Equipment labels: print them, and check which ones in the field are stale."""


@labels.command("print")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--out", "out_dir", type=click.Path(file_okay=False), required=True, help="Folder for the PDFs.")
@click.option("--bus", "buses", multiple=True, help="Only this bus (repeatable).")
@click.option("--changed-only", is_flag=True, help="Only labels whose content changed since last issued.")
@click.option("--layout", default="label-4x6", help="Layout of the single labels (see label_layouts/).")
@click.option("--sheet", default="sheet-letter-2x2", help="Layout of the combined sheet.")
@click.option("--issued-by", default=None, help="Name recorded in the ledger.")
@click.option("--study", "study_dir", type=click.Path(file_okay=False, exists=True), default=None,
              help="Folder of an earlier 'arcflash study' run (its governing.csv); default: run the study now.")
@click.option("--accept-stale-study", "stale_reason", default=None, metavar="REASON",
              help="Use a --study that no longer matches the site data; the reason is recorded in the ledger.")
@click.option("--basis", type=click.Choice(["study", "p95", "max"]), default="study", show_default=True,
              help="Energy and boundary printed: the study's, or the higher of it and the P95 (or highest) of "
                   "its uncertainty run (a --study run with --uncertainty N); the label states it.")
def labels_print(site_dir, out_dir, buses, changed_only, layout, sheet, issued_by, study_dir, stale_reason, basis):
    """Print labels from a study of the site and record them in the site's ledger."""
    from .output.label_basis import BasisError, governing_on_basis, uncertainty_samples
    from .output.labels import issue_labels, load_layout
    from .study.pipeline import run_study

    for option, name in (("--layout", layout), ("--sheet", sheet)):
        try:
            load_layout(name)
        except ValueError as exc:
            raise click.UsageError(f"{option}: {exc}") from None
    site = _load(site_dir)
    if basis != "study" and not study_dir:
        raise click.UsageError(f"--basis {basis} needs --study DIR: the folder of 'arcflash study SITE "
                               "--uncertainty N --out DIR'")
    governing = _earlier_study(study_dir, site, stale_reason) if study_dir else run_study(site).governing
    try:
        governing = governing_on_basis(governing, basis, uncertainty_samples(study_dir) if study_dir else None)
    except BasisError as exc:
        raise click.UsageError(str(exc)) from None
    try:
        printed = issue_labels(site, governing, out_dir, layout, sheet, list(buses), changed_only, issued_by)
    except KeyError as exc:
        raise click.UsageError(str(exc.args[0])) from None
    except ValueError as exc:  # a label that does not fit its layout
        raise click.UsageError(str(exc)) from None
    _record_stale_use(governing, site, "labels print", study_dir, stale_reason,
                      [c.equipment_id for c in printed], issued_by)
    click.echo(f"{len(printed)} labels printed to {out_dir} and recorded in the ledger.")
    for content in printed:
        click.echo(f"  {content.equipment_id}  {content.signal_word}  {content.energy_or_category}")
    click.echo(CAUTION)
    click.echo(_status_words(site.path))


def _earlier_study(study_dir, site, stale_reason, briefing=False):
    """The governing table of an earlier study; refused (exit 2) if stale and no reason was given."""
    from .output.labels import read_governing

    if stale_reason is not None and not stale_reason.strip():
        raise click.UsageError("--accept-stale-study: expected a reason in words (it is recorded in the ledger)")
    try:
        return read_governing(study_dir, site, briefing=briefing, accept_stale=stale_reason)
    except ValueError as exc:
        raise click.UsageError(str(exc)) from None


def _record_stale_use(governing, site, command, study_dir, stale_reason, equipment, used_by=None):
    """Record in the ledger, and say, that a stale study was used (nothing when it was current)."""
    from .output import ledger

    stale = governing.attrs.get("stale") if study_dir else None
    if stale:
        ledger.record_override(ledger.ledger_path(site.path), command, study_dir, stale_reason, stale, equipment,
                               used_by)
        click.echo(f"NOTE: study {study_dir} no longer matches the site data ({'; '.join(stale)}); used on your "
                   f"reason '{stale_reason}', recorded in the ledger.")


@labels.command("diff")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.option("--since", "since", default=None, metavar="REVISION",
              help="Compare with the last labels issued for this study revision (default: the last issued).")
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), default=None, help="Write the changes as CSV.")
@click.option("--pdf", "pdf_path", type=click.Path(dir_okay=False), default=None,
              help="Write the changes as a page for the crew (PDF).")
def labels_diff(site_dir, since, csv_path, pdf_path):
    """Why each label changed since it was issued: old and new values, the study stage moved, the input."""
    from .output import ledger
    from .output.label_diff import changes_table, changes_text, label_changes, write_changes_pdf
    from .study.pipeline import run_study

    site = _load(site_dir)
    changes = label_changes(site, run_study(site).governing, ledger.ledger_path(site.path), since)
    if csv_path:
        write_atomic(csv_path, lambda tmp: changes_table(changes).to_csv(tmp, index=False))
    if pdf_path:
        write_atomic(pdf_path, lambda tmp: write_changes_pdf(changes, tmp, site))
    click.echo(changes_text(changes))
    click.echo(CAUTION)
    click.echo(_status_words(site.path))


@labels.command("status")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
def labels_status(site_dir):
    """Which labels are current, changed since issued, never issued or due for review."""
    from .output import ledger
    from .output.labels import labels_of
    from .study.pipeline import run_study

    site = _load(site_dir)
    governing = run_study(site).governing
    contents = labels_of(site, governing)
    states = ledger.status(ledger.ledger_path(site.path), contents)
    for bus, state in states.items():
        click.echo(f"  {bus:<20}{state}")
    counts = {s: list(states.values()).count(s) for s in dict.fromkeys(states.values())}
    click.echo("; ".join(f"{n} {s}" for s, n in counts.items()))


@main.command("transformer-test")
@click.option("--kva", type=POSITIVE, required=True, help="Transformer rating [kVA].")
@click.option("--primary-kv", type=POSITIVE, required=True, help="Rated primary voltage [kV].")
@click.option("--secondary-kv", type=POSITIVE, required=True, help="Rated secondary voltage [kV].")
@click.option("--applied-v", type=POSITIVE, required=True, help="Primary voltage applied in the short-circuit test [V].")
@click.option("--measured-a", type=POSITIVE, default=None, help="Primary current reached in the test [A]; default rated.")
@click.option("--r-percent", type=NON_NEGATIVE, default=None, help="Resistive part of %Z at the test temperature [%].")
@click.option("--measured-temp-c", type=SIGNED, default=None, help="Winding temperature during the test [C].")
@click.option("--reference-temp-c", type=SIGNED, default=85.0, help="Reference temperature [C] (default 85).")
@click.option("--conductor", type=click.Choice(["copper", "aluminum"]), default="copper")
def transformer_test(kva, primary_kv, secondary_kv, applied_v, measured_a, r_percent, measured_temp_c,
                     reference_temp_c, conductor):
    """%Z of a transformer from its short-circuit test readings, and its fault current."""
    from .study.field import transformer_from_test

    refuse_alone(click.get_current_context(), "measured_temp_c", ["r_percent"])
    try:
        r = transformer_from_test(kva, primary_kv, secondary_kv, applied_v, measured_a, r_percent,
                                  measured_temp_c, reference_temp_c, conductor)
    except ValueError as exc:
        raise click.UsageError(in_option_words(str(exc), click.get_current_context())) from None
    click.echo(f"%Z from the test:            {r['z_percent_measured']:.3f} %")
    if r_percent is not None:
        click.echo(f"%Z at {reference_temp_c:g} C:                {r['z_percent']:.3f} % (resistive part corrected)")
    click.echo(f"rated current, primary:      {r['rated_primary_a']:.1f} A")
    click.echo(f"rated current, secondary:    {r['rated_secondary_a']:.1f} A")
    click.echo(f"infinite-bus fault current:  {r['infinite_bus_ka']:.2f} kA (I_FLA x 100 / %Z, no source impedance)")
    click.echo(CAUTION)
    click.echo(_status_words())


@main.command("quick")
@click.option("--kva", type=POSITIVE, required=True, help="Transformer rating [kVA].")
@click.option("--primary-kv", type=POSITIVE, required=True, help="Transformer primary voltage [kV].")
@click.option("--secondary-kv", type=POSITIVE, required=True, help="Secondary (equipment) voltage [kV].")
@click.option("--z-percent", type=POSITIVE, default=None, help="Nameplate %Z.")
@click.option("--applied-v", type=POSITIVE, default=None, help="Or: short-circuit test voltage [V] ...")
@click.option("--measured-a", type=POSITIVE, default=None, help="... and the current it circulated [A] (default rated).")
@click.option("--x-over-r", type=POSITIVE, required=True, help="Transformer X/R.")
@click.option("--z-tolerance-percent", type=NON_NEGATIVE, default=7.5, help="%Z tolerance; the low side is used (default 7.5).")
@click.option("--utility-ka", type=POSITIVE, default=None, help="Available utility fault current at the primary [kA]; "
              "default: infinite (conservative).")
@click.option("--utility-x-over-r", type=POSITIVE, default=10.0, help="Utility X/R (default 10).")
@click.option("--cable-length", default=None, help="Cable to the equipment, e.g. '150 ft' or '45 m'.")
@click.option("--cable-size", default=None, help="Conductor size, e.g. '4/0' or '500 kcmil'.")
@click.option("--cable-material", type=click.Choice(["copper", "aluminum"]), default="copper")
@click.option("--cable-conduit", type=click.Choice(["pvc", "aluminum", "steel"]), default="steel")
@click.option("--cable-sets", type=click.IntRange(1, 50), default=1)
@click.option("--class", "equipment_class", type=click.Choice(sorted(EQUIPMENT_CLASSES)), default=None,
              help="Equipment class (typical gap, distance, enclosure); required: the same nameplate gives "
                   "different energies in different equipment.")
@click.option("--config", default=None, help="Electrode configuration (overrides the class).")
@click.option("--gap-mm", type=POSITIVE, default=None)
@click.option("--working-distance-mm", type=POSITIVE, default=None)
@click.option("--height-mm", type=POSITIVE, default=None, help="Enclosure height [mm].")
@click.option("--width-mm", type=POSITIVE, default=None, help="Enclosure width [mm].")
@click.option("--depth-mm", type=POSITIVE, default=None, help="Enclosure depth [mm].")
@click.option("--clearing-time-s", type=POSITIVE, default=None, help="Stated clearing time of the upstream device [s].")
@click.option("--reduced-clearing-time-s", type=POSITIVE, default=None,
              help="Its time at the reduced arcing current [s]; required with --clearing-time-s unless "
                   "--accept-same-reduced-time.")
@click.option("--accept-same-reduced-time", "accept_same_time", is_flag=True,
              help="With --clearing-time-s: use it for the reduced current too (reported as not conservative).")
@click.option("--library", type=click.Path(dir_okay=False, exists=True), default=None, help="Device-library YAML file.")
@click.option("--curve", default=None, help="Upstream device: a curve id of the library.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
def quick(kva, primary_kv, secondary_kv, z_percent, applied_v, measured_a, x_over_r, z_tolerance_percent, utility_ka,
          utility_x_over_r, cable_length, cable_size, cable_material, cable_conduit, cable_sets, equipment_class,
          config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm, clearing_time_s, reduced_clearing_time_s,
          accept_same_time, library, curve, as_json):
    """Quick assessment of one piece of equipment from nameplate data."""
    import tempfile

    from .output.text import quick_report
    from .study.field import quick_assessment, transformer_from_test

    ctx = click.get_current_context()
    refuse_conflicts(ctx, ["z_percent"], ["applied_v", "measured_a"])
    refuse_conflicts(ctx, ["curve"], ["clearing_time_s", "reduced_clearing_time_s", "accept_same_time"])
    refuse_conflicts(ctx, ["reduced_clearing_time_s"], ["accept_same_time"])
    if equipment_class is None:
        raise click.UsageError("--class: required (the same nameplate gives different energies in different "
                               f"equipment); expected one of: {', '.join(sorted(EQUIPMENT_CLASSES))}")
    refuse_alone(ctx, "measured_a", ["applied_v"])
    refuse_alone(ctx, "cable_size", ["cable_length"])
    refuse_alone(ctx, "cable_length", ["cable_size"])
    refuse_alone(ctx, "curve", ["library"])
    refuse_alone(ctx, "reduced_clearing_time_s", ["clearing_time_s"])
    try:
        if z_percent is None:
            if applied_v is None:
                raise ValueError("give --z-percent, or the test readings --applied-v (and --measured-a)")
            z_percent = transformer_from_test(kva, primary_kv, secondary_kv, applied_v, measured_a)["z_percent"]
        cable = None
        if cable_length or cable_size:
            cable = {"length": cable_length, "size": cable_size, "material": cable_material,
                     "conduit": cable_conduit, "sets": cable_sets}
        equipment = {"equipment_class": equipment_class, "config": config, "gap_mm": gap_mm,
                     "working_distance_mm": working_distance_mm, "height_mm": height_mm, "width_mm": width_mm,
                     "depth_mm": depth_mm}
        with tempfile.TemporaryDirectory() as scratch:
            result = quick_assessment(
                scratch, kva=kva, primary_kv=primary_kv, secondary_kv=secondary_kv, z_percent=z_percent,
                x_over_r=x_over_r, z_tolerance_percent=z_tolerance_percent, utility_ka=utility_ka,
                utility_x_over_r=utility_x_over_r, cable=cable, equipment=equipment,
                clearing_time_s=clearing_time_s, reduced_clearing_time_s=reduced_clearing_time_s,
                curve=curve, library=library, accept_same_time=accept_same_time)
    except SiteDataError as exc:
        raise click.UsageError(quick_problem_words(exc.problems, click.get_current_context())) from None
    except ValueError as exc:
        raise click.UsageError(in_option_words(str(exc), click.get_current_context(), QUICK_FIELDS)) from None
    if as_json:
        row = {k: (None if isinstance(v, float) and v != v else (v.item() if hasattr(v, "item") else v))
               for k, v in result["row"].items()}
        click.echo(json.dumps({"result": row, "assumptions": result["notes"],
                               "not_conservative": result["not_conservative"], "caution": CAUTION,
                               "model_verification": _status_words()}, indent=2,
                              default=str))
    else:
        click.echo(quick_report(result["row"], result["notes"], result["not_conservative"]))
        click.echo(_status_words())


@main.command("briefing")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.argument("bus")
@click.option("--out", type=click.Path(dir_okay=False), required=True, help="Output PDF file.")
@click.option("--study", "study_dir", type=click.Path(file_okay=False, exists=True), default=None,
              help="Folder of an earlier 'arcflash study' run (its governing.csv); default: run the study now.")
@click.option("--accept-stale-study", "stale_reason", default=None, metavar="REASON",
              help="Use a --study that no longer matches the site data; the reason is recorded in the ledger.")
@click.option("--scenario", default=None,
              help="Brief this scenario (e.g. the one with energy-reducing maintenance switching on) instead of the "
                   "worst one; the study is run now.")
def briefing(site_dir, bus, out, study_dir, stale_reason, scenario):
    """Job briefing sheet for one piece of equipment: signal word, hazard, boundaries to scale from the front,
    PPE, the clearing device, and the energized-work items (none above 40 cal/cm2)."""
    from .output.briefing import write_briefing
    from .study.pipeline import run_study

    refuse_conflicts(click.get_current_context(), ["scenario"], ["study_dir"])
    site = _load(site_dir)
    if bus not in site.buses:
        raise click.UsageError(f"unknown bus {bus!r}")
    if scenario is not None:
        try:
            chosen = site.scenario(scenario).name
        except KeyError as exc:
            raise click.UsageError(f"--scenario: {exc.args[0]}") from None
        rows = run_study(site).rows
        row = rows[(rows["bus"] == bus) & (rows["scenario"] == chosen)].iloc[0]
    else:
        governing = (_earlier_study(study_dir, site, stale_reason, briefing=True) if study_dir
                     else run_study(site).governing)
        row = governing.loc[bus]
    write_atomic(out, lambda tmp: write_briefing(site, bus, row, tmp))
    if study_dir:
        _record_stale_use(governing, site, "briefing", study_dir, stale_reason, [bus])
    click.echo(f"Job briefing sheet of {bus} ({row['scenario']}) written to {out}")
    click.echo(CAUTION)
    click.echo(_status_words(site.path))


@main.command("site-schema")
@click.option("--out", type=click.Path(dir_okay=False), default=None, help="Write to this file instead of printing.")
def site_schema(out):
    """JSON Schema of the site-data files, for editors that check YAML."""
    text = json.dumps(site_json_schema(), indent=2) + "\n"
    if out:
        write_atomic(out, lambda tmp: open(tmp, "w", encoding="utf-8").write(text))
    else:
        click.echo(text, nl=False)


main.add_command(selfcheck)
main.add_command(mitigate_command)


if __name__ == "__main__":  # pragma: no cover
    main()

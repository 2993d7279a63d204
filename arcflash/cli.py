"""Command-line interface: parse options, call the library, render. Nothing else."""

from __future__ import annotations

import json
import sys

import click

from .errors import SiteDataError
from .models.errors import ModelRangeError
from .output.cautions import CAUTION
from .models.ieee1584_tables import CONFIGURATIONS, EQUIPMENT_CLASSES
from .output.files import write_atomic
from .output.text import equipment_report, fault_table
from .site.loader import load_site
from .site.schema import site_json_schema
from .study.equipment import assess_equipment
from .study.faults import solve_scenario


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="arcflash")
def main():
    """arcflash: arc-flash hazard calculations by IEEE 1584-2018.

    Results are for qualified persons; local codes and licensed engineering
    practice govern.
    """


@main.command("equipment")
@click.option("--voltage-kv", type=float, required=True, help="Nominal system voltage, line to line [kV].")
@click.option("--bolted-ka", type=float, required=True, help="Bolted three-phase fault current [kA].")
@click.option("--clearing-time-s", type=float, required=True,
              help="Arc duration at the full arcing current, from the protective device [s].")
@click.option("--reduced-clearing-time-s", type=float, default=None,
              help="Arc duration at the reduced arcing current [s]; default: the full-current time.")
@click.option("--class", "equipment_class", type=click.Choice(sorted(EQUIPMENT_CLASSES)), default=None,
              help="Equipment class supplying typical gap, distance, enclosure and configuration.")
@click.option("--config", type=click.Choice(CONFIGURATIONS, case_sensitive=False), default=None,
              help="Electrode configuration (overrides the class).")
@click.option("--gap-mm", type=float, default=None, help="Gap between conductors [mm].")
@click.option("--working-distance-mm", type=float, default=None, help="Working distance [mm].")
@click.option("--height-mm", type=float, default=None, help="Enclosure height [mm].")
@click.option("--width-mm", type=float, default=None, help="Enclosure width [mm].")
@click.option("--depth-mm", type=float, default=None, help="Enclosure depth [mm].")
@click.option("--strict", is_flag=True, help="Refuse inputs outside the range of the model instead of flagging.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
def equipment(voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s, equipment_class, config,
              gap_mm, working_distance_mm, height_mm, width_mm, depth_mm, strict, as_json):
    """Incident energy and arc-flash boundary of one piece of equipment."""
    try:
        record = assess_equipment(
            voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s,
            equipment_class=equipment_class, config=config, gap_mm=gap_mm,
            working_distance_mm=working_distance_mm, height_mm=height_mm, width_mm=width_mm,
            depth_mm=depth_mm, strict=strict,
        )
    except (ValueError, ModelRangeError) as exc:
        raise click.UsageError(str(exc)) from None
    if as_json:
        click.echo(json.dumps(record, indent=2))
    else:
        click.echo(equipment_report(record))


def _load(site_dir):
    """Load a site or exit 2 listing every problem (no traceback)."""
    try:
        return load_site(site_dir)
    except SiteDataError as exc:
        click.echo(str(exc), err=True)
        sys.exit(2)


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
    click.echo(fault_table(site.facility.name, result.scenario, result.buses))
    if csv_path:
        write_atomic(csv_path, lambda tmp: result.buses.to_csv(tmp, float_format="%.6g"))
        click.echo(f"Bus fault table written to {csv_path}")
    if devices_csv:
        write_atomic(devices_csv, lambda tmp: result.devices.to_csv(tmp, index=False, float_format="%.6g"))
        click.echo(f"Device currents written to {devices_csv}")


@main.command("tcc")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
@click.argument("bus")
@click.option("--scenario", default=None, help="Scenario name (default: the site's default scenario).")
@click.option("--kv", "reference_kv", type=float, default=None, help="Refer currents to this kV (default: the bus's).")
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
              help="Folder for results.csv, governing.csv, results.xlsx and report.pdf.")
@click.option("--tcc-bus", "tcc_buses", multiple=True, help="Bus with a TCC page in the report (repeatable).")
@click.option("--no-report", is_flag=True, help="Write the result tables only.")
@click.option("--quiet", is_flag=True, help="No progress bar.")
def study(site_dir, out_dir, tcc_buses, no_report, quiet):
    """Run the facility study: every scenario, both arcing cases, the governing case per bus."""
    from .study.pipeline import run_study

    site = _load(site_dir)
    unknown = [b for b in tcc_buses if b not in site.buses]
    if unknown:
        raise click.UsageError(f"--tcc-bus: unknown bus {unknown[0]!r}")
    with click.progressbar(length=len(site.scenarios), label="Scenarios", file=sys.stderr,
                           hidden=quiet) as bar:
        results = run_study(site, out_dir, progress=lambda name: bar.update(1), report=not no_report,
                            tcc_buses=list(tcc_buses) or None)
    governing = results.governing
    worst = governing["incident_energy_governing_cal_cm2"].idxmax()
    flagged = int((governing["flags"] != "").sum())
    click.echo(f"Study of {site.facility.name}: {len(governing)} buses, {len(site.scenarios)} scenarios.")
    click.echo(f"Highest incident energy: {governing.loc[worst, 'incident_energy_governing_cal_cm2']:.1f} cal/cm2 "
               f"at {worst} ({governing.loc[worst, 'scenario']}); {flagged} buses flagged.")
    files = ["results.csv", "governing.csv", "results.xlsx"] + ([] if no_report else ["report.pdf"])
    click.echo(f"Results in {out_dir}: " + ", ".join(files))
    click.echo(CAUTION)


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
def labels_print(site_dir, out_dir, buses, changed_only, layout, sheet, issued_by, study_dir):
    """Print labels from a study of the site and record them in the site's ledger."""
    from .output.labels import issue_labels, layout_names, read_governing
    from .study.pipeline import run_study

    for name in (layout, sheet):
        if name not in layout_names():
            raise click.UsageError(f"unknown layout {name!r}; expected one of {', '.join(layout_names())}")
    site = _load(site_dir)
    if study_dir:
        try:
            governing = read_governing(study_dir, site)
        except ValueError as exc:
            raise click.UsageError(str(exc)) from None
    else:
        governing = run_study(site).governing
    try:
        printed = issue_labels(site, governing, out_dir, layout, sheet, list(buses), changed_only, issued_by)
    except KeyError as exc:
        raise click.UsageError(str(exc.args[0])) from None
    click.echo(f"{len(printed)} labels printed to {out_dir} and recorded in the ledger.")
    for content in printed:
        click.echo(f"  {content.equipment_id}  {content.signal_word}  {content.energy_or_category}")
    click.echo(CAUTION)


@labels.command("status")
@click.argument("site_dir", type=click.Path(file_okay=True, dir_okay=True))
def labels_status(site_dir):
    """Which labels are current, changed since issued, never issued or due for review."""
    from .output import ledger
    from .output.labels import label_content
    from .study.pipeline import run_study

    site = _load(site_dir)
    governing = run_study(site).governing
    contents = [label_content(site, bus, governing.loc[bus]) for bus in governing.index]
    states = ledger.status(ledger.ledger_path(site.path), contents)
    for bus, state in states.items():
        click.echo(f"  {bus:<20}{state}")
    counts = {s: list(states.values()).count(s) for s in dict.fromkeys(states.values())}
    click.echo("; ".join(f"{n} {s}" for s, n in counts.items()))


@main.command("site-schema")
@click.option("--out", type=click.Path(dir_okay=False), default=None, help="Write to this file instead of printing.")
def site_schema(out):
    """JSON Schema of the site-data files, for editors that check YAML."""
    text = json.dumps(site_json_schema(), indent=2) + "\n"
    if out:
        write_atomic(out, lambda tmp: open(tmp, "w", encoding="utf-8").write(text))
    else:
        click.echo(text, nl=False)


if __name__ == "__main__":  # pragma: no cover
    main()

"""Command-line interface: parse options, call the library, render. Nothing else."""

from __future__ import annotations

import json

import click

from .models.errors import ModelRangeError
from .models.ieee1584_tables import CONFIGURATIONS, EQUIPMENT_CLASSES
from .output.text import equipment_report
from .study.equipment import assess_equipment


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


if __name__ == "__main__":  # pragma: no cover
    main()

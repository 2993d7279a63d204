"""The ``selfcheck`` commands: the model's worked worksheet, and the record of its verification."""

from __future__ import annotations

import click

from .verification import STANDARD_EDITION, TABLES_TO_VERIFY, VerificationError


def _status(site_dir):
    from .verification import status

    return status(site_dir)


@click.group("selfcheck", invoke_without_command=True)
@click.option("--site", "site_dir", type=click.Path(exists=True), default=None,
              help="Site folder whose verification record applies (default: the user-level record).")
@click.option("--pdf", "pdf_path", type=click.Path(dir_okay=False), default=None,
              help="Also write the worksheet as a PDF to this file.")
@click.pass_context
def selfcheck(ctx, site_dir, pdf_path):
    """IEEE 1584-2018 worked through for the Annex D examples and one case per configuration and voltage
    class: every intermediate value and coefficient row, to compare with the printed standard. Then record
    the outcome with 'arcflash selfcheck record'."""
    if ctx.invoked_subcommand is not None:
        return
    from .output.files import write_bytes_atomic
    from .output.selfcheck import worksheet_pdf_bytes, worksheet_text

    words = _status(site_dir).words
    click.echo(worksheet_text(words), nl=False)
    if pdf_path:
        write_bytes_atomic(pdf_path, worksheet_pdf_bytes(words))
        click.echo(f"Worksheet written to {pdf_path}")


def _results(pairs):
    """{table: result} from 'Table 1=pass' options; UsageError naming a malformed one."""
    results = {}
    for pair in pairs:
        table, sep, result = pair.rpartition("=")
        if not sep or not table.strip():
            raise click.UsageError(f"--result {pair!r}: expected TABLE=pass or TABLE=fail, e.g. 'Table 1=pass'")
        results[table.strip()] = result.strip().lower()
    return results


@selfcheck.command("record")
@click.argument("site_dir", type=click.Path(exists=True), required=False)
@click.option("--by", "verified_by", required=True, help="Name of the engineer who compared the worksheet.")
@click.option("--result", "results", multiple=True, metavar="TABLE=pass|fail",
              help=f"Outcome per table, repeatable; every table needs one: {', '.join(TABLES_TO_VERIFY)}.")
@click.option("--on", "verified_on", default=None, metavar="YYYY-MM-DD", help="Date of the check (default today).")
@click.option("--edition", default=STANDARD_EDITION, show_default=True, help="Edition of the printed standard used.")
@click.option("--note", default="", help="A remark kept with the record.")
@click.option("--user", "user_level", is_flag=True,
              help="Record in the user-level file instead of beside the site data.")
def record_command(site_dir, verified_by, results, verified_on, edition, note, user_level):
    """Record who compared the worksheet with the printed standard, when, and the outcome per table."""
    from .verification import record, site_record_path, status, user_record_path

    if site_dir is None and not user_level:
        raise click.UsageError("give SITE_DIR (the record is kept beside the site data) or --user")
    if site_dir is not None and user_level:
        raise click.UsageError("give SITE_DIR or --user, not both")
    path = user_record_path() if user_level else site_record_path(site_dir)
    try:
        record(path, verified_by, _results(results), verified_on, edition, note)
    except VerificationError as exc:
        raise click.UsageError(str(exc)) from None
    click.echo(f"Verification recorded in {path}")
    click.echo(f"Status now: {status(None if user_level else site_dir).words}")


@selfcheck.command("status")
@click.argument("site_dir", type=click.Path(exists=True), required=False)
def status_command(site_dir):
    """The verification status that outputs of this site carry, and the record it comes from."""
    state = _status(site_dir)
    click.echo(state.words)
    click.echo(f"Record: {state.path}" + (f" ({state.detail})" if state.detail else ""))

"""Equipment labels: their content (NFPA 70E 130.5(H)) and their PDF (layouts from label_layouts/).

The content of a label is data (:class:`LabelContent`) with a stable hash, so
that a label in the field can be checked against what the study says now.
A label shows the incident energy with its working distance **or** the PPE
category, never both (the facility chooses, ``facility.label_shows``).
"""

from __future__ import annotations

import contextlib
import datetime as dt
import functools
import hashlib
import json
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import yaml
from json.encoder import encode_basestring as _json_text

from ..models.nfpa70e import BOUNDARY_ENERGY_CAL_CM2, NO_CATEGORY_ABOVE_CAL_CM2, shock_boundary_text
from .text import energy_text, length_text

#: Energies above this get the DANGER panel: no PPE category applies there (NFPA 70E Table
#: 130.7(C)(15)(c): category 4 PPE has a minimum arc rating of 40 cal/cm², so it covers exactly
#: 40.0 cal/cm²; the same edge as :func:`arcflash.models.nfpa70e.ppe_category`) [cal/cm²].
DANGER_ABOVE_CAL_CM2 = NO_CATEGORY_ABOVE_CAL_CM2
#: Incident energy at which a second-degree burn begins: the arc-flash boundary's energy (IEEE 1584-2018
#: clause 3.1) [cal/cm²]. Below it no arc rating is required.
ONSET_CAL_CM2 = BOUNDARY_ENERGY_CAL_CM2
BELOW_ONSET = "below 1.2 cal/cm2"
#: What a label says instead of a rating below the onset: NFPA 70E Table 130.5(G) asks for non-melting or
#: untreated natural-fibre clothing there (from memory); no arc-rated clothing is rated below 1.2 cal/cm².
BELOW_ONSET_RATING = "none required (below 1.2 cal/cm2): wear non-melting natural-fibre clothing"
#: Hazard statement of a DANGER label (our wording).
DANGER_STATEMENT = ("No PPE category applies above 40 cal/cm2. Do not work on or near exposed energized parts: "
                    "de-energize and verify absence of voltage, or work only under an engineered plan of the "
                    "site's electrical safety program.")
#: Data behind a label are reviewed at intervals not over 5 years (NFPA 70E 130.5) [years].
REVIEW_YEARS = 5


def _layout_dir():
    """arcflash/label_layouts in an installed package (the build carries it there), else the source tree's
    top-level label_layouts/ (a checkout or an editable install)."""
    installed = Path(__file__).resolve().parents[1] / "label_layouts"
    return installed if installed.is_dir() else Path(__file__).resolve().parents[2] / "label_layouts"


#: Folder of the shipped layouts.
LAYOUT_DIR = _layout_dir()


@dataclass(frozen=True)
class LabelContent:
    """Everything printed on one label (text, units included)."""

    equipment_id: str
    description: str
    signal_word: str
    hazard: str
    nominal_voltage: str
    arc_flash_boundary: str
    shows: str
    energy_or_category: str
    minimum_arc_rating: str
    site_ppe: str
    limited_approach: str
    restricted_approach: str
    governing_device: str
    study_revision: str
    study_date: str
    review_by: str
    flags: str
    study_note: str = ""
    model_status: str = ""  # the model's verification status in a few words (arcflash.verification)
    energy_basis: str = ""  # what the energy and boundary are, when not the plain study (label_basis)

    def as_dict(self):
        """The fields as a dict {name: text} (every field is text, so no copying is needed)."""
        return {name: getattr(self, name) for name in self.__dataclass_fields__}

    @functools.cached_property
    def content_json(self):
        """The fields as JSON text, keys sorted (what the hash is taken of, and what the ledger keeps): the
        text of ``json.dumps(self.as_dict(), sort_keys=True, ensure_ascii=False)``, written directly (every
        field is text), less the fields added later while they are empty (:data:`_LEFT_OUT_WHEN_EMPTY`:
        labels printed before keep their hashes)."""
        return "{" + ", ".join([_JSON_KEYS[name] + _json_text(getattr(self, name)) for name in _SORTED_FIELDS
                                if name not in _LEFT_OUT_WHEN_EMPTY or getattr(self, name)]) + "}"

    @functools.cached_property
    def content_hash(self):
        """First 16 hex digits of the SHA-256 of the content (stable across runs)."""
        return hashlib.sha256(self.content_json.encode("utf-8")).hexdigest()[:16]

    @property
    def qr_payload(self):
        """What the QR code holds: equipment id, study revision and content hash."""
        return f"arcflash-label|{self.equipment_id}|{self.study_revision}|{self.content_hash}"


_SORTED_FIELDS = sorted(LabelContent.__dataclass_fields__)
_LEFT_OUT_WHEN_EMPTY = frozenset({"energy_basis"})
_JSON_KEYS = {name: _json_text(name) + ": " for name in _SORTED_FIELDS}


def signal_word(energy_cal_cm2):
    """The signal word for an incident energy: DANGER above 40 cal/cm² (no PPE category applies) or when not
    computed, WARNING otherwise (ANSI Z535.4 words; the edge of :data:`DANGER_ABOVE_CAL_CM2`)."""
    known = energy_cal_cm2 is not None and math.isfinite(energy_cal_cm2)
    return "WARNING" if known and energy_cal_cm2 <= DANGER_ABOVE_CAL_CM2 else "DANGER"


def _site_ppe(bands, energy, rating, bus):
    """The text of the first site PPE band covering ``energy``; ValueError if none does or it is under-rated."""
    if not bands:
        return ""
    # a band covers energies up to its upper edge; one not arc-rated covers only energies below the onset
    band = next((b for b in bands if energy <= b.up_to_cal_cm2
                 and (b.arc_rating_cal_cm2 >= ONSET_CAL_CM2 or energy < ONSET_CAL_CM2)), None)
    if band is None:
        raise ValueError(f"label of {bus}: no site PPE band (facility.site_ppe) covers {energy_text(energy)} "
                         f"cal/cm2 (the highest covers {bands[-1].up_to_cal_cm2:g}): add a band")
    needed = float(np.ceil(energy * 10.0 - 1e-9) / 10.0)
    if energy >= ONSET_CAL_CM2 and band.arc_rating_cal_cm2 < needed:
        raise ValueError(f"label of {bus}: the site PPE for {energy_text(energy)} cal/cm2 is rated "
                         f"{band.arc_rating_cal_cm2:g} cal/cm2, below the label's minimum arc rating {rating}")
    return band.text


def _study_notes(row):
    """The note numbers of the row's flags ('2,5'), or '' (also for a table written before they existed)."""
    notes = _text_or(row.get("flag_notes"), "")
    if not notes and _text_or(row["flags"], ""):
        return "see report"
    return ", ".join(n.strip() for n in notes.split(",") if n.strip())


def _clearing_text(site, row):
    """The device whose opening ends the arc, with the scenario that governs: 'worst case' when it is not the
    site's default scenario."""
    device = _text_or(row["device_governing"], "")
    scenario = _text_or(row.get("scenario"), "")
    normal = getattr(site, "default_scenario", None)
    worst = ""
    if scenario:
        worst = f" (scenario {scenario})" if scenario == normal else f" (worst case: {scenario})"
    if not device:
        return f"no protective device ends this arc{worst}"
    return f"{device} opens to end the arc{worst}"


def _text_or(value, default):
    """A text cell of a study row; empty, None and NaN (a missing cell read back from a CSV) give the default."""
    if value is None or (isinstance(value, float) and not np.isfinite(value)) or str(value) == "":
        return default
    return str(value)


def _voltage(kv):
    return f"{kv * 1000:g} V" if kv < 1 else f"{kv:g} kV"


@functools.lru_cache(maxsize=256)
def _shock_text(nominal_kv):
    """:func:`shock_boundary_text`, remembered (a facility has a few voltages); read only."""
    return shock_boundary_text(nominal_kv)


def _review_by(study_date):
    """The date a label is due for review: :data:`REVIEW_YEARS` after the study (today when undated)."""
    return _review_after(study_date) if study_date else _review_after.__wrapped__(study_date)


@functools.lru_cache(maxsize=64)
def _review_after(study_date):
    try:
        start = dt.date.fromisoformat(study_date)
    except (TypeError, ValueError):
        start = dt.date.today()
    try:
        return start.replace(year=start.year + REVIEW_YEARS).isoformat()
    except ValueError:  # 29 February
        return start.replace(year=start.year + REVIEW_YEARS, day=28).isoformat()


#: The study values kept in the ledger beside each issued label (what ``labels diff`` compares, stage by stage).
STUDY_VALUES = ("scenario", "governing_case", "bolted_ka", "arcing_current_ka", "device_governing",
                "clearing_time_governing_s", "incident_energy_governing_cal_cm2", "arc_flash_boundary_governing_mm",
                "ppe_category")


def study_values(row):
    """The :data:`STUDY_VALUES` of a governing row as plain JSON values (missing or NaN as None)."""
    values = {}
    for name in STUDY_VALUES:
        value = row.get(name)
        if isinstance(value, (np.floating, float)):
            value = float(value) if np.isfinite(value) else None
        elif isinstance(value, np.integer):
            value = int(value)
        elif value is not None and not isinstance(value, (int, str)):
            value = str(value)
        values[name] = value if value != "" else None
    return values


def labels_of(site, governing, buses=None, rows=None):
    """The label content of ``buses`` (all by default) of a governing table (``rows``: its :func:`_rows`, if
    already at hand)."""
    rows = _rows(governing) if rows is None else rows
    model_status = _model_status(site)
    return [label_content(site, bus, rows[bus], model_status=model_status)
            for bus in (governing.index if buses is None else buses)]


def _model_status(site):
    """The few words of the model's verification status that a label of ``site`` carries."""
    from ..verification import status

    return status(getattr(site, "path", None)).short


def _rows(governing):
    """The rows of a governing table as dicts of plain values by bus (far quicker to read than pandas rows,
    one by one; made column by column, as pandas' ``to_dict('records')`` gives them, only quicker)."""
    columns = list(governing.columns)
    if not columns:
        return {bus: {} for bus in governing.index}
    values = zip(*(governing[column].tolist() for column in columns))
    return {bus: dict(zip(columns, row)) for bus, row in zip(governing.index, values)}


def label_content(site, bus, row, shows=None, model_status=None):
    """The label of one bus from its governing study row.

    Parameters
    ----------
    site : Site
    bus : str
        Bus id.
    row : pandas.Series
        The bus's governing row (``run_study(...).governing.loc[bus]``).
    shows : str, optional
        'energy' (incident energy and working distance) or 'category' (PPE
        category): never both on one label. Default: ``facility.label_shows``.
    model_status : str, optional
        The model's verification status in a few words; default: looked up for the site
        (:func:`arcflash.verification.status`).
    """
    shows = shows or site.facility.label_shows
    if shows not in ("energy", "category"):
        raise ValueError(f"shows: expected 'energy' or 'category', got {shows!r}")
    f = site.facility
    energy = float(row["incident_energy_governing_cal_cm2"])
    shock = _shock_text(float(row["nominal_kv"]))
    known = math.isfinite(energy)
    danger = known and energy > DANGER_ABOVE_CAL_CM2
    at_distance = f"{energy_text(energy)} cal/cm2 at {length_text(float(row['working_distance_mm']))}"
    rating = "not applicable"
    if danger:
        hazard = DANGER_STATEMENT
        shown = f"{at_distance}: no PPE category applies"  # the energy and its distance stay on the label
    elif not known:
        hazard = "Arc-flash hazard not computed for this equipment: treat as energized and dangerous."
        shown = "not computed"
    else:
        hazard = "Arc-flash and shock hazard. Qualified persons only, with the PPE below."
        if shows == "energy":
            shown = at_distance
        else:
            category = int(row["ppe_category"])
            shown = f"none needed ({BELOW_ONSET})" if category == 0 else f"PPE category {category}"
        minimum = float(row["minimum_arc_rating_cal_cm2"])
        rating = BELOW_ONSET_RATING if energy < ONSET_CAL_CM2 else f"{energy_text(minimum)} cal/cm2"
    return LabelContent(
        equipment_id=str(bus),
        description=site.buses[bus].description,
        signal_word=signal_word(energy),
        hazard=hazard,
        nominal_voltage=_voltage(float(row["nominal_kv"])),
        arc_flash_boundary=length_text(float(row["arc_flash_boundary_governing_mm"])),
        shows=shows,
        energy_or_category=shown,
        minimum_arc_rating=rating,
        site_ppe=_site_ppe(f.site_ppe, energy, rating, bus) if known and not danger else "",
        limited_approach=f"{shock['limited_fixed']} fixed parts; {shock['limited_movable']} movable conductors",
        restricted_approach=shock["restricted"],
        governing_device=_clearing_text(site, row),
        study_revision=f.study_revision,
        study_date=f.study_date or "",
        review_by=_review_by(f.study_date),
        flags=_text_or(row["flags"], ""),
        study_note=_study_notes(row),
        model_status=_model_status(site) if model_status is None else model_status,
        energy_basis=_text_or(row.get("energy_basis"), ""),
    )


_UNIT = {"in": 72.0, "mm": 72.0 / 25.4}


def _points(value):
    match = re.fullmatch(r"\s*([\d.]+)\s*(in|mm)\s*", str(value))
    if not match:
        raise ValueError(f"expected a length with a unit ('4 in', '100 mm'), got {value!r}")
    return float(match.group(1)) * _UNIT[match.group(2)]


@dataclass(frozen=True)
class LabelLayout:
    """A label layout read from label_layouts/ (sizes in points)."""

    name: str
    page_width: float
    page_height: float
    margin: float
    across: int
    down: int
    gutter: float
    blocks: tuple
    key_min: float | None = None  # smallest size of the key values [pt]; None: label_pdf.MIN_KEY_PT


def layout_path(name_or_path):
    """The file of a layout given by name (one of :func:`layout_names`) or as a path to a YAML file.

    Raises
    ------
    ValueError
        Neither a shipped layout's name nor an existing .yaml/.yml file; the message lists the names.
    """
    path = Path(name_or_path)
    if path.suffix.lower() in (".yaml", ".yml") and path.is_file():
        return path
    if str(name_or_path) in layout_names():
        return LAYOUT_DIR / f"{name_or_path}.yaml"
    raise ValueError(f"unknown layout {str(name_or_path)!r}; expected one of {', '.join(layout_names())} "
                     "or the path of a layout file (.yaml)")


def load_layout(name_or_path):
    """A layout by name (a file in label_layouts/) or path."""
    path = layout_path(name_or_path)
    try:
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        return LabelLayout(
            name=data["name"], page_width=_points(data["page"]["width"]),
            page_height=_points(data["page"]["height"]), margin=_points(data["margin"]),
            across=int(data["labels_across"]), down=int(data["labels_down"]),
            gutter=_points(data.get("gutter", "0 in")), blocks=tuple(data["blocks"]),
            key_min=float(data["key_min"]) if "key_min" in data else None,
        )
    except (KeyError, TypeError, ValueError, AttributeError, yaml.YAMLError, UnicodeDecodeError) as exc:
        raise ValueError(f"layout file {path}: expected name, page (width, height), margin, labels_across, "
                         f"labels_down and blocks, as in label_layouts/README.md ({type(exc).__name__}: {exc})"
                         ) from None


def layout_names():
    """Names of the shipped layouts."""
    return sorted(p.stem for p in LAYOUT_DIR.glob("*.yaml"))


#: Columns of governing.csv that labels read (text, then numbers); a briefing reads these and BRIEFING_COLUMNS.
LABEL_TEXT = ("bus", "device_governing", "flags")
LABEL_NUMBERS = ("nominal_kv", "incident_energy_governing_cal_cm2", "arc_flash_boundary_governing_mm",
                 "working_distance_mm", "ppe_category", "minimum_arc_rating_cal_cm2")
BRIEFING_COLUMNS = (("scenario", "governing_case"),
                    ("clearing_time_governing_s", "limited_approach_fixed_mm", "restricted_approach_mm"))
GOVERNING_COLUMNS = LABEL_TEXT + LABEL_NUMBERS + BRIEFING_COLUMNS[0] + BRIEFING_COLUMNS[1]


class StaleStudyError(ValueError):
    """A study folder whose site data or tool version differ from the site's now; ``changes`` in words."""

    def __init__(self, message, changes):
        super().__init__(message)
        self.changes = changes


def study_staleness(study_dir, site):
    """Why the study in ``study_dir`` may not match ``site`` now, in words (empty list: it matches)."""
    from ..site.fingerprint import fingerprint_changes, site_fingerprint
    from .results import STUDY_RECORD

    folder = Path(study_dir)
    try:
        record = json.loads((folder / STUDY_RECORD).read_text(encoding="utf-8"))
        recorded, vouched = record["site_data"], record["governing_sha256"]
    except (OSError, ValueError, KeyError, TypeError):
        return [f"no readable {STUDY_RECORD} (a study written by an older version, or not by arcflash study)"]
    changes = fingerprint_changes(recorded, site_fingerprint(site))
    if hashlib.sha256((folder / "governing.csv").read_bytes()).hexdigest() != vouched:
        changes.append("governing.csv is not the one the study wrote (edited, or the run was interrupted)")
    return changes


def read_governing(study_dir, site, briefing=False, accept_stale=None):
    """The governing table of an earlier study run (``governing.csv``), checked against the site.

    Parameters
    ----------
    study_dir : path
        Folder of an ``arcflash study`` run [-]
    site : Site
        The site it must cover [-]
    briefing : bool
        Also require the columns a briefing sheet reads [-]
    accept_stale : str, optional
        The user's reason for using a study that no longer matches the site data; without it such a study
        is refused (:class:`StaleStudyError`, naming what changed) [-]

    Raises
    ------
    ValueError
        No governing.csv there; the study does not match the site data now (:class:`StaleStudyError`);
        not a readable table; a column missing or text in a number column; or it
        does not hold the site's buses.
    """
    import pandas as pd

    path = Path(study_dir) / "governing.csv"
    if not path.is_file():
        raise ValueError(f"--study: no governing.csv in {study_dir} (run 'arcflash study' first)")
    stale = study_staleness(study_dir, site)
    if stale and accept_stale is None:
        raise StaleStudyError(f"--study: {study_dir} was not computed from the site data as they are now: "
                              f"{'; '.join(stale)}. Run 'arcflash study' again, or give --accept-stale-study "
                              "REASON (recorded in the label ledger).", stale)
    try:
        table = pd.read_csv(path, keep_default_na=False, na_values=[""])
    except (ValueError, UnicodeDecodeError, pd.errors.ParserError) as exc:  # EmptyDataError is a ValueError
        raise ValueError(f"--study: {path} is not a table written by 'arcflash study' ({exc})") from None
    text, numbers = LABEL_TEXT + (BRIEFING_COLUMNS[0] if briefing else ()), LABEL_NUMBERS + (
        BRIEFING_COLUMNS[1] if briefing else ())
    absent = [c for c in text + numbers if c not in table.columns]
    if absent:
        raise ValueError(f"--study: {path} lacks the column {absent[0]!r} (run 'arcflash study' again)")
    for column in numbers:
        if not pd.api.types.is_numeric_dtype(table[column]):
            raise ValueError(f"--study: {path} has text in the number column {column!r} (run 'arcflash study' "
                             "again)")
    table = table.set_index("bus")
    table.attrs["stale"] = stale  # what no longer matches (accepted with a reason), for the ledger
    missing = [b for b in site.buses if b not in table.index]
    if missing:
        raise ValueError(f"--study: {path} lacks bus {missing[0]!r} of the site (a study of another site?)")
    table["flags"] = table["flags"].fillna("")
    table["device_governing"] = table["device_governing"].where(table["device_governing"].notna(), None)
    return table


def safe_file_name(equipment_id, digest):
    """A file name for a label that cannot leave its folder, unique by the content hash."""
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", str(equipment_id)).strip("._")[:80] or "equipment"
    return f"{stem}-{digest[:8]}.pdf"


#: Labels laid out, encoded and drawn together in a print run [-].
_BATCH = 256

#: Labels from which a print run writes its files through a process of its own (starting one takes about
#: as long as writing 200 labels) [-].
_HELPER_FROM = 200


def issue_labels(site, governing, out_dir, layout="label-4x6", sheet="sheet-letter-2x2", buses=None,
                 changed_only=False, issued_by=None):
    """Print labels (one PDF each and a combined sheet) and record them in the ledger.

    Parameters
    ----------
    site : Site
    governing : pandas.DataFrame
        Governing rows of a study (``run_study(site).governing``).
    out_dir : path
        Folder for ``labels/<equipment>-<hash>.pdf`` and ``labels-sheet.pdf``.
    layout, sheet : str
        Layout names for the single labels and the combined sheet.
    buses : list of str, optional
        Only these buses (KeyError naming an unknown one).
    changed_only : bool
        Only labels whose content differs from the last issued (or never issued).
    issued_by : str, optional

    Returns
    -------
    list of LabelContent
        The labels printed.

    Raises
    ------
    KeyError
        An unknown bus.
    LabelFitError
        A label's text does not fit the single or the sheet layout at the smallest legible sizes; the
        message names every such label and the field to shorten. Nothing is printed or recorded.
    """
    from . import ledger
    from .files import StagedFiles, remove_leftovers
    from .label_pdf import LabelFitError, LabelPages, labels_pdf_bytes, unfit_labels
    from .qr import qr_matrices

    chosen = list(governing.index) if not buses else list(buses)
    unknown = [b for b in chosen if b not in governing.index]
    if unknown:
        raise KeyError(f"unknown bus {unknown[0]!r}")
    by_bus = _rows(governing)
    contents = labels_of(site, governing, chosen, rows=by_bus)
    book = ledger.ledger_path(site.path)
    if changed_only:
        states = ledger.status(book, contents)
        contents = [c for c in contents if states[c.equipment_id] != "current"]
    if not contents:  # nothing to print: no file, no folder, nothing recorded
        return contents
    single, combined = load_layout(layout), load_layout(sheet)
    today = dt.date.today()  # one issue date for the whole batch, even one printed across midnight
    folder, made = Path(out_dir) / "labels", [p for p in (Path(out_dir), Path(out_dir) / "labels") if not p.exists()]
    remove_leftovers(folder)
    remove_leftovers(Path(out_dir))
    sheet = LabelPages(combined, today)
    unfit_single, unfit_sheet = [], []
    try:
        # many labels: written by a process of their own while the next are laid out and drawn
        with StagedFiles(helper=len(contents) >= _HELPER_FROM, fresh=[folder]) as stage:
            for start in range(0, len(contents), _BATCH):
                batch = contents[start: start + _BATCH]
                if not (unfit_single or unfit_sheet):
                    qr_matrices([c.qr_payload for c in batch])  # the batch's QR codes encoded together
                for content in batch:  # laid out in both layouts, then drawn alone and on the sheet
                    unfit_single += unfit_labels([content], single, today)
                    unfit_sheet += unfit_labels([content], combined, today)
                    if unfit_single or unfit_sheet:
                        continue  # nothing more drawn; every label still checked, to name them all
                    stage(os.path.join(folder, safe_file_name(content.equipment_id, content.content_hash)),
                          labels_pdf_bytes([content], single, today))
                    sheet.add(content)
            if unfit_single or unfit_sheet:
                # none printed: a label is never printed cut off, nor is a batch printed with one missing
                raise LabelFitError("; ".join(unfit_single + unfit_sheet))
            stage(Path(out_dir) / "labels-sheet.pdf", sheet.finish())
            stage.publish()
    except BaseException:
        for created in reversed(made):  # folders this run made, if still empty
            with contextlib.suppress(OSError):
                created.rmdir()
        raise
    rows = [study_values(by_bus[c.equipment_id]) for c in contents]
    ledger.record(book, contents, single.name, issued_by, study_rows=rows, snapshot=ledger.site_snapshot(site))
    return contents

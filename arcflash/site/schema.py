"""Schema of the site data (pydantic models, one per element type).

Numbers whose unit is fixed carry it in the field name (``kva``, ``kv``,
``z_percent``, ``gap_mm``). Where the user may choose a unit, the value is a
quantity string with the unit written out: ``length: 150 ft`` or ``45 m``;
``fault: 12 kA`` or ``250 MVA``; motor ``size: 200 hp`` or ``150 kVA``.
Unknown fields are errors. :func:`site_json_schema` publishes the schema.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from typing import Annotated, Literal

import yaml
from pydantic import AfterValidator, Field, PrivateAttr, field_validator, model_validator

from ..models.conductors import CONDUITS, MATERIALS, SIZES, normalize_size
from ..models.ieee1584_tables import CONFIGURATIONS, EQUIPMENT_CLASSES
from ..models.nfpa70e import BOUNDARY_ENERGY_CAL_CM2
from ..models.transformer import MAX_TEST_CURRENT_MULTIPLE, PLAUSIBLE_Z_PERCENT, percent_impedance_from_test
from ..models.transformer import rated_current_a
from .base import SiteModel, field_error
from .slips import unit_slip
from .protection import CurveIn, RelayIn, TripUnitIn, check_device_settings

Positive = Annotated[float, Field(gt=0)]
NonNegative = Annotated[float, Field(ge=0)]
Identifier = Annotated[str, Field(min_length=1, max_length=200)]

_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z/]+)\s*$")

#: Units accepted per kind of quantity, with the factor to the canonical unit.
UNITS = {
    "length": {"ft": ("ft", 1.0), "m": ("ft", 1.0 / 0.3048), "km": ("ft", 1000.0 / 0.3048)},
    "fault": {"ka": ("kA", 1.0), "a": ("kA", 0.001), "mva": ("MVA", 1.0)},
    "motor": {"hp": ("hp", 1.0), "kva": ("kVA", 1.0)},
}


def parse_quantity(text, kind):
    """Parse '150 ft' into (150.0, 'ft') in the canonical unit of ``kind``.

    Raises
    ------
    ValueError
        Not a number followed by one of the accepted units.
    """
    accepted = UNITS[kind]
    names = ", ".join(accepted)
    match = _QUANTITY.match(str(text))
    if not match:
        raise ValueError(f"a number and a unit ({names}), e.g. '{_EXAMPLES[kind]}'")
    value, unit = float(match.group(1)), match.group(2).lower()
    if not math.isfinite(value):
        raise ValueError("a finite number")
    if unit not in accepted:
        raise ValueError(f"a unit among {names} (got {match.group(2)!r})")
    if value <= 0:
        raise ValueError("a positive value")
    canonical, factor = accepted[unit]
    if canonical == "kA" and (why := unit_slip("fault_ka", value * factor)) is not None:
        raise ValueError(why)
    return value * factor, canonical


_EXAMPLES = {"length": "150 ft", "fault": "25 kA", "motor": "200 hp"}


class Quantity(str):
    """A quantity as written ('650 ft'), parsed once: ``value`` in the canonical ``unit`` of its kind."""

    value: float
    unit: str


# Written back to YAML as the text it was (e.g. a site revision written by a tool).
yaml.SafeDumper.add_representer(Quantity, lambda dumper, quantity: dumper.represent_str(str(quantity)))


def _quantity_of(kind):
    """A string field that must parse as a quantity of ``kind``; it becomes a :class:`Quantity`."""

    def check(text):
        quantity = Quantity(text)
        quantity.value, quantity.unit = parse_quantity(text, kind)
        return quantity

    return Annotated[str, AfterValidator(check)]


FaultQuantity = _quantity_of("fault")
LengthQuantity = _quantity_of("length")
MotorSize = _quantity_of("motor")


class _Element(SiteModel):
    pass


class _Branch(_Element):
    """A series element between two buses."""

    @model_validator(mode="after")
    def _two_buses(self):
        ends = ("primary_bus", "secondary_bus") if hasattr(self, "primary_bus") else ("from_bus", "to_bus")
        if getattr(self, ends[0]) == getattr(self, ends[1]):
            raise field_error(ends[1], f"a bus other than {ends[0]} ({getattr(self, ends[0])}): a branch joins two buses")
        return self


class PpeBand(_Element):
    """The site's PPE for the labels whose incident energy is at most ``up_to_cal_cm2``."""

    up_to_cal_cm2: Positive = Field(description="Highest incident energy the band covers [cal/cm2].")
    arc_rating_cal_cm2: NonNegative = Field(description="Arc rating of the clothing the text names [cal/cm2]; "
                                                        "0 where it is not arc-rated (below 1.2 cal/cm2 only).")
    text: Annotated[str, Field(min_length=1, max_length=400)]

    @model_validator(mode="after")
    def _rated_for_its_band(self):
        # a band not arc-rated serves only energies below 1.2 cal/cm2 (the label's check skips it above)
        if self.up_to_cal_cm2 > BOUNDARY_ENERGY_CAL_CM2 and self.arc_rating_cal_cm2 < self.up_to_cal_cm2:
            raise field_error("arc_rating_cal_cm2", f"at least up_to_cal_cm2 = {self.up_to_cal_cm2:g}: the PPE must "
                                                    "be rated for every energy of its band")
        return self


class Tolerances(_Element):
    """How far each input may lie from its stated value, by kind (an element may state its own): the inputs
    an uncertainty run (:func:`arcflash.uncertainty`) samples. Zero (or ``as_stated``) leaves an input as
    stated."""

    utility_level: Literal["between_min_and_max", "as_stated"] = Field(
        "between_min_and_max", description="A utility's fault level anywhere between its stated minimum and "
                                           "maximum (uniform), or as each scenario states it.")
    transformer_z: Literal["within_tolerance", "as_stated"] = Field(
        "within_tolerance", description="A transformer's %Z anywhere within its z_tolerance_percent (uniform), or "
                                        "as each scenario takes it.")
    cable_length_percent: Annotated[float, Field(ge=0, lt=100)] = Field(
        10.0, description="Cable lengths within this many percent of the stated length (common practice for "
                          "estimated routes; a cable may state its own length_tolerance_percent).")
    gap_tolerance_mm: Annotated[float, Field(ge=0)] = Field(
        0.0, description="Gaps within this many millimetres of the stated or typical gap (a bus may state its own).")
    working_distance_tolerance_mm: Annotated[float, Field(ge=0)] = Field(
        0.0, description="Working distances within this many millimetres (a bus may state its own).")
    motor_running_fraction_min: Annotated[float, Field(ge=0, le=1)] = Field(
        1.0, description="A contributing motor (group) runs anywhere between this fraction of its size and all of "
                         "it; 1 runs it as stated (a motor may state its own running_fraction_min).")
    device_band: Literal["within_band", "slowest"] = Field(
        "within_band", description="An electronic trip unit trips anywhere inside its band (its pickup and time "
                                   "tolerances), a fuse or thermal-magnetic breaker anywhere between its minimum "
                                   "and total-clearing curves (where the library gives both), or each on its "
                                   "slowest edge, as the study takes it.")


class Facility(_Element):
    """Facility and study settings."""

    name: str
    description: str = ""
    study_revision: str = "0"
    study_date: str | None = None
    voltage_factor: Annotated[float, Field(gt=0.5, le=1.2)] = Field(
        1.0, description="Prefault voltage c [pu]; 1.0 by default."
    )
    s_base_mva: Positive = 100.0
    frequency_hz: Literal[50, 60] = 60
    default_scenario: str | None = None
    arc_duration_cap_s: Positive | None = Field(
        2.0, description="Longest arc duration considered (IEEE 1584-2018 guidance: 2 s); null for none.")
    device_library: list[str] = Field([], description="Device-library YAML files (with 'curves:'), relative paths.")
    permit_form: str | None = Field(
        None, description="The site's own energized electrical work permit form (name or place), named on "
                          "briefing sheets.")
    label_shows: Literal["energy", "category"] = Field(
        "energy", description="Labels show the incident energy with its working distance, or the PPE category.")
    site_ppe: list[PpeBand] = Field(
        [], description="Site PPE by energy band: each label prints the text of the first band that covers its "
                        "incident energy; the band's arc rating must cover the label's minimum arc rating.")
    motor_contribution_cycles: Positive | None = Field(
        None, description="Motor fault contributions end after this many cycles while an arc is cleared; "
                          "null (default): they last the whole arc (conservative).")
    tolerances: Tolerances = Field(default_factory=Tolerances,
                                   description="How far inputs may lie from their stated values (uncertainty runs).")

    @field_validator("site_ppe", mode="before")
    @classmethod
    def _bands_not_one_text(cls, value):
        if isinstance(value, str):
            raise ValueError("a list of bands {up_to_cal_cm2, arc_rating_cal_cm2, text}: one PPE text for every "
                             "label cannot be checked against each label's minimum arc rating")
        return value

    @field_validator("site_ppe")
    @classmethod
    def _bands_in_order(cls, bands):
        limits = [band.up_to_cal_cm2 for band in bands]
        if any(b <= a for a, b in zip(limits, limits[1:])):
            raise ValueError(f"bands in increasing order of up_to_cal_cm2 (got {', '.join(f'{v:g}' for v in limits)})")
        return bands

    @field_validator("study_date")
    @classmethod
    def _a_day_that_exists(cls, value):
        if value is None:
            return value
        try:
            return dt.date.fromisoformat(value).isoformat()
        except ValueError:
            raise ValueError("a date written YYYY-MM-DD that exists") from None

    @property
    def motor_contribution_end_s(self):
        """When motor contributions end [s], or None (they last the whole arc)."""
        if self.motor_contribution_cycles is None:
            return None
        return self.motor_contribution_cycles / self.frequency_hz


class Bus(_Element):
    """A bus: a piece of equipment where an arc can occur."""

    id: Identifier
    description: str = ""
    nominal_kv: Positive = Field(description="Nominal line-to-line voltage [kV], at most 50 kV.")
    equipment_class: str | None = Field(None, description="Typical values: " + ", ".join(EQUIPMENT_CLASSES))
    config: Literal[CONFIGURATIONS] | None = None  # type: ignore[valid-type]
    gap_mm: Positive | None = None
    working_distance_mm: Positive | None = None
    height_mm: Positive | None = None
    width_mm: Positive | None = None
    depth_mm: Positive | None = None
    arc_not_cleared_by: list[Identifier] = Field(
        [], description="Devices that do not clear an arc here (e.g. the main, for its line side).")
    gap_tolerance_mm: Annotated[float, Field(ge=0)] | None = Field(
        None, description="How far the gap may lie from its value [mm]; default facility.tolerances.gap_mm.")
    working_distance_tolerance_mm: Annotated[float, Field(ge=0)] | None = Field(
        None, description="How far the working distance may lie [mm]; default facility.tolerances.working_distance_mm.")

    @field_validator("equipment_class")
    @classmethod
    def _known_class(cls, value):
        if value is not None and value not in EQUIPMENT_CLASSES:
            raise ValueError(f"one of {', '.join(EQUIPMENT_CLASSES)}")
        return value

    @field_validator("config", mode="before")
    @classmethod
    def _upper(cls, value):
        return value.upper() if isinstance(value, str) else value


class SourceLevel(_Element):
    """Available three-phase fault current of a utility at one level."""

    fault: FaultQuantity = Field(description="Available fault current or power, e.g. '25 kA' or '500 MVA'.")
    x_over_r: Positive

    def fault_mva(self, kv):
        """Three-phase fault power at ``kv`` [MVA] (S = √3 kV I for a current)."""
        return self.fault.value if self.fault.unit == "MVA" else math.sqrt(3.0) * kv * self.fault.value


class Utility(_Element):
    """Utility source, maximum and minimum available fault current."""

    id: Identifier
    bus: Identifier
    kv: Positive = Field(description="Voltage at which the fault level is stated [kV].")
    max: SourceLevel
    min: SourceLevel
    in_service: bool = True

    @model_validator(mode="after")
    def _minimum_below_maximum(self):
        if self.min.fault_mva(self.kv) > self.max.fault_mva(self.kv) * (1.0 + 1e-9):
            raise field_error("min.fault", f"at most the maximum level, max.fault = {self.max.fault} "
                                           "(are the two swapped?)")
        return self

    def fault_mva(self, level):
        """Fault power at the stated voltage, at level 'max' or 'min' [MVA]."""
        return getattr(self, level).fault_mva(self.kv)


class Generator(_Element):
    """Generator behind its subtransient reactance."""

    id: Identifier
    bus: Identifier
    kva: Positive
    kv: Positive
    subtransient_reactance_percent: Positive
    x_over_r: Positive
    running: bool = Field(False, description="Running in the normal state; scenarios may start it.")


class Motor(_Element):
    """Motor (or group of motors) contributing to faults."""

    id: Identifier
    bus: Identifier
    size: MotorSize = Field(description="'200 hp' or '150 kVA'; 1 hp is taken as 1 kVA (common practice).")
    kv: Positive
    subtransient_reactance_percent: Positive = 16.7
    x_over_r: Positive = 10.0
    contributes: bool = True
    running_fraction_min: Annotated[float, Field(ge=0, le=1)] | None = Field(
        None, description="Smallest running share of the size, for uncertainty runs; default "
                          "facility.tolerances.motor_running_fraction_min.")

    @property
    def kva(self):
        """Rating [kVA] (1 hp taken as 1 kVA, common practice)."""
        return self.size.value


class ImpedanceTest(_Element):
    """Short-circuit (impedance-voltage) test readings of a transformer."""

    applied_v: Positive = Field(description="Primary voltage that circulates the test current [V].")
    measured_a: Positive | None = Field(None, description="Test current, if not rated current [A].")


class Transformer(_Branch):
    """Two-winding transformer."""

    id: Identifier
    primary_bus: Identifier
    secondary_bus: Identifier
    kva: Positive
    primary_kv: Positive
    secondary_kv: Positive
    z_percent: float | None = Field(
        None, description=f"Nameplate %Z; {PLAUSIBLE_Z_PERCENT[0]:g}-{PLAUSIBLE_Z_PERCENT[1]:g} % (a typing slip "
                          "such as 0.0575 for 5.75 is refused).")
    test: ImpedanceTest | None = None
    x_over_r: Positive
    z_tolerance_percent: Annotated[float, Field(ge=0, lt=50)] = 7.5
    connection: str | None = Field(None, description="Winding connection, for information.")

    @model_validator(mode="after")
    def _one_impedance(self):
        if (self.z_percent is None) == (self.test is None):
            raise ValueError("either z_percent or test readings (not both)")
        if self.test is not None:
            self._plausible_test()
        return self

    @field_validator("z_percent")
    @classmethod
    def _plausible_z(cls, value):
        low, high = PLAUSIBLE_Z_PERCENT
        if value is not None and not low <= value <= high:
            hint = f" ({value:g} looks like a fraction: {value * 100:g} %?)" if low <= value * 100 <= high else ""
            raise ValueError(f"a %Z of {low:g}-{high:g} %, as transformers have{hint}")
        return value

    @property
    def rated_primary_a(self):
        """Rated primary current [A]."""
        return float(rated_current_a(self.kva, self.primary_kv))

    @property
    def z_percent_used(self):
        """Nameplate %Z, or %Z derived from the test readings [%]."""
        if self.z_percent is not None:
            return self.z_percent
        measured = self.test.measured_a if self.test.measured_a is not None else self.rated_primary_a
        return float(percent_impedance_from_test(self.test.applied_v, self.primary_kv * 1000.0, measured,
                                                 self.rated_primary_a))

    def _plausible_test(self):
        rated_v, rated_a = self.primary_kv * 1000.0, self.rated_primary_a
        if self.test.applied_v >= rated_v:
            raise field_error("test.applied_v", f"a test voltage below the rated primary voltage, {rated_v:g} V")
        measured = self.test.measured_a
        if measured is not None and measured > MAX_TEST_CURRENT_MULTIPLE * rated_a:
            raise field_error("test.measured_a", f"a test current of at most {MAX_TEST_CURRENT_MULTIPLE:g} x the "
                                                 f"rated primary current, {rated_a:.1f} A")
        low, high = PLAUSIBLE_Z_PERCENT
        derived = self.z_percent_used
        if not low <= derived <= high:
            raise field_error("test", f"readings that give a %Z of {low:g}-{high:g} % (they give {derived:.3g} %: "
                                      "check applied_v, measured_a and kva)")


class Cable(_Branch):
    """Cable run: NEC Chapter 9 Table 9 conductor or explicit impedance per length."""

    id: Identifier
    from_bus: Identifier
    to_bus: Identifier
    length: LengthQuantity = Field(description="Route length, e.g. '150 ft' or '45 m'.")
    sets: Annotated[int, Field(ge=1, le=50)] = 1
    size: str | None = Field(None, description="Conductor size, AWG or kcmil, e.g. '4/0' or '500 kcmil'.")
    material: Literal[MATERIALS] | None = None  # type: ignore[valid-type]
    conduit: Literal[CONDUITS] | None = None  # type: ignore[valid-type]
    r_ohm_per_kft: NonNegative | None = None
    x_ohm_per_kft: NonNegative | None = None
    length_tolerance_percent: Annotated[float, Field(ge=0, lt=100)] | None = Field(
        None, description="How far the length may lie from the stated one [%]; default "
                          "facility.tolerances.cable_length_percent.")

    @property
    def length_ft(self):
        """Route length [ft]."""
        return self.length.value

    @field_validator("size")
    @classmethod
    def _size(cls, value):
        if value is not None:
            try:
                normalize_size(value)
            except ValueError:
                raise ValueError("a conductor size of NEC Chapter 9 Table 9: " + ", ".join(SIZES)) from None
        return value

    @field_validator("material", "conduit", mode="before")
    @classmethod
    def _lower(cls, value):
        if isinstance(value, str):
            value = value.strip().lower()
            return {"aluminium": "aluminum", "al": "aluminum", "cu": "copper"}.get(value, value)
        return value

    @model_validator(mode="after")
    def _one_impedance(self):
        table = (self.size, self.material, self.conduit)
        explicit = (self.r_ohm_per_kft, self.x_ohm_per_kft)
        if all(v is not None for v in table) and all(v is None for v in explicit):
            return self
        if all(v is not None for v in explicit) and all(v is None for v in table):
            return self
        raise ValueError("size, material and conduit (NEC Chapter 9 Table 9), or r_ohm_per_kft and x_ohm_per_kft")


class Impedance(_Branch):
    """Busway or other series branch with explicit impedance per phase."""

    id: Identifier
    from_bus: Identifier
    to_bus: Identifier
    kind: str = "busway"
    r_ohm: NonNegative
    x_ohm: NonNegative

    @model_validator(mode="after")
    def _not_zero(self):
        if self.r_ohm == 0 and self.x_ohm == 0:
            raise ValueError("a non-zero impedance (use a switch for a zero-impedance link)")
        return self


class Switch(_Branch):
    """Switch, breaker or tie between two buses of the same voltage."""

    id: Identifier
    from_bus: Identifier
    to_bus: Identifier
    kind: Literal["switch", "breaker", "tie"] = "switch"
    normally: Literal["open", "closed"] = "closed"


class Device(_Element):
    """Protective device on a branch, at one of its buses, with its settings."""

    id: Identifier
    branch: Identifier = Field(description="Id of the transformer, cable, impedance or switch it protects.")
    at_bus: Identifier = Field(description="The branch's bus on the device's side.")
    kind: Literal["relay-breaker", "trip-unit-breaker", "thermal-magnetic-breaker", "fuse"] = "trip-unit-breaker"
    relay: RelayIn | None = None
    trip_unit: TripUnitIn | None = None
    curve: Identifier | None = Field(None, description="Id of a curve of the device library.")
    maintenance: dict = Field(default_factory=dict,
                              description="Alternate settings (a subset of relay or trip_unit fields).")
    zone: dict = Field(default_factory=dict,
                       description="Settings in force for an arc in the device's zone (a subset of relay or "
                                   "trip_unit fields): zone-selective interlocking (the short-time delay of a "
                                   "trip unit not restrained) or a differential scheme (an instantaneous element "
                                   "of its relay). The zone: the buses it feeds with no other device between.")
    #: Where a digitised curve's device clears inside its band: -1 on the minimum curve, +1 on the total-clearing
    #: curve (what a study takes). Never read from site data: only an uncertainty sample moves it.
    _curve_band_position: float = PrivateAttr(1.0)

    @property
    def curve_band_position(self):
        """Where the device clears inside its digitised curve's band (see ``_curve_band_position``) [-]."""
        return self.__pydantic_private__["_curve_band_position"]

    @model_validator(mode="after")
    def _settings_match_kind(self):
        return check_device_settings(self)


class Scenario(_Element):
    """A named set of changes from the normal state."""

    name: Identifier
    description: str = ""
    utility: Literal["max", "min"] = "max"
    transformer_z: Literal["low", "nominal", "high"] | None = Field(
        None, description="Side of the %Z tolerance; default low for 'max', high for 'min'."
    )
    close: list[Identifier] = []
    open: list[Identifier] = []
    generators_running: list[Identifier] = []
    generators_stopped: list[Identifier] = []
    utilities_off: list[Identifier] = []
    motors: Literal["on", "off"] = "on"
    motors_off: list[Identifier] = []
    energy_reducing_maintenance_switching: list[Identifier] = Field(
        [], description="Devices whose energy-reducing maintenance switching (NEC 240.87(B)(3)) is on in this "
                        "scenario: their 'maintenance:' settings apply.")
    maintenance_mode: list[Identifier] | None = Field(
        None, description="The earlier name of energy_reducing_maintenance_switching: still read, with a warning.")

    @model_validator(mode="after")
    def _earlier_name(self):
        if self.maintenance_mode is not None:
            if self.energy_reducing_maintenance_switching:
                raise field_error("maintenance_mode", "only one of maintenance_mode (its earlier name) and "
                                                      "energy_reducing_maintenance_switching")
            object.__setattr__(self, "energy_reducing_maintenance_switching", list(self.maintenance_mode))
        return self

    @property
    def transformer_z_side(self):
        """The side of each transformer's %Z tolerance the scenario takes: as stated, else low for the
        maximum utility level and high for the minimum (the larger and the smaller fault current)."""
        return self.transformer_z or ("low" if self.utility == "max" else "high")

    @property
    def switching_key(self):
        """The key the site data used for the energy-reducing maintenance switching (for messages)."""
        return "maintenance_mode" if self.maintenance_mode is not None else "energy_reducing_maintenance_switching"


class SiteFile(_Element):
    """One site-data file: any of these sections (a facility may split them over files)."""

    facility: Facility | None = None
    buses: list[Bus] = []
    utilities: list[Utility] = []
    generators: list[Generator] = []
    motors: list[Motor] = []
    transformers: list[Transformer] = []
    cables: list[Cable] = []
    impedances: list[Impedance] = []
    switches: list[Switch] = []
    devices: list[Device] = []
    curves: list[CurveIn] = []
    scenarios: list[Scenario] = []


#: Section name -> element model, in reading order.
SECTIONS = {
    "buses": Bus, "utilities": Utility, "generators": Generator, "motors": Motor,
    "transformers": Transformer, "cables": Cable, "impedances": Impedance, "switches": Switch,
    "devices": Device, "curves": CurveIn, "scenarios": Scenario,
}


def site_json_schema():
    """JSON Schema of a site-data file (for editors)."""
    schema = SiteFile.model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "arcflash site data"
    return schema

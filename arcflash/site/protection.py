"""Schema of protective-device settings and of the device library (curves).

A relay-breaker carries ``relay:`` settings, a breaker with an electronic trip
unit ``trip_unit:``, a thermal-magnetic breaker or fuse the id of a digitised
``curve`` from the site's ``curves:`` section or a device-library file. Each
may carry ``maintenance:``, a partial set of alternate settings that a
scenario's ``energy_reducing_maintenance_switching`` (NEC 240.87(B)(3)) switches on.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, ValidationError, model_validator

from .base import FIELD_MARK, SiteModel, field_error
from ..models.curves import BREAKER_OPENING_CYCLES, IEC_60255_151, IEEE_C37_112, PointCurve

Positive = Annotated[float, Field(gt=0)]
Fraction = Annotated[float, Field(ge=0, lt=1)]


class _Settings(SiteModel):
    pass


class DefiniteTimeIn(_Settings):
    """A definite-time stage: pickup in relay secondary amperes, delay in seconds."""

    pickup_a: Positive
    time_s: Annotated[float, Field(ge=0)]


class RelayIn(_Settings):
    """Overcurrent relay (currents in secondary amperes) and its breaker."""

    ct_primary_a: Positive
    ct_secondary_a: Positive = 5.0
    pickup_a: Positive = Field(description="Inverse-time pickup (tap), secondary amperes.")
    standard: Literal["IEEE C37.112", "IEC 60255-151"] = "IEEE C37.112"
    curve: str = "very inverse"
    time_dial: Positive = 1.0
    definite_time: list[DefiniteTimeIn] = []
    instantaneous_a: Positive | None = Field(None, description="Instantaneous pickup, secondary amperes.")
    breaker_cycles: Positive = BREAKER_OPENING_CYCLES["medium-voltage"]

    @model_validator(mode="after")
    def _known_curve(self):
        table = IEEE_C37_112 if self.standard == "IEEE C37.112" else IEC_60255_151
        if self.curve not in table:
            raise ValueError(f"a curve of {self.standard}: {', '.join(table)} (got {self.curve!r})")
        if self.instantaneous_a is not None and self.instantaneous_a <= self.pickup_a:
            raise field_error("instantaneous_a", f"a setting above the inverse-time pickup_a = {self.pickup_a:g} A")
        return self


class TripUnitIn(_Settings):
    """Electronic trip unit of a low-voltage breaker (multiples as in the unit's settings)."""

    rating_a: Positive
    long_time_pickup: Positive = 1.0
    long_time_delay_s: Positive = 10.0
    short_time_pickup: Positive | None = None
    short_time_delay_s: Positive = 0.1
    short_time_i2t: bool = False
    instantaneous_pickup: Positive | None = None
    instantaneous_s: Annotated[float, Field(ge=0)] = 0.0
    pickup_tolerance: Fraction = 0.10
    time_tolerance: Fraction = 0.15
    breaker_cycles: Positive = BREAKER_OPENING_CYCLES["low-voltage power"]

    @model_validator(mode="after")
    def _pickups_in_order(self):
        if self.short_time_pickup is not None and self.short_time_pickup < 1.0:
            raise field_error("short_time_pickup", "at least 1 (a multiple of the long-time pickup, "
                                                   "which the short-time pickup cannot be below)")
        if self.instantaneous_pickup is not None and self.instantaneous_pickup < self.long_time_pickup:
            raise field_error("instantaneous_pickup", f"at least the long_time_pickup = {self.long_time_pickup:g} "
                                                      "(both are multiples of rating_a)")
        return self


class CurveIn(_Settings):
    """A digitised time-current band of a thermal-magnetic breaker or fuse (device library)."""

    id: Annotated[str, Field(min_length=1)]
    description: str = ""
    kind: Literal["thermal-magnetic-breaker", "fuse"]
    current_a: list[Positive]
    max_time_s: list[Positive] = Field(description="Total clearing (or maximum trip) time at each current.")
    min_time_s: list[Positive] | None = Field(None, description="Minimum melt (or minimum trip) time.")
    instantaneous_a: Positive | None = Field(
        None, description="Above this current: magnetic trip or current-limiting range."
    )
    instantaneous_s: Positive = 0.01
    rated_kv: Positive | None = Field(
        None, description="Rated voltage [kV]: a mitigation search proposes the device in place of another only "
                          "where its rating covers the voltage (none stated: never proposed).")

    @model_validator(mode="after")
    def _valid_curve(self):
        try:
            self.to_model()
        except ValueError as exc:
            raise ValueError(str(exc).split(": expected ", 1)[-1]) from None
        return self

    def to_model(self):
        """The :class:`~arcflash.models.curves.PointCurve` (ValueError if not a valid curve)."""
        return PointCurve(
            current_a=tuple(self.current_a), max_time_s=tuple(self.max_time_s),
            min_time_s=tuple(self.min_time_s) if self.min_time_s is not None else None,
            instantaneous_a=self.instantaneous_a, instantaneous_s=self.instantaneous_s, name=self.id,
        )


#: Which settings block each device kind needs.
SETTINGS_OF_KIND = {
    "relay-breaker": "relay",
    "trip-unit-breaker": "trip_unit",
    "thermal-magnetic-breaker": "curve",
    "fuse": "curve",
}


def check_device_settings(device):
    """The device's settings block matches its kind; maintenance and zone overrides are valid.

    Raises
    ------
    ValueError
        What is expected, in words.
    """
    needed = SETTINGS_OF_KIND[device.kind]
    given = [name for name in ("relay", "trip_unit", "curve") if getattr(device, name) is not None]
    if given != [needed]:
        raise ValueError(f"for a {device.kind}: '{needed}' settings and no other settings block")
    for block, words in (("maintenance", "maintenance settings"), ("zone", "zone settings")):
        overrides = getattr(device, block)
        if not overrides:
            continue
        if needed == "curve":
            raise ValueError(f"{words} only on relays and trip units (a fuse or fixed curve has none)")
        base = getattr(device, needed)
        try:
            type(base).model_validate({**base.model_dump(), **overrides})
        except ValidationError as exc:
            error = exc.errors()[0]
            text = error["msg"].removeprefix("Value error, ")
            if text.startswith(FIELD_MARK):
                name, text = text[1:].split(FIELD_MARK, 1)
            else:
                name = ".".join(str(part) for part in error["loc"])
            raise field_error(f"{block}.{name}", text.strip()[:1].lower() + text.strip()[1:]) from None
    return device

"""Input checking and broadcasting for :func:`arcflash.models.ieee1584.evaluate`.

Bad input (NaN, infinite, zero, negative, wrong type, unknown configuration,
missing enclosure size) raises :class:`ValueError` naming every bad parameter
in one message. Range-of-model checks live in :mod:`.ieee1584_range`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import ieee1584_tables as tables

_NUMERIC = (
    "voltage_kv",
    "bolted_ka",
    "gap_mm",
    "working_distance_mm",
    "clearing_time_s",
    "reduced_clearing_time_s",
)
_ENCLOSURE = ("height_mm", "width_mm", "depth_mm")
_ENCLOSED_CODES = tuple(tables.CONFIGURATIONS.index(c) for c in tables.ENCLOSED_CONFIGURATIONS)


@dataclass(frozen=True)
class Cases:
    """Flat, validated input arrays (one element per case) and the batch shape."""

    shape: tuple
    voltage_kv: np.ndarray
    bolted_ka: np.ndarray
    gap_mm: np.ndarray
    working_distance_mm: np.ndarray
    clearing_time_s: np.ndarray
    reduced_clearing_time_s: np.ndarray
    height_mm: np.ndarray
    width_mm: np.ndarray
    depth_mm: np.ndarray
    config_code: np.ndarray

    def columns(self, with_enclosure):
        """Arrays in the argument order of the per-group evaluation."""
        cols = (
            self.voltage_kv,
            self.bolted_ka,
            self.gap_mm,
            self.working_distance_mm,
            self.clearing_time_s,
            self.reduced_clearing_time_s,
        )
        if with_enclosure:
            cols += (self.height_mm, self.width_mm, self.depth_mm)
        return cols


def _as_float_array(name, value, errors):
    if value is None:
        return np.asarray(np.nan)
    arr = np.asarray(value)
    kind = arr.dtype.kind
    if kind in "iuf":
        return arr.astype(float, copy=False)
    if kind == "O":
        try:
            return arr.astype(float)
        except (TypeError, ValueError):
            pass
    what = "a boolean" if kind == "b" else _show(value)
    errors.append(f"{name}: expected a number or an array of numbers, got {what}")
    return None


def _show(value, limit=60):
    text = repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def case_label(index, shape):
    """Readable position of flat case ``index`` in a batch of ``shape`` ('' for a scalar)."""
    if not shape:
        return ""
    position = tuple(int(i) for i in np.unravel_index(index, shape))
    return f"case {position[0] if len(position) == 1 else position}"


def _first_bad(arr, bad):
    index = np.flatnonzero(bad)[0]
    where = "" if arr.ndim == 0 else f" ({case_label(index, arr.shape)})"
    return arr.ravel()[index], where


def _check_positive(name, arr, errors, allow_nan=False):
    if arr.size == 0:
        return
    if allow_nan:
        ok = not (arr <= 0.0).any() and not np.isinf(arr).any()
    else:
        # min() carries NaN through, so one comparison catches NaN, zero and
        # negatives; max() catches +inf.
        ok = bool(arr.min() > 0.0) and bool(np.isfinite(arr.max()))
    if not ok:
        with np.errstate(invalid="ignore"):
            good = (arr > 0.0) & np.isfinite(arr)
        if allow_nan:
            good |= np.isnan(arr)
        bad_value, where = _first_bad(arr, ~good)
        what = "a finite positive number" + (" or NaN (unknown)" if allow_nan else "")
        errors.append(f"{name}: expected {what}, got {float(bad_value)!r}{where}")


def _ascii4_key(u0, u1):
    """Injective key of up to four ASCII characters stored as UCS-4 (two uint64)."""
    key = u1 << np.uint64(8)
    key |= u0
    return key


_NAME_WORDS = np.array(tables.CONFIGURATIONS, dtype="U4").view(np.uint64).reshape(-1, 2)
_NAME_KEYS = _ascii4_key(_NAME_WORDS[:, 0], _NAME_WORDS[:, 1])
# Multiplicative hash of the five keys into 16 slots; the constant is checked
# at import to give five distinct slots.
_HASH_MULTIPLIER = np.uint64(0x9E3779B97F4A7C15)
_SLOTS = (_NAME_KEYS * _HASH_MULTIPLIER) >> np.uint64(60)
assert len(set(_SLOTS.tolist())) == len(tables.CONFIGURATIONS)
_SLOT_CODE = np.full(16, -1, dtype=np.int8)
_SLOT_CODE[_SLOTS] = np.arange(len(tables.CONFIGURATIONS))
_SLOT_KEY = np.zeros(16, dtype=np.uint64)
_SLOT_KEY[_SLOTS] = _NAME_KEYS


def _fast_codes(arr):
    """Codes of a 'U4' array by a perfect hash; None where it does not apply."""
    if arr.dtype != np.dtype("U4") or arr.size < 1024:
        return None
    words = np.ascontiguousarray(arr).reshape(-1).view(np.uint64).reshape(-1, 2)
    u0 = np.ascontiguousarray(words[:, 0])
    u1 = np.ascontiguousarray(words[:, 1])
    if ((u0 | u1) & np.uint64(0xFFFFFF00FFFFFF00)).any():
        return None  # a character outside ASCII: take the general path
    key = _ascii4_key(u0, u1)
    slot = key * _HASH_MULTIPLIER
    slot >>= np.uint64(60)
    slot = slot.view(np.int64)  # values below 16: the same bits as intp
    if not (_SLOT_KEY[slot] == key).all():
        return None  # an unknown name: the general path explains it
    return _SLOT_CODE[slot].reshape(arr.shape)


def config_codes(config):
    """Integer codes (index into CONFIGURATIONS) for a configuration or array of them.

    Raises
    ------
    ValueError
        Unknown configuration; the message lists the five valid ones.
    """
    arr = np.asarray(config)
    if arr.dtype.kind not in "UO":
        raise ValueError(f"config: expected a configuration name, got {_show(config)}")
    if arr.dtype.kind == "O":
        if not all(isinstance(x, str) for x in arr.ravel().tolist()):
            raise ValueError("config: expected configuration names (strings)")
        arr = arr.astype(str)
    fast = _fast_codes(arr)
    if fast is not None:
        return fast
    codes = np.full(arr.shape, -1, dtype=np.int8)
    for code, name in enumerate(tables.CONFIGURATIONS):
        codes[arr == name] = code
    unknown = codes < 0
    if unknown.any():
        # Accept lower case and stray spaces, on the few cases that need it.
        cleaned = np.char.upper(np.char.strip(arr[unknown]))
        fixed = np.full(cleaned.shape, -1, dtype=np.int8)
        for code, name in enumerate(tables.CONFIGURATIONS):
            fixed[cleaned == name] = code
        codes[unknown] = fixed
        if (fixed < 0).any():
            bad = sorted(set(arr[unknown][fixed < 0].tolist()))[:5]
            raise ValueError(
                f"config: unknown electrode configuration {', '.join(map(repr, bad))}; "
                f"expected one of {', '.join(tables.CONFIGURATIONS)}"
            )
    return codes


def prepare_inputs(
    voltage_kv, bolted_ka, gap_mm, working_distance_mm, clearing_time_s,
    reduced_clearing_time_s, config, height_mm, width_mm, depth_mm,
):
    """Check every input, broadcast them together and flatten them.

    Returns
    -------
    Cases
        Flat float arrays plus the configuration codes and the batch shape.

    Raises
    ------
    ValueError
        Every bad parameter named in one message.
    """
    errors = []
    raw = dict(zip(_NUMERIC, (voltage_kv, bolted_ka, gap_mm, working_distance_mm,
                              clearing_time_s, reduced_clearing_time_s)))
    raw.update(zip(_ENCLOSURE, (height_mm, width_mm, depth_mm)))
    arrays = {}
    for name, value in raw.items():
        if value is None and name not in _ENCLOSURE:
            errors.append(f"{name}: a value is required")
            continue
        arr = _as_float_array(name, value, errors)
        if arr is None:
            continue
        if value is not None:
            _check_positive(name, arr, errors, allow_nan=name in _ENCLOSURE)
        arrays[name] = arr
    try:
        codes = config_codes(config)
    except ValueError as exc:
        errors.append(str(exc))
        codes = None
    if errors:
        raise ValueError("; ".join(errors))
    try:
        broadcast = np.broadcast_arrays(*arrays.values(), codes)
    except ValueError:
        shapes = ", ".join(f"{k} {np.shape(v)}" for k, v in arrays.items())
        raise ValueError(f"inputs do not broadcast together: {shapes}, config {codes.shape}") from None
    shape = broadcast[0].shape
    flat = {name: np.ravel(arr) for name, arr in zip(arrays, broadcast)}
    code = np.ravel(broadcast[-1])
    for name in ("height_mm", "width_mm"):
        unknown = np.isnan(flat[name])
        if unknown.any():
            missing = unknown & np.isin(code, _ENCLOSED_CODES)
            if missing.any():
                where = case_label(np.flatnonzero(missing)[0], shape)
                errors.append(
                    f"{name}: required for the enclosed configurations "
                    f"{', '.join(tables.ENCLOSED_CONFIGURATIONS)}" + (f" (missing for {where})" if where else "")
                )
    if errors:
        raise ValueError("; ".join(errors))
    return Cases(shape=shape, config_code=code, **flat)

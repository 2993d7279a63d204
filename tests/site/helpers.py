"""Write small site folders for tests."""

from __future__ import annotations

import copy

import yaml

CHAIN = {
    "facility": {"name": "Test chain (invented)"},
    "buses": [
        {"id": "MV", "nominal_kv": 13.8, "equipment_class": "switchgear-15kv"},
        {"id": "LV", "nominal_kv": 0.48, "equipment_class": "switchgear-lv"},
        {"id": "END", "nominal_kv": 0.48, "equipment_class": "panelboard-deep"},
    ],
    "utilities": [{"id": "U", "bus": "MV", "kv": 13.8,
                   "max": {"fault": "10 kA", "x_over_r": 10}, "min": {"fault": "5 kA", "x_over_r": 8}}],
    "transformers": [{"id": "T", "primary_bus": "MV", "secondary_bus": "LV", "kva": 1000, "primary_kv": 13.8,
                      "secondary_kv": 0.48, "z_percent": 5.75, "x_over_r": 6, "z_tolerance_percent": 0}],
    "cables": [{"id": "C", "from_bus": "LV", "to_bus": "END", "length": "200 ft", "size": "4/0",
                "material": "copper", "conduit": "steel"}],
    "devices": [{"id": "CB-C", "branch": "C", "at_bus": "LV", "kind": "trip-unit-breaker",
                 "trip_unit": {"rating_a": 800, "short_time_pickup": 6.0, "short_time_delay_s": 0.1,
                               "instantaneous_pickup": 10.0}}],
}


def chain(**changes):
    """A copy of the three-bus chain with top-level sections replaced."""
    document = copy.deepcopy(CHAIN)
    document.update(changes)
    return document


def write_site(folder, document, name="site.yaml"):
    """Write ``document`` as one YAML file in ``folder``; return the folder."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / name).write_text(yaml.safe_dump(document, sort_keys=False), encoding="utf-8")
    return folder


def lv_substation(*loads):
    """The buses, utility and transformer of an invented 480 V substation (13.8 kV utility, 20 kA / 10 kA;
    a 1,500 kVA, 5.75 % transformer from MV to LV, no %Z tolerance), with the load buses ``loads`` ((id,
    equipment class) at 0.48 kV): the sections of a site document."""
    return {
        "buses": [{"id": "MV", "nominal_kv": 13.8, "equipment_class": "switchgear-15kv"},
                  {"id": "LV", "nominal_kv": 0.48, "equipment_class": "switchgear-lv"}]
        + [{"id": ident, "nominal_kv": 0.48, "equipment_class": kind} for ident, kind in loads],
        "utilities": [{"id": "U", "bus": "MV", "kv": 13.8, "max": {"fault": "20 kA", "x_over_r": 10},
                       "min": {"fault": "10 kA", "x_over_r": 8}}],
        "transformers": [{"id": "T", "primary_bus": "MV", "secondary_bus": "LV", "kva": 1500, "primary_kv": 13.8,
                          "secondary_kv": 0.48, "z_percent": 5.75, "x_over_r": 6, "z_tolerance_percent": 0}],
    }

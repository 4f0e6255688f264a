"""A small driver design whose numbers are easy to work by hand, for the hand-worked tests.

12 V supply, a 160 Ω / 0.12 H relay coil, a 1 kΩ base resistor from a 5 V logic pin with
100 Ω output resistance, a 10 kΩ pull-down, an NPN with h_FE(min) = 100 and a diode clamp
with the SPICE parameters I_S = 1e-8 A, n = 1.9, R_S = 0.05 Ω. All tolerances are zero and
the ambient is fixed at 20 °C, so there is one corner per varying input (the logic low).
"""

from __future__ import annotations

import copy
from typing import Any

BASE: dict[str, Any] = {
    "format": "clampdown-design/1",
    "name": "hand-worked example",
    "supply": {"nominal": 12, "tolerance": 0},
    "ambient": {"min": 20, "max": 20},
    "drive": {
        "kind": "logic",
        "high": 5,
        "high_min": 5,
        "low": 0,
        "low_max": 0.4,
        "r_out": 100,
        "i_max": "20 mA",
    },
    "base": {"r_series": "1k", "r_pulldown": "10k", "tolerance": 0, "power_rating": "125 mW"},
    "switch": {
        "kind": "npn",
        "name": "hand NPN",
        "hfe_min": 100,
        "vbe_sat": 0.9,
        "vce_sat": 0.2,
        "vbe_on": 0.65,
        "vceo": 40,
        "vebo": 6,
        "ic_max": 0.5,
        "p_max": 0.625,
        "rth_ja": 200,
        "tj_max": 150,
    },
    "coil": {
        "name": "hand coil",
        "v_nominal": 12,
        "r_coil": 160,
        "tolerance": 0,
        "r_at": 20,
        "inductance": 0.12,
        "v_pickup": 8.4,
        "v_dropout": 1.2,
        "v_max": 15.6,
    },
    "clamp": {
        "kind": "diode",
        "diode": {
            "name": "hand diode",
            "vrrm": 100,
            "if_avg": 1,
            "i_peak": 2,
            "vf": 1.0,
            "vf_at": 1.0,
            "is": 1e-8,
            "n": 1.9,
            "rs": 0.05,
        },
    },
}


def design(**changes: Any) -> dict[str, Any]:
    """BASE with changes given as dotted paths: design(**{"coil.r_coil": 200})."""
    doc = copy.deepcopy(BASE)
    for path, value in changes.items():
        *parents, leaf = path.split(".")
        node = doc
        for key in parents:
            node = node[key]
        if value is DELETE:
            del node[leaf]
        else:
            node[leaf] = value
    return doc


DELETE = object()

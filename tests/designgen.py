"""Seeded random design files (clampdown-design/1) for tests and benchmarks.

``random_design(rng, clamp_kind)`` returns a plain dict, as a user would write it, that
app.engine.parse_design accepts. The values are physically plausible for a relay or
solenoid driver rather than uniformly random: the coil is sized for the supply, pick-up
and drop-out sit where relay makers put them, a TVS breaks down above the highest supply.
Some numbers are written as strings in engineering notation ("4k7", "120 mH", "10%") so
the unit parser is exercised too. A design may well fail review; it is only ever valid.

``random_switch_design(rng, switch_kind, clamp_kind)`` does the same for an N-channel MOSFET
or a Darlington array channel (``random_design(rng, "array_diode")`` is a Darlington channel
whose common pin goes through a zener; ``common_to`` picks the others).

Ranges (common practice for small relay and solenoid drivers, not from a standard):
supply 5–48 V, coil 50 Ω–2 kΩ and 10 mH–2 H, must-operate 60–75 % and drop-out about 10 %
of the nominal coil voltage, rectifier V_F 0.7–1.2 V, zener 5–40 V.
"""

from __future__ import annotations

import math
import random

CLAMP_KINDS = (
    "none",
    "diode",
    "diode_zener",
    "diode_resistor",
    "resistor",
    "tvs_switch",
    "rc",
    "array_diode",
)
SWITCH_KINDS = ("npn", "nmos", "darlington_array")

_PREFIXES = ((1e-12, "p"), (1e-9, "n"), (1e-6, "u"), (1e-3, "m"), (1.0, ""), (1e3, "k"), (1e6, "M"))
_SUPPLIES = (5.0, 6.0, 9.0, 12.0, 15.0, 24.0, 28.0, 36.0, 48.0)


def _log_uniform(rng: random.Random, low: float, high: float) -> float:
    return math.exp(rng.uniform(math.log(low), math.log(high)))


def _engineering(value: float, unit: str) -> str:
    """12000, "Ω" -> "12 kΩ"; the mantissa keeps 6 significant digits."""
    if value == 0:
        return f"0 {unit}".strip()
    scale, symbol = _PREFIXES[0]
    for scale_i, symbol_i in _PREFIXES:
        if abs(value) >= scale_i:
            scale, symbol = scale_i, symbol_i
    return f"{value / scale:.6g} {symbol}{unit}".strip()


def _rkm(value: float) -> str:
    """An RKM code for a resistor (IEC 60062): 4700 -> "4k7", 330 -> "330R"."""
    for scale, letter in ((1e6, "M"), (1e3, "k"), (1.0, "R")):
        if value >= scale:
            whole, frac = divmod(round(value / scale, 2), 1)
            digits = f"{frac:.2f}"[2:].rstrip("0")
            return f"{int(whole)}{letter}{digits}"
    return f"{value:g}"


class _Writer:
    """Writes a number either as a float or, sometimes, as a string with its unit."""

    def __init__(self, rng: random.Random, text_share: float):
        self.rng = rng
        self.text_share = text_share

    def __call__(self, value: float, unit: str = "") -> float | str:
        if self.rng.random() >= self.text_share:
            return float(value)
        if unit == "Ω" and self.rng.random() < 0.5 and value >= 1:
            return _rkm(value)
        return _engineering(value, unit)

    def exact(self, value: float, unit: str = "") -> float | str:
        """As a string only when the string is exact (for values that bound others)."""
        text = self(value, unit)
        return text if isinstance(text, float) or _engineering(value, unit) == text else float(value)

    def percent(self, fraction: float) -> float | str:
        pct = round(fraction * 100, 3)
        return f"{pct:g}%" if self.rng.random() < self.text_share else pct


def _rounded(value: float, digits: int = 4) -> float:
    """Round to significant digits, as a datasheet or a part list would print it."""
    if value == 0:
        return 0.0
    return float(f"{value:.{digits}g}")


def random_diode(rng: random.Random, w: _Writer, i_expected: float, v_reverse: float) -> dict:
    """A rectifier that can carry ``i_expected`` and block ``v_reverse`` (usually with margin)."""
    vf_at = _rounded(_log_uniform(rng, 0.01, 3.0), 3)
    diode: dict = {
        "name": f"random rectifier {rng.randrange(1000, 9999)}",
        "vrrm": w(rng.choice((50.0, 100.0, 200.0, 400.0, 600.0, 1000.0)) if v_reverse < 45 else 1000.0, "V"),
        "if_avg": w(_rounded(max(0.15, i_expected * rng.uniform(0.5, 4.0)), 3), "A"),
        "i_peak": w(_rounded(max(0.5, i_expected * rng.uniform(2.0, 40.0)), 3), "A"),
    }
    style = rng.choice(("point", "point", "point_n", "spice"))
    if style == "spice":
        # Explicit SPICE parameters; vf is then the model's own voltage at vf_at, so the
        # part stays self-consistent: V_F = n·V_T·ln(1 + I_F/I_S) + I_F·R_S (Shockley).
        i_s = _rounded(_log_uniform(rng, 1e-12, 1e-6), 3)
        n = _rounded(rng.uniform(1.0, 2.2), 3)
        r_s = _rounded(_log_uniform(rng, 0.005, 0.5), 3)
        r_s = min(r_s, _rounded(0.3 / vf_at, 3))
        v_t = 0.025852  # kT/q at 27 °C
        vf = n * v_t * math.log1p(vf_at / i_s) + vf_at * r_s
        diode.update({"vf": _rounded(vf, 4), "vf_at": w.exact(vf_at, "A"), "is": w(i_s, "A"), "n": n})
        diode["rs"] = w(r_s, "Ω")
        if diode["vf"] <= r_s * vf_at * 1.01:  # keep "rs × vf_at below vf" true after rounding
            diode["vf"] = _rounded(r_s * vf_at * 1.5 + 0.3, 4)
    else:
        vf = _rounded(rng.uniform(0.7, 1.2), 3)
        diode.update({"vf": w.exact(vf, "V"), "vf_at": w.exact(vf_at, "A")})
        if style == "point_n":
            diode["n"] = _rounded(rng.uniform(1.3, 2.2), 3)
            if rng.random() < 0.7:
                # Series resistance leaves at least 0.55 V across the junction at vf_at.
                diode["rs"] = _rounded(rng.uniform(0.0, vf - 0.55) / vf_at, 3)
    return diode


def _drive(rng: random.Random, w: _Writer, vcc_nominal: float) -> dict:
    if rng.random() < 0.7:
        high = rng.choice((3.3, 5.0, 5.0, 12.0 if vcc_nominal >= 12 else 5.0))
        low = 0.0 if rng.random() < 0.85 else -_rounded(rng.uniform(0.1, 3.0), 3)
        return {
            "kind": "logic",
            "high": high,
            "high_min": _rounded(high * rng.uniform(0.75, 0.97), 3),
            "low": low,
            "low_max": _rounded(rng.uniform(0.2, 0.6), 3),
            "r_out": w(_rounded(rng.uniform(5.0, 200.0), 3), "Ω"),
            "i_max": w(_rounded(rng.uniform(0.004, 0.04), 3), "A"),
        }
    drive = {
        "kind": "divider",
        "r_fixed": w(_rounded(_log_uniform(rng, 1e3, 100e3), 2), "Ω"),
        "sensor_position": rng.choice(("top", "bottom")),
        "r_sensor_on": w(_rounded(_log_uniform(rng, 10.0, 5e3), 3), "Ω"),
        "r_sensor_off": w(_rounded(_log_uniform(rng, 100e3, 10e6), 3), "Ω"),
        "tolerance": w.percent(rng.choice((0.01, 0.05, 0.1, 0.2))),
    }
    if drive["sensor_position"] == "bottom":
        # The sensor at the bottom energises the coil when its resistance is high.
        drive["r_sensor_on"], drive["r_sensor_off"] = drive["r_sensor_off"], drive["r_sensor_on"]
    if rng.random() < 0.4:
        drive["v_source"] = w(rng.choice((3.3, 5.0, 12.0)), "V")
    return drive


def random_design(rng: random.Random, clamp_kind: str) -> dict:
    """One random valid design with the given clamp kind (one of CLAMP_KINDS)."""
    if clamp_kind not in CLAMP_KINDS:
        raise ValueError(f"clamp_kind must be one of {CLAMP_KINDS}, not {clamp_kind!r}")
    if clamp_kind == "array_diode":
        return random_switch_design(rng, "darlington_array", "array_diode", common_to="zener")
    w = _Writer(rng, text_share=rng.choice((0.0, 0.3)))

    # Supply: a standard rail, within 5–48 V.
    vcc = rng.choice(_SUPPLIES)
    supply: dict
    if rng.random() < 0.6:
        tol = rng.choice((0.02, 0.05, 0.1, 0.15))
        tol = min(tol, (48.0 / vcc - 1) if vcc * (1 + tol) > 48 else tol)
        supply = {"nominal": w.exact(vcc, "V"), "tolerance": w.percent(tol)}
        v_low, v_high = vcc * (1 - round(tol * 100, 3) / 100), vcc * (1 + round(tol * 100, 3) / 100)
    else:
        v_low = _rounded(vcc * rng.uniform(0.85, 0.99), 3)
        v_high = _rounded(min(48.0, vcc * rng.uniform(1.01, 1.2)), 3)
        supply = {"nominal": vcc, "min": v_low, "max": v_high}

    ambient_min = float(rng.choice((-40, -25, -10, 0, 5)))
    ambient_max = float(rng.choice((40, 50, 55, 60, 70, 85)))

    # Coil sized for the supply: 0.2–3 W at nominal voltage, resistance kept in 50 Ω–2 kΩ.
    power = _log_uniform(rng, 0.2, 3.0)
    r_coil = _rounded(min(2000.0, max(50.0, vcc**2 / power)), 3)
    inductance = _rounded(_log_uniform(rng, 0.01, 2.0), 3)
    v_nominal = vcc
    coil = {
        "name": f"random coil {vcc:g} V / {r_coil:g} Ω",
        "v_nominal": v_nominal,
        "r_coil": w.exact(r_coil, "Ω"),
        "tolerance": w.percent(rng.choice((0.05, 0.07, 0.1, 0.15))),
        "inductance": w(inductance, "H"),
        "v_pickup": _rounded(v_nominal * rng.uniform(0.6, 0.75), 3),
        "v_dropout": _rounded(v_nominal * rng.uniform(0.07, 0.15), 3),
        "v_max": _rounded(v_nominal * rng.uniform(1.1, 1.5), 3),
    }
    if rng.random() < 0.5:
        coil["r_at"] = float(rng.choice((20, 23, 25)))
    if rng.random() < 0.5:
        coil["rth"] = w(_rounded(rng.uniform(10.0, 80.0), 3), "K/W")
    i_coil = v_high / (r_coil * 0.85)  # the most the coil can carry, cold and at low tolerance

    vceo = float(rng.choice([v for v in (30, 40, 45, 60, 80, 100, 160) if v > v_high] or [160]))
    ic_max = rng.choice([i for i in (0.1, 0.2, 0.5, 0.8, 1.0, 1.5, 3.0) if i > i_coil * 0.7] or [3.0])
    switch = {
        "kind": "npn",
        "name": f"random NPN {vceo:g} V / {ic_max:g} A",
        "hfe_min": float(rng.choice((30, 40, 50, 60, 80, 100, 150, 200))),
        "vbe_sat": _rounded(rng.uniform(0.8, 1.2), 3),
        "vce_sat": _rounded(rng.uniform(0.1, 0.6), 3),
        "vbe_on": _rounded(rng.uniform(0.6, 0.8), 3),
        "vceo": w(vceo, "V"),
        "vebo": float(rng.choice((5, 6, 7))),
        "ic_max": w(ic_max, "A"),
        "p_max": w(rng.choice((0.5, 0.625, 1.0, 1.5, 2.0)), "W"),
        "rth_ja": float(rng.choice((62.5, 83.3, 125, 200, 250))),
        "tj_max": float(rng.choice((125, 150, 175))),
    }

    drive = _drive(rng, w, vcc)
    base: dict = {
        "r_series": w(_rounded(_log_uniform(rng, 100.0, 10e3), 2), "Ω"),
        "tolerance": w.percent(rng.choice((0.01, 0.02, 0.05))),
        "power_rating": w(rng.choice((0.0625, 0.1, 0.125, 0.25, 0.5)), "W"),
    }
    if rng.random() < 0.7:
        base["r_pulldown"] = w(_rounded(_log_uniform(rng, 2e3, 100e3), 2), "Ω")

    clamp: dict = {"kind": clamp_kind}
    if clamp_kind in ("diode", "diode_zener", "diode_resistor"):
        clamp["diode"] = random_diode(rng, w, i_coil, v_high)
    if clamp_kind == "diode_zener":
        zener: dict = {
            "vz": _rounded(rng.uniform(5.0, 40.0), 3),
            "tolerance": w.percent(rng.choice((0.02, 0.05, 0.1))),
            "rz": w(_rounded(rng.uniform(0.0, 40.0), 3) if rng.random() < 0.9 else 0.0, "Ω"),
            "p_max": w(rng.choice((0.5, 1.0, 1.3, 3.0, 5.0)), "W"),
        }
        if rng.random() < 0.7:
            zener["i_test"] = w(_rounded(_log_uniform(rng, 0.001, 0.02), 3), "A")
        clamp["zener"] = zener
    elif clamp_kind == "diode_resistor":
        clamp["r"] = w(_rounded(r_coil * _log_uniform(rng, 0.1, 3.0), 3), "Ω")
        if rng.random() < 0.7:
            clamp["tolerance"] = w.percent(rng.choice((0.01, 0.05, 0.1)))
        if rng.random() < 0.5:
            clamp["power_rating"] = w(rng.choice((0.125, 0.25, 0.5)), "W")
    elif clamp_kind == "resistor":
        clamp["r"] = w(_rounded(r_coil * _log_uniform(rng, 0.5, 10.0), 3), "Ω")
        if rng.random() < 0.7:
            clamp["tolerance"] = w.percent(rng.choice((0.01, 0.05, 0.1)))
    elif clamp_kind == "tvs_switch":
        # A TVS whose minimum breakdown is above the highest supply (else it conducts while on).
        v_breakdown = _rounded(v_high * rng.uniform(1.1, 1.8), 3)
        i_clamp = _rounded(_log_uniform(rng, 1.0, 30.0), 3)
        tvs: dict = {
            "v_breakdown": v_breakdown,
            "v_clamp": _rounded(v_breakdown * rng.uniform(1.25, 1.65), 3),
            "i_clamp": w.exact(i_clamp, "A"),
            "p_max": w(float(rng.choice((200, 400, 600, 1500))), "W"),
        }
        if rng.random() < 0.5:
            tvs["i_test"] = rng.choice((0.001, 0.005, 0.01))
        if rng.random() < 0.6:
            # The datasheet's maximum breakdown, below the clamping voltage.
            tvs["v_breakdown_max"] = _rounded(v_breakdown * rng.uniform(1.03, 1.15), 3)
        if rng.random() < 0.4:
            tvs["v_standoff"] = _rounded(v_breakdown * rng.uniform(0.8, 0.9), 3)
        clamp["tvs"] = tvs
    elif clamp_kind == "rc":
        # A snubber sized as common practice suggests: R near √(L/C), with √(L/C) of the order
        # of the coil resistance (so the spike is of the order of the supply); some ring.
        z = r_coil * _log_uniform(rng, 0.3, 3.0)
        clamp.update(
            {
                "r": w(_rounded(z * _log_uniform(rng, 0.2, 1.5), 3), "Ω"),
                "c": w(_rounded(inductance / z**2, 3), "F"),
                "c_voltage_rating": float(rng.choice((25, 50, 63, 100, 250, 400))),
                "power_rating": w(rng.choice((0.125, 0.25, 0.5, 1.0)), "W"),
            }
        )
        if rng.random() < 0.7:
            clamp["tolerance"] = w.percent(rng.choice((0.05, 0.1, 0.2)))

    design = {
        "format": "clampdown-design/1",
        "name": f"random {clamp_kind} design {rng.randrange(10**6):06d}",
        "supply": supply,
        "ambient": {"min": ambient_min, "max": ambient_max},
        "drive": drive,
        "base": base,
        "switch": switch,
        "coil": coil,
        "clamp": clamp,
    }
    if rng.random() < 0.4:
        design["switching"] = {"per_hour": float(rng.choice((1, 10, 60, 600, 3600)))}
    if rng.random() < 0.3:
        design["requirements"] = {"max_release_time": w(_rounded(_log_uniform(rng, 1e-3, 50e-3), 2), "s")}
    return design


def _random_zener(rng: random.Random, w: _Writer) -> dict:
    return {
        "vz": _rounded(rng.uniform(5.0, 30.0), 3),
        "tolerance": w.percent(rng.choice((0.02, 0.05, 0.1))),
        "rz": w(_rounded(rng.uniform(1.0, 40.0), 3), "Ω"),
        "p_max": w(rng.choice((0.5, 1.0, 1.3, 3.0)), "W"),
    }


def random_switch_design(
    rng: random.Random, switch_kind: str, clamp_kind: str, *, common_to: str | None = None
) -> dict:
    """A random valid design with the given switch kind ("npn", "nmos", "darlington_array") and
    clamp kind; ``common_to`` ("supply", "zener", "unconnected") for an "array_diode" clamp."""
    if switch_kind not in SWITCH_KINDS:
        raise ValueError(f"switch_kind must be one of {SWITCH_KINDS}, not {switch_kind!r}")
    design = random_design(rng, "diode" if clamp_kind == "array_diode" else clamp_kind)
    if switch_kind == "npn":
        return design
    w = _Writer(rng, text_share=rng.choice((0.0, 0.3)))
    supply = design["supply"]
    nominal = (
        float(supply["nominal"])
        if not isinstance(supply["nominal"], str)
        else float(supply["nominal"].split()[0])
    )
    v_high = nominal * 1.2 if "max" not in supply else float(supply["max"])
    base = design.pop("base")
    if switch_kind == "nmos":
        level = rng.choice((2.5, 4.5, 4.5, 10.0))
        vgs_th_max = _rounded(level * rng.uniform(0.35, 0.6), 3)
        vds = float(rng.choice([v for v in (20, 30, 40, 60, 100) if v > v_high] or [100]))
        design["switch"] = {
            "kind": "nmos",
            "name": f"random N-MOSFET {vds:g} V",
            "vds_max": w(vds, "V"),
            "id_max": w(rng.choice((0.3, 0.5, 1.0, 2.0, 5.0)), "A"),
            "rds_on": w(_rounded(_log_uniform(rng, 0.02, 5.0), 3), "Ω"),
            "rds_on_vgs": level,
            "rds_on_hot": _rounded(rng.uniform(1.4, 1.9), 3),
            "vgs_th_min": _rounded(vgs_th_max * rng.uniform(0.4, 0.7), 3),
            "vgs_th_max": vgs_th_max,
            "vgs_max": float(rng.choice((12, 16, 20))) if level < 12 else 20.0,
            "p_max": w(rng.choice((0.35, 0.5, 1.0, 2.0)), "W"),
            "rth_ja": float(rng.choice((60, 100, 250, 350))),
            "tj_max": float(rng.choice((150, 175))),
        }
        if rng.random() < 0.5:
            design["switch"]["e_as"] = w(_rounded(_log_uniform(rng, 1e-3, 0.1), 3), "J")
        base["r_series"] = w(_rounded(_log_uniform(rng, 10.0, 1e3), 2), "Ω")
        design["gate"] = base
    else:
        channels = rng.choice((7, 8))
        design["switch"] = {
            "kind": "darlington_array",
            "name": f"random {channels}-channel Darlington array",
            "channels": channels,
            "channels_on": rng.randint(1, channels),
            "r_input": w(float(rng.choice((2700, 3300, 10500))), "Ω"),
            "vce_sat": _rounded(rng.uniform(0.9, 1.6), 3),
            "vbe_on": _rounded(rng.uniform(1.8, 2.6), 3),
            "hfe_min": float(rng.choice((500, 1000, 1500))),
            "vceo": 50.0 if v_high < 45 else 100.0,
            "ic_max": w(0.5, "A"),
            "p_max": w(rng.choice((1.0, 1.5, 2.25)), "W"),
            "rth_ja": float(rng.choice((55, 70, 110))),
            "tj_max": 150.0,
        }
        if rng.random() < 0.4:
            base["r_series"] = w(_rounded(_log_uniform(rng, 100.0, 2e3), 2), "Ω")
            design["base"] = base
    if clamp_kind == "array_diode":
        diode = design["clamp"]["diode"]
        clamp = {
            "kind": "array_diode",
            "common_to": common_to or rng.choice(("supply", "zener")),
            "vf": diode["vf"] if not isinstance(diode.get("vf"), str) else _rounded(rng.uniform(0.9, 1.7), 3),
            "vf_at": w(_rounded(rng.uniform(0.1, 0.5), 3), "A"),
            "i_peak": w(0.5, "A"),
            "vrrm": 50.0 if v_high < 45 else 100.0,
            "if_avg": w(0.5, "A"),
        }
        if isinstance(clamp["vf"], float) and clamp["vf"] < 0.5:
            clamp["vf"] = 1.0
        if clamp["common_to"] == "zener":
            clamp["zener"] = _random_zener(rng, w)
        design["clamp"] = clamp
    design["name"] = f"random {switch_kind} {clamp_kind} design {rng.randrange(10**6):06d}"
    return design


def random_designs(seed: int, count: int, kinds: tuple[str, ...] = CLAMP_KINDS) -> list[dict]:
    """``count`` designs cycling through ``kinds``, reproducible from ``seed``."""
    rng = random.Random(seed)
    return [random_design(rng, kinds[i % len(kinds)]) for i in range(count)]

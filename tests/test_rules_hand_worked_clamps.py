"""The clamp rules against calculations written out by hand (the clamp side of the review).

Sources of the constants, named beside each check:
- V_T = kT/q at 27 °C with k and q the SI defining constants (scipy.constants carries them);
- derating defaults (80 % voltage/current, 50 % power): common practice (DOMAIN brief);
- V_BR(max) = 1.1 × V_BR(min) when not given: from memory, typical of ±5 % TVS parts;
- series RLC natural response (the RC snubber): the textbook closed form for a source-free series
  RLC circuit, i(t) = e^{−αt}(A·cos ω_d t + B·sin ω_d t), α = R/(2L), ω_d = √(1/(LC) − α²),
  from memory; evaluated here on a dense time grid, independently of the engine's solution;
- E24 series: IEC 60063.

The base design (tests/handbook.py): 12 V, a 160 Ω / 0.12 H coil at 20 °C, V_CE(sat) 0.2 V, so
the drop-out current I_do = 1.2 V / 160 Ω = 7.5 mA. At the worst corners the coil current at turn-off
is taken in the stress direction, with V_CE(sat) at its lowest (0 V when no vce_sat_min is given):
I_0 = 12/160 = 75 mA. The report's nominal turn-off starts from the on-state operating point,
I_0 = (12 − 0.2)/160 = 73.75 mA.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants, integrate

from app.engine import evaluate, parse_design
from app.engine.review import E24, e24_at_most

from .handbook import design

VT = constants.k * 300.15 / constants.e  # kT/q at 27 °C (SI defining constants)
I0 = 12 / 160  # 75 mA at the worst corners (V_CE(sat),min = 0 V)
I0_NOMINAL = (12 - 0.2) / 160  # 73.75 mA, the nominal turn-off
IDO = 1.2 / 160  # 7.5 mA
L = 0.12
E_COIL = 0.5 * L * I0**2  # 337.5 µJ


def findings(doc):
    report = evaluate(parse_design(doc))
    return {f["rule"]: f for f in report["findings"]}, report


def tvs(**extra):
    return {
        "kind": "tvs_switch",
        "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 4, **extra},
    }


def tvs_line(v_br: float):
    """V(i) = V_BR + V_T·ln(i/I_T) + (i − I_T)·R_S through (1 mA, V_BR) and (1 A, 53 V)."""
    r_s = (53 - v_br - VT * math.log(1000)) / 0.999
    return lambda i: v_br + VT * math.log(i / 0.001) + (i - 0.001) * r_s


# ---------------------------------------------------------------- TVS: V_BR(max), stand-off


def test_tvs_spike_at_assumed_maximum_breakdown():
    # V_BR(max) assumed 1.1 × 33 V = 36.3 V (from memory, ±5 % parts);
    # R_S = (53 − 36.3 − V_T·ln 1000)/0.999 = (16.7 − 0.17867)/0.999 = 16.5379 Ω;
    # V(75 mA) = 36.3 + V_T·ln 75 (0.11167) + 74 mA·16.5379 Ω (1.22380) = 37.635 V
    r_s = (53 - 36.3 - VT * math.log(1000)) / 0.999
    assert r_s == pytest.approx(16.5379, rel=1e-4)
    peak = 36.3 + VT * math.log(75) + 0.074 * r_s
    assert peak == pytest.approx(37.635, abs=1e-3)
    f, _ = findings(design(clamp=tvs()))
    spike = f["switch.breakdown"]
    assert spike["value"] == pytest.approx(peak, rel=1e-9)
    # against V_(BR)CEO 40 V derated to 32 V (80 %, common practice): marginal
    assert spike["status"] == "marginal"
    assert "assumed" in spike["message"] and "36.3 V" in spike["message"]
    assert spike["corner"]["tvs_breakdown"] == 36.3


def test_tvs_spike_at_given_maximum_breakdown_and_release_at_minimum():
    # V_BR(max) 35 V given: R_S = (53 − 35 − 0.17867)/0.999 = 17.8391 Ω;
    # V(75 mA) = 35 + 0.11167 + 0.074·17.8391 (1.32009) = 36.432 V
    f, report = findings(design(clamp=tvs(v_breakdown_max=35)))
    peak = tvs_line(35)(I0)
    assert peak == pytest.approx(36.432, abs=1e-3)
    assert f["switch.breakdown"]["value"] == pytest.approx(peak, rel=1e-9)
    assert "assumed" not in f["switch.breakdown"]["message"]
    # Release at V_BR(min) (the slowest): t = ∫ L/(R·i + V_min(i) − 12) di from I_do to I_0,
    # scipy.integrate.quad of the same integral.
    v_min = tvs_line(33)
    t_quad, _ = integrate.quad(lambda i: L / (160 * i + v_min(i) - 12), IDO, I0, epsrel=1e-12)
    assert f["coil.release"]["value"] == pytest.approx(t_quad, rel=1e-6)
    assert f["coil.release"]["corner"]["tvs_breakdown"] == 33
    # the nominal corner takes the middle, (33 + 35)/2 = 34 V, at the nominal I_0 = 73.75 mA
    assert report["transient"]["peak_switch_voltage"] == pytest.approx(tvs_line(34)(I0_NOMINAL), rel=1e-9)


def test_tvs_standoff_against_vrwm_or_minimum_breakdown():
    # No v_standoff: 12 V against V_BR(min) 14 V: 12/14 = 0.857 > 0.8 (common practice): marginal
    f, _ = findings(design(clamp={**tvs(), "tvs": {**tvs()["tvs"], "v_breakdown": 14, "v_clamp": 25}}))
    assert f["clamp.standoff"]["value"] == 12
    assert f["clamp.standoff"]["rating"] == 14
    assert f["clamp.standoff"]["limit"] == pytest.approx(11.2)
    assert f["clamp.standoff"]["status"] == "marginal"
    assert "clamp.reverse_voltage" not in f
    # v_standoff 11 V given: 12 V is above it: violation
    f, _ = findings(design(clamp=tvs(v_standoff=11)))
    assert f["clamp.standoff"]["rating"] == 11
    assert f["clamp.standoff"]["status"] == "violation"


# ---------------------------------------------------------------- diode peak current


def test_diode_peak_current_against_repetitive_rating():
    # i_frm 90 mA: 75/90 = 0.833 > 0.8 (common practice): marginal, although i_peak is 2 A
    f, _ = findings(design(**{"clamp.diode.i_frm": "90 mA", "clamp.diode.i_fsm": 2}))
    peak = f["clamp.peak_current"]
    assert peak["value"] == pytest.approx(I0)
    assert peak["rating"] == pytest.approx(0.09)
    assert peak["status"] == "marginal"
    assert "repetitive" in peak["message"] and "surge" in peak["message"]
    # without i_frm, i_peak (2 A) is taken as the repetitive figure: 75 mA ≪ 1.6 A
    f, _ = findings(design())
    assert f["clamp.peak_current"]["rating"] == 2
    assert "taken as the repetitive" in f["clamp.peak_current"]["message"]
    # i_frm above i_fsm is refused
    with pytest.raises(Exception, match="i_frm"):
        parse_design(design(**{"clamp.diode.i_frm": 3, "clamp.diode.i_fsm": 2}))


# ---------------------------------------------------------------- energy share


def test_energy_share_counts_the_supply_for_a_tvs_and_never_exceeds_100_percent():
    # TVS: the supply adds V_cc·Q while the current returns through it. E_TVS = ∫ V_TVS(i)·i dt,
    # Q = ∫ i dt, dt = L·di/(R·i + V_TVS(i) − V_cc) (scipy.integrate.quad from I_0/1000 to I_0)
    f, report = findings(design(clamp=tvs(v_breakdown_max=33)))
    v = tvs_line(33)

    def dt(i):
        return L / (160 * i + v(i) - 12)

    q, _ = integrate.quad(lambda i: i * dt(i), I0 / 1000, I0, epsrel=1e-10)
    e_tvs, _ = integrate.quad(lambda i: v(i) * i * dt(i), I0 / 1000, I0, epsrel=1e-10)
    share = e_tvs / (E_COIL + 12 * q)
    assert e_tvs > E_COIL  # the old "% of ½LI²" read above 100 % here
    assert share < 1
    assert f"{share:.0%} of it into the clamp" in f["clamp.energy"]["message"]
    assert "from the supply" in f["clamp.energy"]["message"]


def test_unclamped_energy_is_avalanche_energy_in_the_switch():
    f, _ = findings(design(clamp={"kind": "none"}))
    message = f["clamp.energy"]["message"]
    assert "avalanche energy" in message and "into the switch" in message
    share = int(message.split("no clamp: ")[1].split("%")[0])
    assert 0 < share <= 100


# ---------------------------------------------------------------- resistor power


def test_resistor_across_coil_power_while_on():
    # 470 Ω across the coil: 12²/470 = 0.30638 W all the time the coil is on (V_CE(sat) taken as
    # 0: the worst case); 0.5 W part derated to 0.25 W (50 %, common practice): marginal
    clamp = {"kind": "resistor", "r": 470, "power_rating": "500 mW"}
    f, _ = findings(design(clamp=clamp))
    power = f["clamp.resistor_power"]
    assert power["value"] == pytest.approx(144 / 470, rel=1e-9)
    assert power["status"] == "marginal"
    assert "not included" in power["message"]
    # at 3600/h the turn-off share is added: R and R_coil carry the same current, so the resistor
    # takes 470/(470 + 160) of ½·L·I_0² = 0.746032 · 337.5 µJ = 251.79 µJ, once a second
    f, _ = findings(design(clamp=clamp, switching={"per_hour": 3600}))
    e_r = 470 / 630 * E_COIL
    assert e_r == pytest.approx(251.79e-6, rel=1e-4)
    assert f["clamp.resistor_power"]["value"] == pytest.approx(144 / 470 + e_r, rel=1e-6)
    # no power_rating: a note with the figure, not an "ok"
    f, _ = findings(design(clamp={"kind": "resistor", "r": 470}))
    assert f["clamp.resistor_power"]["status"] == "note"
    assert "not judged" in f["clamp.resistor_power"]["message"]


def test_diode_resistor_power_is_its_turn_off_share():
    # E_R = ∫ i²·R dt = ∫ i²·R·L/(R_coil·i + V_F(i) + R·i) di (scipy.integrate.quad), Shockley V_F
    # with I_S = 1e-8 A, n = 1.9, R_S = 0.05 Ω (the handbook diode)
    def v_f(i):
        return 1.9 * VT * math.log1p(i / 1e-8) + i * 0.05

    e_r, _ = integrate.quad(
        lambda i: i * i * 220 * L / (160 * i + v_f(i) + 220 * i), I0 / 1000, I0, epsrel=1e-10
    )
    assert e_r < E_COIL
    clamp = {"kind": "diode_resistor", "r": 220, "power_rating": "1 mW", "diode": design()["clamp"]["diode"]}
    # without per_hour: a note giving E_R per turn-off, not judged
    f, _ = findings(design(clamp=clamp))
    assert f["clamp.resistor_power"]["status"] == "note"
    assert f["clamp.resistor_power"]["value"] == pytest.approx(e_r, rel=1e-5)
    assert "switching.per_hour" in f["clamp.resistor_power"]["message"]
    # at 36 000/h (10 Hz): 10·E_R against 1 mW
    f, _ = findings(design(clamp=clamp, switching={"per_hour": 36000}))
    assert f["clamp.resistor_power"]["value"] == pytest.approx(10 * e_r, rel=1e-5)
    assert f["clamp.resistor_power"]["status"] == ("violation" if 10 * e_r > 1e-3 else "ok")


# ---------------------------------------------------------------- RC snubber


RC = {"kind": "rc", "r": 200, "c": "1 uF", "c_voltage_rating": 50, "power_rating": "250 mW"}


def textbook_rlc(r_coil=160.0, r=200.0, c=1e-6, i0=I0, t_end=0.02, points=2_000_001):
    """Source-free series RLC, underdamped: i(t) = e^{−αt}(A cos ω_d t + B sin ω_d t) with
    A = I_0, B = (i'(0) + α·A)/ω_d, i'(0) = (−(R_coil + R)·I_0 − v_C(0))/L, v_C(0) = −R_coil·I_0;
    v_C = −L·i' − (R_coil + R)·i; the switch sees V_cc + R·i + v_C."""
    rt = r_coil + r
    alpha = rt / (2 * L)
    wd = math.sqrt(1 / (L * c) - alpha**2)
    di0 = (-rt * i0 + r_coil * i0) / L
    a, b = i0, (di0 + alpha * i0) / wd
    t = np.linspace(0, t_end, points)
    e = np.exp(-alpha * t)
    i = e * (a * np.cos(wd * t) + b * np.sin(wd * t))
    di = -alpha * i + e * wd * (-a * np.sin(wd * t) + b * np.cos(wd * t))
    v_c = -L * di - rt * i
    return t, i, v_c, alpha, wd


def test_rc_snubber_peak_release_and_capacitor_by_the_series_rlc_response():
    # α = 360/(2·0.12) = 1500 /s, ω_0 = 1/√(0.12·1e-6) = 2886.75 rad/s > α: underdamped,
    # ω_d = √(8.33333e6 − 2.25e6) = 2466.44 rad/s; B = (−122.917 + 110.625)/2466.44 = −4.9838 mA
    t, i, v_c, alpha, wd = textbook_rlc()
    assert alpha == pytest.approx(1500)
    assert wd == pytest.approx(2466.44, rel=1e-5)
    peak = 12 + np.max(200 * i + v_c)
    last = np.nonzero(np.abs(i) >= IDO)[0][-1]  # the last sample with |i| at or above I_do
    t_release = t[last] + (t[last + 1] - t[last]) * (abs(i[last]) - IDO) / (abs(i[last]) - abs(i[last + 1]))
    cap = max(160 * I0, np.max(np.abs(v_c)))
    f, report = findings(design(clamp=RC))
    # series RLC response (textbook, from memory) on a 10 ns grid
    assert f["switch.breakdown"]["value"] == pytest.approx(peak, rel=1e-6)
    assert f["coil.release"]["value"] == pytest.approx(t_release, rel=1e-5)
    assert f["clamp.capacitor_voltage"]["value"] == pytest.approx(cap, rel=1e-6)
    # the current rings: it passes through zero before the last fall to I_do
    assert np.any(i[:last] < 0)
    # 50 V capacitor derated to 40 V (80 %, common practice)
    assert f["clamp.capacitor_voltage"]["status"] == ("ok" if cap <= 40 else "marginal")
    assert report["transient"]["clamp"] == "rc"


def test_rc_snubber_resistor_power_and_energy_share():
    # Per cycle: R takes R/(R + R_coil) of ½·L·I_0² + ½·C·V² (same current in both), plus ½·C·V²
    # recharging C at turn-on, C charged to the coil's on voltage R_coil·I_0 = 12 V: ½·1e-6·12² = 72 µJ;
    # 200/360 · (337.5 + 72) µJ + 72 µJ = 227.5 + 72 = 299.5 µJ
    e_c = 0.5 * 1e-6 * (160 * I0) ** 2
    e_r = 200 / 360 * (E_COIL + e_c) + e_c
    assert e_r == pytest.approx(299.5e-6, rel=1e-9)
    f, _ = findings(design(clamp=RC))
    assert f["clamp.resistor_power"]["status"] == "note"
    assert f["clamp.resistor_power"]["value"] == pytest.approx(e_r, rel=1e-9)
    # at 3600/h: 299.5 µW in a 250 mW resistor
    f, _ = findings(design(clamp=RC, switching={"per_hour": 3600}))
    assert f["clamp.resistor_power"]["value"] == pytest.approx(e_r, rel=1e-9)
    assert f["clamp.resistor_power"]["status"] == "ok"
    # energy: R's share of everything the turn-off releases, 200/360 = 56 %
    assert "56% of it into the clamp" in f["clamp.energy"]["message"]
    assert "snubber capacitor" in f["clamp.energy"]["message"]


def test_rc_snubber_small_capacitor_violates_breakdown():
    # C = 10 nF: ω_0 = 1/√(0.12·1e-8) = 28 868 rad/s, √(L/C) = 3464 Ω; the 75 mA step rings
    # the node far above the 40 V V_(BR)CEO
    clamp = {**RC, "c": "10 nF", "r": 100}
    t, i, v_c, _, _ = textbook_rlc(r=100, c=1e-8, t_end=0.005, points=500_001)
    peak = 12 + np.max(100 * i + v_c)
    assert peak > 40
    f, _ = findings(design(clamp=clamp))
    assert f["switch.breakdown"]["value"] == pytest.approx(peak, rel=1e-5)
    assert f["switch.breakdown"]["status"] == "violation"


# ---------------------------------------------------------------- alternatives


def test_e24_values():
    # IEC 60063 E24: 24 values per decade, 1.0 … 9.1
    assert len(E24) == 24 and E24[0] == 1.0 and E24[-1] == 9.1
    assert e24_at_most(25.9) == 24
    assert e24_at_most(30) == 30
    assert e24_at_most(0.9) is None


def test_alternatives_pass_the_clamp_rules_at_the_worst_corner():
    doc = design(**{"supply.tolerance": 10, "coil.tolerance": 10, "ambient.min": -20, "ambient.max": 60})
    _, report = findings(doc)
    alternatives = report["transient"]["alternatives"]
    kinds = {a["clamp"].split(" ")[0] + (" zener" if "zener" in a["clamp"] else "") for a in alternatives}
    assert {"diode", "diode zener", "resistor"} <= kinds
    for alt in alternatives:
        assert alt["time_to_dropout_worst"] >= alt["time_to_dropout"]
        if "zener" in alt["clamp"]:
            vz = float(alt["clamp"].split("+ ")[1].split(" V")[0])
            assert e24_at_most(vz) == vz  # an E24 value (IEC 60063)
            clamp = {
                "kind": "diode_zener",
                "diode": doc["clamp"]["diode"],
                "zener": {"vz": vz, "tolerance": 5, "rz": 20, "p_max": 1},
            }
            f, _ = findings({**doc, "clamp": clamp})
            # the same rules, at the worst corner: V_Z at +5 %
            assert f["switch.breakdown"]["status"] == "ok"
            assert f["switch.breakdown"]["corner"]["vz"] == pytest.approx(vz * 1.05)
            assert all(x["status"] in ("ok", "note") for k, x in f.items() if k.startswith("clamp."))


# ---------------------------------------------------------------- the registry is complete


def test_every_clamp_kind_is_in_the_design_file_schema_and_the_generator():
    import importlib.util
    from pathlib import Path

    from app.engine.clamps import KINDS
    from app.engine.schema import design_schema

    here = Path(__file__).resolve().parent
    spec = importlib.util.spec_from_file_location("designgen", here / "designgen.py")
    designgen = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(designgen)
    assert set(designgen.CLAMP_KINDS) == set(KINDS)  # the ngspice agreement covers every kind
    clamp = design_schema()["properties"]["clamp"]
    assert set(clamp["discriminator"]["mapping"]) == set(KINDS)


def test_every_clamp_rule_has_a_hand_worked_check():
    from pathlib import Path

    from app.engine.rules import RULES

    here = Path(__file__).resolve().parent
    text = "".join(p.read_text(encoding="utf-8") for p in here.glob("test_*.py"))
    for rule_id in RULES:
        if rule_id.startswith("clamp."):
            assert f'"{rule_id}"' in text, rule_id

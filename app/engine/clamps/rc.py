"""An RC snubber (R in series with C) across the coil.

The capacitor carries its own state, so the turn-off is not the one-dimensional integral of
the other kinds but the source-free series RLC circuit of the coil (R_coil, L) and the snubber
(R, C): the closed-form solution of L·i'' + (R_coil + R)·i' + i/C = 0 (the series RLC natural
response of any circuits textbook, from memory). With α = (R_coil + R)/(2L), ω_0² = 1/(L·C)
and the roots s_1,2 = −α ± √(α² − ω_0²) (complex when underdamped, α < ω_0):

    i(t) = c_1·e^{s_1 t} + c_2·e^{s_2 t},   v_C(t) = c_1/(C·s_1)·e^{s_1 t} + c_2/(C·s_2)·e^{s_2 t}

with i(0) = I_0 and v_C(0) = −R_coil·I_0 (while on, the capacitor holds the coil's voltage; v_C
is taken positive on the switch side), so c_1 + c_2 = I_0 and s_1·c_1 + s_2·c_2 = i'(0) =
−R·I_0/L. The switch sees V_cc + R·i + v_C. A critically damped corner (α = ω_0 within 1e-12)
is taken as barely overdamped (|α² − ω_0²| = 1e-12·ω_0²), which changes no figure beyond 1e-6.

- Peak switch voltage: the largest of V_cc + x(t), x = R·i + v_C, at t = 0+, at its first two
  stationary points and (overdamped) at t → ∞ (x → 0).
- Release time: the relay releases on |i| (ampere-turns, either sign), and an underdamped coil
  current rings through zero and back. Defined here as the LAST time |i(t)| falls to the
  drop-out current I_do: after it |i| < I_do for good. It lies between the last stationary
  point of i where |i| ≥ I_do (or t = 0) and the next one (or, overdamped, the time the
  slower exponential bound falls to I_do), where |i| − I_do changes sign once; found by
  bisection to float precision.
- Capacitor voltage: the larger of |v_C(0)| (the coil voltage, held all the time the coil is
  on) and |v_C| at the first zero of i (the first swing; the energy only falls after it).
- Energy: the turn-off dissipates ½·L·I_0² + ½·C·v_C(0)²; R and R_coil carry the same current,
  so R takes R/(R + R_coil) of it. Charging C again at every turn-on loses another ½·C·V² in
  R (taken all in R, the conservative side).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Annotated, Literal

import numpy as np
from pydantic import Field

from ..design import Model, Ohms, PositiveVolts, Tolerance, Watts, _quantity
from ..transient import TurnOff, Waveform
from ..units import format_si
from .base import ClampKind, ClampPath, FormSlot, Stress, g, spread
from .diode_resistor import RESISTOR_FIELDS

Farads = Annotated[float, *_quantity("F", positive=True)]

_BISECTIONS = 200


class RcClamp(Model):
    kind: Literal["rc"]
    r: Ohms = Field(description="snubber resistor, in Ω")
    c: Farads = Field(description="snubber capacitor, in F")
    tolerance: Tolerance = Field(0.0, description="tolerance of R and of C, percent")
    c_voltage_rating: PositiveVolts = Field(description="the capacitor's voltage rating, in V")
    power_rating: Watts = Field(description="the snubber resistor's power rating, in W")


@dataclass(frozen=True)
class Response:
    """The series RLC natural response per corner: f(t) = Re(a_1·e^{s_1 t} + a_2·e^{s_2 t})."""

    s1: np.ndarray
    s2: np.ndarray
    underdamped: np.ndarray

    def at(self, a1, a2, t):
        return np.real(a1 * np.exp(self.s1 * t) + a2 * np.exp(self.s2 * t))

    def stationary(self, a1, a2, count: int) -> list[tuple[np.ndarray, np.ndarray]]:
        """The first ``count`` times t > 0 where f'(t) = 0, each with whether it exists."""
        out = []
        # Underdamped: f = 2|a_1|·e^{−αt}·cos(ω_d t + arg a_1), f' ∝ cos(ω_d t + arg(a_1 s_1)).
        omega = np.abs(np.imag(self.s1))
        with np.errstate(divide="ignore", invalid="ignore"):
            first = np.mod(np.pi / 2 - np.angle(a1 * self.s1), np.pi) / omega
            first = np.where(first <= 0, first + np.pi / omega, first)
            # Overdamped: a_1 s_1 e^{s_1 t} + a_2 s_2 e^{s_2 t} = 0 → e^{(s_1−s_2)t} = −a_2 s_2/(a_1 s_1).
            ratio = np.real(-a2 * self.s2 / (a1 * self.s1))
            t_over = np.log(ratio) / np.real(self.s1 - self.s2)
        over_ok = (ratio > 0) & (t_over > 0) & np.isfinite(t_over)
        for k in range(count):
            with np.errstate(divide="ignore", invalid="ignore"):
                t_under = first + k * np.pi / omega
            t = np.where(self.underdamped, t_under, np.where(over_ok, t_over, 0.0))
            ok = np.where(self.underdamped, True, over_ok & (k == 0))
            out.append((np.where(ok, t, 0.0), ok))
        return out


def response(inductance: float, r_total, c) -> Response:
    alpha = r_total / (2 * inductance)
    w0sq = 1 / (inductance * c)
    disc = alpha**2 - w0sq
    disc = np.where(np.abs(disc) < 1e-12 * w0sq, 1e-12 * w0sq, disc)
    root = np.sqrt(disc.astype(complex))
    return Response(-alpha + root, -alpha - root, disc < 0)


def rc_turn_off(
    inductance: float, r_coil, r, c, vcc, i0, dropout_current: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(peak switch voltage, time to drop-out, largest |v_C|) per corner; see the module text."""
    r_coil, r, c, vcc, i0 = (np.asarray(x, dtype=float) for x in (r_coil, r, c, vcc, i0))
    resp = response(inductance, r_coil + r, c)
    s1, s2 = resp.s1, resp.s2
    di0 = -r * i0 / inductance
    c1 = (di0 - s2 * i0) / (s1 - s2)
    c2 = i0 - c1
    v1, v2 = c1 / (c * s1), c2 / (c * s2)  # v_C coefficients
    p1, p2 = r * c1 + v1, r * c2 + v2  # x = R·i + v_C

    # Peak switch voltage.
    candidates = [resp.at(p1, p2, 0.0), np.where(resp.underdamped, -np.inf, 0.0)]
    for t, ok in resp.stationary(p1, p2, 2):
        candidates.append(np.where(ok, resp.at(p1, p2, t), -np.inf))
    peak = vcc + np.max(candidates, axis=0)

    # Release: the last time |i| falls to I_do.
    ido = dropout_current
    picked = i0 > ido
    stat = resp.stationary(c1, c2, 1)[0]
    t_first, first_ok = stat
    omega = np.abs(np.imag(s1))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        i_first = np.abs(resp.at(c1, c2, t_first))
        # Underdamped: |i| at successive stationary points falls by e^{−α·π/ω_d} each time.
        alpha = -np.real(s1)
        step = np.pi / omega
        count = np.where(i_first >= ido, np.floor(np.log(i_first / ido) / (alpha * step)) + 1, 0)
        count = np.nan_to_num(count, nan=0.0, posinf=0.0)
        under_lo = np.where(count >= 1, t_first + (count - 1) * step, 0.0)
        under_hi = t_first + count * step
        # Overdamped: after the (single) stationary point the current decays monotonically.
        slow = np.real(np.maximum(np.real(s1), np.real(s2)))
        bound = np.log((np.abs(c1) + np.abs(c2)) / ido) / -slow
        over_lo = np.where(first_ok & (i_first >= ido), t_first, 0.0)
        over_hi = np.where(first_ok & (i_first < ido), t_first, np.maximum(bound, over_lo))
    lo = np.where(resp.underdamped, under_lo, over_lo)
    hi = np.where(resp.underdamped, under_hi, over_hi)
    for _ in range(_BISECTIONS):
        mid = (lo + hi) / 2
        above = np.abs(resp.at(c1, c2, mid)) >= ido
        new_lo, new_hi = np.where(above, mid, lo), np.where(above, hi, mid)
        # Once no interval moves, none ever will (mid is lo or hi): stopping gives the same bits.
        if np.array_equal(new_lo, lo, equal_nan=True) and np.array_equal(new_hi, hi, equal_nan=True):
            break
        lo, hi = new_lo, new_hi
    t_release = np.where(picked, (lo + hi) / 2, 0.0)

    # Capacitor voltage: held while on, then the first swing (at the first zero of i).
    with np.errstate(divide="ignore", invalid="ignore"):
        z_under = np.mod(np.pi / 2 - np.angle(c1), np.pi) / omega
        ratio = np.real(-c2 / c1)
        z_over = np.log(ratio) / np.real(s1 - s2)
    z_ok = np.where(resp.underdamped, True, (ratio > 0) & (z_over > 0) & np.isfinite(z_over))
    z = np.where(resp.underdamped, z_under, np.where(z_ok, z_over, 0.0))
    swing = np.where(z_ok, np.abs(resp.at(v1, v2, z)), 0.0)
    cap = np.maximum(r_coil * i0, swing)
    return peak, t_release, cap


def rc_waveform(inductance: float, r_coil: float, r: float, c: float, vcc: float, i0: float, t) -> tuple:
    """(coil current i(t), switch-node voltage V_cc + R·i(t) + v_C(t)) of one corner at the
    times t, from the same closed form as ``rc_turn_off``."""
    resp = response(inductance, np.array([r_coil + r]), np.array([c]))
    s1, s2 = resp.s1[0], resp.s2[0]
    c1 = (-r * i0 / inductance - s2 * i0) / (s1 - s2)
    c2 = i0 - c1
    one = Response(np.array([s1]), np.array([s2]), resp.underdamped)
    t = np.asarray(t, dtype=float)
    current = one.at(c1, c2, t)
    switch = vcc + one.at(r * c1 + c1 / (c * s1), r * c2 + c2 / (c * s2), t)
    return current, switch


@dataclass(frozen=True)
class RcPath(ClampPath):
    r: np.ndarray | None = None
    c: np.ndarray | None = None

    def turn_off(
        self, inductance, r_coil, initial_current, dropout_current, *, energies: bool = True
    ) -> TurnOff:
        i0 = np.asarray(initial_current, dtype=float)
        r_coil = np.asarray(r_coil, dtype=float)
        peak, t, cap = rc_turn_off(inductance, r_coil, self.r, self.c, self.vcc, i0, dropout_current)
        coil_energy = 0.5 * inductance * i0**2
        v_on = r_coil * i0
        cap_energy = 0.5 * self.c * v_on**2
        to_r = self.r / (self.r + r_coil) * (coil_energy + cap_energy)
        return TurnOff(
            initial_current=i0,
            peak_switch_voltage=peak,
            time_to_dropout=t,
            energy=coil_energy,
            clamp_energy=to_r,
            diode_energy=np.zeros_like(i0),
            charge=self.c * v_on,  # C goes from −V_on to 0
            source_energy=cap_energy,
            capacitor_voltage=cap,
            resistor_energy=to_r + cap_energy,  # plus recharging C at the next turn-on
        )

    def waveform(self, index, inductance, r_coil, initial_current, dropout_current, points=160):
        """The closed form sampled evenly up to the release time (the last fall of |i| to I_do);
        ringing needs more points than a monotonic decay, so at least 40 per ring period."""
        r, c, vcc = float(self.r[index]), float(self.c[index]), float(self.vcc[index])
        _, t_release, _ = rc_turn_off(
            inductance,
            r_coil,
            self.r[index : index + 1],
            self.c[index : index + 1],
            vcc,
            np.array([initial_current]),
            dropout_current,
        )
        t_end = float(t_release[0])
        if not t_end > 0:
            return Waveform(np.array([0.0]), np.array([initial_current]), np.array([vcc]), 0.0)
        omega = abs(float(np.imag(response(inductance, np.array([r_coil + r]), np.array([c])).s1[0])))
        rings = omega * t_end / (2 * np.pi)
        count = int(min(4000, max(points, 40 * rings)))
        time = np.linspace(0.0, t_end, count)
        current, switch = rc_waveform(inductance, r_coil, r, c, vcc, initial_current, time)
        return Waveform(time, current, switch, t_end)


class RcAcrossCoil(ClampKind):
    kind = "rc"
    title = "RC snubber across the coil"
    model = RcClamp
    fields = (
        *RESISTOR_FIELDS[:1],
        FormSlot("c", "Snubber capacitor", "F"),
        RESISTOR_FIELDS[1],
        FormSlot("c_voltage_rating", "Capacitor voltage rating", "V"),
        RESISTOR_FIELDS[2],
    )

    def factors(self, clamp):
        return [
            ("r_clamp", *spread(clamp.r, clamp.tolerance), "Ω"),
            ("c_clamp", *spread(clamp.c, clamp.tolerance), "F"),
        ]

    def nominal(self, clamp):
        return {"r_clamp": clamp.r, "c_clamp": clamp.c}

    def path(self, clamp, design, vcc, values):
        return RcPath(vcc, r=values["r_clamp"], c=values["c_clamp"])

    def netlist_lines(self, path, index):
        return [f"RS sw k {g(path.r[index])}", f"CS k vcc {g(path.c[index])}"]

    def on_current(self, path, index, coil_voltage):
        return 0.0

    def dropout_measure(self, dropout_current):
        # The current may ring through zero: the last time |i| falls to the drop-out current.
        return [
            "BABS absi 0 V=abs(i(VSENSE))",
            f".meas tran time_to_dropout WHEN v(absi)={g(dropout_current)} FALL=LAST",
        ]

    def resistor_power(self, ctx):
        return np.zeros(ctx.corners.size), ctx.design.clamp.power_rating

    def capacitor_voltage(self, ctx):
        v = ctx.turnoff.capacitor_voltage
        rating = ctx.design.clamp.c_voltage_rating
        return Stress(
            v,
            rating,
            "voltage",
            "V",
            lambda i: (
                f"snubber capacitor sees up to {format_si(float(v[i]), 'V')}, rated {format_si(rating, 'V')}"
            ),
            lambda i: (
                f"|v_C| = max(R_coil·I_0 = {format_si(float(ctx.op.r_coil[i]), 'Ω', 4)}·"
                f"{format_si(float(ctx.turnoff.initial_current[i]), 'A', 4)}, the series RLC swing) = "
                f"{format_si(float(v[i]), 'V', 4)}"
            ),
        )

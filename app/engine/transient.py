"""Turn-off of the coil: peak switch voltage, time to drop-out, energy.

When the switch opens the inductor keeps its current I_0 flowing through the clamp. With
v_c(i) the voltage the clamp path adds around the coil loop (beyond the coil's own R·i),
L di/dt = −(R·i + v_c(i)), so the peak switch voltage is V_cc + v_c(I_0) and the time for
the current to fall to the drop-out current is

    t = ∫ from I_do to I_0 of L / (R·i + v_c(i)) di,

evaluated here in u = ln i (t = ∫ L·i / (R·i + v_c(i)) du) with Gauss–Legendre quadrature,
all corners at once. The switch itself is taken as ideal (it opens in zero time).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .design import (
    Design,
    DiodeClamp,
    DiodeResistorClamp,
    DiodeZenerClamp,
    NoClamp,
    ResistorClamp,
    TvsClamp,
)
from .physics import BreakdownModel, DiodeModel

_NODES, _WEIGHTS = np.polynomial.legendre.leggauss(32)


@dataclass(frozen=True)
class ClampPath:
    """The clamp of one design over a set of corners; arrays have one element per corner."""

    kind: str
    vcc: np.ndarray
    diode: DiodeModel | None = None
    breakdown: BreakdownModel | None = None
    v_br: np.ndarray | None = None  # zener voltage per corner
    r: np.ndarray | None = None  # clamp resistor per corner
    avalanche: float | None = None  # V_(BR)CEO, the least the unclamped node reaches

    def loop_voltage(self, i: np.ndarray) -> np.ndarray:
        """v_c(i): voltage the clamp path adds around the coil loop; i has shape (N, M)."""
        vcc = self.vcc[:, None]
        if self.kind == "diode":
            return self.diode.voltage(i)
        if self.kind == "diode_zener":
            return self.diode.voltage(i) + self.breakdown.voltage(i, self.v_br[:, None])
        if self.kind == "diode_resistor":
            return self.diode.voltage(i) + i * self.r[:, None]
        if self.kind == "resistor":
            return i * self.r[:, None]
        if self.kind == "tvs_switch":
            return self.breakdown.voltage(i) - vcc
        # Unclamped: the node rises to avalanche, at least V_(BR)CEO.
        return np.broadcast_to(self.avalanche - vcc, i.shape)

    def device_voltage(self, i: np.ndarray) -> np.ndarray:
        """Voltage across the clamp device itself (what it dissipates i·v of)."""
        if self.kind == "tvs_switch":
            return self.breakdown.voltage(i)
        if self.kind == "none":
            return np.broadcast_to(self.avalanche, i.shape)
        return self.loop_voltage(i)


def clamp_path(design: Design, vcc: np.ndarray, values: dict[str, np.ndarray]) -> ClampPath:
    clamp = design.clamp
    if isinstance(clamp, NoClamp):
        return ClampPath("none", vcc, avalanche=design.switch.vceo)
    if isinstance(clamp, TvsClamp):
        return ClampPath("tvs_switch", vcc, breakdown=BreakdownModel.from_tvs(clamp.tvs))
    if isinstance(clamp, ResistorClamp):
        return ClampPath("resistor", vcc, r=values["r_clamp"])
    diode = DiodeModel.from_part(clamp.diode)
    if isinstance(clamp, DiodeClamp):
        return ClampPath("diode", vcc, diode=diode)
    if isinstance(clamp, DiodeZenerClamp):
        return ClampPath(
            "diode_zener",
            vcc,
            diode=diode,
            breakdown=BreakdownModel.from_zener(clamp.zener, clamp.zener.vz),
            v_br=values["vz"],
        )
    assert isinstance(clamp, DiodeResistorClamp)
    return ClampPath("diode_resistor", vcc, diode=diode, r=values["r_clamp"])


def _log_grid(lower: np.ndarray, upper: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Gauss–Legendre nodes in u = ln i from lower to upper, per corner: the currents i and
    the weights w such that ∫ f(i) di ≈ Σ w·f(i) (the e^u of di = e^u du folded into w)."""
    a, b = np.log(lower)[:, None], np.log(upper)[:, None]
    i = np.exp((b - a) / 2 * _NODES[None, :] + (a + b) / 2)
    return i, (b - a) / 2 * _WEIGHTS[None, :] * i


def _integrate_log(f, lower: np.ndarray, upper: np.ndarray) -> np.ndarray:
    """∫ f(i) di from lower to upper, as ∫ f(e^u)·e^u du, Gauss–Legendre per corner."""
    i, w = _log_grid(lower, upper)
    return (w * f(i)).sum(axis=1)


@dataclass(frozen=True)
class TurnOff:
    initial_current: np.ndarray
    peak_switch_voltage: np.ndarray  # inf when unclamped
    time_to_dropout: np.ndarray
    energy: np.ndarray  # ½·L·I_0², stored in the coil at turn-off
    clamp_energy: np.ndarray  # of it, what the clamp device absorbs
    diode_energy: np.ndarray  # of that, what the clamp's rectifier diode absorbs (0 without one)
    charge: np.ndarray  # ∫ i dt through the clamp per turn-off


def _energies(path: ClampPath, inductance: float, decay_rate, i0: np.ndarray):
    """Charge and energies per turn-off. The current decays to 1/1000 of I_0 here (the rest is
    < 1e-6 of the energy); one grid serves all three integrals: dt = L·di / (R·i + v_c(i))."""
    i, w = _log_grid(i0 * 1e-3, i0)
    rate = decay_rate(i)
    dt = w * inductance / rate
    # Where nothing drives the current down (e.g. a supply above the avalanche voltage of an
    # unclamped switch) it never decays: no finite charge or energy, never a negative one.
    dt = np.where((rate > 0).all(axis=1, keepdims=True), dt, np.nan)
    charge = (dt * i).sum(axis=1)
    clamp_energy = (dt * i * path.device_voltage(i)).sum(axis=1)
    if path.diode is not None:
        diode_energy = (dt * i * path.diode.voltage(i)).sum(axis=1)
    else:
        diode_energy = np.zeros_like(i0)
    return charge, clamp_energy, diode_energy


def turn_off(
    path: ClampPath,
    inductance: float,
    r_coil: np.ndarray,
    initial_current: np.ndarray,
    dropout_current: float,
    *,
    energies: bool = True,
) -> TurnOff:
    """The turn-off at every corner; ``energies=False`` skips the charge and energy integrals
    (left as NaN) when only the spike and the release time are wanted."""
    i0 = np.asarray(initial_current, dtype=float)
    r = np.asarray(r_coil, dtype=float)[:, None]

    def decay_rate(i):  # R·i + v_c(i), the voltage driving the current down
        return r * i + path.loop_voltage(i)

    peak = path.vcc + path.loop_voltage(i0[:, None])[:, 0]
    ido = np.full_like(i0, dropout_current)
    picked = i0 > ido
    lower = np.where(picked, ido, i0)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = _integrate_log(lambda i: inductance / decay_rate(i), lower, i0)
        if energies:
            charge, clamp_energy, diode_energy = _energies(path, inductance, decay_rate, i0)
        else:
            charge = clamp_energy = diode_energy = np.full_like(i0, np.nan)
    # A clamp that holds the current up (its voltage below the supply) never lets it decay.
    stuck = (decay_rate(lower[:, None])[:, 0] <= 0) & picked
    t = np.where(stuck, np.inf, np.where(picked, t, 0.0))
    if path.kind == "none":
        peak = np.full_like(i0, np.inf)
    return TurnOff(
        initial_current=i0,
        peak_switch_voltage=peak,
        time_to_dropout=t,
        energy=0.5 * inductance * i0**2,
        clamp_energy=clamp_energy,
        diode_energy=diode_energy,
        charge=charge,
    )

"""Turn-off of the coil through a clamp whose voltage depends on the current alone.

When the switch opens the inductor keeps its current I_0 flowing through the clamp. With
v_c(i) the voltage the clamp path adds around the coil loop (beyond the coil's own R·i),
L di/dt = −(R·i + v_c(i)), so the peak switch voltage is V_cc + v_c(I_0) and the time for
the current to fall to the drop-out current is

    t = ∫ from I_do to I_0 of L / (R·i + v_c(i)) di,

evaluated here in u = ln i (t = ∫ L·i / (R·i + v_c(i)) du) with Gauss–Legendre quadrature,
all corners at once. The switch itself is taken as ideal (it opens in zero time).

Clamp kinds that carry their own state (the RC snubber) give their own closed form instead;
each kind lives in app/engine/clamps/.
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace

import numpy as np

_NODES, _WEIGHTS = np.polynomial.legendre.leggauss(32)


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
    clamp_energy: np.ndarray  # what the clamp device absorbs per turn-off
    diode_energy: np.ndarray  # of that, what the clamp's rectifier diode absorbs (0 without one)
    charge: np.ndarray  # ∫ i dt through the clamp per turn-off
    # Energy the turn-off dissipates beyond ½·L·I_0²: the supply's V_cc·Q when the supply is in
    # the clamp loop (a clamp to ground), or the charge a snubber capacitor held while on.
    source_energy: np.ndarray | None = None
    capacitor_voltage: np.ndarray | None = None  # largest |v_C| of a snubber capacitor
    resistor_energy: np.ndarray | None = None  # what a clamp resistor absorbs per switching cycle

    @property
    def dissipated_energy(self) -> np.ndarray:
        """Everything the turn-off turns into heat: ½·L·I_0² plus the source energy."""
        return self.energy if self.source_energy is None else self.energy + self.source_energy


def _per_row(inductance):
    """The inductance against a (corners × grid) array: one number, or one per corner."""
    inductance = np.asarray(inductance, dtype=float)
    return inductance[:, None] if inductance.ndim == 1 else inductance


def _energies(path, inductance, decay_rate, i0: np.ndarray):
    """Charge and energies per turn-off. The current decays to 1/1000 of I_0 here (the rest is
    < 1e-6 of the energy); one grid serves all three integrals: dt = L·di / (R·i + v_c(i))."""
    i, w = _log_grid(i0 * 1e-3, i0)
    rate = decay_rate(i)
    dt = w * _per_row(inductance) / rate
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


def integral_turn_off(
    path,
    inductance,
    r_coil: np.ndarray,
    initial_current: np.ndarray,
    dropout_current: float,
    *,
    energies: bool = True,
) -> TurnOff:
    """The turn-off at every corner for a clamp with a voltage v_c(i) (``path.loop_voltage``);
    ``energies=False`` skips the charge and energy integrals (left as NaN) when only the spike
    and the release time are wanted. ``inductance``: one number, or one per corner."""
    i0 = np.asarray(initial_current, dtype=float)
    r = np.asarray(r_coil, dtype=float)[:, None]

    def decay_rate(i):  # R·i + v_c(i), the voltage driving the current down
        return r * i + path.loop_voltage(i)

    peak = path.vcc + path.loop_voltage(i0[:, None])[:, 0]
    ido = np.full_like(i0, dropout_current)
    picked = i0 > ido
    lower = np.where(picked, ido, i0)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = _integrate_log(lambda i: _per_row(inductance) / decay_rate(i), lower, i0)
        if energies:
            charge, clamp_energy, diode_energy = _energies(path, inductance, decay_rate, i0)
        else:
            charge = clamp_energy = diode_energy = np.full_like(i0, np.nan)
    # A clamp that holds the current up (its voltage below the supply) never lets it decay.
    stuck = (decay_rate(lower[:, None])[:, 0] <= 0) & picked
    t = np.where(stuck, np.inf, np.where(picked, t, 0.0))
    if path.unclamped:
        peak = np.full_like(i0, np.inf)
    source = path.vcc * charge if path.supply_in_loop else np.zeros_like(i0)
    return TurnOff(
        initial_current=i0,
        peak_switch_voltage=peak,
        time_to_dropout=t,
        energy=0.5 * inductance * i0**2,
        clamp_energy=clamp_energy,
        diode_energy=diode_energy,
        charge=charge,
        source_energy=source,
        resistor_energy=path.resistor_energy(clamp_energy, diode_energy),
    )


@dataclass(frozen=True)
class Waveform:
    """The turn-off of one corner over time, from the instant the switch opens (t = 0) until the
    coil current falls to the drop-out current: time, coil current and switch-node voltage."""

    time: np.ndarray
    current: np.ndarray
    switch_voltage: np.ndarray
    release_time: float  # inf when the current never reaches drop-out
    decays: bool = True  # False when nothing drives the current down (the curve is empty)


def one_corner(path, index: int):
    """The same clamp path for corner ``index`` alone (every per-corner array cut to length 1)."""
    size = len(path.vcc)
    cut = {}
    for f in fields(path):
        value = getattr(path, f.name)
        if isinstance(value, np.ndarray) and value.ndim == 1 and len(value) == size:
            cut[f.name] = value[index : index + 1]
        elif f.name == "diode" and value is not None:  # one I_S per corner where V_F varies
            cut[f.name] = value.rows(slice(index, index + 1))
    return replace(path, **cut)


def decay_time(path, inductance: float, r_coil: float, initial_current: float, currents) -> np.ndarray:
    """t(i) = ∫ from i to I_0 of L / (R·i + v_c(i)) di for each current i ≤ I_0: the time the
    coil current takes to fall from I_0 to i. The same integral (and quadrature) as the time to
    drop-out, with the lower end moved from I_do to i; ``path`` holds one corner."""
    i = np.asarray(currents, dtype=float)
    upper = np.full_like(i, float(initial_current))
    with np.errstate(divide="ignore", invalid="ignore"):
        t = _integrate_log(lambda x: inductance / (r_coil * x + path.loop_voltage(x)), i, upper)
    return np.where(i >= upper, 0.0, t)


def integral_waveform(
    path, inductance: float, r_coil: float, initial_current: float, dropout_current: float, points: int
) -> Waveform:
    """The waveform of a v_c(i) clamp: currents from I_0 down to I_do, each at its time t(i); the
    switch node at V_cc + v_c(i) (for a clamp to ground v_c = v_device − V_cc, so the node is at
    the device's voltage)."""
    i0, ido = float(initial_current), float(dropout_current)
    if not i0 > ido:  # never picked up (or nothing flowing): nothing to release
        return Waveform(np.array([0.0]), np.array([i0]), np.array([float(path.vcc[0])]), 0.0)
    # Where the current sits below the clamp's threshold nothing drives it down.
    lower = ido
    with np.errstate(divide="ignore", invalid="ignore"):
        rate = r_coil * lower + float(path.loop_voltage(np.array([[lower]]))[0, 0])
    if not rate > 0:
        return Waveform(np.array([]), np.array([]), np.array([]), float("inf"), decays=False)
    # Denser near I_0, where the clamp voltage changes the slope most, and near I_do.
    s = (1 - np.cos(np.linspace(0, np.pi, points))) / 2
    current = i0 - (i0 - lower) * s
    time = decay_time(path, inductance, r_coil, i0, current)
    voltage = path.vcc[0] + path.loop_voltage(current[None, :])[0]
    return Waveform(time, current, np.asarray(voltage, dtype=float), float(time[-1]))


def turn_off(path, inductance, r_coil, initial_current, dropout_current, *, energies: bool = True) -> TurnOff:
    """The turn-off at every corner, as the clamp kind computes it (see app/engine/clamps/)."""
    return path.turn_off(inductance, r_coil, initial_current, dropout_current, energies=energies)

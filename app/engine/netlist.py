"""SPICE netlist of the turn-off, with the same component values and device models the
engine uses, so that ngspice can check the engine's transient (``clampdown netlist``).

The circuit at the instant the switch opens: the supply, the coil's resistance and
inductance (carrying I_0), a 0 V source that measures the coil current, the clamp, and the
switch as its kind models it (app/engine/switches/: an ideal current sink for an NPN, a
gate-controlled R_DS(on) with its body diode for a MOSFET, a channel with its V_CE(sat) for a
Darlington array). ``.meas`` lines print the peak switch voltage, the time at which the coil
current falls to the drop-out current and, for an unclamped MOSFET, the avalanche energy.
"""

from __future__ import annotations

import numpy as np

from .clamps import kind_of
from .clamps.base import g as _g
from .corners import inductance_at
from .design import Design
from .review import build_context
from .switches import switch_kind


def netlist(design: Design, corner: str = "nominal") -> str:
    """The turn-off netlist at the nominal corner, at the worst corner for the spike ("worst"),
    or at the corner of the slowest release ("release")."""
    ctx = build_context(design)
    if corner == "nominal":
        op, path, to, index = ctx.nominal, ctx.nominal_path, ctx.turnoff_nominal, 0
        label = "nominal corner"
    elif corner == "worst":
        to = ctx.turnoff
        index = int(np.argmax(np.where(np.isfinite(to.peak_switch_voltage), to.peak_switch_voltage, 0)))
        op, path = ctx.op, ctx.path
        label = "worst corner for the turn-off spike: " + ", ".join(
            f"{k}={v:g}" for k, v in ctx.corners.describe(index).items()
        )
    elif corner == "release":
        to = ctx.turnoff
        t = to.time_to_dropout
        index = int(np.argmax(np.where(np.isfinite(t), t, -1)))
        op, path = ctx.op, ctx.path
        label = "slowest-release corner: " + ", ".join(
            f"{k}={v:g}" for k, v in ctx.corners.describe(index).items()
        )
    else:
        raise ValueError("corner must be nominal, worst or release")
    vcc = float(op.vcc[index])
    # The nominal corner's inductance is the design's; a worst corner's may be at a tolerance end.
    inductance = design.coil.inductance if corner == "nominal" else inductance_at(design, ctx.corners, index)
    i0 = float(to.initial_current[index])
    ido = float(op.dropout_current)
    t_expected = float(to.time_to_dropout[index])
    kind = kind_of(design.clamp)
    switch = switch_kind(design.switch)
    if path.unclamped and not switch.simulates_avalanche:
        raise ValueError("an unclamped coil has no finite turn-off to simulate")
    # Unclamped, the switch's own breakdown (its netlist lines) takes the current.
    clamp_lines = [] if path.unclamped else kind.netlist_lines(path, index)
    r_coil = float(op.r_coil[index])
    t_stop = 3 * t_expected if np.isfinite(t_expected) and t_expected > 0 else 1e-2
    # The switch is a current sink that carries the coil's current (plus what the clamp
    # draws while on: a resistor's V/R, a reverse-biased diode's I_S) and drops it to zero
    # in a short t_open, so that the coil carries I_0 as in the engine. ngspice then
    # starts from its own operating point with I_0 in the coil: "uic" node voltages are
    # inconsistent with that current, and ngspice stalls ("timestep too small") or drifts.
    i_switch = i0 + kind.on_current(path, index, r_coil * i0)
    t_open = t_stop * 1e-4
    lines = [
        f"* Clampdown turn-off of {design.name!s} ({label})".replace("\n", " "),
        f"* I_0 = {_g(i0)} A, drop-out current {_g(ido)} A; switch opens at t = 0 (within {_g(t_open)} s)",
        f"VCC vcc 0 DC {_g(vcc)}",
        f"RCOIL vcc a {_g(r_coil)}",
        # IC= documents I_0; without uic ngspice takes it from the operating point instead.
        f"LCOIL a b {_g(inductance)} IC={_g(i0)}",
        "VSENSE b sw DC 0",
        *switch.netlist_lines(design, op, index, i_switch, t_open),
        *clamp_lines,
        # The clamp's nodes have no capacitance: with the default RELTOL (1e-3) ngspice
        # accepts junction voltages off by tenths of a volt, and a diode fed by the coil's
        # current alone may not converge (default ABSTOL 1 pA, no path to ground); 100 MΩ
        # to every node (< 1 µA) and a 1 nA current tolerance cure that.
        ".options reltol=1e-4 abstol=1e-9 rshunt=1e8",
        f".tran {_g(t_stop / 4000)} {_g(t_stop)} 0 {_g(t_stop / 4000)}",
        ".meas tran peak_switch_voltage MAX v(sw)",
        *kind.dropout_measure(ido),
        *(
            [f".meas tran avalanche_energy INTEG par('v(sw)*i(VSENSE)') FROM={_g(t_open)} TO={_g(t_stop)}"]
            if path.unclamped
            else []
        ),
        ".end",
    ]
    return "\n".join(lines) + "\n"

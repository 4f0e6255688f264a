"""The stage as designed, drawn from the design file with schemdraw (SVG backend).

Low-side switch: the supply feeds the coil, the coil the switch node, the switch takes it to
ground; the drive source reaches the switch's control input through R_b (with the pull-down
when there is one); the clamp sits across the coil or, for a TVS, from the switch node to
ground. Every part carries its value in engineering notation and, where the part has one,
its library name.

The drive, the switch and the clamp are each drawn by one function per kind, looked up in
``DRIVES``, ``SWITCHES`` and ``CLAMPS``: a new kind is one function and one entry.
"""

from __future__ import annotations

import html
import re
import textwrap
import threading
import xml.etree.ElementTree as ET
from collections.abc import Callable
from dataclasses import dataclass

import schemdraw
import schemdraw.elements as elm

from app.engine.clamps.tvs import v_breakdown_max
from app.engine.design import Design
from app.engine.units import format_si

# schemdraw keeps a drawing stack and its configuration in module globals; one drawing at a time.
_LOCK = threading.Lock()

FONT_SIZE = 11
SVG_NAMESPACE = "http://www.w3.org/2000/svg"
CLAMP_X = 8.0  # how far right of the coil the clamp branch runs
COIL_HEIGHT = 6.0
LABEL_WIDTH = 30  # characters per label line: the coil's label must end before the clamp
# Room around the drawing: schemdraw sizes it from estimated text widths, a browser's font may be wider.
MARGIN = 1.5


def text(value: str) -> str:
    """A label as schemdraw's SVG writer needs it: XML-escaped (it writes text as given), and a
    dollar sign kept literal (a pair of them would start schemdraw's math mode)."""
    return html.escape(str(value), quote=False).replace("$", "＄")


def tol(fraction: float) -> str:
    """ " ±5 %" (with its leading space), or nothing where the design gives no tolerance."""
    return f" ±{fraction * 100:g} %" if fraction else ""


def named(kind: str, part) -> str:
    """The part's library name with what identifies it (maker's number), as the record shows."""
    name = getattr(part, "name", None) or ""
    maker = getattr(part, "maker_part", None)
    if maker and maker != name:
        name = f"{name} ({maker})" if name else maker
    return f"{kind} {name}".strip()


@dataclass
class Nodes:
    """Where the stage's parts meet, in drawing units."""

    supply: tuple[float, float]  # top of the coil
    switch: tuple[float, float]  # the switch node (coil bottom, collector/drain)
    control: tuple[float, float] = (0.0, 0.0)  # the switch's control input (base/gate/input pin)
    ground_y: float = 0.0
    common: tuple[float, float] | None = None  # a Darlington array's common (clamp) pin


def wrapped(words: str, width: int = LABEL_WIDTH) -> str:
    """Each line of a label folded at ``width`` characters, so a long part name stays in its
    own column of the drawing. A number stays with its unit (a no-break space between them)."""
    lines = (re.sub(r"(?<=\d) (?=\S)", "\u00a0", line) for line in words.split("\n"))
    return "\n".join(textwrap.fill(line, width) or line for line in lines)


def note(
    d: schemdraw.Drawing, xy: tuple[float, float], words: str, halign: str = "left", valign: str = "center"
):
    """A label at a fixed place (labels are placed by hand so they never cross a wire)."""
    d.add(elm.Label().at(xy).label(text(wrapped(words)), halign=halign, valign=valign))


# ---------------------------------------------------------------- switches


def draw_npn(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """An NPN: collector at the switch node, emitter to ground, the base on the left; its
    label under the emitter's ground."""
    s = design.switch
    q = d.add(elm.BjtNpn(circle=True).anchor("collector").at(nodes.switch))
    d.add(elm.Line().at(q.emitter).down(1.2))
    d.add(elm.Ground())
    nodes.control = q.base
    nodes.ground_y = q.emitter[1] - 1.2
    note(
        d,
        (0.6, nodes.ground_y - 0.7),
        f"{named('Q1', s)}\nV(BR)CEO {format_si(s.vceo, 'V')}, h_FE ≥ {s.hfe_min:g}\n"
        f"I_C {format_si(s.ic_max, 'A')}, V_CE(sat) {format_si(s.vce_sat, 'V')}",
        valign="top",
    )


def draw_nmos(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """An N-channel MOSFET: drain at the switch node, source to ground, the gate on the left."""
    s = design.switch
    q = d.add(elm.NFet().theta(0).reverse().anchor("drain").at(nodes.switch))
    d.add(elm.Line().at(q.source).down(1.2))
    d.add(elm.Ground())
    nodes.control = q.gate
    nodes.ground_y = q.source[1] - 1.2
    note(
        d,
        (0.6, nodes.ground_y - 0.7),
        f"{named('Q1', s)}\nV(BR)DSS {format_si(s.vds_max, 'V')}, I_D {format_si(s.id_max, 'A')}\n"
        f"R_DS(on) {format_si(s.rds_on, 'Ω')} at V_GS {format_si(s.rds_on_vgs, 'V')}\n"
        f"V_GS(th) {format_si(s.vgs_th_min, 'V')} to {format_si(s.vgs_th_max, 'V')}",
        valign="top",
    )


def draw_darlington(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """One channel of a Darlington array as the package's pins: the output at the switch node,
    the input on the left (its series resistor is inside), ground below, the common pin of the
    array's clamp diodes on the right."""
    s = design.switch
    chip = d.add(
        elm.Ic(
            pins=[
                elm.IcPin(name="IN", side="left"),
                elm.IcPin(name="OUT", side="top"),
                elm.IcPin(name="GND", side="bottom"),
                elm.IcPin(name="COM", side="right"),
            ],
            size=(2.5, 2.5),
        )
        .theta(0)
        .anchor("OUT")
        .at(nodes.switch)
    )
    d.add(elm.Line().at(chip.GND).down(0.8))
    d.add(elm.Ground())
    nodes.control = chip.IN
    nodes.common = chip.COM
    nodes.ground_y = chip.GND[1] - 0.8
    note(
        d,
        (0.6, nodes.ground_y - 0.7),
        f"{named('U1', s)}\none channel of {s.channels}, {s.channels_on} on at once\n"
        f"input R {format_si(s.r_input, 'Ω')} inside, V_I(on) {format_si(s.vbe_on, 'V')}\n"
        f"V(BR)CEO {format_si(s.vceo, 'V')}, I_C {format_si(s.ic_max, 'A')} per channel",
        valign="top",
    )


SWITCHES: dict[str, Callable[[schemdraw.Drawing, Design, Nodes], None]] = {
    "npn": draw_npn,
    "nmos": draw_nmos,
    "darlington_array": draw_darlington,
}


# ---------------------------------------------------------------- clamps


def _across_coil(d: schemdraw.Drawing, nodes: Nodes, parts: list[tuple[elm.Element, str]]) -> None:
    """A branch from the switch node up to the supply, right of the coil: ``parts`` (element,
    label) from the switch end to the supply end, each drawn upwards, labelled on its right."""
    x = nodes.supply[0] + CLAMP_X
    d.add(elm.Dot().at(nodes.switch))
    d.add(elm.Line().at(nodes.switch).to((x, nodes.switch[1])))
    height = nodes.supply[1] - nodes.switch[1]
    step = height / len(parts)
    y = nodes.switch[1]
    for part, words in parts:
        d.add(part.at((x, y)).to((x, y + step)))
        note(d, (x + 0.6, y + step / 2), words)
        y += step
    d.add(elm.Line().at((x, nodes.supply[1])).to(nodes.supply))
    d.add(elm.Dot().at(nodes.supply))


def _diode(design: Design, name: str = "D1"):
    diode = design.clamp.diode
    # A diode given between two forward voltages is judged at both: the label gives both.
    vf = format_si(diode.vf, "V")
    if diode.vf_min is not None and diode.vf_min < diode.vf:
        vf = f"{format_si(diode.vf_min, 'V')}…{vf}"
    return (
        elm.Diode(),
        f"{named(name, diode)}\nV_RRM {format_si(diode.vrrm, 'V')}, V_F {vf}",
    )


def _clamp_resistor(clamp, name: str = "R_s"):
    rating = f", {format_si(clamp.power_rating, 'W')}" if getattr(clamp, "power_rating", None) else ""
    return elm.Resistor(), f"{name} {format_si(clamp.r, 'Ω')}{tol(clamp.tolerance)}{rating}"


def draw_no_clamp(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    x = nodes.supply[0] + CLAMP_X
    note(
        d,
        (x, (nodes.supply[1] + nodes.switch[1]) / 2),
        "no clamp: the switch node rises\nuntil Q1 breaks down (avalanche)",
    )


def draw_diode(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    _across_coil(d, nodes, [_diode(design)])


def draw_diode_zener(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    z = design.clamp.zener
    zener = (
        elm.Zener().reverse(),
        f"{named('Z1', z)}\nV_Z {format_si(z.vz, 'V')}{tol(z.tolerance)}, {format_si(z.p_max, 'W')}",
    )
    _across_coil(d, nodes, [_diode(design), zener])


def draw_diode_resistor(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    _across_coil(d, nodes, [_diode(design), _clamp_resistor(design.clamp)])


def draw_resistor(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    _across_coil(d, nodes, [_clamp_resistor(design.clamp, "R_p")])


def draw_rc(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    c = design.clamp
    cap = (
        elm.Capacitor(),
        f"C_s {format_si(c.c, 'F')}{tol(c.tolerance)}, {format_si(c.c_voltage_rating, 'V')}",
    )
    _across_coil(d, nodes, [_clamp_resistor(c), cap])


def draw_tvs(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """A TVS from the switch node to ground, right of the switch."""
    t = design.clamp.tvs
    x = nodes.supply[0] + CLAMP_X
    v_max, assumed = v_breakdown_max(t)
    d.add(elm.Dot().at(nodes.switch))
    d.add(elm.Line().at(nodes.switch).to((x, nodes.switch[1])))
    d.add(elm.DiodeTVS().reverse().at((x, nodes.switch[1])).to((x, nodes.ground_y)))
    d.add(elm.Ground())
    note(
        d,
        (x + 0.6, (nodes.switch[1] + nodes.ground_y) / 2),
        f"{named('TVS', t)}\nV_BR {format_si(t.v_breakdown, 'V')} to {format_si(v_max, 'V')}"
        f"{' (max assumed)' if assumed else ''}\nV_C {format_si(t.v_clamp, 'V')} at "
        f"{format_si(t.i_clamp, 'A')}",
    )


def draw_array_diode(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """The array's own clamp diode runs from the output to the common pin: drawn across the coil
    when the common pin goes to the supply (with the zener when it goes through one); left
    unconnected, the drawing says there is no clamp."""
    c = design.clamp
    x = nodes.supply[0] + CLAMP_X
    if c.common_to == "unconnected":
        note(
            d,
            (x, (nodes.supply[1] + nodes.switch[1]) / 2),
            "COM pin unconnected: no clamp;\nthe output rises until the\nchannel breaks down (avalanche)",
        )
        return
    diode = (
        elm.Diode(),
        f"the array's own diode (OUT to COM{', COM to V_cc' if c.common_to == 'supply' else ''})\n"
        f"V_RRM {format_si(c.vrrm, 'V')}, V_F {format_si(c.vf, 'V')}",
    )
    parts = [diode]
    if c.common_to == "zener":
        z = c.zener
        parts.append(
            (
                elm.Zener().reverse(),
                f"{named('Z1', z)} COM to V_cc\nV_Z {format_si(z.vz, 'V')}{tol(z.tolerance)}, "
                f"{format_si(z.p_max, 'W')}",
            )
        )
    _across_coil(d, nodes, parts)


CLAMPS: dict[str, Callable[[schemdraw.Drawing, Design, Nodes], None]] = {
    "array_diode": draw_array_diode,
    "none": draw_no_clamp,
    "diode": draw_diode,
    "diode_zener": draw_diode_zener,
    "diode_resistor": draw_diode_resistor,
    "resistor": draw_resistor,
    "tvs_switch": draw_tvs,
    "rc": draw_rc,
}


# ---------------------------------------------------------------- drives


def _base_network(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> tuple[float, float]:
    """The series resistor from the control input leftwards (R_b for a base, R_g for a gate), the
    pull-down from its switch end to ground; returns the drive end. A Darlington array channel
    has its input resistor inside: a wire."""
    b = design.drive_resistors
    start = nodes.control
    d.add(elm.Line().at(start).left(1.8))
    start = (start[0] - 1.8, start[1])
    if b is None:
        return start
    series, pulldown = ("R_g", "R_gs") if design.gate is not None else ("R_b", "R_be")
    if b.r_pulldown is not None:
        d.add(elm.Dot().at(start))
        d.add(elm.Resistor().at(start).to((start[0], nodes.ground_y)))
        d.add(elm.Ground())
        note(
            d,
            (start[0] - 0.5, (start[1] + nodes.ground_y) / 2),
            f"{pulldown} {format_si(b.r_pulldown, 'Ω')}{tol(b.tolerance)}",
            halign="right",
        )
    rb = d.add(elm.Resistor().at(start).left(4.5))
    note(
        d,
        ((start[0] + rb.end[0]) / 2, start[1] + 0.6),
        f"{series} {format_si(b.r_series, 'Ω')}{tol(b.tolerance)}, {format_si(b.power_rating, 'W')}",
        halign="center",
        valign="bottom",
    )
    return rb.end


def draw_logic(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """A logic output: its open-circuit levels as a source with its output resistance."""
    drive = design.drive
    end = _base_network(d, design, nodes)
    rout = d.add(elm.Resistor().at(end).left(3.5))
    note(
        d,
        ((end[0] + rout.end[0]) / 2, end[1] + 0.6),
        f"R_out {format_si(drive.r_out, 'Ω')}",
        halign="center",
        valign="bottom",
    )
    x = rout.end[0] - 0.8
    d.add(elm.Line().at(rout.end).to((x, end[1])))
    d.add(elm.SourceSquare().at((x, nodes.ground_y)).to((x, end[1])))
    d.add(elm.Ground().at((x, nodes.ground_y)))
    note(
        d,
        (x - 0.9, (end[1] + nodes.ground_y) / 2),
        f"logic output\nhigh {format_si(drive.high, 'V')} (≥ {format_si(drive.high_min, 'V')})\n"
        f"low {format_si(drive.low, 'V')} (≤ {format_si(drive.low_max, 'V')})\n"
        f"at most {format_si(drive.i_max, 'A')}",
        halign="right",
    )


def draw_divider(d: schemdraw.Drawing, design: Design, nodes: Nodes) -> None:
    """The divider: fixed resistor and sensor between its source and ground, its middle to R_b."""
    drive = design.drive
    end = _base_network(d, design, nodes)
    d.add(elm.Line().at(end).left(1.0))
    mid = (end[0] - 1.0, end[1])
    d.add(elm.Dot().at(mid))
    sensor = (
        elm.Photoresistor(),
        f"sensor\n{format_si(drive.r_sensor_on, 'Ω')} on\n{format_si(drive.r_sensor_off, 'Ω')} off\n"
        f"{drive.transition} change{tol(drive.tolerance)}",
    )
    fixed = (elm.Resistor(), f"R_fixed\n{format_si(drive.r_fixed, 'Ω')}{tol(drive.tolerance)}")
    top, bottom = (sensor, fixed) if drive.sensor_position == "top" else (fixed, sensor)
    top_y = nodes.supply[1]
    d.add(top[0].at((mid[0], top_y)).to(mid))
    note(d, (mid[0] - 0.7, (top_y + mid[1]) / 2), top[1], halign="right")
    source = (
        f"V_src {format_si(drive.v_source, 'V')}{tol(drive.source_tolerance)}"
        if drive.v_source is not None
        else "V_src = V_cc"
    )
    d.add(elm.Vdd().at((mid[0], top_y)).label(text(source), loc="top"))
    d.add(bottom[0].at(mid).to((mid[0], nodes.ground_y)))
    d.add(elm.Ground())
    note(d, (mid[0] - 0.7, (mid[1] + nodes.ground_y) / 2), bottom[1], halign="right")


DRIVES: dict[str, Callable[[schemdraw.Drawing, Design, Nodes], None]] = {
    "logic": draw_logic,
    "divider": draw_divider,
}


# ---------------------------------------------------------------- the stage


def supply_text(design: Design) -> str:
    s = design.supply
    return f"V_cc {format_si(s.nominal, 'V')} ({format_si(s.low, 'V')} to {format_si(s.high, 'V')})"


def coil_text(design: Design) -> str:
    c = design.coil
    return (
        f"{named('K1', c)}\n{format_si(c.r_coil, 'Ω')}{tol(c.tolerance)}, {format_si(c.inductance, 'H')}\n"
        f"must-operate {format_si(c.v_pickup, 'V')}\ndrop-out {format_si(c.v_dropout, 'V')}"
    )


def schematic_svg(design: Design) -> str:
    """The stage as an SVG document (text kept as text, so it can be searched and read)."""
    if design.switch.kind not in SWITCHES:
        raise ValueError(f"switch.kind: no drawing for {design.switch.kind!r}")
    if design.clamp.kind not in CLAMPS:
        raise ValueError(f"clamp.kind: no drawing for {design.clamp.kind!r}")
    with _LOCK:
        d = schemdraw.Drawing(canvas="svg", show=False)
        d.config(fontsize=FONT_SIZE, margin=MARGIN)
        top = (0.0, 0.0)
        d.add(elm.Vdd().at(top).label(text(supply_text(design)), loc="top"))
        coil = d.add(elm.Inductor2(loops=4).at(top).down(COIL_HEIGHT))
        note(d, (0.7, -COIL_HEIGHT / 2), coil_text(design))
        nodes = Nodes(supply=top, switch=coil.end)
        SWITCHES[design.switch.kind](d, design, nodes)
        CLAMPS[design.clamp.kind](d, design, nodes)
        DRIVES[design.drive.kind](d, design, nodes)
        d.draw(show=False)
        root = d.fig.getsvg()
    # schemdraw writes its root in the SVG namespace and every other element unqualified, and
    # leaves the serialisation to ElementTree's process-wide prefix table, where it registers
    # SVG as the default namespace. Any later registration of a default namespace (importing
    # WeasyPrint does) turns that into <ns0:svg> with children in no namespace: a picture that
    # draws nothing. Declared here on the root itself, it no longer depends on that table.
    root.tag = "svg"
    root.set("xmlns", SVG_NAMESPACE)
    return ET.tostring(root, encoding="unicode")

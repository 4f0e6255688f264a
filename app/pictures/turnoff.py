"""The turn-off over time: coil current and switch-node voltage from the instant the switch
opens until the coil current reaches drop-out.

No time stepping: for a clamp with a voltage v_c(i) the time at which the current has fallen
to i is t(i) = ∫ from i to I_0 of L / (R·i + v_c(i)) di, the integral the engine evaluates for
the time to drop-out (``transient.integral_waveform``); the RC snubber has its closed form
(``clamps.rc.rc_waveform``). Drawn for the design's clamp at the nominal corner and at the
slowest-release corner, with the alternative clamps the report lists (nominal corner) lighter.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from app.engine.clamps import kind_of
from app.engine.corners import inductance_at
from app.engine.review import build_context
from app.engine.rules import Context
from app.engine.switches import switch_kind
from app.engine.transient import Waveform
from app.engine.units import format_si

from .plotting import BLACK, LINE_STYLES, VERMILION, new_figure, plain, render, time_scale

# The rating and the derated limit: grey, labelled, drawn across the whole chart, so no curve
# style (colour or dash) is mistaken for them.
LIMIT = "#5a5a5a"


@dataclass(frozen=True)
class Curve:
    label: str
    waveform: Waveform
    chosen: bool  # the design's own clamp (else an alternative, drawn lighter)
    initial_current: float


@dataclass(frozen=True)
class TurnOffData:
    clamp_title: str
    unclamped: bool
    curves: list[Curve]
    dropout_current: float
    breakdown: float  # V_(BR)CEO or V_(BR)DSS, the switch's rating
    derated: float  # the profile's voltage fraction of it
    derating: float
    peak_nominal: float
    peak_worst: float  # the worst corner for the spike (may differ from the slowest release)
    breakdown_name: str = "V(BR)CEO"
    avalanche: str = ""  # a MOSFET's avalanche energy against its rating, when unclamped


def slowest_release_corner(ctx: Context) -> int:
    """The corner of the slowest finite release, as ``clampdown netlist --corner release`` picks it."""
    t = ctx.turnoff.time_to_dropout
    return int(np.argmax(np.where(np.isfinite(t), t, -1)))


def chosen_waveforms(ctx: Context, points: int = 160) -> dict[str, tuple[Waveform, float]]:
    """The design's own clamp at the nominal and the slowest-release corner: {corner: (waveform, I_0)}."""
    inductance = ctx.design.coil.inductance  # the nominal corner's
    nom, to_nom = ctx.nominal, ctx.turnoff_nominal
    i0_nom = float(to_nom.initial_current[0])
    out = {
        "nominal": (
            ctx.nominal_path.waveform(
                0, inductance, float(nom.r_coil[0]), i0_nom, nom.dropout_current, points
            ),
            i0_nom,
        )
    }
    k = slowest_release_corner(ctx)
    i0 = float(ctx.turnoff.initial_current[k])
    out["release"] = (
        ctx.path.waveform(
            k,
            inductance_at(ctx.design, ctx.corners, k),
            float(ctx.op.r_coil[k]),
            i0,
            ctx.op.dropout_current,
            points,
        ),
        i0,
    )
    return out


def turnoff_data(ctx: Context) -> TurnOffData:
    design = ctx.design
    chosen = chosen_waveforms(ctx)
    title = kind_of(design.clamp).title
    curves = [
        Curve(f"{title}, nominal corner", chosen["nominal"][0], True, chosen["nominal"][1]),
        Curve(f"{title}, slowest-release corner", chosen["release"][0], True, chosen["release"][1]),
    ]
    for label, clamp in ctx.extras.get("alternative_clamps", []):
        if clamp == design.clamp:
            continue
        alt = build_context(design.model_copy(update={"clamp": clamp}), ctx.profile, alternatives=False)
        nom = alt.nominal
        i0 = float(alt.turnoff_nominal.initial_current[0])
        wave = alt.nominal_path.waveform(
            0, design.coil.inductance, float(nom.r_coil[0]), i0, nom.dropout_current
        )
        curves.append(Curve(f"{label}, nominal", wave, False, i0))
    peaks = ctx.turnoff.peak_switch_voltage
    return TurnOffData(
        clamp_title=title,
        unclamped=kind_of(design.clamp).unclamped,
        curves=curves,
        dropout_current=float(ctx.nominal.dropout_current),
        breakdown=switch_kind(design.switch).breakdown(design.switch),
        breakdown_name=switch_kind(design.switch).breakdown_symbol.replace("_(", "("),
        avalanche=_avalanche_words(ctx),
        derated=ctx.profile.voltage * switch_kind(design.switch).breakdown(design.switch),
        derating=ctx.profile.voltage,
        peak_nominal=float(ctx.turnoff_nominal.peak_switch_voltage[0]),
        peak_worst=float(np.max(peaks)),
    )


def _avalanche_words(ctx: Context) -> str:
    """For an unclamped switch with an avalanche rule (a MOSFET): the energy against its rating,
    as the report's finding gives it."""
    from app.engine.rules import RULES

    rule = RULES.get("switch.avalanche")
    if rule is None or not rule.applies_to(ctx.design) or not kind_of(ctx.design.clamp).unclamped:
        return ""
    finding = rule.check(ctx)
    if finding is None:
        return ""
    rating = (
        f" against {format_si(finding.rating, 'J')}"
        if finding.rating is not None
        else " with no rating given"
    )
    return f" Avalanche energy {format_si(finding.value, 'J')} per turn-off{rating} ({finding.status})."


def _release_text(t: float) -> str:
    return format_si(t, "s") if math.isfinite(t) else "never (the clamp holds the current up)"


def caption(data: TurnOffData) -> str:
    nominal, worst = data.curves[0], data.curves[1]
    words = []
    if data.unclamped:
        rated = (
            "an avalanche of the transistor is not a rated event"
            if not data.avalanche
            else "the switch avalanches at every turn-off"
        )
        words.append(
            f"No clamp: when the switch opens its node rises until Q1 breaks down, at least "
            f"{data.breakdown_name} {format_si(data.breakdown, 'V')} and possibly far above; {rated}. "
            f"Drawn at {data.breakdown_name}, the least it can be.{data.avalanche}"
        )
    else:
        words.append(
            f"{data.clamp_title}: switch-node peak {format_si(data.peak_nominal, 'V')} at the nominal corner, "
            f"{format_si(data.peak_worst, 'V')} at the worst corner, against {data.breakdown_name} "
            f"{format_si(data.breakdown, 'V')} (derated limit {format_si(data.derated, 'V')})."
        )
    words.append(
        f"Coil current from {format_si(nominal.initial_current, 'A')} to the drop-out current "
        f"{format_si(data.dropout_current, 'A')} in {_release_text(nominal.waveform.release_time)} (nominal), "
        f"{_release_text(worst.waveform.release_time)} at the slowest-release corner."
    )
    others = [c for c in data.curves if not c.chosen]
    if others:
        words.append(
            "Alternatives at nominal: "
            + "; ".join(
                f"{c.label.removesuffix(', nominal')} {_release_text(c.waveform.release_time)}"
                for c in others
            )
            + "."
        )
    return " ".join(words)


def _draw(data: TurnOffData):
    figure = new_figure(7.4, 6.4)
    top, bottom = figure.subplots(2, 1, sharex=True)
    t_max = max((float(c.waveform.time[-1]) for c in data.curves if len(c.waveform.time)), default=1e-3)
    scale, unit = time_scale(t_max)
    for n, curve in enumerate(data.curves):
        colour, dashes, marker = LINE_STYLES[n % len(LINE_STYLES)]
        w = curve.waveform
        if not len(w.time):
            continue
        style = dict(color=colour, linestyle=dashes, linewidth=2.0 if curve.chosen else 1.2)
        if not curve.chosen:
            style["alpha"] = 0.6
        release = f"releases in {_release_text(w.release_time)}"
        t = np.concatenate(([0.0], w.time)) * scale
        top.plot(w.time * scale, w.current * 1e3, label=plain(f"{curve.label}: {release}"), **style)
        # The node sits near 0 V while the switch conducts; the spike is the step at t = 0.
        bottom.plot(t, np.concatenate(([0.0], w.switch_voltage)), **style)
        if math.isfinite(w.release_time):
            top.plot(
                [w.release_time * scale],
                [data.dropout_current * 1e3],
                marker=marker,
                color=colour,
                markersize=7 if curve.chosen else 5,
                linestyle="none",
                alpha=style.get("alpha", 1.0),
            )
    top.axhline(data.dropout_current * 1e3, color=BLACK, linestyle=(0, (2, 3)), linewidth=1)
    top.annotate(
        plain(f"drop-out {format_si(data.dropout_current, 'A')}"),
        (0.01, data.dropout_current * 1e3),
        xycoords=("axes fraction", "data"),
        ha="left",
        va="bottom",
        fontsize=8,
    )
    top.set_ylabel("coil current (mA)")
    top.set_title("Coil current after the switch opens (markers: release at drop-out)")
    figure.legend(loc="outside lower center", ncols=1, frameon=False)
    bottom.axhline(data.breakdown, color=LIMIT, linestyle="-", linewidth=1.4)
    bottom.axhline(data.derated, color=LIMIT, linestyle=(0, (3, 1.5)), linewidth=1.4)
    bottom.annotate(
        plain(f"{data.breakdown_name} rating {format_si(data.breakdown, 'V')}"),
        (0.01, data.breakdown),
        xycoords=("axes fraction", "data"),
        va="bottom",
        fontsize=8,
        color=LIMIT,
    )
    bottom.annotate(
        plain(f"derated limit {format_si(data.derated, 'V')} ({data.derating * 100:g} %)"),
        (0.01, data.derated),
        xycoords=("axes fraction", "data"),
        va="top",
        fontsize=8,
        color=LIMIT,
    )
    if data.unclamped:
        bottom.axhspan(
            data.breakdown,
            data.breakdown * 1.3,
            facecolor="none",
            edgecolor=VERMILION,
            hatch="///",
            linewidth=0,
        )
        bottom.annotate(
            f"avalanche: at least {data.breakdown_name}, possibly far above"
            + ("" if data.avalanche else ": not a rated event"),
            (0.5, data.breakdown * 1.15),
            xycoords=("axes fraction", "data"),
            ha="center",
            va="center",
            fontsize=8.5,
            color=BLACK,
            backgroundcolor="white",
        )
    bottom.set_ylim(
        bottom=0,
        top=max(
            data.breakdown * (1.35 if data.unclamped else 1.1),
            *(float(np.max(c.waveform.switch_voltage)) * 1.05 for c in data.curves if len(c.waveform.time)),
        ),
    )
    bottom.set_ylabel("switch-node voltage (V)")
    bottom.set_xlabel(f"time after the switch opens ({unit})")
    bottom.set_title("Switch-node voltage")
    bottom.set_xlim(left=-0.02 * t_max * scale, right=t_max * scale * 1.04)
    return figure


def turnoff_svg(data: TurnOffData) -> str:
    return render(_draw, data)

"""The design file, format "clampdown-design/1": pydantic models that validate and normalise it.

Every number ends up in SI base units (V, A, Ω, H, F, W, s, °C, K/W); tolerances end up as
fractions (10 % -> 0.10). The part models (Transistor, Coil, Diode, Zener, Tvs) are used on
their own by the parts library, so a part is validated the same way everywhere.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal
from urllib.parse import urlsplit

from pydantic import (
    AfterValidator,
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Field,
    ValidationError,
    WithJsonSchema,
    model_validator,
)
from pydantic_core import PydanticCustomError

from .units import UnitError, parse_percent, parse_quantity

DESIGN_FORMAT = "clampdown-design/1"


# The range a real relay driver can have, per quantity kind (unit); a field may narrow it with
# ``low``/``high``. Values outside are refused by field with the allowed range, never computed:
# a supply of 10⁹ V or an ambient of −10⁹ °C is a typing error, not a design.
QUANTITY_RANGES: dict[str, tuple[float, float]] = {
    "V": (-1000.0, 1000.0),  # up to the low-voltage limit of 1000 V (IEC 60038)
    "A": (1e-12, 1000.0),
    "Ω": (1e-3, 1e9),  # 1 mΩ to 1 GΩ: beyond either end wiring or leakage decides
    "H": (1e-9, 100.0),
    "F": (1e-12, 1.0),  # 1 pF to 1 F: snubber capacitors are nF to tens of µF
    "W": (0.0, 100e3),  # TVS peak pulse ratings reach tens of kW
    "s": (0.0, 3600.0),
    "°C": (-70.0, 250.0),
    "K": (0.0, 200.0),
    "K/W": (0.0, 10e3),
    "/h": (0.0, 3.6e6),  # 1000 operations a second
    "J": (1e-9, 1e4),  # avalanche ratings: µJ to a few J
    "V/K": (-1.0, 1.0),
    "": (0.0, 1e6),
}


def _range_text(low: float, high: float, unit: str, positive: bool) -> str:
    """ "above 0 to 1000 V" for a positive field, else "from LOW to HIGH" (both included)."""
    lower = f"above {low:g}" if positive and low == 0 else f"from {low:g}"
    return f"{lower} to {high:g}{(' ' + unit) if unit else ''}"


def _quantity(
    unit: str,
    *,
    positive: bool = False,
    nonnegative: bool = False,
    low: float | None = None,
    high: float | None = None,
):
    """A number in ``unit``: parsed from engineering notation, checked against the field's range
    (``low``/``high``, else the quantity kind's range in QUANTITY_RANGES), and documented so."""
    kind_low, kind_high = QUANTITY_RANGES[unit]
    low = kind_low if low is None else low
    high = kind_high if high is None else high
    if positive:
        low = max(low, 0.0)
    if nonnegative:
        low = 0.0
    allowed = _range_text(low, high, unit, positive)

    def parse(value: Any) -> float:
        try:
            number = parse_quantity(value, unit)
        except UnitError as exc:
            raise PydanticCustomError("quantity", str(exc)) from None
        if positive and not number > 0:
            raise PydanticCustomError("quantity", f"must be positive ({allowed})")
        if nonnegative and number < 0:
            raise PydanticCustomError("quantity", f"must be zero or positive ({allowed})")
        if not low <= number <= high:
            raise PydanticCustomError("quantity", f"is out of range: allowed {allowed}")
        return number

    return BeforeValidator(parse), _number_or_text(unit, low, high, positive)


def _number_or_text(
    unit: str, low: float | None = None, high: float | None = None, positive: bool = False
) -> WithJsonSchema:
    text = {"type": "string", "description": f'engineering notation, e.g. "4k7" or "120 m{unit}"'}
    number: dict[str, Any] = {"type": "number"}
    if low is not None:
        number["exclusiveMinimum" if positive and low == 0 else "minimum"] = low
    if high is not None:
        number["maximum"] = high
    schema: dict[str, Any] = {"anyOf": [number, text]}
    description = f"in {unit}" if unit else ""
    if low is not None and high is not None:
        description = (
            (description + ", " if description else "") + "allowed " + _range_text(low, high, unit, positive)
        )
    if description:
        schema["description"] = description
    return WithJsonSchema(schema)


def _tolerance(value: Any) -> float:
    try:
        fraction = parse_percent(value)
    except UnitError as exc:
        raise PydanticCustomError("tolerance", str(exc)) from None
    if not 0 <= fraction < 1:
        raise PydanticCustomError("tolerance", "must be a percentage from 0 up to (not including) 100")
    return fraction


def _fraction(value: Any) -> float:
    try:
        number = (
            parse_quantity(value.rstrip("%"), "") / 100
            if isinstance(value, str) and value.strip().endswith("%")
            else parse_quantity(value, "")
        )
    except UnitError as exc:
        raise PydanticCustomError("fraction", str(exc)) from None
    if not 0 < number <= 1:
        raise PydanticCustomError("fraction", "must be a fraction above 0 and at most 1 (or a percentage)")
    return number


Volts = Annotated[float, *_quantity("V")]
PositiveVolts = Annotated[float, *_quantity("V", positive=True, low=1e-3)]
NonNegativeVolts = Annotated[float, *_quantity("V", nonnegative=True)]
PositiveAmps = Annotated[float, *_quantity("A", positive=True)]
Ohms = Annotated[float, *_quantity("Ω", positive=True)]
NonNegativeOhms = Annotated[float, *_quantity("Ω", nonnegative=True)]
Henries = Annotated[float, *_quantity("H", positive=True)]
Watts = Annotated[float, *_quantity("W", positive=True)]
Seconds = Annotated[float, *_quantity("s", positive=True)]
Celsius = Annotated[float, *_quantity("°C")]
KelvinPerWatt = Annotated[float, *_quantity("K/W", positive=True)]
Ratio = Annotated[float, *_quantity("", positive=True)]
# Narrower ranges where the quantity kind's would admit nonsense for the field.
BaseEmitterVolts = Annotated[float, *_quantity("V", positive=True, low=0.1, high=5.0)]
SaturationVolts = Annotated[float, *_quantity("V", nonnegative=True, high=10.0)]
ForwardVolts = Annotated[float, *_quantity("V", positive=True, low=0.05, high=10.0)]
Gain = Annotated[float, *_quantity("", positive=True, low=1.0, high=1e5)]
Emission = Annotated[float, *_quantity("", positive=True, low=0.5, high=10.0)]
Kelvin = Annotated[float, *_quantity("K", nonnegative=True)]
Multiple = Annotated[float, *_quantity("", positive=True, low=1.0, high=100.0)]
_TEXT = {"type": "string", "description": 'e.g. "5%" or "0.8"'}
Tolerance = Annotated[
    float,
    BeforeValidator(_tolerance),
    WithJsonSchema(
        {
            "anyOf": [{"type": "number", "minimum": 0, "exclusiveMaximum": 100}, _TEXT],
            "description": "in %, allowed from 0 up to (not including) 100",
        }
    ),
]
Fraction = Annotated[
    float,
    BeforeValidator(_fraction),
    WithJsonSchema(
        {
            "anyOf": [{"type": "number", "exclusiveMinimum": 0, "maximum": 1}, _TEXT],
            "description": "a fraction, allowed above 0 to 1 (or a percentage)",
        }
    ),
]


class Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)


def _problem(message: str) -> PydanticCustomError:
    return PydanticCustomError("design", message)


# ---------------------------------------------------------------- parts


def _web_link(value: str | None) -> str | None:
    """A datasheet link: an absolute http or https URL, kept as typed."""
    if value is None:
        return None
    parsed = urlsplit(value)
    if parsed.scheme.lower() not in ("http", "https") or not parsed.netloc or any(c.isspace() for c in value):
        raise _problem("is not a web link; allowed: an http:// or https:// URL")
    return value


class PartModel(Model):
    """What identifies a part to a reader; no rule uses these (they are shown on the record)."""

    maker_part: str | None = Field(None, max_length=100, description="the maker's part number")
    package: str | None = Field(None, max_length=60, description="the package, e.g. SOT-23")
    datasheet: Annotated[str | None, AfterValidator(_web_link)] = Field(
        None, max_length=500, description="link to the datasheet (http or https)"
    )


PART_DETAILS = ("maker_part", "package", "datasheet")


class Transistor(PartModel):
    """An NPN bipolar transistor, with the datasheet's guaranteed (worst-case) figures."""

    kind: Literal["npn"] = "npn"
    name: str = Field(min_length=1, max_length=200)
    hfe_min: Gain = Field(description="minimum DC current gain h_FE over the operating range")
    hfe_max: Gain | None = Field(
        None,
        description="maximum DC current gain h_FE (optional): without it a switch that is not "
        "saturated is taken to reach V_CE = V_cc/2, the worst dissipation",
    )
    vbe_sat: BaseEmitterVolts = Field(description="V_BE(sat), maximum (decides saturation)")
    vbe_sat_min: BaseEmitterVolts | None = Field(
        None,
        description="V_BE(sat), minimum (optional): the lowest base voltage of a conducting base, "
        "for the drive-pin current and the base-resistor power; without it the hot V_BE(on)",
    )
    vce_sat: SaturationVolts = Field(description="V_CE(sat), maximum")
    vce_sat_min: SaturationVolts | None = Field(
        None,
        description="V_CE(sat), minimum (optional): the stress checks (collector current, coil "
        "over-voltage, diode reverse voltage) use it; without it 0 V",
    )
    vbe_on: BaseEmitterVolts = Field(description="V_BE(on) turn-on voltage at 25 °C")
    vceo: PositiveVolts = Field(description="V_(BR)CEO, minimum collector-emitter breakdown")
    vebo: PositiveVolts = Field(description="V_(BR)EBO, minimum emitter-base breakdown")
    ic_max: PositiveAmps = Field(description="continuous collector current rating")
    p_max: Watts = Field(description="total dissipation rating at 25 °C ambient")
    rth_ja: KelvinPerWatt = Field(description="junction-to-ambient thermal resistance")
    tj_max: Celsius = Field(description="maximum junction temperature")

    @model_validator(mode="after")
    def _consistent(self) -> Transistor:
        if self.tj_max <= 25:
            raise _problem("tj_max must be above 25 °C")
        if self.hfe_max is not None and self.hfe_max < self.hfe_min:
            raise _problem(f"hfe_max ({self.hfe_max:g}) must not be below hfe_min ({self.hfe_min:g})")
        if self.vbe_sat_min is not None and self.vbe_sat_min > self.vbe_sat:
            raise _problem(
                f"vbe_sat_min ({self.vbe_sat_min:g} V) must not be above vbe_sat ({self.vbe_sat:g} V)"
            )
        if self.vce_sat_min is not None and self.vce_sat_min > self.vce_sat:
            raise _problem(
                f"vce_sat_min ({self.vce_sat_min:g} V) must not be above vce_sat ({self.vce_sat:g} V)"
            )
        return self

    @property
    def vce_sat_low(self) -> float:
        """The lowest V_CE(sat): the worst case for a stress (more voltage left for the load)."""
        return self.vce_sat_min if self.vce_sat_min is not None else 0.0


class NmosFet(PartModel):
    """An N-channel enhancement MOSFET as a low-side switch, with the datasheet's guaranteed
    (worst-case) figures."""

    kind: Literal["nmos"]
    name: str = Field(min_length=1, max_length=200)
    vds_max: PositiveVolts = Field(description="V_(BR)DSS, minimum drain-source breakdown")
    id_max: PositiveAmps = Field(description="continuous drain current rating")
    rds_on: Annotated[float, *_quantity("Ω", positive=True, low=1e-4, high=1e3)] = Field(
        description="R_DS(on), maximum at 25 °C, guaranteed at rds_on_vgs"
    )
    rds_on_vgs: PositiveVolts = Field(description="the gate voltage V_GS at which rds_on is guaranteed")
    rds_on_hot: Annotated[float, *_quantity("", positive=True, low=1.0, high=5.0)] = Field(
        description="R_DS(on) at 125 °C normalised to 25 °C (datasheet curve; typically 1.5–1.8, from memory)"
    )
    vgs_th_min: PositiveVolts = Field(description="V_GS(th), minimum gate threshold at 25 °C")
    vgs_th_max: PositiveVolts = Field(description="V_GS(th), maximum gate threshold at 25 °C")
    vgs_max: PositiveVolts = Field(description="maximum gate-source voltage |V_GS|")
    p_max: Watts = Field(description="total dissipation rating at 25 °C ambient")
    rth_ja: KelvinPerWatt = Field(description="junction-to-ambient thermal resistance")
    tj_max: Celsius = Field(description="maximum junction temperature")
    e_as: Annotated[float, *_quantity("J", positive=True)] | None = Field(
        None, description="single-pulse avalanche energy E_AS at a 25 °C start (optional)"
    )
    e_ar: Annotated[float, *_quantity("J", positive=True)] | None = Field(
        None,
        description="repetitive avalanche energy E_AR (optional): an avalanche at every turn-off "
        "is a repeated event; judged against it when given",
    )
    vgs_th_tempco: Annotated[float, *_quantity("V/K", low=-0.05, high=0.0)] | None = Field(
        None,
        description="temperature coefficient of V_GS(th), V/K; default −5 mV/K (from memory)",
    )

    @model_validator(mode="after")
    def _consistent(self) -> NmosFet:
        if self.tj_max <= 25:
            raise _problem("tj_max must be above 25 °C")
        if self.vgs_th_min > self.vgs_th_max:
            raise _problem(
                f"vgs_th_min ({self.vgs_th_min:g} V) must not be above vgs_th_max ({self.vgs_th_max:g} V)"
            )
        if self.vgs_th_max >= self.vgs_max:
            raise _problem(f"vgs_th_max ({self.vgs_th_max:g} V) must be below vgs_max ({self.vgs_max:g} V)")
        if not self.vgs_th_max <= self.rds_on_vgs <= self.vgs_max:
            raise _problem("rds_on_vgs must lie from vgs_th_max to vgs_max")
        return self


class DarlingtonArray(PartModel):
    """One channel of a seven- or eight-channel Darlington array (common emitter) with its
    built-in input resistor; the package dissipation is shared by every channel that conducts."""

    kind: Literal["darlington_array"]
    name: str = Field(min_length=1, max_length=200)
    channels: Annotated[int, Field(ge=1, le=16)] = Field(description="channels in the package")
    channels_on: Annotated[int, Field(ge=1, le=16)] = Field(
        description="channels that conduct at once, each at this channel's current"
    )
    r_input: Ohms = Field(description="the built-in series resistor at each input")
    r_input_tolerance: Tolerance = Field(0.0, description="tolerance of r_input, percent (optional)")
    vce_sat: SaturationVolts = Field(description="V_CE(sat), maximum at the channel's current")
    vce_sat_min: SaturationVolts | None = Field(
        None, description="V_CE(sat), minimum (optional): the stress checks use it; without it 0 V"
    )
    vbe_on: Annotated[float, *_quantity("V", positive=True, low=0.5, high=5.0)] = Field(
        description="V_I(on): input voltage (two base-emitter drops) that saturates the channel at "
        "its current, maximum; typically 1.2–2.5 V (from memory)"
    )
    vbe_on_min: Annotated[float, *_quantity("V", positive=True, low=0.5, high=5.0)] | None = Field(
        None,
        description="the lowest input voltage at which the pair starts to conduct at 25 °C "
        "(optional; default 1.1 V, two drops of 0.55 V, from memory — the cutoff finding says so)",
    )
    hfe_min: Gain = Field(description="minimum DC current gain of the pair")
    hfe_max: Gain | None = Field(
        None,
        description="maximum DC current gain of the pair (optional): without it a channel that is "
        "not saturated is taken to reach V_CE = V_cc/2, the worst dissipation; the Monte Carlo "
        "yield draws the gain between hfe_min and it",
    )
    vceo: PositiveVolts = Field(description="output breakdown V_CE(sus) / V_(BR)CEO, minimum")
    ic_max: PositiveAmps = Field(description="continuous collector current rating per channel")
    p_max: Watts = Field(description="package dissipation rating at 25 °C ambient")
    rth_ja: KelvinPerWatt = Field(description="package junction-to-ambient thermal resistance")
    tj_max: Celsius = Field(description="maximum junction temperature")

    @model_validator(mode="after")
    def _consistent(self) -> DarlingtonArray:
        if self.tj_max <= 25:
            raise _problem("tj_max must be above 25 °C")
        if self.channels_on > self.channels:
            raise _problem(f"channels_on ({self.channels_on}) must not exceed channels ({self.channels})")
        if self.vce_sat_min is not None and self.vce_sat_min > self.vce_sat:
            raise _problem(
                f"vce_sat_min ({self.vce_sat_min:g} V) must not be above vce_sat ({self.vce_sat:g} V)"
            )
        if self.vbe_on_min is not None and self.vbe_on_min > self.vbe_on:
            raise _problem(f"vbe_on_min ({self.vbe_on_min:g} V) must not be above vbe_on ({self.vbe_on:g} V)")
        if self.hfe_max is not None and self.hfe_max < self.hfe_min:
            raise _problem(f"hfe_max ({self.hfe_max:g}) must not be below hfe_min ({self.hfe_min:g})")
        return self

    @property
    def vce_sat_low(self) -> float:
        """The lowest V_CE(sat): the worst case for a stress."""
        return self.vce_sat_min if self.vce_sat_min is not None else 0.0


class Contacts(Model):
    """The relay's contact ratings (datasheet)."""

    current: PositiveAmps = Field(description="rated contact current (continuous / switching)")
    voltage_ac: PositiveVolts | None = Field(None, description="rated switching voltage, AC (rms)")
    voltage_dc: PositiveVolts | None = Field(None, description="rated switching voltage, DC")
    inrush: PositiveAmps | None = Field(None, description="making (inrush) current rating")


class Coil(PartModel):
    """A relay or solenoid coil."""

    name: str = Field(min_length=1, max_length=200)
    v_nominal: PositiveVolts
    r_coil: Ohms = Field(description="coil resistance at r_at")
    tolerance: Tolerance = Field(description="coil resistance tolerance, percent")
    r_at: Celsius = Field(20.0, description="temperature at which r_coil and v_pickup hold")
    inductance: Henries
    inductance_tolerance: Tolerance = Field(
        0.0,
        description="inductance tolerance, percent (optional): the worst corners take the "
        "inductance at both ends; without it the inductance is taken as given",
    )
    v_pickup: PositiveVolts = Field(description="must-operate voltage at r_at")
    v_pickup_min: PositiveVolts | None = Field(
        None,
        description="the lowest pick-up voltage a coil of this type has at r_at (optional; the "
        "Monte Carlo yield draws each coil's pick-up between it and v_pickup; the worst corners "
        "always take v_pickup)",
    )
    v_dropout: PositiveVolts = Field(description="must-release (drop-out) voltage at r_at")
    v_max: PositiveVolts = Field(description="maximum continuous coil voltage")
    rth: KelvinPerWatt | None = Field(None, description="coil thermal resistance to ambient")
    temp_rise: Kelvin | None = Field(
        None,
        description="coil temperature rise at nominal voltage, K (datasheet); used when rth is "
        "absent. With neither, the derating profile's assumed rise is used and the finding says so",
    )
    contacts: Contacts | None = Field(None, description="contact ratings, checked against the load")

    @model_validator(mode="after")
    def _consistent(self) -> Coil:
        if self.v_dropout >= self.v_pickup:
            raise _problem(f"v_dropout ({self.v_dropout:g} V) must be below v_pickup ({self.v_pickup:g} V)")
        if self.v_pickup > self.v_max:
            raise _problem(f"v_pickup ({self.v_pickup:g} V) must not exceed v_max ({self.v_max:g} V)")
        if self.v_pickup_min is not None and not self.v_dropout < self.v_pickup_min <= self.v_pickup:
            raise _problem(
                f"v_pickup_min ({self.v_pickup_min:g} V) must lie above v_dropout "
                f"({self.v_dropout:g} V) and not above v_pickup ({self.v_pickup:g} V)"
            )
        return self


class Diode(PartModel):
    """A rectifier diode. I_S, n and R_S are the SPICE diode parameters; I_S is fitted from
    the (vf, vf_at) point when absent."""

    name: str = Field(min_length=1, max_length=200)
    vrrm: PositiveVolts = Field(description="repetitive peak reverse voltage rating")
    if_avg: PositiveAmps = Field(description="average forward current rating")
    i_peak: PositiveAmps = Field(
        description="peak forward current rating, in A; taken as the repetitive figure when i_frm is absent"
    )
    i_frm: PositiveAmps | None = Field(
        None, description="repetitive peak forward current I_FRM, in A (judged at every turn-off)"
    )
    i_fsm: PositiveAmps | None = Field(
        None, description="non-repetitive surge current I_FSM, in A (a single event; not judged per turn-off)"
    )
    vf: ForwardVolts = Field(description="forward voltage at vf_at")
    vf_at: PositiveAmps = Field(description="current at which vf is specified")
    vf_min: ForwardVolts | None = Field(
        None,
        description="lowest forward voltage at vf_at (a datasheet minimum): the corners take the "
        "diode's forward curve at both vf_min and vf, so the release is judged at the lowest V_F "
        "and the spike at the highest; absent, vf alone is taken",
    )
    is_: Annotated[float, *_quantity("A", positive=True, low=1e-30, high=1.0)] | None = Field(
        None, alias="is", description="SPICE saturation current I_S"
    )
    n: Emission | None = Field(None, description="SPICE emission coefficient")
    rs: NonNegativeOhms | None = Field(None, description="SPICE series resistance")

    model_config = ConfigDict(extra="forbid", frozen=True, populate_by_name=True)

    @model_validator(mode="after")
    def _consistent(self) -> Diode:
        if self.rs is not None and self.rs * self.vf_at >= self.vf:
            raise _problem("rs × vf_at must be below vf (the junction needs some forward voltage)")
        if self.vf_min is not None:
            if self.vf_min > self.vf:
                raise _problem("vf_min must not be above vf")
            if self._junction_at_vf_min() <= 0:
                raise _problem(
                    "vf_min is too low: at vf_at, rs × vf_at takes it all (the junction needs some forward voltage)"
                )
        if self.i_frm is not None and self.i_fsm is not None and self.i_frm > self.i_fsm:
            raise _problem("i_frm (repetitive) must not be above i_fsm (surge)")
        return self

    def _junction_at_vf_min(self) -> float:
        """The junction's share of the lowest forward voltage at vf_at: the part's curve there,
        lowered by vf − vf_min, less rs × vf_at (physics.DiodeModel.from_part)."""
        import math

        from .physics import DEFAULT_EMISSION, THERMAL_VOLTAGE

        rs = self.rs or 0.0
        given = self.vf
        if self.is_ is not None:
            n = self.n if self.n is not None else DEFAULT_EMISSION
            given = n * THERMAL_VOLTAGE * math.log1p(self.vf_at / self.is_) + self.vf_at * rs
        return given - (self.vf - self.vf_min) - self.vf_at * rs


class Zener(PartModel):
    """A zener in series with the clamp diode. vz is specified at i_test (I_ZT)."""

    vz: PositiveVolts
    tolerance: Tolerance
    rz: NonNegativeOhms = Field(description="dynamic resistance")
    p_max: Watts
    i_test: PositiveAmps = Field(0.005, description="test current I_ZT at which vz holds")


class Tvs(PartModel):
    """A TVS diode from the switch node to ground."""

    v_breakdown: PositiveVolts = Field(description="minimum breakdown voltage V_BR(min) at i_test, in V")
    v_breakdown_max: PositiveVolts | None = Field(
        None,
        description="maximum breakdown voltage V_BR(max) at i_test, in V; when absent 1.1 × v_breakdown "
        "is assumed (typical of ±5 % parts, from memory) and the spike finding says so",
    )
    v_standoff: PositiveVolts | None = Field(
        None, description="stand-off (reverse working) voltage V_RWM, in V; the supply must stay below it"
    )
    v_clamp: PositiveVolts = Field(description="maximum clamping voltage at i_clamp")
    i_clamp: PositiveAmps = Field(description="peak pulse current at which v_clamp holds")
    p_max: Watts = Field(description="peak pulse power rating")
    i_test: PositiveAmps = Field(0.001, description="test current I_T at which v_breakdown holds")

    @model_validator(mode="after")
    def _consistent(self) -> Tvs:
        if self.v_clamp <= self.v_breakdown:
            raise _problem("v_clamp must be above v_breakdown")
        if self.i_clamp <= self.i_test:
            raise _problem("i_clamp must be above i_test")
        if self.v_breakdown_max is not None and not self.v_breakdown <= self.v_breakdown_max < self.v_clamp:
            raise _problem("v_breakdown_max must lie from v_breakdown up to (not including) v_clamp")
        if self.v_standoff is not None and self.v_standoff >= self.v_breakdown:
            raise _problem("v_standoff must be below v_breakdown")
        return self


# ---------------------------------------------------------------- circuit


class Supply(Model):
    nominal: PositiveVolts
    tolerance: Tolerance | None = None
    min: PositiveVolts | None = None
    max: PositiveVolts | None = None

    @model_validator(mode="after")
    def _range(self) -> Supply:
        if self.tolerance is None and (self.min is None or self.max is None):
            raise _problem("give either tolerance or both min and max")
        if self.tolerance is not None and (self.min is not None or self.max is not None):
            raise _problem("give either tolerance or min and max, not both")
        if not self.low <= self.nominal <= self.high:
            raise _problem(f"nominal ({self.nominal:g} V) must lie between min and max")
        return self

    @property
    def low(self) -> float:
        return self.min if self.min is not None else self.nominal * (1 - (self.tolerance or 0))

    @property
    def high(self) -> float:
        return self.max if self.max is not None else self.nominal * (1 + (self.tolerance or 0))


class Ambient(Model):
    min: Celsius
    max: Celsius

    @model_validator(mode="after")
    def _range(self) -> Ambient:
        if self.min > self.max:
            raise _problem(f"min ({self.min:g} °C) must not be above max ({self.max:g} °C)")
        return self


class LogicDrive(Model):
    """A logic output: high/low levels (open circuit), output resistance, source current limit."""

    kind: Literal["logic"]
    high: Volts
    high_min: Volts
    low: Volts
    low_max: Volts
    r_out: NonNegativeOhms
    i_max: PositiveAmps

    @model_validator(mode="after")
    def _levels(self) -> LogicDrive:
        if self.high_min > self.high:
            raise _problem("high_min must not be above high")
        if self.low > self.low_max:
            raise _problem("low must not be above low_max")
        if self.low_max >= self.high_min:
            raise _problem("low_max must be below high_min")
        return self


class DividerDrive(Model):
    """A resistive divider with a sensor; "on" is the sensor state that energises the coil.
    Without v_source the divider is fed from the supply (and follows its tolerance)."""

    kind: Literal["divider"]
    v_source: PositiveVolts | None = None
    r_fixed: Ohms
    sensor_position: Literal["top", "bottom"]
    r_sensor_on: Ohms
    r_sensor_off: Ohms
    tolerance: Tolerance = Field(description="tolerance of the fixed resistor and the sensor")
    v_source_tolerance: Tolerance | None = Field(
        None, description="tolerance of v_source, percent (only with v_source; else the supply's)"
    )
    transition: Literal["slow", "snap"] = Field(
        "slow",
        description='how the sensor changes state: "slow" (photoresistor, thermistor: walks the '
        'switch through its linear region) or "snap" (float switch, reed contact)',
    )
    fixed_power_rating: Watts | None = Field(None, description="power rating of the fixed resistor")
    sensor_power_rating: Watts | None = Field(None, description="power rating of the sensor")

    @model_validator(mode="after")
    def _source(self) -> DividerDrive:
        if self.v_source_tolerance is not None and self.v_source is None:
            raise _problem("v_source_tolerance needs v_source (without it the divider follows the supply)")
        return self

    @property
    def source_tolerance(self) -> float:
        return self.v_source_tolerance or 0.0


Drive = Annotated[LogicDrive | DividerDrive, Field(discriminator="kind")]


class Base(Model):
    r_series: Ohms
    r_pulldown: Ohms | None = None
    tolerance: Tolerance
    power_rating: Watts


# The clamp kinds live one module each in app.engine.clamps, which reads the part models above;
# the switch kinds likewise in app.engine.switches.
from .clamps import CLAMP_KINDS, Clamp  # noqa: E402
from .clamps import kind_of as kind_of_clamp  # noqa: E402
from .switches import SWITCH_KINDS, Switch  # noqa: E402

# Inrush as a multiple of the running current when the design gives none (common practice:
# motors draw often 5–8× at start and incandescent lamps 10–15×, the upper ends taken; a
# capacitive load's inrush is limited only by the wiring, 20× from memory; an AC solenoid or
# contactor coil draws several times its holding current until it closes, 5× from memory).
INRUSH_MULTIPLES: dict[str, float] = {
    "resistive": 1.0,
    "inductive": 5.0,
    "motor": 8.0,
    "lamp": 15.0,
    "capacitive": 20.0,
}
# Extra-low voltage, IEC 60449 band I: up to 50 V AC (rms) or 120 V ripple-free DC.
ELV_LIMITS = {"ac": 50.0, "dc": 120.0}


class Load(Model):
    """What the relay's contacts switch."""

    kind: Literal["resistive", "inductive", "motor", "lamp", "capacitive"] = Field(
        description="what the load is; it sets the default inrush multiple"
    )
    voltage: PositiveVolts = Field(description="load supply voltage (rms for AC)")
    supply: Literal["ac", "dc"] = Field(description='"ac" or "dc" (ripple-free)')
    current: PositiveAmps = Field(description="running (steady) load current")
    inrush_multiple: Multiple | None = Field(
        None, description="inrush as a multiple of the running current; default by kind (common practice)"
    )

    @property
    def inrush(self) -> float:
        return self.current * (self.inrush_multiple or INRUSH_MULTIPLES[self.kind])

    @property
    def above_elv(self) -> bool:
        return self.voltage > ELV_LIMITS[self.supply]


class Switching(Model):
    per_hour: Annotated[float, *_quantity("/h", positive=True)] | None = None


class Requirements(Model):
    max_release_time: Seconds | None = None


class Limits(Model):
    """Overrides of the derating profile; see app.engine.profile for the defaults."""

    voltage: Fraction | None = None
    current: Fraction | None = None
    power: Fraction | None = None
    tj: Celsius | None = None
    overdrive: Ratio | None = None
    pickup_margin: Annotated[float, *_quantity("", nonnegative=True, high=10.0)] | None = None
    cutoff: Fraction | None = None


class MonteCarlo(Model):
    """How the Monte Carlo yield draws each quantity the corners vary (app/engine/montecarlo.py)."""

    distributions: dict[str, Literal["normal", "uniform"]] = Field(
        default_factory=dict,
        description="per varied quantity (supply, ambient, r_coil, r_series, …): normal (about the "
        "middle, σ = tolerance/3, clipped) or uniform over its range; unnamed ones keep the default",
    )


class Design(Model):
    """One relay-driver design: a low-side switch (NPN, N-channel MOSFET or a Darlington array
    channel), coil, clamp, drive."""

    format: Literal["clampdown-design/1"] = Field(alias="format")
    name: str = Field(min_length=1, max_length=300)
    notes: str | None = Field(None, max_length=20000)
    supply: Supply
    ambient: Ambient
    drive: Drive
    base: Base | None = Field(
        None,
        description="the base resistor R_b and pull-down R_be (an NPN needs it; optional for a "
        "Darlington array channel, whose input resistor is built in; not for a MOSFET)",
    )
    gate: Base | None = Field(
        None, description='the gate resistor and pull-down of a MOSFET (only for switch.kind "nmos")'
    )
    switch: Switch = Field(description='the switch; without a "kind" it is an NPN transistor')
    coil: Coil
    clamp: Clamp
    load: Load | None = Field(
        None,
        description="what the relay's contacts switch, checked against coil.contacts; a load above "
        "extra-low voltage (50 V AC, 120 V ripple-free DC, IEC 60449 band I) carries the mains caution",
    )
    switching: Switching = Switching()
    requirements: Requirements = Requirements()
    limits: Limits = Limits()
    monte_carlo: MonteCarlo | None = Field(None, description="how the Monte Carlo yield draws each quantity")

    model_config = ConfigDict(extra="forbid", frozen=True, populate_by_name=True)

    @model_validator(mode="after")
    def _circuit(self) -> Design:
        from .switches import switch_kind

        kind = switch_kind(self.switch)
        other = "gate" if kind.resistors == "base" else "base"
        if getattr(self, other) is not None:
            raise _problem(
                f'{other}: a {kind.title} has no {other} resistors; give them as "{kind.resistors}"'
            )
        if kind.resistors_required and getattr(self, kind.resistors) is None:
            raise _problem(f"{kind.resistors}: is required for a {kind.title}")
        problems = kind.problems(self) + kind_of_clamp(self.clamp).problems(self)
        if problems:
            raise _problem("; ".join(problems))
        if self.monte_carlo is not None and self.monte_carlo.distributions:
            from .corners import factors, sampled_figures

            known = [f.name for f in factors(self) + sampled_figures(self)]
            unknown = sorted(set(self.monte_carlo.distributions) - set(known))
            if unknown:
                raise _problem(
                    f"monte_carlo.distributions: {', '.join(unknown)} is not a quantity this design "
                    f"varies; allowed: {', '.join(known)}"
                )
        return self

    @property
    def drive_resistors(self) -> Base | None:
        """The series resistor and pull-down at the switch's input (``base`` or ``gate``)."""
        return self.base if self.base is not None else self.gate


# ---------------------------------------------------------------- errors


class DesignError(ValueError):
    """A design file that cannot be evaluated; ``problems`` holds one line per problem."""

    def __init__(self, problems: list[str]):
        super().__init__("\n".join(problems))
        self.problems = problems


_TAGS = set(CLAMP_KINDS) | set(SWITCH_KINDS) | {"logic", "divider"}
_MISSING = object()


def _path(loc: tuple[Any, ...]) -> str:
    parts: list[str] = []
    for i, item in enumerate(loc):
        # Pydantic puts the union member's tag in the location; users never wrote it.
        if isinstance(item, str) and item in _TAGS and i > 0 and loc[i - 1] in ("clamp", "drive", "switch"):
            continue
        if isinstance(item, int):
            parts.append(f"[{item}]")
        else:
            parts.append(("." if parts else "") + str(item))
    return "".join(parts) or "(design)"


def _value_text(value: Any) -> str:
    if value is _MISSING:
        return ""
    import json

    try:
        text = json.dumps(value, ensure_ascii=False)
    except (TypeError, ValueError, RecursionError):
        text = "(nested too deep)" if isinstance(value, (dict, list)) else "(not shown)"
    return text if len(text) <= 60 else text[:57] + "…"


def _message(error: dict[str, Any]) -> str:
    kind = error["type"]
    ctx = error.get("ctx") or {}
    if kind == "missing":
        return "is required"
    if kind == "extra_forbidden":
        return "is not a field of this object (check the spelling)"
    if kind == "literal_error":
        return f"must be one of {ctx.get('expected', '')}"
    if kind == "union_tag_invalid":
        return f"kind must be one of {ctx.get('expected_tags', '')}"
    if kind == "union_tag_not_found":
        return 'needs a "kind": ' + str(ctx.get("discriminator", "kind"))
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return "must be an object"
    if kind in ("string_type",):
        return "must be a string"
    if kind == "string_too_short":
        return "must not be empty"
    if kind == "string_too_long":
        return f"is too long (at most {ctx.get('max_length')} characters)"
    return str(error["msg"]).removeprefix("Value error, ")


def problems_from(exc: ValidationError) -> list[str]:
    """One line per problem: the field path, the value given, and what is allowed."""
    lines = []
    for error in exc.errors(include_url=False):
        path = _path(tuple(error["loc"]))
        value = error.get("input", _MISSING) if error["type"] not in ("missing",) else _MISSING
        if error["type"] in ("model_type", "extra_forbidden", "literal_error") or not isinstance(
            value, (dict, list)
        ):
            shown = _value_text(value)
        else:
            shown = ""
        lines.append(f"{path}: {shown + ' ' if shown else ''}{_message(error)}")
    return lines


def parse_design(document: Any) -> Design:
    """Validate a decoded design file; raise DesignError listing every problem found."""
    if not isinstance(document, dict):
        raise DesignError(["(design): the design file must be a JSON object"])
    if document.get("format") != DESIGN_FORMAT:
        raise DesignError([f'format: {_value_text(document.get("format", None))} must be "{DESIGN_FORMAT}"'])
    try:
        return Design.model_validate(document)
    except ValidationError as exc:
        raise DesignError(problems_from(exc)) from None


def parse_part(model: type[Model], document: Any) -> Model:
    """Validate one library part with the same rules as inside a design file."""
    try:
        return model.model_validate(document)
    except ValidationError as exc:
        raise DesignError(problems_from(exc)) from None

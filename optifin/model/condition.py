"""The operating condition shared by every design of one evaluation."""

from __future__ import annotations

from dataclasses import dataclass, field

from optifin.errors import ModelError

COOLING_MODES = ("forced", "natural")
FIN_TIPS = ("adiabatic", "corrected")
CHANNEL_HEAT_TRANSFER = ("auto", "teertstra_1999", "developed_laminar")
SPREADING_METHODS = ("auto", "song_lee_au_1994", "muzychka_2003", "none")
LOSS_COEFFICIENTS = ("borda_carnot", "culham_muzychka_2001")
PIN_HEAT_TRANSFER = ("zukauskas_1972", "khan_2005")


@dataclass(frozen=True)
class HeatSource:
    """A rectangular, uniformly dissipating heat source on the base (SI units).

    ``size_x`` runs across the fins (along the sink width), ``size_y`` along the fins (the
    flow length). ``x`` and ``y`` place its centre from the corner of the base; ``None``
    centres it. ``interface_resistance`` [K/W] is the thermal interface material between the
    device and the base.
    """

    power: float
    size_x: float
    size_y: float
    x: float | None = None
    y: float | None = None
    interface_resistance: float = 0.0
    name: str = "source"

    def __post_init__(self):
        if not self.power >= 0:
            raise ModelError(f"heat source {self.name!r}: power must be >= 0, got {self.power}")
        if not (self.size_x > 0 and self.size_y > 0):
            raise ModelError(f"heat source {self.name!r}: footprint must be positive")
        if not self.interface_resistance >= 0:
            raise ModelError(f"heat source {self.name!r}: interface resistance must be >= 0")

    @property
    def centred(self) -> bool:
        return self.x is None and self.y is None


@dataclass(frozen=True)
class Condition:
    """Operating condition: heat load, ambient air, cooling mode, limits and model options.

    Forced convection is through a shrouded (ducted) sink unless clearances are given:
    give ``approach_velocity`` (the mean velocity over the fin frontal area W·H ahead of the
    sink), ``volumetric_flow`` (all of it passes through the fin channels), or a ``fan``
    (a :class:`optifin.physics.fan.FanCurve`, already combined for several fans) whose
    operating point on the sink's system curve sets the flow. The system curve adds an
    extra loss: ``extra_loss_coefficient`` K on the velocity in ``extra_loss_area`` (the
    sink's frontal area W·H when None), and/or ``extra_loss_pressure`` Δp_ref at
    ``extra_loss_flow`` (quadratic). ``side_clearance`` (each side) and ``top_clearance``
    open the sink to bypass flow (``inf`` for an open stream); the approach velocity then
    refers to the duct (W + 2 c_s)(H + c_t), or to the free stream when open.
    Natural convection assumes vertical fins on a vertical base, open at top and bottom,
    the flow length being the vertical fin length. Pin fins use ``pin_heat_transfer``.
    """

    sources: tuple[HeatSource, ...]
    ambient_temperature: float = 298.15
    pressure: float = 101325.0
    cooling: str = "forced"
    approach_velocity: float | None = None
    volumetric_flow: float | None = None
    radiation: bool | None = None
    surroundings_temperature: float | None = None
    max_base_temperature: float | None = None
    max_source_temperature: float | None = None
    quantity: int = 1000
    fin_tip: str | None = None
    channel_heat_transfer: str = "auto"
    spreading: str = "auto"
    loss_coefficients: str = "borda_carnot"
    fan: object | None = None
    extra_loss_coefficient: float = 0.0
    extra_loss_area: float | None = None
    extra_loss_pressure: float = 0.0
    extra_loss_flow: float | None = None
    side_clearance: float | None = None
    top_clearance: float | None = None
    pin_heat_transfer: str = "zukauskas_1972"
    notes: tuple[str, ...] = field(default_factory=tuple)

    def __post_init__(self):
        if isinstance(self.sources, HeatSource):
            object.__setattr__(self, "sources", (self.sources,))
        else:
            object.__setattr__(self, "sources", tuple(self.sources))
        if not self.sources:
            raise ModelError("a condition needs at least one heat source")
        _choice("cooling", self.cooling, COOLING_MODES)
        _choice("channel_heat_transfer", self.channel_heat_transfer, CHANNEL_HEAT_TRANSFER)
        _choice("spreading", self.spreading, SPREADING_METHODS)
        _choice("loss_coefficients", self.loss_coefficients, LOSS_COEFFICIENTS)
        if self.fin_tip is not None:
            _choice("fin_tip", self.fin_tip, FIN_TIPS)
        _choice("pin_heat_transfer", self.pin_heat_transfer, PIN_HEAT_TRANSFER)
        for name in ("side_clearance", "top_clearance", "extra_loss_coefficient"):
            value = getattr(self, name)
            if value is not None and not value >= 0:
                raise ModelError(f"{name} must be >= 0, got {value}")
        if self.extra_loss_pressure and not (self.extra_loss_flow or 0) > 0:
            raise ModelError("extra_loss_pressure needs a positive extra_loss_flow")
        if self.cooling == "forced" and self.fan is not None:
            if self.approach_velocity is not None or self.volumetric_flow is not None:
                raise ModelError("with a fan the flow is the operating point: give no flow")
            if self.bypassed:
                raise ModelError(
                    "a fan drives a ducted (shrouded) sink: clearances and a fan do not combine"
                )
        elif self.cooling == "forced":
            given = (self.approach_velocity is not None) + (self.volumetric_flow is not None)
            if given != 1:
                raise ModelError(
                    "forced cooling needs exactly one of approach_velocity or volumetric_flow"
                )
            if self.bypassed and self.approach_velocity is None:
                raise ModelError("an open (bypassed) sink needs the approach_velocity")
            flow = (
                self.approach_velocity
                if self.approach_velocity is not None
                else (self.volumetric_flow)
            )
            if not flow > 0:
                raise ModelError(f"forced cooling needs a positive air flow, got {flow}")
        if not 150.0 < self.ambient_temperature < 500.0:
            raise ModelError(f"ambient temperature {self.ambient_temperature} K is implausible")
        for name in ("max_base_temperature", "max_source_temperature"):
            limit = getattr(self, name)
            if limit is not None and not limit > self.ambient_temperature:
                raise ModelError(f"{name} must exceed the ambient temperature")
        if self.quantity < 1:
            raise ModelError("quantity must be at least 1")

    @property
    def bypassed(self) -> bool:
        """True when clearances let part of the approach flow go around the fins."""
        return bool(self.side_clearance or self.top_clearance)

    @property
    def total_power(self) -> float:
        return float(sum(s.power for s in self.sources))

    @property
    def radiation_on(self) -> bool:
        """Radiation is on by default in natural convection, off in forced."""
        return self.cooling == "natural" if self.radiation is None else bool(self.radiation)

    @property
    def tip(self) -> str:
        """Fin-tip condition: fins touch the shroud in forced flow, tips are open in natural."""
        if self.fin_tip is not None:
            return self.fin_tip
        return "adiabatic" if self.cooling == "forced" else "corrected"

    @property
    def t_surroundings(self) -> float:
        return (
            self.ambient_temperature
            if self.surroundings_temperature is None
            else self.surroundings_temperature
        )

    @property
    def has_limit(self) -> bool:
        return self.max_base_temperature is not None or self.max_source_temperature is not None


def _choice(name: str, value: str, options: tuple[str, ...]) -> None:
    if value not in options:
        import difflib

        near = difflib.get_close_matches(str(value), options, n=1)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        raise ModelError(f"{name}: {value!r} is not one of {', '.join(options)}{hint}")

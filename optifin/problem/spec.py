"""The resolved problem: frozen dataclasses that the loader builds and the search reads.

Everything here is SI and already validated; nothing refers back to the YAML text except the
``source`` path and the YAML paths kept for messages.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from optifin.library import Library
from optifin.model.condition import Condition

#: Design variables a problem can search or fix, with their kinds.
VARIABLE_KINDS: dict[str, str] = {
    "fin_count": "integer",
    "fin_thickness": "length",
    "fin_height": "length",
    "base_thickness": "length",
    "width": "length",
    "length": "length",
    "material": "choice",
    "process": "choice",
    "finish": "choice",
    "fin_type": "choice",
    "fin_taper": "ratio",
    "pin_diameter": "length",
    "pin_pitch_transverse": "length",
    "pin_pitch_longitudinal": "length",
    "pin_layout": "choice",
}
#: Variables that only plate-fin or only pin-fin designs use.
PLATE_VARIABLES = ("fin_count", "fin_thickness")
PIN_VARIABLES = ("pin_diameter", "pin_pitch_transverse", "pin_pitch_longitudinal")

#: Objectives: model array key and the default sense.
OBJECTIVES: dict[str, tuple[str, str]] = {
    "heat_rate": ("heat_rate", "maximise"),
    "thermal_resistance": ("thermal_resistance", "minimise"),
    "base_temperature": ("base_temperature", "minimise"),
    "mass": ("mass", "minimise"),
    "pressure_drop": ("pressure_drop", "minimise"),
    "fan_power": ("fan_power", "minimise"),
    "material_cost": ("material_cost", "minimise"),
    "total_cost": ("total_cost", "minimise"),
    "volume": ("volume", "minimise"),
    "volumetric_flow": ("volumetric_flow", "maximise"),
    "entropy_generation_rate": ("entropy_generation_rate", "minimise"),
}

#: Upper-limit constraints: problem key -> (model array key, quantity kind).
LIMITS: dict[str, tuple[str, str]] = {
    "max_base_temperature": ("base_temperature", "temperature"),
    "max_source_temperature": ("source_temperature", "temperature"),
    "max_pressure_drop": ("pressure_drop", "pressure"),
    "max_fan_power": ("fan_power", "power"),
    "max_mass": ("mass", "mass"),
    "max_cost": ("total_cost", "dimensionless"),
    "max_material_cost": ("material_cost", "dimensionless"),
}
#: Lower-limit constraints: problem key -> (model array key, quantity kind).
LOWER_LIMITS: dict[str, tuple[str, str]] = {
    "min_volumetric_flow": ("volumetric_flow", "volumetric_flow"),
}


@dataclass(frozen=True)
class Variable:
    """One design variable: fixed (``value``), a stepped or continuous range, or choices.

    For ``integer``, ``length`` and ``ratio`` kinds: ``low``/``high`` in SI (``step``
    optional, SI; an integer always steps by 1). For ``choice``: ``choices`` are keys (of
    the library, or fin types and pin layouts). A fixed variable has ``low == high``
    (numbers) or one choice.
    """

    name: str
    kind: str
    low: float | None = None
    high: float | None = None
    step: float | None = None
    choices: tuple[str, ...] = ()

    @property
    def fixed(self) -> bool:
        if self.kind == "choice":
            return len(self.choices) == 1
        return self.low == self.high

    @property
    def discrete(self) -> bool:
        """True when the variable takes finitely many values (for the exact grid)."""
        return self.kind in ("integer", "choice") or self.fixed or self.step is not None

    def grid(self) -> np.ndarray:
        """All values of a discrete variable (codes for choices are positions in choices)."""
        if self.kind == "choice":
            return np.arange(len(self.choices))
        if self.fixed:
            return np.array([self.low])
        step = 1.0 if self.kind == "integer" else self.step
        if step is None:
            raise ValueError(f"{self.name} is continuous")
        count = int(np.floor((self.high - self.low) / step + 1e-9)) + 1
        return self.low + step * np.arange(count)


#: Defaults of the optional variables: plate fins, untapered, in-line pins (pin lengths
#: are stand-ins that plate-fin designs never use).
OPTIONAL_DEFAULTS: dict[str, Variable] = {
    "fin_type": Variable("fin_type", "choice", choices=("plate",)),
    "fin_taper": Variable("fin_taper", "ratio", 1.0, 1.0),
    "pin_diameter": Variable("pin_diameter", "length", 1e-3, 1e-3),
    "pin_pitch_transverse": Variable("pin_pitch_transverse", "length", 3e-3, 3e-3),
    "pin_pitch_longitudinal": Variable("pin_pitch_longitudinal", "length", 3e-3, 3e-3),
    "pin_layout": Variable("pin_layout", "choice", choices=("inline",)),
}


@dataclass(frozen=True)
class Objective:
    name: str  #: a key of OBJECTIVES
    sense: str  #: "minimise" or "maximise"

    @property
    def key(self) -> str:
        return OBJECTIVES[self.name][0]


@dataclass(frozen=True)
class Envelope:
    """Largest sink allowed [m]; None where the problem sets no bound."""

    max_width: float | None = None
    max_length: float | None = None
    max_height: float | None = None  #: base plus fins


@dataclass(frozen=True)
class SearchSettings:
    algorithm: str = "auto"  #: "auto", "nsga2", "nsga3" or "exact"
    population: int = 100
    evaluations: int = 20000
    seed: int = 1
    exact_limit: int = 2_000_000  #: "auto" enumerates grids up to this many designs


@dataclass(frozen=True)
class CatalogChoice:
    """Stock profiles of a catalog: screened, and optionally offered to the search."""

    path: str | None  #: catalog CSV; None for the bundled (invented) demo catalog
    cut_lengths: tuple[float, ...]  #: cut lengths to rate [m] (empty: the default grid)
    orientations: tuple[str, ...] = ("along", "across")
    in_search: bool = False  #: profiles x cut lengths join the search as one gene


@dataclass(frozen=True)
class MaterialOption:
    """One construction of a material trade-off study (SI; keys of the library)."""

    name: str
    material: str  #: the fins' material (and the base's, unless base_material is given)
    processes: tuple[str, ...] = ()  #: processes to search (empty: the problem's)
    base_material: str | None = None
    insert_material: str | None = None
    insert_thickness: float | None = None
    insert_width: float | None = None
    insert_length: float | None = None

    def construction(self) -> dict:
        """The fixed design columns of this option (base material, insert), as keys/SI."""
        out: dict = {}
        if self.base_material is not None:
            out["base_material"] = self.base_material
        if self.insert_material is not None:
            out.update(
                insert_material=self.insert_material,
                insert_thickness=self.insert_thickness,
                insert_width=self.insert_width,
                insert_length=self.insert_length,
            )
        return out


@dataclass(frozen=True)
class PriceSweep:
    """A sweep of one material's price per kg, for the study's flip point."""

    material: str
    low: float  #: [currency/kg]
    high: float
    steps: int = 41


@dataclass(frozen=True)
class Problem:
    """A validated optimisation problem."""

    name: str
    source: str
    description: str
    condition: Condition
    variables: tuple[Variable, ...]
    objectives: tuple[Objective, ...]
    limits: dict[str, float]  #: keys of LIMITS -> SI limit
    envelope: Envelope
    search: SearchSettings
    library: Library
    resolved: dict = field(default_factory=dict, repr=False)  #: canonical SI form, for hashing
    catalog: CatalogChoice | None = None
    study: tuple[MaterialOption, ...] = ()
    price_sweep: PriceSweep | None = None
    study_target: float | None = None  #: target thermal resistance of the study [K/W]
    #: design columns fixed for every design (base_material, insert_*): keys and SI values
    construction: dict = field(default_factory=dict)

    def variable(self, name: str) -> Variable:
        """The variable ``name``; optional variables a problem leaves out get their default."""
        for v in self.variables:
            if v.name == name:
                return v
        if name in OPTIONAL_DEFAULTS:
            return OPTIONAL_DEFAULTS[name]
        raise KeyError(name)

    @property
    def searched(self) -> tuple[Variable, ...]:
        return tuple(v for v in self.variables if not v.fixed)

"""Design tables: N heat sinks (plate or pin fins) as columns of numpy arrays (SI, codes)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from optifin.errors import ModelError
from optifin.library import Library

#: Real-valued geometry columns [m] and the suffix-free names the API accepts.
GEOMETRY = ("fin_thickness", "fin_height", "base_thickness", "width", "length")
CATEGORIES = ("material", "process", "finish")
COLUMNS = ("fin_count", *GEOMETRY, *CATEGORIES)
#: Fin types and pin layouts, by code.
FIN_TYPES = ("plate", "pin")
PIN_LAYOUTS = ("inline", "staggered")
#: Optional geometry columns [m]; NaN where they do not apply (``fin_tip_thickness``
#: defaults to ``fin_thickness``: an untapered fin).
OPTIONAL_GEOMETRY = (
    "fin_tip_thickness",
    "pin_diameter",
    "pin_pitch_transverse",
    "pin_pitch_longitudinal",
    "insert_thickness",
    "insert_width",
    "insert_length",
)
#: Optional code columns: fin type, pin layout, base and insert material (-1: none / same).
OPTIONAL_CODES = ("fin_type", "pin_layout", "base_material", "insert_material")
OPTIONAL = (*OPTIONAL_GEOMETRY, *OPTIONAL_CODES)
ALL_COLUMNS = (*COLUMNS, *OPTIONAL)


@dataclass(frozen=True)
class Designs:
    """N designs as equal-length arrays.

    Geometry in metres: ``width`` across the fins, ``length`` along them (the flow length,
    or the vertical fin length in natural convection). ``material``, ``process`` and
    ``finish`` are integer codes into the library's keys; ``material`` is the fins'
    material, and the base's unless ``base_material`` says otherwise.

    Optional columns (defaults in brackets): ``fin_type`` 0 plate, 1 pin [0];
    ``fin_tip_thickness`` for tapered plate fins [fin_thickness]; for pins
    ``pin_diameter``, ``pin_pitch_transverse`` (across the width), ``pin_pitch_longitudinal``
    (along the flow) and ``pin_layout`` 0 in-line, 1 staggered [NaN, 0]; for pins
    ``fin_count`` is ignored (the pitches set the pin count). ``base_material`` [-1: the
    fins' material]; a spreader insert flush with the top of the base under the sources:
    ``insert_material`` [-1: none], ``insert_thickness``, ``insert_width``, ``insert_length``
    (centred on the base).
    """

    fin_count: np.ndarray
    fin_thickness: np.ndarray
    fin_height: np.ndarray
    base_thickness: np.ndarray
    width: np.ndarray
    length: np.ndarray
    material: np.ndarray
    process: np.ndarray
    finish: np.ndarray
    fin_tip_thickness: np.ndarray | None = None
    pin_diameter: np.ndarray | None = None
    pin_pitch_transverse: np.ndarray | None = None
    pin_pitch_longitudinal: np.ndarray | None = None
    insert_thickness: np.ndarray | None = None
    insert_width: np.ndarray | None = None
    insert_length: np.ndarray | None = None
    fin_type: np.ndarray | None = None
    pin_layout: np.ndarray | None = None
    base_material: np.ndarray | None = None
    insert_material: np.ndarray | None = None
    #: which optional features the designs use, computed once (a subset inherits "none")
    _uses: dict = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        n = self.fin_count.shape
        for name in OPTIONAL:
            if getattr(self, name) is None:
                if name == "fin_tip_thickness":
                    self._uses["taper"] = False
                elif name in ("fin_type", "insert_material", "base_material"):
                    self._uses[name] = False
                if name == "fin_tip_thickness":
                    value = self.fin_thickness
                elif name == "insert_thickness":
                    value = np.broadcast_to(0.0, n)  # read-only, no memory per design
                elif name in OPTIONAL_GEOMETRY:
                    value = np.broadcast_to(np.nan, n)
                else:
                    value = np.broadcast_to(np.int64(-1 if name.endswith("material") else 0), n)
                object.__setattr__(self, name, value)

    def __len__(self) -> int:
        return int(self.fin_count.shape[0])

    def take(self, index) -> Designs:
        columns = {c: getattr(self, c)[index] for c in ALL_COLUMNS}
        if not self._use("taper"):  # keep "untapered" visible as the same array
            columns["fin_tip_thickness"] = columns["fin_thickness"]
        uses = {k: v for k, v in self._uses.items() if v is False}  # none in all: none in part
        return Designs(**columns, _uses=uses)

    def _use(self, feature: str) -> bool:
        if feature not in self._uses:
            if feature == "taper":
                used = self.fin_tip_thickness is not self.fin_thickness and bool(
                    np.any(self.fin_tip_thickness != self.fin_thickness)
                )
            elif feature == "fin_type":
                used = bool(np.any(self.fin_type == 1))
            else:
                used = bool(np.any(getattr(self, feature) >= 0))
            self._uses[feature] = used
        return self._uses[feature]

    @property
    def base_material_code(self) -> np.ndarray:
        """The base's material code (the fins' material where ``base_material`` is -1)."""
        if not self.has_base_material:
            return self.material
        return np.where(self.base_material < 0, self.material, self.base_material)

    @property
    def has_pins(self) -> bool:
        return self._use("fin_type")

    @property
    def has_inserts(self) -> bool:
        return self._use("insert_material")

    @property
    def has_base_material(self) -> bool:
        """True when some base is of another material than its fins (given explicitly)."""
        return self._use("base_material")

    @property
    def is_tapered(self) -> bool:
        return self._use("taper")

    @property
    def is_plain(self) -> bool:
        """True when every design is an untapered one-material plate-fin sink."""
        return not (self.has_pins or self.has_inserts or self.has_base_material or self.is_tapered)

    @classmethod
    def from_columns(cls, columns: Mapping, library: Library) -> Designs:
        """Build from a mapping (dict or DataFrame) of columns; scalars broadcast.

        Geometry may be given in metres under the plain names (``fin_thickness``) or in
        millimetres under the names of the result tables (``fin_thickness_mm``).
        Categories may be keys (``"al_6063_t5"``) or integer codes; ``finish`` defaults to
        ``"bare"``. Optional columns (see the class) likewise; ``fin_taper`` (tip over root
        thickness) may stand for ``fin_tip_thickness``.
        """
        get = {}
        for name in GEOMETRY:
            if name in columns:
                get[name] = np.asarray(columns[name], dtype=float)
            elif f"{name}_mm" in columns:
                get[name] = np.asarray(columns[f"{name}_mm"], dtype=float) * 1e-3
            else:
                raise ModelError(f"designs: missing column {name!r} (or {name}_mm)")
        if "fin_count" not in columns:
            raise ModelError("designs: missing column 'fin_count'")
        count = np.asarray(columns["fin_count"])
        if not np.all(np.isfinite(count.astype(float))) or np.any(np.asarray(count) % 1 != 0):
            raise ModelError("designs: fin_count must be whole numbers")
        get["fin_count"] = count.astype(np.int64)
        coders = {
            "material": (library.material_keys, library.material_code),
            "process": (library.process_keys, library.process_code),
            "finish": (library.finishes, library.finish_code),
        }
        for name, (keys, coder) in coders.items():
            value = columns.get(name, "bare" if name == "finish" else None)
            if value is None:
                raise ModelError(f"designs: missing column {name!r}")
            get[name] = _codes(value, keys, coder, name)
        for name in OPTIONAL_GEOMETRY:
            if name in columns:
                get[name] = np.asarray(columns[name], dtype=float)
            elif f"{name}_mm" in columns:
                get[name] = np.asarray(columns[f"{name}_mm"], dtype=float) * 1e-3
        if "fin_tip_thickness" not in get and "fin_taper" in columns:  # tip over root
            get["fin_tip_thickness"] = get["fin_thickness"] * np.asarray(
                columns["fin_taper"], dtype=float
            )
        if "fin_tip_thickness" in get:  # a missing tip thickness (NaN) means untapered
            get["fin_tip_thickness"] = np.where(
                np.isnan(get["fin_tip_thickness"]), get["fin_thickness"], get["fin_tip_thickness"]
            )
        named = {
            "fin_type": (FIN_TYPES, _index_coder(FIN_TYPES, "fin_type")),
            "pin_layout": (PIN_LAYOUTS, _index_coder(PIN_LAYOUTS, "pin_layout")),
        }
        for name, (keys, coder) in named.items():
            if name in columns:
                get[name] = _codes(columns[name], keys, coder, name)
        for name in ("base_material", "insert_material"):
            value = columns.get(name)
            if value is None:
                continue
            arr = np.asarray(value, dtype=object)
            blank = np.array(
                [
                    v is None or v == "" or v == -1 or (isinstance(v, float) and np.isnan(v))
                    for v in arr.ravel()
                ]
            ).reshape(arr.shape)
            filled = np.where(blank, library.material_keys[0], arr)
            codes = _codes(filled, library.material_keys, library.material_code, name)
            get[name] = np.where(blank, -1, codes)
        n = max(np.size(v) for v in get.values())
        try:
            arrays = {k: np.broadcast_to(np.asarray(v), (n,)).copy() for k, v in get.items()}
        except ValueError:
            raise ModelError("designs: columns have different lengths") from None
        return cls(**arrays)


def _index_coder(keys: tuple[str, ...], name: str):
    def coder(key: str) -> int:
        if key not in keys:
            raise ModelError(f"designs: {name} {key!r} is not one of {', '.join(keys)}")
        return keys.index(key)

    return coder


def _codes(value, keys, coder, name) -> np.ndarray:
    arr = np.asarray(value)
    if arr.dtype.kind in "iu":
        if arr.size and (arr.min() < 0 or arr.max() >= len(keys)):
            raise ModelError(f"designs: {name} code out of range 0..{len(keys) - 1}")
        return arr.astype(np.int64)
    if arr.dtype.kind == "f":
        if np.any(arr % 1 != 0):
            raise ModelError(f"designs: {name} codes must be whole numbers")
        return _codes(arr.astype(np.int64), keys, coder, name)
    flat = np.asarray(arr, dtype=object).ravel()
    uniques, inverse = np.unique(flat.astype(str), return_inverse=True)
    lookup = np.array([coder(u) for u in uniques], dtype=np.int64)
    return lookup[inverse].reshape(arr.shape)

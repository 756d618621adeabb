"""The material and process library: cited data files read into SI, with overrides.

The bundled files are ``optifin/data/materials.yaml`` and ``optifin/data/processes.yaml``.
Every number there is ``{value, unit, source}``; this module converts it to SI, checks it and
offers the whole library as arrays indexed by integer codes, so the model can look values
up for a million designs with one ``np.take``.
"""

from __future__ import annotations

import difflib
import functools
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import resources
from typing import Any

import numpy as np
import yaml

from optifin.errors import DataError, UnitError
from optifin.units import to_si

CURRENCIES = ("USD", "EUR", "GBP", "CNY", "JPY")
FIN_TYPES = ("plate", "pin")  #: the fin types a process may make (``fin_types``)

#: Fields of a material: kind of quantity for unit conversion.
MATERIAL_FIELDS: dict[str, str] = {
    "conductivity": "thermal_conductivity",
    "density": "density",
    "specific_heat": "specific_heat",
    "price": "price_per_mass",
}
#: Fields of a process and their quantity kinds; ``cost`` holds the cost terms.
PROCESS_FIELDS: dict[str, str] = {
    "min_fin_thickness": "length",
    "min_gap": "length",
    "max_aspect_ratio": "dimensionless",
    "min_base_thickness": "length",
    "max_fin_height": "length",
    "max_width": "length",
    "joint_resistance": "area_thermal_resistance",
    "groove_depth": "length",
    "material_yield": "dimensionless",
}
COST_FIELDS: dict[str, str] = {
    "setup": "dimensionless",
    "per_part": "dimensionless",
    "per_kg": "price_per_mass",
    "per_fin": "dimensionless",
    "per_volume_removed": "price_per_volume",
}
OPTIONAL_PROCESS_FIELDS = {"joint_resistance", "groove_depth", "max_fin_height", "max_width"}
SOURCE_KINDS = ("handbook", "practice", "memory", "indicative", "user")


@dataclass(frozen=True)
class Value:
    """One cited number: SI value, the unit it was given in and its source key."""

    si: float
    text: str
    source: str


@dataclass(frozen=True)
class Material:
    key: str
    name: str
    family: str
    conductivity: Value
    density: Value
    specific_heat: Value
    price: Value
    emissivity: Mapping[str, Value]
    processes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Process:
    key: str
    name: str
    materials: tuple[str, ...]
    monolithic: bool
    stock: str
    limits: Mapping[str, Value]
    cost: Mapping[str, Value]
    fin_types: tuple[str, ...] = ("plate",)

    def limit(self, name: str, default: float = np.nan) -> float:
        v = self.limits.get(name)
        return v.si if v is not None else default

    def cost_term(self, name: str) -> float:
        v = self.cost.get(name)
        return v.si if v is not None else 0.0


@dataclass(frozen=True)
class Library:
    """Materials and processes with their sources, plus array views for the model."""

    materials: Mapping[str, Material]
    processes: Mapping[str, Process]
    sources: Mapping[str, Mapping[str, str]]
    currency: str = "USD"
    _arrays: dict[str, np.ndarray] = field(default_factory=dict, repr=False, compare=False)

    # -- names and codes -------------------------------------------------------------------
    @property
    def material_keys(self) -> tuple[str, ...]:
        return tuple(self.materials)

    @property
    def process_keys(self) -> tuple[str, ...]:
        return tuple(self.processes)

    @property
    def finishes(self) -> tuple[str, ...]:
        seen: dict[str, None] = {}
        for m in self.materials.values():
            for f in m.emissivity:
                seen.setdefault(f, None)
        return tuple(seen)

    def material_code(self, key: str) -> int:
        return _code(key, self.material_keys, "material")

    def process_code(self, key: str) -> int:
        return _code(key, self.process_keys, "process")

    def finish_code(self, key: str) -> int:
        return _code(key, self.finishes, "finish")

    # -- arrays for vectorised look-up ----------------------------------------------------
    def array(self, name: str) -> np.ndarray:
        """A read-only array of one property over all codes.

        Material properties (``conductivity``, ``density``, ``specific_heat``, ``price``) are
        indexed by material code; ``emissivity`` is (material, finish) with NaN where a
        finish is not offered; process limits and cost terms (``min_gap``, ``cost_per_kg``,
        ...) by process code; ``allowed`` is (process, material) boolean; ``stock_block``
        , ``monolithic``, ``makes_plates`` and ``makes_pins`` by process code.
        """
        if name not in self._arrays:
            self._arrays[name] = self._build(name)
        return self._arrays[name]

    def _build(self, name: str) -> np.ndarray:
        mats, procs = list(self.materials.values()), list(self.processes.values())
        if name in MATERIAL_FIELDS:
            out = np.array([getattr(m, name).si for m in mats])
        elif name == "emissivity":
            out = np.full((len(mats), len(self.finishes)), np.nan)
            for i, m in enumerate(mats):
                for j, f in enumerate(self.finishes):
                    if f in m.emissivity:
                        out[i, j] = m.emissivity[f].si
        elif name == "allowed":
            out = np.array([[m.key in p.materials for m in mats] for p in procs], dtype=bool)
        elif name == "stock_block":
            out = np.array([p.stock == "block" for p in procs], dtype=bool)
        elif name == "monolithic":
            out = np.array([p.monolithic for p in procs], dtype=bool)
        elif name == "allowed_plates":  # (process, material): forms it, and makes plates
            plates = np.array(["plate" in p.fin_types for p in procs], dtype=bool)
            out = self.array("allowed") & plates[:, None]
        elif name == "makes_plates":
            out = np.array(["plate" in p.fin_types for p in procs], dtype=bool)
        elif name == "makes_pins":
            out = np.array(["pin" in p.fin_types for p in procs], dtype=bool)
        elif name.startswith("cost_") and name[5:] in COST_FIELDS:
            out = np.array([p.cost_term(name[5:]) for p in procs])
        elif name in PROCESS_FIELDS:
            default = 0.0 if name in ("joint_resistance", "groove_depth") else np.inf
            out = np.array([p.limit(name, default) for p in procs])
        else:
            raise KeyError(f"no library array {name!r}")
        out.setflags(write=False)
        return out

    def source_citation(self, key: str) -> str:
        entry = self.sources.get(key, {})
        return entry.get("citation", key)


def _code(key: str, keys: tuple[str, ...], what: str) -> int:
    try:
        return keys.index(key)
    except ValueError:
        near = difflib.get_close_matches(str(key), keys, n=1)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        raise DataError(f"unknown {what} {key!r}{hint} (known: {', '.join(keys)})") from None


# -- reading ---------------------------------------------------------------------------------
def _read_text(name: str) -> str:
    return resources.files("optifin.data").joinpath(name).read_text(encoding="utf-8")


def _value(entry: Any, kind: str, path: str, sources: Mapping, currency: str) -> Value:
    if not isinstance(entry, Mapping) or "value" not in entry or "unit" not in entry:
        raise DataError(f"{path}: expected {{value, unit, source}}, found {entry!r}")
    unknown = set(entry) - {"value", "unit", "source", "note"}
    if unknown:
        raise DataError(f"{path}: unknown keys {sorted(unknown)}")
    source = entry.get("source")
    if not source:
        raise DataError(f"{path}: every value needs a source key")
    if source not in sources:
        raise DataError(f"{path}: source {source!r} is not listed under `sources`")
    value, unit = entry["value"], str(entry["unit"])
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise DataError(f"{path}: value must be a number, found {value!r}")
    for token in re.findall(r"[A-Z]{3}", unit):
        if token in CURRENCIES and token != currency:
            raise DataError(f"{path}: money must be in {currency}, found {unit!r}")
    unit_text = unit.replace(currency, "").strip() or "1"
    unit_text = re.sub(r"^/", "1/", unit_text)
    try:
        si = to_si(f"{value} {unit_text}", kind, path)
    except UnitError as exc:
        raise DataError(str(exc)) from None
    if not si > 0:
        raise DataError(f"{path}: must be positive, found {value} {unit}")
    return Value(si=si, text=f"{value} {unit}", source=str(source))


def parse_library(materials_doc: Mapping, processes_doc: Mapping) -> Library:
    """Build a :class:`Library` from the two parsed YAML documents, checking every entry."""
    currency = "USD"
    sources = {**materials_doc.get("sources", {}), **processes_doc.get("sources", {})}
    for key, src in sources.items():
        if src.get("kind") not in SOURCE_KINDS or not src.get("citation"):
            raise DataError(f"sources.{key}: needs a kind in {SOURCE_KINDS} and a citation")

    materials: dict[str, Material] = {}
    known_material = {*MATERIAL_FIELDS, "name", "family", "emissivity"}
    known_process = {
        *PROCESS_FIELDS,
        *("name", "materials", "monolithic", "stock", "cost", "fin_types"),
    }
    for key, m in (materials_doc.get("materials") or {}).items():
        path = f"materials.{key}"
        for name in m:
            _known(name, known_material, path)
        values = {
            f: _value(m.get(f), kind, f"{path}.{f}", sources, currency)
            for f, kind in MATERIAL_FIELDS.items()
        }
        emis = {
            fin: _value(v, "dimensionless", f"{path}.emissivity.{fin}", sources, currency)
            for fin, v in (m.get("emissivity") or {}).items()
        }
        if not emis:
            raise DataError(f"{path}.emissivity: at least one finish is needed")
        for fin, v in emis.items():
            if v.si > 1:
                raise DataError(f"{path}.emissivity.{fin}: must lie in (0, 1], found {v.si}")
        materials[key] = Material(
            key=key,
            name=str(m.get("name", key)),
            family=str(m.get("family", "")),
            emissivity=emis,
            **values,
        )

    processes: dict[str, Process] = {}
    for key, p in (processes_doc.get("processes") or {}).items():
        path = f"processes.{key}"
        for name in p:
            _known(name, known_process, path)
        limits = {}
        for f, kind in PROCESS_FIELDS.items():
            if f in p:
                limits[f] = _value(p[f], kind, f"{path}.{f}", sources, currency)
            elif f not in OPTIONAL_PROCESS_FIELDS:
                raise DataError(f"{path}.{f}: missing")
        cost = {
            f: _value(v, COST_FIELDS[f], f"{path}.cost.{f}", sources, currency)
            for f, v in (p.get("cost") or {}).items()
            if _known(f, COST_FIELDS, f"{path}.cost")
        }
        allowed = tuple(p.get("materials") or ())
        for mat in allowed:
            if mat not in materials:
                _code(mat, tuple(materials), f"material in {path}.materials")
        if not p.get("monolithic", True) and "joint_resistance" not in limits:
            raise DataError(f"{path}: a process that joins fins needs joint_resistance")
        stock = p.get("stock", "net")
        if stock not in ("net", "block"):
            raise DataError(f"{path}.stock: expected 'net' or 'block', found {stock!r}")
        fin_types = tuple(p.get("fin_types") or ("plate",))
        for ft in fin_types:
            if ft not in FIN_TYPES:
                raise DataError(f"{path}.fin_types: expected some of {FIN_TYPES}, found {ft!r}")
        processes[key] = Process(
            key=key,
            fin_types=fin_types,
            name=str(p.get("name", key)),
            materials=allowed,
            monolithic=bool(p.get("monolithic", True)),
            stock=stock,
            limits=limits,
            cost=cost,
        )

    # the processes that can form each material, derived from the process files
    materials = {
        k: _replace(m, processes=tuple(pk for pk, p in processes.items() if k in p.materials))
        for k, m in materials.items()
    }
    return Library(materials=materials, processes=processes, sources=sources, currency=currency)


def _known(name: str, fields: Mapping, path: str) -> bool:
    if name not in fields:
        near = difflib.get_close_matches(name, fields, n=1)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        raise DataError(f"{path}.{name}: unknown field{hint}")
    return True


def _replace(obj, **changes):
    import dataclasses

    return dataclasses.replace(obj, **changes)


@functools.cache
def _bundled_text() -> tuple[str, str]:
    return _read_text("materials.yaml"), _read_text("processes.yaml")


def bundled_documents() -> tuple[dict, dict]:
    """The parsed bundled materials and processes YAML documents (fresh copies)."""
    mats, procs = _bundled_text()
    return yaml.safe_load(mats), yaml.safe_load(procs)


@functools.cache
def _bundled_library() -> Library:
    return parse_library(*bundled_documents())


def load_library(
    material_overrides: Mapping[str, Mapping[str, Any]] | None = None,
    process_overrides: Mapping[str, Mapping[str, Any]] | None = None,
) -> Library:
    """The bundled library, with optional overrides from a problem file.

    An override maps a material (or process) key to fields and quantity strings, e.g.
    ``{"cu_c11000": {"price": "13 USD/kg"}}``; overridden values get the source ``user``.
    A key not in the library defines a new entry, which must then give every field.
    """
    if not material_overrides and not process_overrides:
        return _bundled_library()  # immutable, so one instance serves every caller
    mats, procs = bundled_documents()
    mats = _apply_overrides(mats, "materials", material_overrides)
    procs = _apply_overrides(procs, "processes", process_overrides)
    return parse_library(mats, procs)


def _apply_overrides(doc: dict, section: str, overrides) -> dict:
    if not overrides:
        return doc
    import copy

    doc = copy.deepcopy(doc)
    doc.setdefault("sources", {})["user"] = {
        "kind": "user",
        "citation": "value given in the problem file",
    }
    entries = doc[section]
    for key, fields in overrides.items():
        target = entries.setdefault(key, {})
        for name, value in fields.items():
            _set_override(target, name, value, f"{section}.{key}.{name}")
    return doc


def _set_override(target: dict, name: str, value: Any, path: str) -> None:
    if isinstance(value, Mapping) and name in ("emissivity", "cost"):
        sub = target.setdefault(name, {})
        for k, v in value.items():
            _set_override(sub, k, v, f"{path}.{k}")
        return
    if name in ("name", "family", "materials", "monolithic", "stock", "fin_types"):
        target[name] = value
        return
    if isinstance(value, bool) or not isinstance(value, str | int | float):
        raise DataError(f"{path}: expected a quantity string such as '13 USD/kg', found {value!r}")
    text = str(value).strip()
    match = re.match(r"^([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)$", text)
    if not match:
        raise DataError(f"{path}: cannot read {value!r} as a number with a unit")
    target[name] = {"value": float(match.group(1)), "unit": match.group(2) or "1", "source": "user"}

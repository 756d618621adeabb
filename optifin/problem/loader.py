"""Read a problem file, validate all of it at once and resolve it into a :class:`Problem`.

Validation happens once, before any work: the field-by-field checks come from the format
tree in :mod:`optifin.problem.format`, the checks across fields are here. Every finding is
collected and one :class:`~optifin.errors.ConfigError` lists them all, each naming its YAML
path, what was expected and what was found. Nothing that a file can contain raises anything
else.
"""

from __future__ import annotations

import functools
import hashlib
import json
import math
import re
from collections.abc import Mapping
from dataclasses import asdict
from pathlib import Path
from typing import Any

import numpy as np
import yaml

from optifin.errors import ConfigError, DataError, ModelError, UnitError
from optifin.library import (
    MATERIAL_FIELDS,
    OPTIONAL_PROCESS_FIELDS,
    PROCESS_FIELDS,
    Library,
    load_library,
)
from optifin.model.condition import Condition, HeatSource
from optifin.physics.air import T_MAX, T_MIN
from optifin.physics.atmosphere import pressure_at_altitude
from optifin.problem.format import (
    INVALID,
    MATERIALS,
    PROBLEM,
    PROCESSES,
    VARIABLES,
    Context,
    Span,
    found,
    join,
    nearest,
    text_of,
)
from optifin.problem.spec import (
    LIMITS,
    LOWER_LIMITS,
    PIN_VARIABLES,
    PLATE_VARIABLES,
    VARIABLE_KINDS,
    CatalogChoice,
    Envelope,
    MaterialOption,
    Objective,
    PriceSweep,
    Problem,
    SearchSettings,
    Variable,
)
from optifin.units import format_si

SEA_LEVEL_PRESSURE = 101325.0  # Pa, the standard atmosphere at sea level
PRESSURE_RANGE = (10e3, 200e3)  # Pa, what the air-property tables cover
ALTITUDE_RANGE = (-1000.0, 47000.0)  # m, the tabulated standard atmosphere
AMBIENT_MAX = 500.0  # K, the upper end Condition accepts
_NATURAL_ONLY_FORCED = (
    "pressure_drop",
    "fan_power",
    "volumetric_flow",
    "entropy_generation_rate",
)
CATALOG_PROCESS = "catalog_cut"  #: the process of stock profiles cut to length
#: Defaults of variables a problem may leave out (lengths only where that fin type is used).
_CHOICE_DEFAULTS = {"finish": ("bare",), "fin_type": ("plate",), "pin_layout": ("inline",)}
#: Stand-ins for the variables of a fin type the problem does not use (never evaluated).
_UNUSED = {
    "fin_count": 2,
    "fin_thickness": 1e-3,
    "pin_diameter": 1e-3,
    "pin_pitch_transverse": 3e-3,
    "pin_pitch_longitudinal": 3e-3,
}
_TEMPERATURE_LIMITS = ("max_base_temperature", "max_source_temperature")


# -- public API ------------------------------------------------------------------------------
def load_problem(path) -> Problem:
    """Read, validate and resolve the problem file at ``path``.

    Raises
    ------
    ConfigError
        Listing every problem found in the file (or that it cannot be read).
    """
    source = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise ConfigError("file not found", source=source) from None
    except IsADirectoryError:
        raise ConfigError("is a directory, not a problem file", source=source) from None
    except PermissionError:
        raise ConfigError("cannot read the file: permission denied", source=source) from None
    except UnicodeDecodeError as exc:
        raise ConfigError(f"not UTF-8 text (byte {exc.start})", source=source) from None
    except (OSError, ValueError, TypeError) as exc:
        raise ConfigError(f"cannot read the file: {exc}", source=source) from None
    return _from_text(text, source, _default_name(Path(source).stem))


def load_problem_text(text: str, source: str = "<text>") -> Problem:
    """Validate and resolve a problem given as YAML text; ``source`` names it in messages."""
    return _from_text(text, source, _default_name(source))


def problem_from_mapping(doc: Any, source: str = "<mapping>") -> Problem:
    """Validate and resolve an already parsed problem document (a mapping)."""
    return _build(doc, source, _default_name(source), [])


def problem_hash(problem: Problem) -> str:
    """SHA-256 of the canonical resolved problem: equal for the same problem in any units."""
    text = json.dumps(problem.resolved, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()


# -- reading ---------------------------------------------------------------------------------
def _default_name(source: str) -> str:
    if source.startswith("<"):
        return "problem"
    stem = Path(source).stem
    return re.sub(r"[^A-Za-z0-9_-]+", "-", stem).strip("-") or "problem"


def _from_text(text: str, source: str, default_name: str) -> Problem:
    try:
        doc = yaml.safe_load(text)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1}, column {mark.column + 1}" if mark else ""
        what = getattr(exc, "problem", None) or str(exc)
        context = getattr(exc, "context", None)
        detail = f"{what} ({context})" if context else what
        raise ConfigError(f"YAML syntax error{where}: {detail}", source=source) from None
    except (ValueError, TypeError, OverflowError, RecursionError) as exc:
        # PyYAML builds dates and numbers after parsing; "2024-13-45" is a ValueError
        raise ConfigError(f"cannot read the YAML: {exc}", source=source) from None
    return _build(doc, source, default_name, _duplicate_keys(text))


def _duplicate_keys(text: str) -> list[str]:
    """Keys given twice in one mapping (yaml.safe_load silently keeps the last)."""
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except Exception:  # already read once by safe_load; any failure here is not the user's
        return []
    found: list[str] = []
    seen: set[int] = set()
    stack: list[tuple[Any, str]] = [(root, "")]
    while stack:
        node, path = stack.pop()
        if node is None or id(node) in seen:
            continue
        seen.add(id(node))
        if isinstance(node, yaml.MappingNode):
            first: dict[str, int] = {}
            for key, value in node.value:
                if not isinstance(key, yaml.ScalarNode) or key.value == "<<":
                    continue
                name = key.value
                if name in first:
                    found.append(
                        f"{join(path, name)}: key given twice (lines {first[name]} and "
                        f"{key.start_mark.line + 1}); only the last would count"
                    )
                else:
                    first[name] = key.start_mark.line + 1
                stack.append((value, join(path, name)))
        elif isinstance(node, yaml.SequenceNode):
            stack.extend((v, join(path, i)) for i, v in enumerate(node.value))
    return sorted(found)


# -- the library -----------------------------------------------------------------------------
def bundled_library() -> Library:
    """The bundled library without overrides (optifin.library reads it once)."""
    return load_library()


@functools.lru_cache(maxsize=32)
def _overridden_library(overrides_json: str) -> Library:
    """The library with overrides (given as JSON, so that equal overrides share one)."""
    materials, processes = json.loads(overrides_json)
    return load_library(materials or None, processes or None)


def _library(doc: Mapping, ctx: Context) -> tuple[Library | None, dict]:
    """The library with the file's overrides, or None (errors recorded) if they are wrong;
    and the parsed overrides."""
    bundled = bundled_library()
    raw_mats = doc.get("materials")
    raw_procs = doc.get("processes")
    new_mats = (
        tuple(k for k in raw_mats if isinstance(k, str) and k not in bundled.materials)
        if (isinstance(raw_mats, Mapping))
        else ()
    )
    new_finishes: tuple[str, ...] = ()
    if isinstance(raw_mats, Mapping):
        for fields in raw_mats.values():
            emis = fields.get("emissivity") if isinstance(fields, Mapping) else None
            if isinstance(emis, Mapping):
                new_finishes += tuple(k for k in emis if isinstance(k, str))
    ctx.choices = {
        "material": bundled.material_keys + new_mats,
        "process": bundled.process_keys,
        "finish": tuple(dict.fromkeys(bundled.finishes + new_finishes)),
    }
    if "materials" not in doc and "processes" not in doc:
        return bundled, {}
    before = len(ctx.errors)
    mats = MATERIALS.parse(raw_mats, "materials", ctx) if "materials" in doc else {}
    procs = PROCESSES.parse(raw_procs, "processes", ctx) if "processes" in doc else {}
    for section, parsed, known, needed in (
        ("materials", mats, bundled.materials, (*MATERIAL_FIELDS, "emissivity")),
        (
            "processes",
            procs,
            bundled.processes,
            (*(f for f in PROCESS_FIELDS if f not in OPTIONAL_PROCESS_FIELDS), "materials"),
        ),
    ):
        if parsed is INVALID:
            continue
        for key, fields in parsed.items():
            if key in known or fields is INVALID:
                continue
            missing = [f for f in needed if f not in fields]
            if missing:
                near = nearest(key, known).removeprefix("; ")
                noun = "material" if section == "materials" else "process"
                ctx.error(
                    join(section, key),
                    f"not in the library{f' ({near})' if near else ''}; a new {noun} "
                    f"needs {', '.join(missing)}",
                )
    new_procs = (
        tuple(k for k in procs if k not in bundled.processes) if isinstance(procs, dict) else ()
    )
    ctx.choices["process"] = bundled.process_keys + new_procs
    overrides = {"materials": mats, "processes": procs}
    if len(ctx.errors) > before:
        return None, overrides
    try:
        library = _overridden_library(json.dumps([raw_mats or {}, raw_procs or {}], sort_keys=True))
    except (DataError, UnitError) as exc:
        message = str(exc)
        if not message.startswith(("materials", "processes")):
            message = f"materials/processes: {message}"
        ctx.errors.append(message)
        return None, overrides
    ctx.choices = {
        "material": library.material_keys,
        "process": library.process_keys,
        "finish": library.finishes,
    }
    return library, overrides


# -- validation and resolution ---------------------------------------------------------------
def _get(section: Any, key: str) -> Any:
    """A parsed value, or None when absent or invalid."""
    if not isinstance(section, dict):
        return None
    value = section.get(key)
    return None if value is INVALID else value


def _section(parsed: dict, key: str) -> dict:
    value = parsed.get(key)
    return value if isinstance(value, dict) else {}


def _mm(value: float) -> str:
    return format_si(value, "length", "mm")


def _build(doc: Any, source: str, default_name: str, errors: list[str]) -> Problem:
    ctx = Context(errors=list(errors))
    if not isinstance(doc, Mapping):
        ctx.error(
            "",
            f"expected a mapping of sections ({', '.join(PROBLEM.required)}, ...), "
            f"found {'an empty file' if doc is None else found(doc)}",
        )
        raise ConfigError(ctx.errors, source=source)
    library, overrides = _library(doc, ctx)
    parsed = PROBLEM.parse(doc, "", ctx, skip=("materials", "processes"))
    parsed.update(overrides)
    resolver = _Resolver(doc, parsed, ctx, library, source)
    values = resolver.run()
    if ctx.errors:
        raise ConfigError(ctx.errors, source=source)
    try:
        return _assemble(values, parsed, source, default_name, library)
    except ModelError as exc:  # the checks above should have caught it; say so plainly
        raise ConfigError(str(exc), source=source) from None


class _Resolver:
    """The checks across fields; collects SI values for the dataclasses."""

    def __init__(
        self, doc: Mapping, parsed: dict, ctx: Context, library: Library | None, source: str = ""
    ):
        self.doc, self.parsed, self.ctx, self.library = doc, parsed, ctx, library
        self.source = source
        self.out: dict[str, Any] = {}
        self.mode: str | None = None
        self.envelope: dict[str, Any] = {}
        self.spans: dict[str, Any] = {}
        self.widest: float | None = None
        self.longest: float | None = None

    def error(self, path: str, message: str) -> None:
        self.ctx.error(path, message)

    def run(self) -> dict:
        self.ambient()
        self.cooling()
        self.variables()
        self.sources()
        self.objectives_and_limits()
        self.materials()
        self.search()
        self.catalog()
        self.study()
        return self.out

    # catalog of stock profiles
    def catalog(self) -> None:
        section = self.parsed.get("catalog")
        self.out["catalog"] = None
        if not isinstance(section, dict) or self.library is None:
            return
        path = section.get("file")
        if path is INVALID:
            return
        if path is not None:
            base = (
                Path(self.source).parent
                if self.source and not self.source.startswith("<")
                else Path(".")
            )
            path = str((base / path).resolve()) if not Path(path).is_absolute() else path
        from optifin.catalog import load_catalog

        try:
            load_catalog(path, self.library)
        except DataError as exc:  # a CatalogError lists its findings, one per file line
            for line in getattr(exc, "problems", None) or str(exc).splitlines():
                if line.strip():
                    self.error("catalog.file", line.strip())
            return
        cuts = section.get("cut_lengths")
        if cuts is INVALID:
            return
        if isinstance(cuts, Span) and not cuts.fixed and cuts.step is None:
            self.error("catalog.cut_lengths", "give a step: catalog parts are cut to a grid")
            return
        if cuts is None:
            grid: tuple[float, ...] = ()
        elif cuts.fixed:
            grid = (float(cuts.low),)
        else:
            count = math.floor((cuts.high - cuts.low) / cuts.step + 1e-9) + 1
            grid = tuple(float(cuts.low + cuts.step * i) for i in range(count))
        orientations = section.get("orientations") or ("along", "across")
        if orientations is INVALID or INVALID in orientations:
            return
        self.out["catalog"] = CatalogChoice(
            path=path,
            cut_lengths=grid,
            orientations=tuple(dict.fromkeys(orientations)),
            in_search=bool(section.get("in_search", False)),
        )

    # material trade-off study
    def study(self) -> None:
        section = self.parsed.get("study")
        self.out["study"], self.out["price_sweep"] = (), None
        if not isinstance(section, dict) or self.library is None:
            return
        lib = self.library
        options = []
        names: set[str] = set()
        sources = self.out.get("sources") or []
        entries = section.get("materials")
        for i, fields in enumerate(entries if isinstance(entries, list) else []):
            path = join("study.materials", i)
            if (
                not isinstance(fields, dict)
                or INVALID in fields.values()
                or not {"name", "material"} <= fields.keys()
            ):
                continue  # already reported
            name = fields["name"]
            if name in names:
                self.error(join(path, "name"), f"{name!r} names another option too")
            names.add(name)
            procs = tuple(fields.get("process") or self.spans.get("process") or ())
            materials = [fields["material"]] + (
                [fields["base_material"]] if "base_material" in fields else []
            )
            for m in materials:
                able = [p for p in procs if m in lib.processes[p].materials]
                if procs and not able:
                    self.error(
                        join(path, "process"),
                        f"no process among {', '.join(procs)} can form {m} "
                        f"(those that can: {', '.join(lib.materials[m].processes) or 'none'})",
                    )
            if "base_material" in fields and fields["base_material"] != fields["material"]:
                joined = [p for p in procs if not lib.processes[p].monolithic]
                if not joined:
                    self.error(
                        join(path, "base_material"),
                        "a base of another material than the fins needs a process that "
                        "joins fins to a base (e.g. bonded)",
                    )
            insert = fields.get("insert")
            extra = {}
            if (
                isinstance(insert, dict)
                and INVALID not in insert.values()
                and {"material", "thickness", "footprint"} <= insert.keys()
            ):
                one_centred = len(sources) == 1 and sources[0].get("position") is None
                if not one_centred:
                    self.error(
                        join(path, "insert"),
                        "an insert needs one heat source centred on the base (its model "
                        "is for that case)",
                    )
                thickness, footprint = insert["thickness"], insert["footprint"]
                base = self.spans.get("base_thickness")
                if base is not None and thickness > base.low:
                    self.error(
                        join(join(path, "insert"), "thickness"),
                        f"{thickness.text} is thicker than the thinnest base {text_of(base.low)}",
                    )
                for size, largest in (
                    (footprint[0], self.widest),
                    (footprint[1], self.longest),
                ):
                    if largest is not None and size > largest * (1 + 1e-9):
                        self.error(
                            join(join(path, "insert"), "footprint"),
                            f"{size.text} is larger than the base ({_mm(largest)})",
                        )
                extra = dict(
                    insert_material=insert["material"],
                    insert_thickness=float(thickness),
                    insert_width=float(footprint[0]),
                    insert_length=float(footprint[1]),
                )
            options.append(
                MaterialOption(
                    name=name,
                    material=fields["material"],
                    processes=procs,
                    base_material=fields.get("base_material"),
                    **extra,
                )
            )
        self.out["study"] = tuple(options)
        target = section.get("target_resistance")
        self.out["study_target"] = None if target in (None, INVALID) else float(target)
        sweep = section.get("price_sweep")
        if (
            isinstance(sweep, dict)
            and INVALID not in sweep.values()
            and {"material", "min", "max"} <= sweep.keys()  # a missing key is reported
        ):
            if not sweep["max"] > sweep["min"]:
                self.error("study.price_sweep.max", "must be above min")
                return
            self.out["price_sweep"] = PriceSweep(
                material=sweep["material"],
                low=float(sweep["min"]),
                high=float(sweep["max"]),
                steps=int(sweep.get("steps", 41)),
            )

    # ambient air
    def ambient(self) -> None:
        amb = _section(self.parsed, "ambient")
        t = _get(amb, "temperature")
        if t is not None and not T_MIN <= t < AMBIENT_MAX:
            self.error(
                "ambient.temperature",
                f"{t.text} is outside {T_MIN:g}-{AMBIENT_MAX:g} K "
                f"({T_MIN - 273.15:g} to {AMBIENT_MAX - 273.15:g} degC), the range "
                "the air model covers",
            )
            t = None
        self.out["ambient_temperature"] = t
        pressure: float | None = SEA_LEVEL_PRESSURE
        low, high = PRESSURE_RANGE
        if "altitude" in amb:
            z = _get(amb, "altitude")
            pressure = None
            if z is not None and not ALTITUDE_RANGE[0] <= z <= ALTITUDE_RANGE[1]:
                self.error(
                    "ambient.altitude",
                    f"{z.text} is outside {ALTITUDE_RANGE[0]:g} to {ALTITUDE_RANGE[1]:g} m",
                )
            elif z is not None:
                pressure = float(pressure_at_altitude(float(z)))
                if not low <= pressure <= high:
                    self.error(
                        "ambient.altitude",
                        f"{z.text} gives {pressure / 1e3:.3g} kPa, "
                        f"outside the {low / 1e3:g}-{high / 1e3:g} kPa the air "
                        "properties cover",
                    )
                    pressure = None
        elif "pressure" in amb:
            pressure = _get(amb, "pressure")
            if pressure is not None and not low <= pressure <= high:
                self.error(
                    "ambient.pressure",
                    f"{pressure.text} is outside "
                    f"{low / 1e3:g}-{high / 1e3:g} kPa, the range the air properties "
                    "cover",
                )
                pressure = None
        self.out["pressure"] = None if pressure is None else float(pressure)

    # cooling
    def cooling(self) -> None:
        cool = _section(self.parsed, "cooling")
        self.mode = _get(cool, "mode")
        for key in (
            "approach_velocity",
            "volumetric_flow",
            "radiation",
            "surroundings_temperature",
        ):
            self.out[key] = _get(cool, key)
        ts = self.out["surroundings_temperature"]
        if ts is not None and ts > T_MAX:
            self.error("cooling.surroundings_temperature", f"{ts.text} is above {T_MAX:g} K")
        self.out["fan"] = self._fan(cool.get("fan"))
        loss = _section(cool, "extra_loss")
        if loss and "fan" not in cool and self.mode != "natural":  # natural: reported
            self.error(
                "cooling.extra_loss", "an extra system loss needs a fan (cooling.fan) to act on"
            )
        if loss.get("pressure_drop") is not None and "at_flow" not in loss:
            self.error("cooling.extra_loss.at_flow", "missing (the flow of pressure_drop)")
        if "at_flow" in loss and "pressure_drop" not in loss:
            self.error(
                "cooling.extra_loss.pressure_drop",
                "missing (at_flow is the flow at which a pressure_drop was measured)",
            )
        if "area" in loss and "coefficient" not in loss:
            self.error("cooling.extra_loss.area", "area needs a coefficient to go with it")
        self.out["extra_loss"] = loss
        clearance = _section(cool, "clearance")
        opened = clearance.get("open") is True  # an invalid value is reported already
        if opened and ("side" in clearance or "top" in clearance):
            self.error("cooling.clearance", "give open: true or side/top gaps, not both")
        if clearance and "fan" in cool:
            self.error(
                "cooling.clearance",
                "a fan drives a ducted (shrouded) sink; with clearances give the "
                "approach_velocity instead",
            )
        if clearance and "volumetric_flow" in cool:
            self.error(
                "cooling.clearance",
                "an open sink needs the approach_velocity of the duct or stream, not a flow",
            )
        if opened:
            side = top = math.inf
        else:
            side, top = clearance.get("side"), clearance.get("top")
        self.out["side_clearance"] = None if side is INVALID else side
        self.out["top_clearance"] = None if top is INVALID else top

    def _fan(self, fan: Any):
        """The (combined) fan curve of cooling.fan, or None."""
        if not isinstance(fan, dict):
            return None
        from optifin.fans import load_fans
        from optifin.physics import fan as fan_physics

        path = "cooling.fan"
        if fan.get("model") is INVALID:
            return None  # already reported
        if "model" in fan:
            try:
                fans = load_fans()
            except DataError as exc:
                self.error(join(path, "model"), f"the fan data file cannot be read: {exc}")
                return None
            key = fan["model"]
            if key not in fans:
                self.error(
                    join(path, "model"),
                    f"unknown fan {key!r}{nearest(key, fans)} (known: {', '.join(fans)})",
                )
                return None
            curve = fans[key].curve
        elif isinstance(fan.get("curve"), dict):
            table = fan["curve"]
            flow, pressure = table.get("flow"), table.get("pressure")
            if not isinstance(flow, list) or not isinstance(pressure, list):
                return None  # missing or invalid: already reported
            if INVALID in (*flow, *pressure):
                return None
            if len(flow) != len(pressure):
                self.error(
                    join(path, "curve"),
                    f"{len(flow)} flows but {len(pressure)} pressures; give one pressure per flow",
                )
                return None
            try:
                curve = fan_physics.fan_curve(
                    [float(q) for q in flow], [float(p) for p in pressure], name=""
                )
            except ModelError as exc:
                self.error(join(path, "curve"), str(exc))
                return None
        else:
            if "curve" not in fan:
                self.error(path, "give the fan as model (a fan data key) or curve (a table)")
            return None
        count = fan.get("count", 1)
        arrangement = fan.get("arrangement", "parallel")
        if count is INVALID or arrangement is INVALID:
            return None
        return fan_physics.combine(curve, int(count), arrangement) if count > 1 else curve

    # design variables and the envelope
    def variables(self) -> None:
        env = _section(self.parsed, "envelope")
        self.envelope = {k: _get(env, k) for k in ("max_width", "max_length", "max_height")}
        raw = self.doc.get("variables")
        var = self.parsed.get("variables")
        if not isinstance(var, dict):
            return
        for name in VARIABLE_KINDS:
            value = var.get(name)
            if value is not INVALID and value is not None:
                self.spans[name] = value
        for name, default in _CHOICE_DEFAULTS.items():
            if name not in raw:
                self.spans[name] = default
        if "fin_taper" not in raw:
            self.spans["fin_taper"] = Span(1.0, 1.0)
        types = self.spans.get("fin_type", ())
        for fin_type, names in (("plate", PLATE_VARIABLES), ("pin", PIN_VARIABLES)):
            for name in names:
                if fin_type in types and name not in raw:
                    self.error(
                        join("variables", name),
                        f"missing (needed for {fin_type} fins: "
                        f"{VARIABLES.fields[name].expected()})",
                    )
                elif fin_type not in types and name not in raw:
                    self.spans[name] = Span(_UNUSED[name], _UNUSED[name])
        if "pin" in types and self.mode == "natural":
            self.error(
                "variables.fin_type",
                "pin fins in natural convection: no published pin-array correlation is "
                "implemented; use plate fins or forced cooling",
            )
        elif "pin" in types and self.out.get("radiation"):
            self.error(
                "cooling.radiation",
                "radiation from pin-fin arrays is not modelled (the view factors are for "
                "plate-fin channels); remove it or choose plate fins only",
            )
        if "pin" not in types and "fin_type" in self.spans:  # an invalid fin_type: reported
            for name in ("pin_layout", *PIN_VARIABLES):
                if name in raw:
                    self.error(join("variables", name), "pin fins are not among variables.fin_type")
        for name, key in (("width", "max_width"), ("length", "max_length")):
            if name in raw:
                continue
            limit = self.envelope[key]
            if limit is not None:
                self.spans[name] = Span(limit, limit)
            elif key not in env:
                self.error(
                    join("variables", name),
                    f"missing (give a length or a range here, or envelope.{key})",
                )
        # ranges entirely outside the envelope
        for name, key in (("width", "max_width"), ("length", "max_length")):
            span, limit = self.spans.get(name), self.envelope[key]
            if span is not None and limit is not None and span.low > limit:
                what = (
                    text_of(span.low)
                    if span.fixed
                    else (f"the range {text_of(span.low)} to {text_of(span.high)}")
                )
                self.error(join("variables", name), f"{what} is above envelope.{key} {limit.text}")
        base, fin = self.spans.get("base_thickness"), self.spans.get("fin_height")
        top = self.envelope["max_height"]
        if base is not None and fin is not None and top is not None and base.low + fin.low > top:
            self.error(
                "envelope.max_height",
                f"{top.text} is less than the smallest base "
                f"plus fins, base_thickness {text_of(base.low)} + fin_height "
                f"{text_of(fin.low)} = {_mm(base.low + fin.low)}",
            )
        self.widest = self._largest("width", "max_width")
        self.longest = self._largest("length", "max_length")
        count, t = self.spans.get("fin_count"), self.spans.get("fin_thickness")
        if "plate" in types and count is not None and t is not None and self.widest is not None:
            if count.low * t.low >= self.widest:
                self.error(
                    "variables.fin_count",
                    f"{count.low} fins of at least "
                    f"{text_of(t.low)} take {_mm(count.low * t.low)} of width, leaving "
                    f"no gap in the widest base, {_mm(self.widest)}",
                )

    def _largest(self, name: str, key: str) -> float | None:
        span = self.spans.get(name)
        if span is None:
            return None
        limit = self.envelope[key]
        return float(span.high if limit is None else min(span.high, limit))

    # heat sources
    def sources(self) -> None:
        heat = self.parsed.get("heat_load")
        self.out["sources"] = []
        if not isinstance(heat, list):
            return
        names: dict[str, str] = {}
        for i, (path, fields) in enumerate(heat):
            if not isinstance(fields, dict):
                continue
            name = _get(fields, "name") or f"source{i + 1}"
            if name in names:
                given = "name" in fields
                self.error(
                    join(path, "name") if given else path,
                    f"{'' if given else 'default name '}{name!r} is also the name of "
                    f"{names[name]}{'' if given else '; give this source a name'}",
                )
            names[name] = path
            footprint = _get(fields, "footprint")
            position = _get(fields, "position")
            if footprint is not None:
                self._fit(path, footprint, position)
            resistance = _get(fields, "interface_resistance")
            per_area = _get(fields, "interface_resistance_per_area")
            if per_area is not None and footprint is not None:
                resistance = per_area / (footprint[0] * footprint[1])
            self.out["sources"].append(
                {
                    "name": name,
                    "power": _get(fields, "power"),
                    "footprint": footprint,
                    "position": position,
                    "interface_resistance": 0.0 if resistance is None else float(resistance),
                }
            )

    def _fit(self, path: str, footprint, position) -> None:
        for axis, size, largest, var in (
            (0, footprint[0], self.widest, "width"),
            (1, footprint[1], self.longest, "length"),
        ):
            word = "across" if axis == 0 else "along"
            if largest is not None and size > largest * (1 + 1e-9):
                self.error(
                    join(path, "footprint"),
                    f"{size.text} {word} the fins is larger "
                    f"than the largest base {var}, {_mm(largest)}",
                )
                continue
            if position is None:
                continue
            centre = position[axis]
            if centre - size / 2 < -1e-12:
                self.error(
                    join(path, "position"),
                    f"centre {centre.text} {word} the fins is "
                    f"less than half the footprint ({_mm(size / 2)}): the source "
                    "overhangs the base edge",
                )
            elif largest is not None and centre + size / 2 > largest * (1 + 1e-9):
                self.error(
                    join(path, "position"),
                    f"the source reaches "
                    f"{_mm(centre + size / 2)} {word} the fins, beyond the largest "
                    f"base {var}, {_mm(largest)}",
                )

    # objectives and constraints
    def objectives_and_limits(self) -> None:
        limits = _section(self.parsed, "constraints")
        raw_limits = self.doc.get("constraints")
        raw_limits = raw_limits if isinstance(raw_limits, Mapping) else {}
        t_amb = self.out["ambient_temperature"]
        for key in _TEMPERATURE_LIMITS:
            value = _get(limits, key)
            if value is None:
                continue
            if t_amb is not None and not value > t_amb:
                self.error(
                    join("constraints", key),
                    f"{value.text} is not above the ambient temperature {t_amb.text}",
                )
            elif value > T_MAX:
                self.error(
                    join("constraints", key),
                    f"{value.text} is above {T_MAX:g} K, beyond the air-property tables",
                )
        natural = self.mode == "natural"
        for key, (model_key, _) in (LIMITS | LOWER_LIMITS).items():
            if natural and model_key in _NATURAL_ONLY_FORCED and key in raw_limits:
                self.error(
                    join("constraints", key),
                    "not defined in natural convection (no fan moves the air); remove it",
                )
        self.out["limits"] = {k: float(v) for k, v in limits.items() if v is not INVALID}
        objectives = self.parsed.get("objectives")
        if not isinstance(objectives, list):
            return
        has_temperature_limit = any(k in raw_limits for k in _TEMPERATURE_LIMITS)
        for i, (name, _) in enumerate(objectives):
            path = join("objectives", i)
            if name == "heat_rate" and not has_temperature_limit:
                self.error(
                    path,
                    "heat_rate needs a temperature limit to hold the sink at: "
                    "give constraints.max_base_temperature or max_source_temperature",
                )
            if natural and name in _NATURAL_ONLY_FORCED:
                self.error(
                    path, f"{name} is not defined in natural convection (no fan moves the air)"
                )

    # materials, processes and finishes that go together
    def materials(self) -> None:
        lib = self.library
        mats, procs, fins = (self.spans.get(k) for k in ("material", "process", "finish"))
        if procs is not None and CATALOG_PROCESS in procs:
            self.error(
                "variables.process",
                f"{CATALOG_PROCESS} stands for stock catalog parts, which have no free "
                "geometry; offer catalog parts with the catalog section (in_search: true)",
            )
            return
        if lib is None or mats is None or procs is None or fins is None:
            return
        mi = [lib.material_code(m) for m in mats]
        pi = [lib.process_code(p) for p in procs]
        fi = [lib.finish_code(f) for f in fins]
        pairs = lib.array("allowed")[np.ix_(pi, mi)]  # (process, material)
        if not pairs.any():
            made = "; ".join(
                f"{p} makes {', '.join(lib.processes[p].materials) or 'nothing'}" for p in procs
            )
            self.error(
                "variables.process",
                f"no process among {', '.join(procs)} can make a "
                f"material among {', '.join(mats)} ({made})",
            )
            return
        types = self.spans.get("fin_type") or ("plate",)
        makers = {t: [p for p in procs if t in lib.processes[p].fin_types] for t in types}
        for t, who in makers.items():
            if not who:
                able = [k for k, p in lib.processes.items() if t in p.fin_types]
                self.error(
                    "variables.fin_type"
                    if "fin_type" in self.doc.get("variables", {})
                    else "variables.process",
                    f"no process among {', '.join(procs)} makes {t} fins "
                    f"(processes that do: {', '.join(able) or 'none'})",
                )
        usable = [m for k, m in enumerate(mats) if pairs[:, k].any()]
        emissivity = lib.array("emissivity")[np.ix_([lib.material_code(m) for m in usable], fi)]
        if not np.isfinite(emissivity).any():
            offered = "; ".join(
                f"{m} offers {', '.join(lib.materials[m].emissivity)}" for m in usable
            )
            self.error(
                "variables.finish",
                f"no finish among {', '.join(fins)} is offered for "
                f"the materials {', '.join(usable)} ({offered})",
            )

    # search settings
    def search(self) -> None:
        search = _section(self.parsed, "search")
        raw = self.doc.get("search")
        raw = raw if isinstance(raw, Mapping) else {}
        defaults = SearchSettings()
        values = {}
        for key in ("algorithm", "population", "evaluations", "seed", "exact_limit"):
            value = _get(search, key)
            values[key] = getattr(defaults, key) if value is None else value
        if (
            ("population" not in raw or _get(search, "population") is not None)
            and ("evaluations" not in raw or _get(search, "evaluations") is not None)
            and values["evaluations"] < values["population"]
        ):
            which = "" if "evaluations" in raw else " (the default)"
            self.error(
                "search.evaluations",
                f"{values['evaluations']}{which} is fewer than the "
                f"population {values['population']}",
            )
        self.out["search"] = values
        if values["algorithm"] != "exact" or "variables" not in self.parsed:
            return
        continuous = [
            n
            for n, s in self.spans.items()
            if isinstance(s, Span)
            and not s.fixed
            and VARIABLE_KINDS[n] in ("length", "ratio")
            and s.step is None
        ]
        if continuous:
            names = ", ".join("variables." + n for n in continuous)
            self.error(
                "search.algorithm",
                f"exact needs every variable fixed, stepped or discrete; give a step to {names}",
            )
            return
        if len(self.spans) < len(VARIABLE_KINDS):
            return
        count = 1.0
        for span in self.spans.values():
            count *= len(span) if isinstance(span, tuple) else _grid_size(span)
        if count > values["exact_limit"]:
            self.error(
                "search.algorithm",
                f"exact would evaluate {count:.3g} designs, more "
                f"than search.exact_limit {values['exact_limit']}",
            )


def _grid_size(span: Span) -> float:
    if span.fixed:
        return 1.0
    step = 1.0 if span.step is None else span.step
    return math.floor((span.high - span.low) / step + 1e-9) + 1.0


# -- building the dataclasses ----------------------------------------------------------------
def _assemble(
    values: dict, parsed: dict, source: str, default_name: str, library: Library
) -> Problem:
    sources = tuple(
        HeatSource(
            power=float(s["power"]),
            size_x=float(s["footprint"][0]),
            size_y=float(s["footprint"][1]),
            x=None if s["position"] is None else float(s["position"][0]),
            y=None if s["position"] is None else float(s["position"][1]),
            interface_resistance=s["interface_resistance"],
            name=s["name"],
        )
        for s in values["sources"]
    )
    limits = values["limits"]
    model = _section(parsed, "model")
    production = _section(parsed, "production")
    optional = {
        k: float(v) if v is not None else None
        for k, v in (
            ("approach_velocity", values["approach_velocity"]),
            ("volumetric_flow", values["volumetric_flow"]),
            ("surroundings_temperature", values["surroundings_temperature"]),
        )
    }
    condition = Condition(
        sources=sources,
        ambient_temperature=float(values["ambient_temperature"]),
        pressure=values["pressure"],
        cooling=_section(parsed, "cooling")["mode"],
        radiation=values["radiation"],
        max_base_temperature=limits.get("max_base_temperature"),
        max_source_temperature=limits.get("max_source_temperature"),
        quantity=production.get("quantity", 1000),
        fin_tip=model.get("fin_tip"),
        channel_heat_transfer=model.get("channel_heat_transfer", "auto"),
        spreading=model.get("spreading", "auto"),
        loss_coefficients=model.get("loss_coefficients", "borda_carnot"),
        pin_heat_transfer=model.get("pin_heat_transfer", "zukauskas_1972"),
        fan=values["fan"],
        extra_loss_coefficient=float(values["extra_loss"].get("coefficient", 0.0)),
        extra_loss_area=_float_or_none(values["extra_loss"].get("area")),
        extra_loss_pressure=float(values["extra_loss"].get("pressure_drop", 0.0)),
        extra_loss_flow=_float_or_none(values["extra_loss"].get("at_flow")),
        side_clearance=_float_or_none(values["side_clearance"]),
        top_clearance=_float_or_none(values["top_clearance"]),
        **optional,
    )
    spans = _section(parsed, "variables")
    types = spans.get("fin_type") or _CHOICE_DEFAULTS["fin_type"]
    variables = []
    for name, kind in VARIABLE_KINDS.items():
        span = spans.get(name)
        if span is None:  # defaulted: choices, taper, unused fin type, or the envelope
            span = _CHOICE_DEFAULTS.get(name)
        if span is None and name == "fin_taper":
            span = Span(1.0, 1.0)
        if span is None and name in _UNUSED:
            used = ("plate" in types) if name in PLATE_VARIABLES else ("pin" in types)
            if not used:
                span = Span(_UNUSED[name], _UNUSED[name])
        if span is None:
            env = _section(parsed, "envelope")[f"max_{name}"]
            span = Span(env, env)
        if kind == "choice":
            variables.append(Variable(name=name, kind=kind, choices=tuple(span)))
        else:
            cast = int if kind == "integer" else float
            variables.append(
                Variable(
                    name=name,
                    kind=kind,
                    low=cast(span.low),
                    high=cast(span.high),
                    step=None if span.step is None else float(span.step),
                )
            )
    objectives = tuple(Objective(name=n, sense=s) for n, s in parsed["objectives"])
    env = _section(parsed, "envelope")
    envelope = Envelope(**{k: float(v) for k, v in env.items()})
    search = SearchSettings(**values["search"])
    name = parsed.get("name", default_name)
    description = parsed.get("description", "")
    resolved = _resolved(
        name,
        description,
        condition,
        variables,
        objectives,
        limits,
        envelope,
        search,
        parsed,
        library,
    )
    resolved = _canonical({**resolved, **_catalog_and_study(values, parsed)})
    return Problem(
        name=name,
        source=source,
        description=description,
        condition=condition,
        variables=tuple(variables),
        objectives=objectives,
        limits=limits,
        envelope=envelope,
        search=search,
        library=library,
        resolved=resolved,
        catalog=values.get("catalog"),
        study=values.get("study", ()),
        price_sweep=values.get("price_sweep"),
        study_target=values.get("study_target"),
    )


def _float_or_none(value: Any) -> float | None:
    return None if value is None else float(value)


def _canonical(value: Any) -> Any:
    """Sorted keys, plain types and floats to 12 significant digits (so "400 LFM" and
    "2.032 m/s" give the same problem)."""
    if isinstance(value, Mapping):
        return {str(k): _canonical(value[k]) for k in sorted(value, key=str)}
    if isinstance(value, list | tuple):
        return [_canonical(v) for v in value]
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, int | np.integer):
        return int(value)
    return float(f"{float(value):.12g}")


def _resolved(
    name, description, condition, variables, objectives, limits, envelope, search, parsed, library
) -> dict:
    c = condition
    overrides: dict[str, dict] = {"materials": {}, "processes": {}}
    for section in ("materials", "processes"):
        raw = parsed.get(section) or {}
        for key, fields in raw.items():
            overrides[section][key] = _override_si(library, section, key, fields)
    return _canonical(
        {
            "name": name,
            "description": description,
            "heat_load": [
                {
                    "name": s.name,
                    "power": s.power,
                    "footprint": [s.size_x, s.size_y],
                    "position": None if s.centred else [s.x, s.y],
                    "interface_resistance": s.interface_resistance,
                }
                for s in c.sources
            ],
            "ambient": {"temperature": c.ambient_temperature, "pressure": c.pressure},
            "cooling": {
                "mode": c.cooling,
                "approach_velocity": c.approach_velocity,
                "volumetric_flow": c.volumetric_flow,
                "radiation": c.radiation_on,
                "surroundings_temperature": c.t_surroundings,
                "fan": None
                if c.fan is None
                else {"flow": list(c.fan.flow), "pressure": list(c.fan.pressure)},
                "extra_loss": [
                    c.extra_loss_coefficient,
                    c.extra_loss_area,
                    c.extra_loss_pressure,
                    c.extra_loss_flow,
                ],
                "clearance": [
                    None if c.side_clearance in (None, math.inf) else c.side_clearance,
                    None if c.top_clearance in (None, math.inf) else c.top_clearance,
                    c.side_clearance == math.inf,
                ],
            },
            "envelope": {
                "max_width": envelope.max_width,
                "max_length": envelope.max_length,
                "max_height": envelope.max_height,
            },
            "variables": {
                v.name: (
                    {"kind": v.kind, "choices": list(v.choices)}
                    if v.kind == "choice"
                    else {"kind": v.kind, "low": v.low, "high": v.high, "step": v.step}
                )
                for v in variables
            },
            "objectives": [{"name": o.name, "sense": o.sense} for o in objectives],
            "constraints": limits,
            "production": {"quantity": c.quantity},
            "model": {
                "fin_tip": c.tip,
                "channel_heat_transfer": c.channel_heat_transfer,
                "spreading": c.spreading,
                "loss_coefficients": c.loss_coefficients,
                "pin_heat_transfer": c.pin_heat_transfer,
            },
            "search": {
                "algorithm": search.algorithm,
                "population": search.population,
                "evaluations": search.evaluations,
                "seed": search.seed,
                "exact_limit": search.exact_limit,
            },
            **overrides,
        }
    )


def _catalog_and_study(values: dict, parsed: dict) -> dict:
    """The catalog and study sections for the resolved form, only where the file gives them
    (so that files without them keep their hash). The catalog file is kept as written, not as
    the absolute path, so that the hash does not depend on where the files sit."""
    out: dict[str, Any] = {}
    catalog = values.get("catalog")
    if catalog is not None:
        out["catalog"] = {
            "file": _section(parsed, "catalog").get("file"),
            "cut_lengths": list(catalog.cut_lengths),
            "orientations": list(catalog.orientations),
            "in_search": catalog.in_search,
        }
    if values.get("study"):
        sweep = values.get("price_sweep")
        out["study"] = {
            "materials": [asdict(option) for option in values["study"]],
            "price_sweep": None if sweep is None else asdict(sweep),
            "target_resistance": values.get("study_target"),
        }
    return out


def _override_si(library: Library, section: str, key: str, fields: Mapping) -> dict:
    """The overridden fields of one library entry, as the library holds them (SI)."""
    out: dict[str, Any] = {}
    if section == "materials":
        entry = library.materials[key]
        for name, value in fields.items():
            if name == "emissivity":
                out[name] = {f: entry.emissivity[f].si for f in value}
            elif name in MATERIAL_FIELDS:
                out[name] = getattr(entry, name).si
            else:
                out[name] = value
        return out
    entry = library.processes[key]
    for name, value in fields.items():
        if name == "cost":
            out[name] = {f: entry.cost[f].si for f in value}
        elif name in PROCESS_FIELDS:
            out[name] = entry.limits[name].si
        elif name == "materials":
            out[name] = list(value)
        else:
            out[name] = value
    return out

"""The material trade-off study: one search per material option, and what the options cost.

A problem's ``study`` section lists material options (all aluminium, all copper, a copper
base with bonded aluminium fins, an aluminium base with a copper insert, ...).
:func:`run_study` searches the problem once per option, with the same seed and budget, and
compares them three ways:

* **overlay**: thermal resistance against mass and against total cost, one curve per
  option: the non-dominated subset, in those two quantities, of every feasible design the
  option's search evaluated (for a problem whose objectives are exactly thermal resistance
  and mass, the R-mass curve is the option's Pareto front);
* **premium**: the baseline option's front (the first option) rebuilt, fin for fin, in
  each other option's construction, and the resistance gained per extra kilogram and per
  extra unit of currency of each matched pair;
* **price sweep**: with ``study.price_sweep``, the cheapest feasible design of each option
  as a function of the price per kg of one material, and the prices at which the cheapest
  option changes, found exactly. A design's cost is linear in that price (the metal is
  bought by the kilogram; the process cost does not depend on it), so each design is a line
  cost(p) = a + b p and the cheapest cost of an option is the lower envelope of its lines;
  the flips are the breakpoints of the envelope of all options where the option changes.

All prices and process costs are the library's indicative figures (or the problem's
overrides): the study ranks options, it does not quote them.
"""

from __future__ import annotations

import dataclasses
import re
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from optifin.errors import ConfigError, SearchError
from optifin.library import Library, Value
from optifin.model import to_frame
from optifin.model.cost import mass_and_cost
from optifin.model.design import Designs
from optifin.model.geometry import derive
from optifin.model.sink import evaluate_arrays
from optifin.problem.spec import MaterialOption, Problem
from optifin.report.marks import knee_index, minimised_objectives
from optifin.search import SearchResult, optimise
from optifin.search.encoding import Encoding
from optifin.search.objectives import score
from optifin.search.pareto import nondominated

__all__ = [
    "GEOMETRY_COLUMNS",
    "StudyResult",
    "cost_lines",
    "lower_envelope",
    "option_problem",
    "run_study",
]

R = "thermal_resistance_K_per_W"
MASS = "mass_kg"
COST = "total_cost"
#: What a matched pair's premium table gives: the deltas and the gains per kg and per cost.
PREMIUM_COLUMNS = (
    "delta_resistance_K_per_W",
    "delta_mass_kg",
    "delta_cost",
    "K_per_W_per_kg",
    "K_per_W_per_cost",
)
#: The geometry a matched pair shares (result-table names).
GEOMETRY_COLUMNS = (
    "fin_count",
    "fin_thickness_mm",
    "fin_height_mm",
    "base_thickness_mm",
    "width_mm",
    "length_mm",
)
#: Further design columns carried over when present (tapered fins, pins).
OPTIONAL_DESIGN_COLUMNS = (
    "fin_tip_thickness_mm",
    "fin_type",
    "pin_diameter_mm",
    "pin_pitch_transverse_mm",
    "pin_pitch_longitudinal_mm",
    "pin_layout",
)
CATEGORY_COLUMNS = ("material", "process", "finish")
#: Relative size below which a difference counts as none (no division by it).
RELATIVE_ZERO = 1e-9
#: Prices of the swept material at which the cost lines are measured [currency/kg].
_PRICE_PROBES = (0.0, 1.0)
BASES = ("feasible", "target")  #: the sweep's two questions (see StudyResult.sweep)


@dataclass
class StudyResult:
    """What a material trade-off study found; tables use the result-table column names.

    ``results`` and ``candidates`` are keyed by option name, in the options' order (the
    first option is the baseline). ``candidates[name]`` holds every distinct feasible design
    the option's search evaluated, with its thermal resistance, mass, total cost and the
    line of its cost in the swept material's price: ``cost_intercept`` (the cost at price 0)
    and ``cost_slope_kg`` (d cost / d price, the kilograms of that material bought).

    ``sweep`` has one row per basis, price and option: ``basis`` is ``"feasible"`` (the
    cheapest feasible design) or ``"target"`` (the cheapest with thermal resistance at most
    ``target_resistance``), ``price_per_kg``, ``option``, ``total_cost`` of the cheapest
    design at that price, ``design`` (its row in ``candidates[option]``), its resistance,
    mass, ``cost_intercept`` and ``cost_slope_kg``, and ``cheapest`` (the option is the
    cheapest of all at that price). ``envelopes`` are the exact pieces of each option's
    cheapest-cost line (basis, option, price_from, price_to, design, intercept, slope) and
    ``flips`` the prices where the cheapest option changes (basis, price_per_kg,
    cheaper_below, cheaper_above, total_cost).
    """

    problem: Problem
    options: tuple[MaterialOption, ...]
    problems: dict[str, Problem]
    results: dict[str, SearchResult]
    candidates: dict[str, pd.DataFrame]
    overlay: pd.DataFrame
    premium: pd.DataFrame
    premium_summary: pd.DataFrame
    sweep: pd.DataFrame
    envelopes: pd.DataFrame
    flips: pd.DataFrame
    target: pd.DataFrame
    target_resistance: float | None
    swept_material: str | None
    price_now: float | None  #: the library's price of the swept material [currency/kg]
    seed: int
    notes: list[str] = field(default_factory=list)
    timings: dict[str, float] = field(default_factory=dict)
    target_given: bool = False  #: the problem set the target (else the baseline knee's R)

    @property
    def baseline(self) -> str:
        return self.options[0].name

    @property
    def fronts(self) -> pd.DataFrame:
        """Every option's front in one table, with an ``option`` column first."""
        parts = []
        for name, result in self.results.items():
            front = result.front.copy()
            front.insert(0, "option", name)
            parts.append(front)
        parts = [p for p in parts if len(p)]
        if not parts:
            return pd.DataFrame({"option": pd.Series(dtype=object)})
        return pd.concat(parts, ignore_index=True, sort=False)


# -- one option as a problem of its own --------------------------------------------------------
def option_problem(problem: Problem, option: MaterialOption) -> Problem:
    """The problem restricted to one material option of its study.

    The material is the option's, the processes the option's (or the problem's) that can
    form every material of the option, and only processes that join fins to a base when
    the base is of another material; the option's base material and insert become the
    problem's fixed ``construction``. Raises :class:`~optifin.errors.ConfigError` when the
    option cannot be searched (no such process; an insert without one centred source or
    that does not fit the smallest base).
    """
    lib = problem.library
    where = f"study option {option.name!r}"
    errors: list[str] = []
    materials = [option.material]
    if option.base_material is not None:
        materials.append(option.base_material)
    if option.insert_material is not None:
        materials.append(option.insert_material)
    for key in materials:
        if key not in lib.materials:
            errors.append(f"{where}: unknown material {key!r}")
    if errors:
        raise ConfigError(errors, source=str(problem.source))
    formed = [option.material]  # the insert is set into the base, not formed by the process
    if option.base_material is not None:
        formed.append(option.base_material)
    offered = option.processes or problem.variable("process").choices
    able = tuple(
        p
        for p in offered
        if p in lib.processes and all(m in lib.processes[p].materials for m in formed)
    )
    if option.base_material is not None and option.base_material != option.material:
        able = tuple(p for p in able if not lib.processes[p].monolithic)
        if not able:
            errors.append(
                f"{where}: a base of {option.base_material} under fins of {option.material} "
                f"needs a process that joins fins to a base and forms both (none among "
                f"{', '.join(offered) or 'the processes given'})"
            )
    elif not able:
        errors.append(f"{where}: no process among {', '.join(offered)} can form {option.material}")
    if option.insert_material is not None:
        errors += _insert_errors(problem, option, where)
    if errors:
        raise ConfigError(errors, source=str(problem.source))

    def restricted(variable):
        if variable.name == "material":
            return dataclasses.replace(variable, choices=(option.material,))
        if variable.name == "process":
            return dataclasses.replace(variable, choices=able)
        return variable

    variables = tuple(restricted(v) for v in problem.variables)
    names = {v.name for v in variables}
    for name, choices in (("material", (option.material,)), ("process", able)):
        if name not in names:
            variables += (dataclasses.replace(problem.variable(name), choices=choices),)
    construction = option.construction()
    resolved = dict(problem.resolved)
    resolved["study_option"] = {
        "name": option.name,
        "material": option.material,
        "processes": list(able),
        "construction": construction,
    }
    out = dataclasses.replace(
        problem,
        name=f"{problem.name}-{_slug(option.name)}",
        variables=variables,
        construction=construction,
        study=(),
        price_sweep=None,
        resolved=resolved,
    )
    try:
        Encoding(out)
    except SearchError as exc:
        raise ConfigError(f"{where}: {exc}", source=str(problem.source)) from None
    return out


def _insert_errors(problem: Problem, option: MaterialOption, where: str) -> list[str]:
    errors = []
    sources = problem.condition.sources
    if len(sources) != 1 or not sources[0].centred:
        errors.append(f"{where}: an insert needs one heat source centred on the base")
    sizes = (option.insert_thickness, option.insert_width, option.insert_length)
    if any(s is None or not s > 0 for s in sizes):
        errors.append(f"{where}: an insert needs a positive thickness, width and length")
        return errors
    for size, variable, words in zip(
        sizes, ("base_thickness", "width", "length"), ("thickness", "width", "length"), strict=True
    ):
        smallest = problem.variable(variable).low
        if smallest is not None and size > smallest * (1 + 1e-9):
            errors.append(
                f"{where}: the insert's {words} {size * 1e3:g} mm exceeds the smallest "
                f"{variable.replace('_', ' ')} {smallest * 1e3:g} mm"
            )
    return errors


def _slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower() or "option"


# -- the study ---------------------------------------------------------------------------------
def run_study(
    problem: Problem,
    *,
    seed: int | None = None,
    evaluations: int | None = None,
    progress: Callable[[str, int, int], None] | None = None,
    algorithm: str | None = None,
    target_resistance: float | None = None,
) -> StudyResult:
    """Search every material option of the problem's study and compare them.

    Each option is searched by :func:`optifin.search.optimise` with the same ``seed``,
    ``algorithm`` and ``evaluations`` (the problem's by default). ``progress(option name,
    done, total)`` is called as each search proceeds. ``target_resistance`` [K/W] is the
    resistance the sweep's ``"target"`` basis asks for; by default the thermal resistance
    of the knee of the baseline's front.
    """
    if not problem.study:
        raise ConfigError("the problem has no study section (study.materials)", str(problem.source))
    options = tuple(problem.study)
    problems = {o.name: option_problem(problem, o) for o in options}  # every error up front
    notes: list[str] = []
    timings: dict[str, float] = {}
    results: dict[str, SearchResult] = {}
    for option in options:
        report = None
        if progress is not None:

            def report(done, total, name=option.name):
                progress(name, done, total)

        started = time.perf_counter()
        results[option.name] = optimise(
            problems[option.name],
            seed=seed,
            algorithm=algorithm,
            evaluations=evaluations,
            progress=report,
        )
        timings[f"search_s[{option.name}]"] = time.perf_counter() - started
        notes += [f"{option.name}: {n}" for n in results[option.name].notes]

    t0 = time.perf_counter()
    sweep_spec = problem.price_sweep
    swept = sweep_spec.material if sweep_spec is not None else None
    candidates = {
        o.name: _candidates(problems[o.name], results[o.name], swept, notes) for o in options
    }
    overlay = _overlay(options, candidates)
    baseline = options[0].name
    base_front = results[baseline].front
    knee = _knee(results[baseline])
    premium = _premium(problems, options, base_front, knee, notes)
    summary = _premium_summary(options[1:], premium)
    target_given = target_resistance is not None
    if target_resistance is None and knee is not None:
        target_resistance = float(base_front[R].iloc[knee])
    price_now = float(problem.library.materials[swept].price.si) if swept else None
    sweep, envelopes, flips = _price_sweep(options, candidates, sweep_spec, target_resistance)
    target = _target_table(options, candidates, target_resistance)
    if sweep_spec is None:
        notes.append("no study.price_sweep: the price sweep is left out")
    if any(o.insert_material for o in options) and problem.condition.spreading in (
        "auto",
        "song_lee_au_1994",
    ):
        notes.append(
            "bases with an insert are rated by the exact series of the insert model, plain "
            "bases by the Song, Lee & Au (1994) closed form (model option spreading: "
            "muzychka_2003 rates both by series); the two methods differ by a fraction of a per "
            "cent of the sink resistance (0.6 % measured on a 60 x 60 x 5 mm base under a "
            "30 x 30 mm source), which enters the insert's premium"
        )
    timings["compare_s"] = time.perf_counter() - t0
    return StudyResult(
        problem=problem,
        options=options,
        problems=problems,
        results=results,
        candidates=candidates,
        overlay=overlay,
        premium=premium,
        premium_summary=summary,
        sweep=sweep,
        envelopes=envelopes,
        flips=flips,
        target=target,
        target_resistance=target_resistance,
        target_given=target_given,
        swept_material=swept,
        price_now=price_now,
        seed=results[baseline].seed,
        notes=notes,
        timings=timings,
    )


def _knee(result: SearchResult) -> int | None:
    if len(result.front) == 0:
        return None
    return knee_index(minimised_objectives(result.front, result.objective_columns))


# -- designs of a table in an option's construction --------------------------------------------
def _design_columns(table: pd.DataFrame) -> list[str]:
    return [c for c in (*GEOMETRY_COLUMNS, *OPTIONAL_DESIGN_COLUMNS) if c in table]


def _designs(table: pd.DataFrame, construction: Mapping, library: Library, **categories):
    """Designs of a result or archive table, with the construction columns of an option.

    ``categories`` (material, process, finish) override the table's columns.
    """
    columns: dict = {}
    for name in _design_columns(table):
        values = table[name]
        if name == "fin_type":
            values = values.astype(object).where(values.notna(), "plate")
        elif name == "pin_layout":
            values = values.astype(object).where(values.notna(), "inline")
        columns[name] = values.to_numpy()
    for name in CATEGORY_COLUMNS:
        if name in categories:
            columns[name] = categories[name]
        elif name in table:
            columns[name] = table[name].astype(str).to_numpy()
    columns.update(construction)
    return Designs.from_columns(columns, library)


def _with_price(library: Library, material: str, price: float) -> Library:
    """The library with one material's price per kg replaced (a fresh array cache)."""
    m = library.materials[material]
    text = f"{price} {library.currency}/kg"
    changed = dataclasses.replace(m, price=Value(si=float(price), text=text, source="study"))
    materials = {**library.materials, material: changed}
    return dataclasses.replace(library, materials=materials, _arrays={})


def cost_lines(problem: Problem, designs: Designs, material: str) -> dict[str, np.ndarray]:
    """Mass, total cost and the cost line in one material's price, for designs of a problem.

    The total cost of a design is linear in the price per kg of ``material``: the material
    cost prices each part (fins, base, insert) at its own material's price per kg times the
    stock bought, and the process cost does not depend on the price. The line is measured
    exactly from two evaluations of the cost model at prices 0 and 1:
    ``intercept = cost(0)``, ``slope = cost(1) - cost(0)`` [kg of that material bought], so
    that ``cost(p) = intercept + slope p``. Returns ``mass``, ``total_cost`` and
    ``material_cost`` at the library's prices, ``intercept`` and ``slope``.
    """
    lib = problem.library
    cond = problem.condition
    sizes = [(s.size_x, s.size_y, s.x, s.y) for s in cond.sources]
    geometry = derive(designs, lib, sizes)
    now = mass_and_cost(designs, geometry, lib, cond.quantity)
    out = {"mass": now["mass"], "total_cost": now["total_cost"]}
    out["material_cost"] = now["material_cost"]
    zero, one = (
        mass_and_cost(designs, geometry, _with_price(lib, material, p), cond.quantity)
        for p in _PRICE_PROBES
    )
    out["intercept"] = zero["total_cost"]
    out["slope"] = one["total_cost"] - zero["total_cost"]
    return out


def _candidates(problem: Problem, result: SearchResult, swept: str | None, notes) -> pd.DataFrame:
    """Every distinct feasible design the option's search evaluated, with cost lines."""
    archive = result.archive
    name = problem.resolved.get("study_option", {}).get("name", problem.name)
    if len(archive) == 0 or "feasible" not in archive:
        return pd.DataFrame()
    keys = [*_design_columns(archive), *(c for c in CATEGORY_COLUMNS if c in archive)]
    feasible = archive[archive["feasible"].to_numpy(dtype=bool)]
    feasible = feasible.drop_duplicates(subset=keys).reset_index(drop=True)
    if len(feasible) == 0:
        notes.append(f"{name}: no feasible design was evaluated")
        return pd.DataFrame()
    designs = _designs(feasible, problem.construction, problem.library)
    material = swept or problem.library.material_keys[0]
    lines = cost_lines(problem, designs, material)
    table = feasible[keys].copy()
    for key, value in problem.construction.items():
        column = key if key.endswith("material") else f"{key}_mm"
        table[column] = value if key.endswith("material") else value * 1e3
    if R in feasible:
        resistance = feasible[R].to_numpy(dtype=float)
    else:
        notes.append(
            f"{name}: thermal resistance is not an objective; the feasible designs were "
            "evaluated again for it"
        )
        resistance = evaluate_arrays(designs, problem.condition, problem.library)[
            "thermal_resistance"
        ]
    table[R] = resistance
    table[MASS] = lines["mass"]
    table["material_cost"] = lines["material_cost"]
    table[COST] = lines["total_cost"]
    if swept is not None:
        table["cost_intercept"] = lines["intercept"]
        table["cost_slope_kg"] = lines["slope"]
        price = problem.library.materials[swept].price.si
        error = np.max(
            np.abs(lines["intercept"] + price * lines["slope"] - lines["total_cost"])
            / np.maximum(np.abs(lines["total_cost"]), 1e-300)
        )
        if error > 1e-9:  # the cost model is linear in the price: this would be a bug
            notes.append(f"{name}: the cost lines miss the cost by up to {error:.1e} (relative)")
    return table


# -- overlay -----------------------------------------------------------------------------------
def _overlay(options, candidates) -> pd.DataFrame:
    """Non-dominated (R, mass) and (R, total cost) designs of each option, sorted by x."""
    parts = []
    for option in options:
        table = candidates[option.name]
        if len(table) == 0:
            continue
        for versus in (MASS, COST):
            F = table[[R, versus]].to_numpy(dtype=float)
            keep = nondominated(F) & np.all(np.isfinite(F), axis=1)
            part = table[keep].sort_values([versus, R], kind="stable").copy()
            part.insert(0, "versus", versus)
            part.insert(0, "option", option.name)
            part.insert(2, "design", part.index.to_numpy())
            parts.append(part)
    if not parts:
        return pd.DataFrame(columns=["option", "versus", "design", R, MASS, COST])
    return pd.concat(parts, ignore_index=True, sort=False)


# -- premium of matched designs ----------------------------------------------------------------
def _finishes(library: Library, material: str, wanted, choices) -> np.ndarray:
    """The baseline's finish where the option's material offers it, else its first offered."""
    emissivity = library.array("emissivity")
    code = library.material_code(material)
    offered = [f for f in choices if np.isfinite(emissivity[code, library.finish_code(f)])]
    out = np.asarray(wanted, dtype=object).copy()
    for finish in set(out.tolist()):
        ok = finish in offered
        if not ok:
            out[out == finish] = offered[0] if offered else finish
    return out


def _premium(problems, options, base_front, knee, notes) -> pd.DataFrame:
    """Each baseline front design rebuilt in every other option, and the deltas."""
    parts = []
    baseline = options[0].name
    if len(base_front) == 0:
        if len(options) > 1:
            notes.append(f"{baseline}: the baseline front is empty; no matched designs")
        return _empty_premium()
    geometry = _design_columns(base_front)
    n = len(base_front)
    for option in options[1:]:
        problem = problems[option.name]
        lib = problem.library
        finish = _finishes(
            lib,
            option.material,
            base_front["finish"].astype(str),
            problem.variable("finish").choices,
        )
        chosen = np.full(n, -1)
        tables, feasible = [], []
        processes = problem.variable("process").choices
        for k, process in enumerate(processes):
            designs = _designs(
                base_front,
                problem.construction,
                lib,
                material=option.material,
                process=process,
                finish=finish,
            )
            s = score(problem, designs)
            table = to_frame(
                designs, s.arrays, lib, [src.name for src in problem.condition.sources]
            )
            made = s.arrays["reasons"] == 0
            chosen = np.where((chosen < 0) & made, k, chosen)
            tables.append(table)
            feasible.append(s.feasible)
        skipped = np.flatnonzero(chosen < 0)
        if skipped.size:
            reasons = sorted(set(tables[0]["infeasible_reason"].astype(str).iloc[skipped]))
            notes.append(
                f"{option.name}: {skipped.size} of {n} baseline front designs cannot be made "
                f"by {', '.join(processes)} ({'; '.join(reasons)}); left out of the premium"
            )
        rows = np.flatnonzero(chosen >= 0)
        if rows.size == 0:
            continue
        pick = chosen[rows]
        take = {c: np.empty(rows.size, dtype=object) for c in ("process", "finish")}
        r_opt, m_opt, c_opt = (np.empty(rows.size) for _ in range(3))
        meets = np.zeros(rows.size, dtype=bool)
        for k in np.unique(pick):
            at = pick == k
            sub = tables[k].iloc[rows[at]]
            take["process"][at] = processes[k]
            take["finish"][at] = sub["finish"].astype(str).to_numpy()
            r_opt[at] = sub[R].to_numpy(dtype=float)
            m_opt[at] = sub[MASS].to_numpy(dtype=float)
            c_opt[at] = sub[COST].to_numpy(dtype=float)
            meets[at] = feasible[k][rows[at]]
        base = base_front.iloc[rows]
        part = pd.DataFrame({"option": option.name, "baseline_row": rows})
        part["knee"] = rows == (knee if knee is not None else -1)
        for column in geometry:
            part[column] = base[column].to_numpy()
        part["baseline_material"] = base["material"].astype(str).to_numpy()
        part["baseline_process"] = base["process"].astype(str).to_numpy()
        part["material"] = option.material
        for key, value in option.construction().items():
            part[key if key.endswith("material") else f"{key}_mm"] = (
                value if key.endswith("material") else value * 1e3
            )
        part["process"] = take["process"]
        part["finish"] = take["finish"]
        part["thermal_resistance_baseline_K_per_W"] = base[R].to_numpy(dtype=float)
        part[R] = r_opt
        part["mass_baseline_kg"] = base[MASS].to_numpy(dtype=float)
        part[MASS] = m_opt
        part["total_cost_baseline"] = base[COST].to_numpy(dtype=float)
        part[COST] = c_opt
        part["meets_constraints"] = meets
        parts.append(_deltas(part))
    if not parts:
        return _empty_premium()
    return pd.concat(parts, ignore_index=True, sort=False)


def _empty_premium() -> pd.DataFrame:
    columns = ["option", "baseline_row", "knee", *GEOMETRY_COLUMNS, "process", R, MASS, COST]
    columns += ["delta_resistance_K_per_W", "delta_mass_kg", "delta_cost"]
    columns += ["K_per_W_per_kg", "K_per_W_per_cost", "verdict"]
    return pd.DataFrame(columns=columns)


def _significant(delta: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """-1, 0 or +1: the sign of a difference, 0 where it is within round-off of the values."""
    scale = RELATIVE_ZERO * np.maximum(np.abs(a), np.abs(b))
    return np.where(delta > scale, 1, np.where(delta < -scale, -1, 0))


def _deltas(part: pd.DataFrame) -> pd.DataFrame:
    """Resistance gained, extra mass and cost, and the gain per extra kg and per currency.

    ``delta_resistance = R_baseline - R_option`` (K/W gained), ``delta_mass = m_option -
    m_baseline`` and ``delta_cost = c_option - c_baseline`` (extra). The ratios are given
    only where they mean a price paid for a gain (ΔR > 0 and the extra > 0); where the
    option gains and is lighter (cheaper) it is better in both and the ratio is left blank,
    as it is where the difference vanishes (no division by it).
    """
    r_b, r_o = part["thermal_resistance_baseline_K_per_W"].to_numpy(), part[R].to_numpy()
    m_b, m_o = part["mass_baseline_kg"].to_numpy(), part[MASS].to_numpy()
    c_b, c_o = part["total_cost_baseline"].to_numpy(), part[COST].to_numpy()
    d_r, d_m, d_c = r_b - r_o, m_o - m_b, c_o - c_b
    s_r = _significant(d_r, r_b, r_o)
    s_m = _significant(d_m, m_b, m_o)
    s_c = _significant(d_c, c_b, c_o)
    part["delta_resistance_K_per_W"] = d_r
    part["delta_mass_kg"] = d_m
    part["delta_cost"] = d_c
    with np.errstate(divide="ignore", invalid="ignore"):
        part["K_per_W_per_kg"] = np.where(
            (s_r > 0) & (s_m > 0), d_r / np.where(s_m > 0, d_m, 1), np.nan
        )
        part["K_per_W_per_cost"] = np.where(
            (s_r > 0) & (s_c > 0), d_r / np.where(s_c > 0, d_c, 1), np.nan
        )
    words_r = {1: "lower R", 0: "same R", -1: "higher R"}
    words_m = {1: "heavier", 0: "same mass", -1: "lighter"}
    words_c = {1: "dearer", 0: "same cost", -1: "cheaper"}
    part["verdict"] = [
        f"{words_r[a]}, {words_m[b]}, {words_c[c]}" for a, b, c in zip(s_r, s_m, s_c, strict=True)
    ]
    return part


def _median(values) -> float:
    values = np.asarray(values, dtype=float)
    values = values[np.isfinite(values)]
    return float(np.median(values)) if values.size else float("nan")


def _premium_summary(options, premium: pd.DataFrame) -> pd.DataFrame:
    """Per option: pairs, medians of the deltas and of the ratios, and the knee's values."""
    rows = []
    for option in options:
        part = premium[premium["option"] == option.name] if len(premium) else premium
        knee = part[part["knee"].astype(bool)] if len(part) else part
        row = {
            "option": option.name,
            "pairs": len(part),
            "meeting_constraints": int(part["meets_constraints"].sum()) if len(part) else 0,
            "lower_resistance": int((part["verdict"].str.startswith("lower R")).sum())
            if len(part)
            else 0,
        }
        for column in PREMIUM_COLUMNS:
            values = part[column] if len(part) else []
            row[f"median_{column}"] = _median(values)
        row["ratio_pairs_per_kg"] = (
            int(np.isfinite(part["K_per_W_per_kg"]).sum()) if len(part) else 0
        )
        row["ratio_pairs_per_cost"] = (
            int(np.isfinite(part["K_per_W_per_cost"]).sum()) if len(part) else 0
        )
        for column in (R, *PREMIUM_COLUMNS):
            row[f"knee_{column}"] = float(knee[column].iloc[0]) if len(knee) else float("nan")
        rows.append(row)
    return pd.DataFrame(rows)


# -- the price sweep ---------------------------------------------------------------------------
def _pareto_lines(intercept, slope, low: float, high: float) -> np.ndarray:
    """Indices of the lines that can be lowest somewhere on [low, high], by slope, falling.

    A line that another line undercuts (or equals) at both ends of the interval lies above
    it on the whole interval; the lines left are those of the 2-D Pareto front of the
    values at the two ends, ordered by the value at ``low`` (rising), so by slope (falling).
    """
    intercept = np.asarray(intercept, dtype=float)
    slope = np.asarray(slope, dtype=float)
    v0, v1 = intercept + slope * low, intercept + slope * high
    order = np.lexsort((np.arange(v0.size), v1, v0))
    v1s = v1[order]
    if not v1s.size:
        return order
    before = np.concatenate([[np.inf], np.minimum.accumulate(v1s)[:-1]])
    return order[v1s < before]


def lower_envelope(intercept, slope, low: float, high: float) -> pd.DataFrame:
    """The exact lower envelope of lines y = a + b x on [low, high].

    Returns the pieces in order: ``start``, ``end``, ``line`` (index into the inputs). At a
    point where several lines meet, the one that stays lowest to the right takes over (the
    smaller slope); of identical lines the first is used. The breakpoints are the exact
    intersections x = (a_i - a_j)/(b_j - b_i) of consecutive lines, not grid points.
    """
    if not high > low:
        raise ValueError("lower_envelope: needs high > low")
    a = np.asarray(intercept, dtype=float)
    b = np.asarray(slope, dtype=float)
    keep = _pareto_lines(a, b, low, high)
    if keep.size == 0:
        return pd.DataFrame({"start": [], "end": [], "line": pd.Series([], dtype=np.int64)})
    a, b = a[keep], b[keep]
    v0 = a + b * low
    pieces = []
    current, x = 0, float(low)
    span = high - low
    while True:
        later = np.arange(current + 1, a.size)  # every later line has a smaller slope
        if later.size == 0:
            pieces.append((x, float(high), current))
            break
        # meeting points, from the values at `low` (less cancellation than from intercepts)
        cross = low + (v0[later] - v0[current]) / (b[current] - b[later])
        cross = np.maximum(cross, x)
        first = cross.min()
        if first >= high:
            pieces.append((x, float(high), current))
            break
        nxt = later[cross <= first + 1e-12 * span][-1]  # of lines meeting there: the flattest
        if first > x:
            pieces.append((x, float(first), current))
        current, x = int(nxt), float(first)
    out = pd.DataFrame(pieces, columns=["start", "end", "line"])
    out["line"] = keep[out["line"].to_numpy()]
    return out


def _basis_tables(options, candidates, target):
    """The designs each basis of the sweep may choose from, per option."""
    for basis in BASES:
        if basis == "target" and target is None:
            continue
        per_option = {}
        for option in options:
            table = candidates[option.name]
            if len(table) == 0 or "cost_slope_kg" not in table:
                continue
            if basis == "target":
                table = table[table[R].to_numpy(dtype=float) <= target * (1 + 1e-12)]
            if len(table):
                per_option[option.name] = table
        yield basis, per_option


def _price_sweep(options, candidates, spec, target):
    """Cheapest design per option at each price, the exact envelopes and the flips."""
    sweep_cols = ["basis", "price_per_kg", "option", COST, "design", R, MASS]
    sweep_cols += ["cost_intercept", "cost_slope_kg", "cheapest"]
    env_cols = ["basis", "option", "price_from", "price_to", "design", "intercept", "slope_kg"]
    flip_cols = ["basis", "price_per_kg", "cheaper_below", "cheaper_above", COST]
    if spec is None:
        return tuple(pd.DataFrame(columns=c) for c in (sweep_cols, env_cols, flip_cols))
    prices = np.linspace(spec.low, spec.high, spec.steps)
    sweep_rows, env_rows, flip_rows = [], [], []
    for basis, per_option in _basis_tables(options, candidates, target):
        lines_a, lines_b, labels, designs = [], [], [], []
        best = {}
        for name, table in per_option.items():
            a = table["cost_intercept"].to_numpy(dtype=float)
            b = table["cost_slope_kg"].to_numpy(dtype=float)
            ids = table.index.to_numpy()
            env = lower_envelope(a, b, spec.low, spec.high)
            for start, end, line in env.itertuples(index=False):
                env_rows.append((basis, name, start, end, int(ids[line]), a[line], b[line]))
            used = np.unique(env["line"].to_numpy())
            values = a[used, None] + b[used, None] * prices[None, :]
            pick = used[np.argmin(values, axis=0)]
            best[name] = (a[pick] + b[pick] * prices, pick, table, ids)
            lines_a.append(a[used])
            lines_b.append(b[used])
            labels += [name] * used.size
            designs.append(ids[used])
        if not best:
            continue
        names = list(best)
        costs = np.vstack([best[n][0] for n in names])
        cheapest = np.argmin(costs, axis=0)
        for j, name in enumerate(names):
            cost, pick, table, ids = best[name]
            sub = table.loc[ids[pick]]
            for i, price in enumerate(prices):
                sweep_rows.append(
                    (
                        basis,
                        float(price),
                        name,
                        float(cost[i]),
                        int(ids[pick[i]]),
                        float(sub[R].iloc[i]),
                        float(sub[MASS].iloc[i]),
                        float(sub["cost_intercept"].iloc[i]),
                        float(sub["cost_slope_kg"].iloc[i]),
                        bool(cheapest[i] == j),
                    )
                )
        a_all, b_all = np.concatenate(lines_a), np.concatenate(lines_b)
        overall = lower_envelope(a_all, b_all, spec.low, spec.high)
        owner = [labels[i] for i in overall["line"]]
        for k in range(1, len(overall)):
            if owner[k] != owner[k - 1]:
                price = float(overall["start"].iloc[k])
                line = int(overall["line"].iloc[k])
                flip_rows.append(
                    (basis, price, owner[k - 1], owner[k], a_all[line] + b_all[line] * price)
                )
    sweep = pd.DataFrame(sweep_rows, columns=sweep_cols)
    return (
        sweep,
        pd.DataFrame(env_rows, columns=env_cols),
        pd.DataFrame(flip_rows, columns=flip_cols),
    )


def _target_table(options, candidates, target) -> pd.DataFrame:
    """Per option, the cheapest design (at today's prices) whose resistance meets the target."""
    columns = ["option", "design", R, MASS, COST, "cost_intercept", "cost_slope_kg"]
    if target is None:
        return pd.DataFrame(columns=columns)
    rows = []
    for option in options:
        table = candidates[option.name]
        if len(table) == 0:
            continue
        ok = table[table[R].to_numpy(dtype=float) <= target * (1 + 1e-12)]
        if len(ok) == 0:
            rows.append({"option": option.name, "design": -1, R: np.nan, MASS: np.nan})
            continue
        best = ok[COST].idxmin()
        row = ok.loc[best]
        entry = {"option": option.name, "design": int(best)}
        for column in _design_columns(ok):
            entry[column] = row[column]
        entry["process"] = str(row["process"])
        for column in (R, MASS, COST, "cost_intercept", "cost_slope_kg"):
            if column in ok:
                entry[column] = float(row[column])
        rows.append(entry)
    return pd.DataFrame(rows)

"""The search: a genetic algorithm or the exact grid, an archive and its Pareto front.

When the problem offers its catalog to the search (``catalog.in_search``), catalog parts
compete with free designs through the encoding's ``part`` gene (see
:mod:`optifin.search.encoding`). Their objectives, constraints and result rows price the
metal at the catalog price (:meth:`optifin.catalog.SearchParts.costs`): the
``material_cost`` of a catalog part is its catalog price and its ``total_cost`` that plus
the model's ``process_cost`` (process ``catalog_cut``, no set-up). The result tables then
carry a ``catalog_part`` column: the profile id of a catalog part, ``""`` for a free design.
"""

from __future__ import annotations

import copy
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from optifin.errors import SearchError
from optifin.model import to_frame
from optifin.model.design import FIN_TYPES, PIN_LAYOUTS
from optifin.problem.spec import LIMITS, LOWER_LIMITS, Problem
from optifin.search.encoding import Encoding
from optifin.search.ga import run_ga
from optifin.search.objectives import Scores, constraint_names, score
from optifin.search.pareto import RunningFront, hypervolume, normaliser

__all__ = ["SearchResult", "optimise"]

CHUNK = 250_000  #: designs per model call in the exact mode
ARCHIVE_ROWS_MAX = 2_000_000  #: beyond this, the exact mode keeps only feasible designs


@dataclass
class SearchResult:
    """What a search found: the front, the archive of designs evaluated and the history."""

    problem: Problem
    algorithm: str
    seed: int
    front: pd.DataFrame  #: Pareto designs: model columns, objective and margin columns
    archive: pd.DataFrame  #: every design evaluated (or every feasible one, see notes)
    history: pd.DataFrame  #: generation, evaluations, hypervolume, feasible
    evaluations: int
    interrupted: bool
    timings: dict[str, float] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    objective_columns: list[tuple[str, str]] = field(default_factory=list)
    #: the archive front's minimised objectives after each generation (not written out)
    snapshots: list[np.ndarray] = field(default_factory=list, repr=False)

    @property
    def hypervolume(self) -> float:
        return float(self.history["hypervolume"].iloc[-1]) if len(self.history) else 0.0


class _Recorder:
    """Scores batches, keeps the archive and the running front; the search's one door."""

    def __init__(self, problem: Problem, encoding: Encoding, keep_all: bool = True):
        self.problem, self.encoding = problem, encoding
        self.keep_all = keep_all
        self.front = RunningFront(encoding.n_var, len(problem.objectives))
        self.batches: list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] = []
        self.n_eval = 0
        self.n_feasible = 0
        self.rows: list[tuple[int, int, int, float]] = []  # generation, evals, feasible, s
        self.started = time.perf_counter()
        self.model_seconds = 0.0

    def __call__(self, X: np.ndarray):
        X = self.encoding.canonical(X)
        start = time.perf_counter()
        s = _score(
            self.problem, self.encoding.decode(X), self.encoding.parts, self.encoding.part_codes(X)
        )
        self.model_seconds += time.perf_counter() - start
        self.n_eval += X.shape[0]
        self.n_feasible += int(s.feasible.sum())
        self.front.add(X[s.feasible], s.F[s.feasible])
        cv = np.maximum(s.G, 0).sum(axis=1)
        if self.keep_all:
            self.batches.append((X, s.F, s.feasible, cv))
        else:
            ok = s.feasible
            self.batches.append((X[ok], s.F[ok], ok[ok], cv[ok]))
        self.front.snapshot()
        elapsed = time.perf_counter() - self.started
        self.rows.append((len(self.rows) + 1, self.n_eval, self.n_feasible, elapsed))
        return s.F, s.G


def optimise(
    problem: Problem,
    *,
    seed: int | None = None,
    algorithm: str | None = None,
    evaluations: int | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> SearchResult:
    """Search a problem and return its Pareto front, archive and history.

    ``algorithm`` overrides the problem's (``"auto"`` enumerates the grid when every
    variable is discrete and the grid is at most ``search.exact_limit`` designs, else runs
    NSGA-II). ``progress(done, total)`` is called as evaluations proceed.
    """
    settings = problem.search
    seed = settings.seed if seed is None else int(seed)
    algorithm = algorithm or settings.algorithm
    budget = evaluations or settings.evaluations
    encoding = Encoding(problem)
    grid = encoding.grid_size
    if algorithm == "auto":
        algorithm = "exact" if grid is not None and grid <= settings.exact_limit else "nsga2"
    if algorithm == "exact" and grid is None:
        raise SearchError("the exact mode needs every searched variable to have a step")
    if encoding.n_var == 0:
        algorithm = "exact"

    timings: dict[str, float] = {}
    notes: list[str] = list(encoding.notes)
    started = time.perf_counter()
    n_constr = len(constraint_names(problem))
    if algorithm == "exact":
        recorder = _Recorder(problem, encoding, keep_all=grid <= ARCHIVE_ROWS_MAX)
        if not recorder.keep_all:
            notes.append(f"the grid has {grid} designs: the archive keeps the feasible ones only")
        completed = True
        try:
            for start in range(0, grid, CHUNK):
                recorder(encoding.grid_chunk(start, min(start + CHUNK, grid)))
                if progress:
                    progress(recorder.n_eval, grid)
        except KeyboardInterrupt:
            completed = False
    else:
        recorder = _Recorder(problem, encoding)
        column = encoding.part_column
        ga_encoding = encoding
        if column is not None:
            # catalog parts are few: rate every one exactly, then spend the GA's budget on
            # the free designs (in one mixed population the parts, which need no die, crowd
            # the free designs out before the GA has found the good ones)
            parts = np.tile(encoding.xl, (len(encoding.parts), 1))
            parts[:, column] = np.arange(1, len(encoding.parts) + 1)
            recorder(parts)
            ga_encoding = copy.copy(encoding)
            ga_encoding.xl, ga_encoding.xu = encoding.xl.copy(), encoding.xu.copy()
            ga_encoding.xl[column] = ga_encoding.xu[column] = 0.0
            recorder.encoding = ga_encoding
            notes.append(
                f"catalog: all {len(encoding.parts)} parts rated exactly; the genetic search "
                "covers the free designs; the front is taken over both"
            )
        completed = run_ga(
            algorithm,
            ga_encoding,
            len(problem.objectives),
            n_constr,
            recorder,
            settings.population,
            budget,
            seed,
            on_generation=(lambda n: progress(n, budget)) if progress else None,
        )
    timings["search_s"] = time.perf_counter() - started
    timings["model_s"] = recorder.model_seconds
    if not completed:
        notes.append("interrupted: the front is what was found before the stop")

    t0 = time.perf_counter()
    result = _assemble(problem, encoding, recorder, algorithm, seed, notes)
    result.interrupted = not completed
    timings["assemble_s"] = time.perf_counter() - t0
    result.timings = timings
    return result


def _assemble(problem, encoding, recorder, algorithm, seed, notes) -> SearchResult:
    front_X, front_F = recorder.front.X, recorder.front.F
    if front_X.shape[0]:
        normalise = normaliser(front_F)
        hv = [hypervolume(F, normalise) for F in recorder.front.snapshots]
    else:
        hv = [0.0 for _ in recorder.front.snapshots]
        notes.append("no feasible design was found")
    history = pd.DataFrame(
        recorder.rows, columns=["generation", "evaluations", "feasible", "elapsed_s"]
    )
    history.insert(2, "hypervolume", hv)

    front = design_table(
        problem,
        encoding.decode(front_X),
        part=encoding.part_codes(front_X) if encoding.parts is not None else None,
        parts=encoding.parts,
    )
    archive = archive_table(problem, encoding, recorder.batches)
    objective_columns = [(objective_column(o.name), o.sense) for o in problem.objectives]
    return SearchResult(
        problem=problem,
        algorithm=algorithm,
        seed=seed,
        front=front,
        archive=archive,
        history=history,
        evaluations=recorder.n_eval,
        interrupted=False,
        notes=notes,
        objective_columns=objective_columns,
        snapshots=recorder.front.snapshots,
    )


def objective_column(name: str) -> str:
    """The result-table column of an objective."""
    from optifin.model import COLUMN_NAMES
    from optifin.problem.spec import OBJECTIVES

    return COLUMN_NAMES[OBJECTIVES[name][0]]


def _score(problem: Problem, designs, parts=None, part=None) -> Scores:
    """:func:`score`, with catalog parts (``part`` > 0) priced by their catalog.

    ``parts`` is the :class:`optifin.catalog.SearchParts` of the search (None: plain
    ``score``); the returned arrays carry the catalog figures in ``material_cost`` and
    ``total_cost`` (a new dict: the model's arrays are not written to).
    """
    s = score(problem, designs)
    if parts is None or part is None or not np.any(part > 0):
        return s
    from optifin.catalog import catalog_scores

    material, total = parts.costs(part, s.arrays)
    F, G, feasible = catalog_scores(problem, s, material, total)
    arrays = {**s.arrays, "material_cost": material, "total_cost": total}
    return Scores(F=F, G=G, feasible=feasible, arrays=arrays)


def design_table(problem: Problem, designs, part=None, parts=None) -> pd.DataFrame:
    """Full result rows for designs: the model table plus one margin per constraint.

    ``margin_<constraint>`` is the normalised distance to the limit, >= 0 when satisfied;
    the smallest margin is the binding constraint. Rows are sorted by the first objective,
    best first.

    When the problem offers catalog parts to the search (``catalog.in_search``), the
    table's first column is ``catalog_part``: the profile id of each catalog part, ``""``
    for a free design. ``part`` gives each design's part code (0 free, k catalog part k
    of :func:`optifin.catalog.search_parts`); without it the designs are matched to the
    parts (:meth:`optifin.catalog.SearchParts.match`). ``parts`` stands for the search's
    parts (read from the problem's catalog otherwise). A catalog part's ``material_cost``
    is its catalog price and its ``total_cost`` that plus ``process_cost``; objectives,
    margins and feasibility use these figures.
    """
    if parts is None:
        from optifin.catalog import search_parts

        parts = search_parts(problem)
    if parts is not None:
        part = parts.match(designs) if part is None else np.asarray(part, dtype=np.int64)
    s = _score(problem, designs, parts, part)  # one model evaluation: table and margins
    table = design_rows(problem, designs, s)
    if parts is not None:
        table.insert(0, "catalog_part", parts.part_ids(part))
    first = problem.objectives[0]
    column = objective_column(first.name)
    table = table.sort_values(column, ascending=first.sense == "minimise", kind="stable")
    return table.reset_index(drop=True)


def design_rows(problem: Problem, designs, s: Scores) -> pd.DataFrame:
    """The rows of :func:`design_table` from one score ``s``, in design order (unsorted).

    The model table, ``margin_<constraint>`` per constraint, feasibility, and the reasons,
    with each limit or envelope bound that is not met added to the model's own.
    """
    names = [source.name for source in problem.condition.sources]
    table = to_frame(designs, s.arrays, problem.library, names)
    constraints = constraint_names(problem)
    for name, column in zip(constraints, s.G.T, strict=True):
        table[f"margin_{name}"] = 0.0 - column  # 0.0 - x: no negative zeros in the table
    violated = [
        np.where(column > 0, f"{name.replace('_', ' ')} not met", "")
        for name, column in zip(constraints, s.G.T, strict=True)
        if name in LIMITS or name in LOWER_LIMITS or name.startswith("envelope_")
    ]
    reasons = table["infeasible_reason"].to_numpy(dtype=object)
    for texts in violated:
        reasons = np.where(
            texts == "", reasons, np.where(reasons == "", texts, reasons + "; " + texts)
        )
    table["feasible"] = s.feasible
    table["infeasible_reason"] = reasons
    return table


def archive_table(problem: Problem, encoding: Encoding, batches) -> pd.DataFrame:
    """Every design evaluated: design columns, objective values, feasibility."""
    if not batches:
        return pd.DataFrame()
    X = np.vstack([b[0] for b in batches])
    F = np.vstack([b[1] for b in batches])
    feasible = np.concatenate([b[2] for b in batches])
    cv = np.concatenate([b[3] for b in batches])
    designs = encoding.decode(X)
    lib = problem.library
    data = {}
    if encoding.parts is not None:
        data["catalog_part"] = encoding.parts.part_ids(encoding.part_codes(X))
    elif problem.catalog is not None and problem.catalog.in_search:  # no part fits
        data["catalog_part"] = np.full(X.shape[0], "", dtype=object)
    data |= {
        "fin_count": designs.fin_count,
        "fin_thickness_mm": designs.fin_thickness * 1e3,
        "fin_height_mm": designs.fin_height * 1e3,
        "base_thickness_mm": designs.base_thickness * 1e3,
        "width_mm": designs.width * 1e3,
        "length_mm": designs.length * 1e3,
        "material": pd.Categorical.from_codes(designs.material, lib.material_keys),
        "process": pd.Categorical.from_codes(designs.process, lib.process_keys),
        "finish": pd.Categorical.from_codes(designs.finish, lib.finishes),
    }
    if designs.has_pins:
        pin = designs.fin_type == 1
        data["fin_type"] = pd.Categorical.from_codes(designs.fin_type, FIN_TYPES)
        for name in ("pin_diameter", "pin_pitch_transverse", "pin_pitch_longitudinal"):
            data[f"{name}_mm"] = np.where(pin, getattr(designs, name) * 1e3, np.nan)
        data["pin_layout"] = pd.Categorical.from_codes(
            np.where(pin, designs.pin_layout, -1), PIN_LAYOUTS
        )
    if designs.is_tapered:
        data["fin_tip_thickness_mm"] = designs.fin_tip_thickness * 1e3
    for objective, col in zip(problem.objectives, F.T, strict=True):
        value = -col if objective.sense == "maximise" else col
        data[objective_column(objective.name)] = np.where(np.abs(col) >= 1e12, np.nan, value)
    data["feasible"] = feasible
    data["constraint_violation"] = cv
    return pd.DataFrame(data)

"""The Python API: what the command line does, as functions.

>>> import optifin
>>> problem = optifin.load_problem("problems/power_module.yaml")
>>> table = optifin.evaluate_designs(problem, {"fin_count": 24, "fin_thickness": "1.2 mm",
...     "fin_height": "30 mm", "base_thickness": "6 mm", "material": "al_6063_t5",
...     "process": "extrusion"})
>>> result = optifin.optimise(problem)          # front, archive, history
>>> folder = optifin.write_run(result)          # results/<problem name>/
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from optifin.errors import ConfigError, OptifinError
from optifin.model.design import Designs
from optifin.problem import load_problem
from optifin.problem.spec import VARIABLE_KINDS, Problem
from optifin.search import SearchResult, design_table, optimise
from optifin.units import to_si

__all__ = [
    "design_from_values",
    "draw",
    "evaluate_designs",
    "load_problem",
    "optimise",
    "screen_catalog",
    "study_materials",
    "write_run",
]


def design_from_values(problem: Problem, values: Mapping[str, Any]) -> Designs:
    """Designs from the problem's fixed variables plus ``values`` for the rest.

    ``values`` maps variable names to quantities with units (``"1.2 mm"``), SI numbers, keys
    (``"cu_c11000"``) or equal-length sequences of these. Every variable that the problem
    searches must be given.
    """
    errors: list[str] = []
    unknown = set(values) - set(VARIABLE_KINDS)
    for name in sorted(unknown):
        import difflib

        near = difflib.get_close_matches(name, VARIABLE_KINDS, n=1)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        errors.append(f"{name}: not a design variable{hint}")
    columns: dict[str, Any] = {}
    for name, kind in VARIABLE_KINDS.items():
        variable = problem.variable(name)
        if name in values:
            raw = values[name]
            items = list(raw) if isinstance(raw, list | tuple | np.ndarray) else [raw]
            try:
                if kind == "length":
                    columns[name] = [to_si(v, "length", name) for v in items]
                elif kind == "ratio":
                    columns[name] = [to_si(v, "dimensionless", name) for v in items]
                elif kind == "integer":
                    columns[name] = [_whole(v, name) for v in items]
                else:
                    columns[name] = [str(v) for v in items]
            except OptifinError as exc:
                errors.append(str(exc))
        elif variable.fixed:
            columns[name] = [variable.choices[0] if kind == "choice" else variable.low]
        else:
            span = (
                f"one of {', '.join(variable.choices)}"
                if kind == "choice"
                else f"{_show(variable.low, kind)} to {_show(variable.high, kind)}"
            )
            errors.append(f"{name}: the problem searches it ({span}); give a value")
    if errors:
        raise ConfigError(errors, source=str(problem.source))
    lengths = {len(v) for v in columns.values()} - {1}
    if len(lengths) > 1:
        raise ConfigError("values of different lengths", source=str(problem.source))
    n = lengths.pop() if lengths else 1
    frame = {k: (v * n if len(v) == 1 else v) for k, v in columns.items()}
    try:
        return Designs.from_columns(frame, problem.library)
    except OptifinError as exc:
        raise ConfigError(str(exc), source=str(problem.source)) from None


def _whole(value, name) -> int:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise ConfigError(f"{name}: expected a whole number, found {value!r}") from None
    if number != int(number):
        raise ConfigError(f"{name}: expected a whole number, found {value!r}")
    return int(number)


def _show(value: float, kind: str) -> str:
    return f"{value * 1e3:g} mm" if kind == "length" else f"{value:g}"


def evaluate_designs(problem: Problem, values: Mapping[str, Any] | Designs) -> pd.DataFrame:
    """Full rows (every metric, constraint margins, feasibility) for designs of a problem."""
    designs = values if isinstance(values, Designs) else design_from_values(problem, values)
    return design_table(problem, designs)


def write_run(result: SearchResult, out: str | Path | None = None, figures: bool = True) -> Path:
    """Write a result folder (``results/<problem name>/`` by default); returns its path."""
    from optifin.report.writer import write_results

    folder = Path(out) if out is not None else Path("results") / result.problem.name
    extras = None
    if figures:
        from optifin.report.document import write_extras

        extras = write_extras
    return write_results(result, folder, extras=extras)


def draw(design: Mapping[str, Any], out: str | Path, formats=("svg", "dxf"), title: str = ""):
    """Cross-section drawings of one design row: dimensioned SVG and/or DXF, in mm.

    ``design`` is a result row (a ``front.csv`` row, an :func:`evaluate_designs` row, a
    catalog part); ``out`` is a file name whose suffix is replaced per format. Returns the
    paths written. The DXF has one closed outline of base and fins (for pins a row section
    and the plan), whose area times the length times the density is the row's mass.
    """
    from optifin.report.cad import write_dxf
    from optifin.report.drawing import cross_section_svg

    out = Path(out)
    paths = []
    for fmt in formats:
        path = out.with_suffix("." + fmt)
        if fmt == "svg":
            text = cross_section_svg(design, title=title)
            tmp = path.with_name(f".{path.name}.tmp")
            tmp.write_text(text, encoding="utf-8")
            tmp.replace(path)
            paths.append(path)
        elif fmt == "dxf":
            paths.append(write_dxf(design, path, title=title))
        else:
            raise ConfigError(f"drawing format {fmt!r}: expected svg or dxf")
    return paths


def screen_catalog(problem: Problem, catalog=None, out: str | Path | None = None):
    """Screen the problem's catalog (its file, cut lengths, orientations; the demo catalog
    without one): every stock profile at every cut length. Returns the
    :class:`optifin.catalog.ScreenResult`; with ``out`` also writes its results folder."""
    from optifin.catalog import load_catalog, screen_problem

    if catalog is not None and not hasattr(catalog, "designs"):
        catalog = load_catalog(catalog, problem.library)
    result = screen_problem(problem, catalog)
    if out is not None:
        from optifin.report.screening import write_screening

        write_screening(result, problem, out)
    return result


def study_materials(problem: Problem, out: str | Path | None = None, **options):
    """Run the problem's material study (one search per construction); returns the
    :class:`optifin.study.StudyResult`, and writes its folder when ``out`` is given.
    ``options`` go to :func:`optifin.study.run_study` (seed, evaluations, ...)."""
    from optifin.study import run_study

    options.setdefault("target_resistance", problem.study_target)
    result = run_study(problem, **options)
    if out is not None:
        from optifin.report.study_report import write_study

        write_study(result, out)
    return result

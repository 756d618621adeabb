"""The ``optifin`` command: a thin layer over the Python API.

Errors of the user are one line on stderr and exit code 2; a traceback only with --debug.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import math
import sys
import time
from pathlib import Path

from optifin import __version__
from optifin.errors import OptifinError

SUMMARY_COLUMNS = (
    "fin_type",
    "fin_count",
    "fin_thickness_mm",
    "fin_height_mm",
    "base_thickness_mm",
    "pin_diameter_mm",
    "pin_layout",
    "material",
    "process",
)


def main(argv: list[str] | None = None) -> int:
    parser = _parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return 2
    try:
        return args.func(args)
    except OptifinError as exc:
        if args.debug:
            raise
        text = str(exc)
        first, *rest = text.splitlines() or [""]
        print(f"optifin: error: {first}", file=sys.stderr)
        for line in rest:
            print(line, file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("optifin: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped early (head, less)
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="optifin",
        description="Multi-objective design optimisation of air-cooled heat sinks "
        "(plate and pin fins).",
    )
    parser.add_argument("--version", action="version", version=f"optifin {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    def command(name, func, help_text):
        p = sub.add_parser(name, help=help_text, description=help_text)
        p.add_argument("--debug", action="store_true", help="show tracebacks")
        p.set_defaults(func=func)
        return p

    p = command("run", _run, "search a problem and write its results folder")
    p.add_argument("problem", help="problem file (YAML)")
    p.add_argument("--out", help="results folder (default results/<problem name>)")
    p.add_argument("--seed", type=int, help="random seed (default: the problem's)")
    p.add_argument("--algorithm", choices=["auto", "nsga2", "nsga3", "exact"])
    p.add_argument("--evaluations", type=int, help="evaluation budget of the GA")
    p.add_argument("--no-figures", action="store_true", help="skip plots, drawings, report")
    p.add_argument("--quiet", action="store_true", help="no progress output")

    p = command("check", _check, "validate a problem file")
    p.add_argument("problem")

    p = command("evaluate", _evaluate, "rate one design of a problem, every metric")
    p.add_argument("problem")
    p.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="NAME=VALUE",
        help='a design variable, e.g. --set fin_thickness="1.2 mm" (repeat)',
    )
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")

    p = command("catalog", _catalog, "screen a catalog of stock profiles against a problem")
    p.add_argument("problem", help="problem file (YAML); its catalog section, if any, is used")
    p.add_argument("--catalog", help="catalog CSV (default: the problem's, else the demo)")
    p.add_argument(
        "--orientation", choices=["along", "across", "both"], help="default: the problem's"
    )
    p.add_argument("--out", help="results folder (default results/<problem name>_catalog)")
    p.add_argument(
        "--search",
        action="store_true",
        help="also search free designs, to say how much a custom die would save",
    )
    p.add_argument("--quiet", action="store_true", help="no progress output")

    p = command("study", _study, "material trade-off study: one run per construction")
    p.add_argument("problem", help="problem file (YAML) with a study section")
    p.add_argument("--out", help="results folder (default results/<problem name>_study)")
    p.add_argument("--seed", type=int, help="random seed (default: the problem's)")
    p.add_argument("--evaluations", type=int, help="evaluation budget of each run")
    p.add_argument("--quiet", action="store_true", help="no progress output")

    p = command("draw", _draw, "section drawings (SVG and DXF, mm) of one design")
    p.add_argument("source", help="a problem file (with --set or --profile) or a results folder")
    p.add_argument("--row", type=int, help="results folder: the front.csv row to draw")
    p.add_argument(
        "--set", action="append", default=[], metavar="NAME=VALUE", help="a design variable"
    )
    p.add_argument("--profile", help="a catalog profile id (with --cut)")
    p.add_argument("--cut", help='cut length of the catalog profile, e.g. "80 mm"')
    p.add_argument("--catalog", help="catalog CSV (default: the problem's, else the demo)")
    p.add_argument("--format", choices=["svg", "dxf", "both"], default="both")
    p.add_argument("--out", help="file name without suffix (default: design_<name>)")

    p = command("materials", _materials, "the material table with sources")
    p.add_argument("--json", action="store_true")
    p = command("processes", _processes, "the process table with sources")
    p.add_argument("--json", action="store_true")
    p = command("fans", _fans, "the demo fan curves (invented data for examples)")
    p.add_argument("--json", action="store_true")
    p = command("schema", _schema, "the JSON Schema of problem files")
    p.add_argument("--out", help="write to this file instead of stdout")
    return parser


# -- commands ------------------------------------------------------------------------------
def _run(args) -> int:
    from optifin.api import load_problem, optimise, write_run

    started = time.perf_counter()
    problem = load_problem(args.problem)
    progress = None if args.quiet else _Progress(problem.name)
    try:
        result = optimise(
            problem,
            seed=args.seed,
            algorithm=args.algorithm,
            evaluations=args.evaluations,
            progress=progress,
        )
    finally:
        if progress is not None:
            progress.close()
    folder = write_run(result, args.out, figures=not args.no_figures)
    _summary(result, folder, time.perf_counter() - started)
    if result.interrupted:
        print("optifin: interrupted; the results hold the front found so far", file=sys.stderr)
        return 130
    return 0


def _check(args) -> int:
    from optifin.api import load_problem
    from optifin.search.encoding import Encoding

    problem = load_problem(args.problem)
    encoding = Encoding(problem)
    grid = encoding.grid_size
    searched = ", ".join(v.name for v in problem.searched) or "nothing"
    if grid is None:
        size = "continuous variables (genetic search)"
    elif grid <= problem.search.exact_limit:
        size = f"{grid:,} designs on the grid, small enough for --algorithm exact"
    else:
        size = f"{grid:,} designs on the grid (genetic search)"
    print(
        f"{args.problem}: ok ({problem.name}: searches {searched}; {size}; "
        f"{len(problem.objectives)} objectives)"
    )
    return 0


def _evaluate(args) -> int:
    from optifin.api import evaluate_designs, load_problem

    problem = load_problem(args.problem)
    row = evaluate_designs(problem, _values(args.set)).iloc[0]
    record = {key: _plain(value) for key, value in row.items()}
    if args.json:
        print(json.dumps(record, indent=2))
        return 0
    width = max(len(k) for k in record)
    for key, value in record.items():
        shown = f"{value:.6g}" if isinstance(value, float) else str(value)
        print(f"{key:<{width}}  {shown}")
    return 0


def _catalog(args) -> int:
    from optifin.api import load_problem, optimise
    from optifin.catalog import load_catalog, screen_problem
    from optifin.problem.spec import CatalogChoice
    from optifin.report.screening import write_screening

    problem = load_problem(args.problem)
    catalog = load_catalog(args.catalog, problem.library) if args.catalog else None
    started = time.perf_counter()
    if args.orientation:  # the problem's catalog settings, with these orientations
        orientations = ("along", "across") if args.orientation == "both" else (args.orientation,)
        choice = problem.catalog or CatalogChoice(path=None, cut_lengths=())
        problem = dataclasses.replace(
            problem, catalog=dataclasses.replace(choice, orientations=orientations)
        )
    screened = screen_problem(problem, catalog)
    search_result = None
    if args.search:
        progress = None if args.quiet else _Progress(problem.name)
        try:
            search_result = optimise(problem, progress=progress)
        finally:
            if progress is not None:
                progress.close()
    out = Path(args.out) if args.out else Path("results") / f"{problem.name}_catalog"
    folder = write_screening(screened, problem, out, search_result=search_result)
    feasible = int(screened.table["feasible"].sum()) if "feasible" in screened.table else 0
    profiles = screened.table["profile_id"].nunique() if "profile_id" in screened.table else 0
    print(
        f"{problem.name}: {profiles} profiles, {len(screened.table):,} parts rated, "
        f"{feasible:,} feasible, {len(screened.front)} on the Pareto front, "
        f"{time.perf_counter() - started:.1f} s"
    )
    print(f"results: {folder}")
    print("These are engineering estimates: verify by test before relying on them.")
    return 0


def _study(args) -> int:
    from optifin.api import load_problem, study_materials

    problem = load_problem(args.problem)
    if not problem.study:
        raise OptifinError(
            f"{args.problem}: no study section (give study.materials, two options or more)"
        )
    started = time.perf_counter()
    bars: dict[str, _Progress] = {}

    def progress(option: str, done: int, total: int) -> None:
        if option not in bars:
            for bar in bars.values():
                bar.close()
            bars[option] = _Progress(f"{problem.name}: {option}")
        bars[option](done, total)

    out = Path(args.out) if args.out else Path("results") / f"{problem.name}_study"
    try:
        study_materials(
            problem,
            out,
            seed=args.seed,
            evaluations=args.evaluations,
            progress=None if args.quiet else progress,
        )
    finally:
        for bar in bars.values():
            bar.close()
    folder = out
    print(
        f"{problem.name}: {len(problem.study)} constructions compared, "
        f"{time.perf_counter() - started:.1f} s"
    )
    print(f"results: {folder}")
    print("These are engineering estimates: verify by test before relying on them.")
    return 0


def _draw(args) -> int:
    import pandas as pd

    from optifin.api import draw, evaluate_designs, load_problem

    source = Path(args.source)
    formats = ("svg", "dxf") if args.format == "both" else (args.format,)
    if source.is_dir():
        front_csv = source / "front.csv"
        if not front_csv.exists():
            raise OptifinError(f"{source}: no front.csv (expected a results folder)")
        if args.row is None:
            raise OptifinError(f"{source}: give --row N, the front.csv row to draw")
        front = pd.read_csv(front_csv)
        if not 0 <= args.row < len(front):
            raise OptifinError(f"--row {args.row}: front.csv has rows 0 to {len(front) - 1}")
        row, name = front.iloc[args.row], f"row{args.row}"
    else:
        problem = load_problem(source)
        if args.profile:
            row, name = _catalog_row(problem, args), args.profile
        else:
            values = _values(args.set)
            row, name = evaluate_designs(problem, values).iloc[0], problem.name
    out = Path(args.out) if args.out else Path(f"design_{name}")
    for path in draw(row, out, formats, title=name):
        print(path)
    return 0


def _values(items) -> dict:
    values = {}
    for item in items:
        if "=" not in item:
            raise OptifinError(f"--set {item!r}: expected NAME=VALUE")
        name, value = item.split("=", 1)
        values[name.strip()] = value.strip().strip('"').strip("'")
    return values


def _catalog_row(problem, args):
    import numpy as np

    from optifin.catalog import load_catalog
    from optifin.search import design_table
    from optifin.units import to_si

    if not args.cut:
        raise OptifinError("--profile needs --cut, the cut length (e.g. --cut '80 mm')")
    cut = to_si(args.cut, "length", "--cut")
    path = args.catalog or (problem.catalog.path if problem.catalog else None)
    catalog = load_catalog(path, problem.library)
    if args.profile not in catalog.ids:
        import difflib

        near = difflib.get_close_matches(args.profile, catalog.ids, n=1)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        raise OptifinError(f"--profile {args.profile!r}: not in {catalog.source}{hint}")
    one = catalog.take([catalog.ids.index(args.profile)])
    designs, _ = one.designs(np.array([cut]), problem.library)
    return design_table(problem, designs).iloc[0]


def _materials(args) -> int:
    from optifin.library import load_library

    lib = load_library()
    rows = []
    for m in lib.materials.values():
        rows.append(
            {
                "key": m.key,
                "name": m.name,
                "conductivity": m.conductivity.text,
                "density": m.density.text,
                "specific_heat": m.specific_heat.text,
                "price (indicative)": m.price.text,
                "emissivity": ", ".join(f"{f} {v.si:g}" for f, v in m.emissivity.items()),
                "processes": ", ".join(m.processes),
                "sources": ", ".join(
                    sorted({m.conductivity.source, m.density.source, m.price.source})
                ),
            }
        )
    return _table(rows, lib, args.json)


def _processes(args) -> int:
    from optifin.library import load_library

    lib = load_library()
    rows = []
    for p in lib.processes.values():
        row = {"key": p.key, "name": p.name, "materials": ", ".join(p.materials)}
        row["fin types"] = ", ".join(p.fin_types)
        row.update({k: v.text for k, v in p.limits.items()})
        row.update({f"cost {k}": v.text for k, v in p.cost.items()})
        row["sources"] = ", ".join(
            sorted({v.source for v in (*p.limits.values(), *p.cost.values())})
        )
        rows.append(row)
    return _table(rows, lib, args.json)


def _table(rows, lib, as_json: bool) -> int:
    used = sorted({s.strip() for r in rows for s in r["sources"].split(",")})
    if as_json:
        print(
            json.dumps(
                {"rows": rows, "sources": {k: lib.source_citation(k) for k in used}}, indent=2
            )
        )
        return 0
    for r in rows:
        print(f"{r['key']}: {r['name']}")
        for k, v in r.items():
            if k not in ("key", "name"):
                print(f"    {k}: {v}")
    print("\nsources:")
    for k in used:
        print(f"  {k}: {lib.source_citation(k)}")
    return 0


def _fans(args) -> int:
    from optifin.fans import bundled_path, load_fans

    fans = load_fans()
    rows = [
        {
            "key": f.key,
            "name": f.name,
            "size_mm": round(f.size * 1e3, 3),
            "power_W": f.power,
            "free_delivery_CFM": round(f.curve.free_delivery / CFM, 3),
            "shutoff_pressure_Pa": round(f.curve.shutoff_pressure, 3),
            "curve": [
                {"flow_CFM": round(q / CFM, 4), "pressure_Pa": round(p, 4)}
                for q, p in zip(f.curve.flow, f.curve.pressure, strict=True)
            ],
        }
        for f in fans.values()
    ]
    if args.json:
        print(json.dumps({"file": bundled_path(), "demo_data": True, "fans": rows}, indent=2))
        return 0
    print(f"{bundled_path()}: invented demo fans, for examples and tests only")
    for r in rows:
        print(
            f"{r['key']}: {r['name']}; {r['size_mm']:g} mm, {r['power_W']:g} W, "
            f"free delivery {r['free_delivery_CFM']:g} CFM, shut-off "
            f"{r['shutoff_pressure_Pa']:g} Pa"
        )
    return 0


CFM = 0.3048**3 / 60.0  #: one cubic foot per minute [m³/s]


def _schema(args) -> int:
    from optifin.problem import problem_schema

    text = json.dumps(problem_schema(), indent=2)
    if args.out:
        Path(args.out).write_text(text + "\n")
    else:
        print(text)
    return 0


# -- helpers -------------------------------------------------------------------------------
def _plain(value):
    if hasattr(value, "item"):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


class _Progress:
    """A progress bar on a terminal, plain lines (every 10 %) otherwise."""

    def __init__(self, name: str):
        self.name = name
        self.bar = None
        self.last_tenth = -1
        self.tty = sys.stderr.isatty()

    def __call__(self, done: int, total: int) -> None:
        if self.tty:
            if self.bar is None:
                from tqdm import tqdm

                self.bar = tqdm(total=total, desc=self.name, unit="designs", file=sys.stderr)
            self.bar.update(min(done, total) - self.bar.n)
        else:
            tenth = int(10 * min(done, total) / max(total, 1))
            if tenth > self.last_tenth:
                self.last_tenth = tenth
                print(
                    f"{self.name}: {min(done, total)}/{total} designs evaluated",
                    file=sys.stderr,
                    flush=True,
                )

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _summary(result, folder: Path, seconds: float) -> None:
    front = result.front
    objective_cols = [c for c, _ in result.objective_columns]
    print(
        f"{result.problem.name}: {result.algorithm}, {result.evaluations:,} designs evaluated, "
        f"{len(front)} on the Pareto front, {seconds:.1f} s"
    )
    if len(front):
        from optifin.report.marks import marked_designs

        marks = marked_designs(front, result.objective_columns)
        cols = [c for c in (*SUMMARY_COLUMNS, *objective_cols) if c in front.columns]
        header = ["design", *cols]
        lines = [header]
        for label, index in marks.items():
            row = front.iloc[index]
            lines.append([label, *(_fmt(row[c]) for c in cols)])
        widths = [max(len(str(line[i])) for line in lines) for i in range(len(header))]
        for line in lines:
            print("  ".join(str(v).rjust(w) for v, w in zip(line, widths, strict=True)))
    print(f"results: {folder}")
    print("These are engineering estimates: verify by test before relying on them.")


def _fmt(value) -> str:
    if isinstance(value, float):
        return f"{value:.4g}"
    return str(value)


if __name__ == "__main__":
    sys.exit(main())

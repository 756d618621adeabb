"""Writing a catalog screening's results folder: tables, a figure, a report and run.json.

:func:`write_screening` writes the result of :func:`optifin.catalog.screen_catalog` the way
:func:`optifin.report.writer.write_results` writes a run: every file into a sibling
temporary folder, moved into place only when all are written (an existing folder of the
same name is kept until then). The folder holds

``table.csv``
    every rated part (profile x cut length x orientation that fits the envelope);
``shortest.csv``
    one row per profile: the shortest feasible cut of each orientation, or why none;
``front.csv`` and ``ranked.csv``
    the Pareto set of the feasible parts and every feasible part by the first objective;
``custom_die_saving.csv``
    with a search result only: :func:`optifin.catalog.custom_die_saving`;
``screening.png``
    objective 1 against objective 2 of every feasible part, the front highlighted (with
    one objective: the objective against the cut length);
``screening.md`` and ``screening.html``
    the report: the problem, the catalog, the shortest cut per profile, the front, the
    custom-die saving, validity notes and the safety cautions;
``run.json``
    what was screened, with the problem's hash and the versions.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from optifin.problem import problem_hash
from optifin.report.document import (
    SAFETY,
    _problem_blocks,
    _validity_blocks,
    format_number,
    to_html,
    to_markdown,
)
from optifin.report.drawing import format_mm
from optifin.report.plots import DPI, column_label
from optifin.report.writer import atomic_folder, correlation_record, versions, write_json

__all__ = ["FIGURE", "plot_screening", "screening_blocks", "screening_record", "write_screening"]

FIGURE = "screening.png"  #: the figure's file name
ORIENTATION_COLOURS = {"along": "#4c78a8", "across": "#f58518"}
#: Metric columns of the front table in the report (those present are shown).
FRONT_METRICS = (
    "source_temperature_C",
    "base_temperature_C",
    "pressure_drop_Pa",
    "mass_kg",
    "catalog_price",
    "catalog_total_cost",
)


class _View:
    """What the report helpers of optifin.report.document read of a result."""

    def __init__(self, problem, objective_columns, front):
        self.problem = problem
        self.objective_columns = objective_columns
        self.front = front


def _label(column: str, currency: str) -> str:
    if column in ("catalog_price", "catalog_total_cost"):
        return f"{column.replace('_', ' ')} [{currency}]" if currency else column
    return column_label(column, currency)


def _currency(problem) -> str:
    return getattr(getattr(problem, "library", None), "currency", "") or ""


# -- the figure --------------------------------------------------------------------------------
def plot_screening(screen, path, search=None, currency: str = "") -> Path:
    """Objective 1 against objective 2 of every feasible catalog part, the front ringed.

    Parts are coloured by orientation; a search result's free designs on its front (rows
    whose ``catalog_part`` is ``""``, or all rows) are drawn as crosses. With one objective
    the x axis is the cut length. Drawn on the Agg canvas (no pyplot state); returns the
    path.
    """
    figure = Figure(figsize=(7.0, 5.0))
    FigureCanvasAgg(figure)
    figure.subplots_adjust(left=0.13, right=0.96, bottom=0.12, top=0.92)
    ax = figure.add_subplot()
    columns = screen.objective_columns
    table = screen.table
    feasible = table[table["feasible"].to_numpy(dtype=bool)] if len(table) else table.iloc[:0]
    if len(columns) >= 2:
        (x_col, _), (y_col, _) = columns[0], columns[1]
    else:
        x_col, y_col = "cut_length_mm", columns[0][0]
    if not len(feasible):
        ax.set_axis_off()
        ax.text(
            0.5,
            0.5,
            "no feasible catalog part",
            ha="center",
            va="center",
            fontsize=12,
            transform=ax.transAxes,
        )
        figure.savefig(path, format="png", dpi=DPI)
        return Path(path)
    handles = []
    for orientation, colour in ORIENTATION_COLOURS.items():
        rows = feasible[feasible["orientation"] == orientation]
        if len(rows):
            ax.scatter(
                rows[x_col].to_numpy(float),
                rows[y_col].to_numpy(float),
                s=14,
                color=colour,
                alpha=0.55,
                linewidths=0,
            )
            handles.append(
                Line2D(
                    [], [], marker="o", ls="", color=colour, label=f"catalog part, {orientation}"
                )
            )
    front = screen.front
    if len(front):
        order = np.argsort(front[x_col].to_numpy(float), kind="stable")
        ax.plot(
            front[x_col].to_numpy(float)[order],
            front[y_col].to_numpy(float)[order],
            ls="",
            marker="o",
            ms=8,
            mfc="none",
            mec="black",
            mew=1.4,
        )
        handles.append(
            Line2D([], [], marker="o", ls="", mfc="none", mec="black", label="screening front")
        )
    if search is not None and len(search.front) and len(columns) >= 2:
        free = search.front
        if "catalog_part" in free.columns:
            free = free[free["catalog_part"].astype(str) == ""]
        (sx, _), (sy, _) = search.objective_columns[0], search.objective_columns[1]
        if len(free) and sx in free and sy in free:
            ax.scatter(
                free[sx].to_numpy(float),
                free[sy].to_numpy(float),
                marker="x",
                s=30,
                color="#54a24b",
            )
            handles.append(
                Line2D([], [], marker="x", ls="", color="#54a24b", label="free designs (search)")
            )
    ax.set_xlabel(_label(x_col, currency))
    ax.set_ylabel(_label(y_col, currency))
    ax.set_title(f"Catalog parts: {len(feasible)} feasible, {len(front)} on the front")
    ax.grid(True, alpha=0.3)
    ax.legend(handles=handles, fontsize=8, loc="best")
    figure.savefig(path, format="png", dpi=DPI)
    return Path(path)


# -- the report --------------------------------------------------------------------------------
def _mm(value) -> str:
    try:
        value = float(value)
    except (TypeError, ValueError):
        return str(value)
    return format_mm(value) if math.isfinite(value) else "n/a"


def _catalog_blocks(screen, currency: str) -> list:
    catalog = screen.catalog
    cuts = np.asarray(screen.cut_lengths, dtype=float) * 1e3
    orientations = sorted(set(screen.table["orientation"])) if len(screen.table) else []
    if cuts.size > 2:
        steps = np.unique(np.round(np.diff(cuts), 9))
        grid = f"{cuts.size} cut lengths from {_mm(cuts[0])} to {_mm(cuts[-1])} mm" + (
            f" every {_mm(steps[0])} mm" if steps.size == 1 else ""
        )
    else:
        grid = "cut lengths " + ", ".join(f"{_mm(c)} mm" for c in cuts)
    lines = [
        f"Catalog `{catalog.source}`: {len(catalog)} profiles, rated at {grid}, in the "
        f"orientation{'s' if len(orientations) != 1 else ''} "
        + (", ".join(f"`{o}`" for o in orientations) or "none")
        + f"; {len(screen.table)} parts fit the envelope, "
        f"{int(screen.table['feasible'].sum()) if len(screen.table) else 0} meet every limit.",
        "`along`: the profile width across the envelope width, cut along its length (the "
        "problem's frame); `across`: turned by 90° in the plane of the base, the heat "
        "sources' footprints and positions and the envelope's width and length swapped. "
        "The air flows along the fins in both, with the problem's flow reused as it is.",
        "Each part is a stock profile cut to length (process `catalog_cut`): no die set-up, "
        "and only loose sanity limits of the process apply (the profile exists already); "
        "the envelope and the problem's limits apply in full.",
        f"A part's metal is priced by the catalog (`catalog_price` [{currency}]: price per kg "
        "times the part mass, or per metre times the cut, with no allowance for saw kerf or "
        "offcuts); `catalog_total_cost` adds the model's process cost. Cost objectives and "
        "limits use these figures.",
    ]
    return [("h", 2, "The catalog"), ("ul", lines)]


def _shortest_rows(screen, currency: str):
    shortest = screen.shortest
    orientations = [c[: -len("_reason")] for c in shortest.columns if c.endswith("_reason")]
    headers = [
        "profile",
        "alloy",
        "width [mm]",
        "height [mm]",
        "fins",
        "shortest cut [mm]",
        "orientation",
        "thermal resistance [K/W]",
        "source temperature [°C]",
        f"catalog price [{currency}]",
        "why no cut works",
    ]
    rows = []
    for _, r in shortest.iterrows():  # formatting one row per profile
        orientation = str(r.get("shortest_orientation", ""))
        has = orientation != "" and pd.notna(r.get("shortest_cut_length_mm"))

        def metric(name, r=r, orientation=orientation, has=has):
            if not has:
                return "–"
            return format_number(r.get(f"{orientation}_{name}", np.nan), 4)

        why = "; ".join(f"{o}: {r[f'{o}_reason']}" for o in orientations if str(r[f"{o}_reason"]))
        rows.append(
            [
                f"`{r['profile_id']}`",
                str(r["alloy"]),
                _mm(r["width_mm"]),
                _mm(float(r["base_thickness_mm"]) + float(r["fin_height_mm"])),
                str(int(r["fin_count"])),
                _mm(r["shortest_cut_length_mm"]) if has else "none",
                orientation if has else "–",
                metric("thermal_resistance_K_per_W"),
                metric("source_temperature_C"),
                metric("catalog_price"),
                "" if has else why,
            ]
        )
    return headers, rows


def _front_rows(screen, currency: str):
    front = screen.front
    objective = [c for c, _ in screen.objective_columns]
    metrics = [c for c in (*objective, *FRONT_METRICS) if c in front.columns]
    metrics = list(dict.fromkeys(metrics))
    headers = ["profile", "orientation", "cut [mm]", *(_label(c, currency) for c in metrics)]
    rows = [
        [
            f"`{r['profile_id']}`",
            str(r["orientation"]),
            _mm(r["cut_length_mm"]),
            *(format_number(r[c], 4) for c in metrics),
        ]
        for _, r in front.iterrows()
    ]
    return headers, rows


def _saving_blocks(saving: pd.DataFrame, search, currency: str) -> list:
    blocks: list = [("h", 2, "What a custom die saves")]
    blocks.append(
        (
            "p",
            "For each objective: the best feasible catalog part (every orientation screened) "
            "and the best feasible free design of the search "
            f"(`{search.algorithm}`, {search.evaluations} designs evaluated), and the "
            "saving of the free, custom-die design over the catalog part in the objective's "
            "unit (positive: the custom die does better; negative: the catalog part does). "
            "For cost objectives the free design's set-up (die, fixture) is shared over the "
            "production quantity: its total cost already holds set-up / quantity; the die pays "
            "for itself when the saving per part before that share, times the quantity, covers "
            "the set-up (break-even quantity = set-up / saving per part before the set-up).",
        )
    )
    headers = [
        "objective",
        "best catalog part",
        "its value",
        "best free design",
        "its value",
        "saving",
        "relative",
        "set-up",
        "pays at this quantity?",
        "break-even quantity",
    ]
    rows = []
    for _, r in saving.iterrows():  # one row per objective
        unit = f" {r['unit']}" if r["unit"] else ""
        cost = pd.notna(r["setup_cost"])
        part = (
            f"`{r['catalog_part']}` {r['catalog_orientation']}, "
            f"{_mm(r['catalog_cut_length_mm'])} mm"
            if r["catalog_part"]
            else "none feasible"
        )
        relative = r["relative_saving"]
        rows.append(
            [
                f"{r['sense']} {r['objective'].replace('_', ' ')}",
                part,
                format_number(r["catalog_value"], 4) + unit,
                r["free_design"] or "none feasible",
                format_number(r["free_value"], 4) + unit,
                format_number(r["saving"], 4) + unit,
                f"{100 * relative:.1f} %" if pd.notna(relative) and math.isfinite(relative) else "",
                (
                    f"{format_number(r['setup_cost'])} {currency} "
                    f"({format_number(r['setup_per_part'])} per part at {int(r['quantity'])})"
                    if cost
                    else ""
                ),
                ("yes" if bool(r["pays_setup"]) else "no") if cost else "",
                _break_even(r["break_even_quantity"]) if cost else "",
            ]
        )
    blocks.append(("table", headers, rows))
    return blocks


def _break_even(quantity: float) -> str:
    return "never" if math.isinf(quantity) else str(math.ceil(quantity))


def screening_blocks(screen, problem, folder, search=None, saving=None) -> list:
    """The screening report's content as blocks (see optifin.report.document.to_markdown)."""
    from optifin.search import objective_column

    folder = Path(folder)
    currency = _currency(problem)
    blocks: list = [("h", 1, f"optifin catalog screening: {problem.name}")]
    view = _View(
        problem, [(objective_column(o.name), o.sense) for o in problem.objectives], screen.front
    )
    summary = _problem_blocks(view)
    skip = {i for i, b in enumerate(summary) if b[:3] == ("h", 3, "What is searched")}
    skip |= {i + 1 for i in skip}
    blocks += [b for i, b in enumerate(summary) if i not in skip]
    blocks += _catalog_blocks(screen, currency)
    if (folder / FIGURE).exists():
        caption = (
            "Every feasible catalog part, coloured by orientation, the screening front ringed"
            + ("; crosses: the free designs of the search front." if search is not None else ".")
        )
        blocks += [("h", 2, "Figure"), ("img", FIGURE, caption)]
    headers, rows = _shortest_rows(screen, currency)
    blocks += [
        ("h", 2, "Shortest cut per profile"),
        (
            "p",
            "For each profile the shortest cut on the grid that meets every limit, in the "
            "orientation where it is shortest, with its metrics; where no cut works, why "
            "(in each orientation).",
        ),
        ("table", headers, rows),
    ]
    blocks.append(("h", 2, "Pareto front of the catalog parts"))
    if len(screen.front):
        headers, rows = _front_rows(screen, currency)
        blocks += [
            (
                "p",
                f"{len(screen.front)} feasible parts no other feasible part beats in every "
                "objective, best first by the first objective.",
            ),
            ("table", headers, rows),
        ]
    else:
        blocks.append(("p", "No catalog part meets the problem's limits: the front is empty."))
    if search is not None and saving is not None:
        blocks += _saving_blocks(saving, search, currency)
    blocks += _validity_blocks(_View(problem, view.objective_columns, screen.front))
    notes = list(screen.notes)
    if notes:
        blocks += [("h", 2, "Notes"), ("ul", notes)]
    blocks += [("h", 2, "Safety"), *(("p", text) for text in SAFETY)]
    return blocks


# -- run.json ----------------------------------------------------------------------------------
def screening_record(screen, problem, search=None, saving=None) -> dict:
    """The content of a screening's run.json."""
    correlations = correlation_record(screen.table.attrs.get("correlations", []))
    table = screen.table
    record = {
        "kind": "catalog_screening",
        "problem": problem.name,
        "problem_file": str(problem.source),
        "problem_sha256": problem_hash(problem),
        "catalog": str(screen.catalog.source),
        "profiles": len(screen.catalog),
        "cut_lengths_mm": [round(float(c) * 1e3, 9) for c in screen.cut_lengths],
        "orientations": sorted(set(table["orientation"])) if len(table) else [],
        "rated": len(table),
        "feasible": int(table["feasible"].sum()) if len(table) else 0,
        "front_size": len(screen.front),
        "objectives": [[c, s] for c, s in screen.objective_columns],
        "notes": list(screen.notes),
        "versions": versions(),
        "correlations": correlations,
    }
    if search is not None:
        record["search"] = {
            "algorithm": search.algorithm,
            "seed": search.seed,
            "evaluations": search.evaluations,
            "front_size": len(search.front),
        }
    if saving is not None:
        # to_json writes inf as null: a die that never pays is "inf" here, as in the CSV
        rows = saving.astype(object).where(saving.notna(), None).to_dict(orient="records")
        record["custom_die_saving"] = [
            {k: ("inf" if isinstance(v, float) and math.isinf(v) else v) for k, v in r.items()}
            for r in rows
        ]
    return record


def write_screening(screen_result, problem, out, search_result=None) -> Path:
    """Write a catalog screening's results folder atomically; returns the folder.

    Parameters
    ----------
    screen_result
        :func:`optifin.catalog.screen_catalog` of ``problem``.
    problem
        The problem screened (its summary heads the report; its hash goes to run.json).
    out
        The folder to write; an existing one is replaced only once the new one is complete.
    search_result
        Optionally a :class:`optifin.search.SearchResult` of the same problem: the report
        then adds :func:`optifin.catalog.custom_die_saving` (also ``custom_die_saving.csv``)
        and the figure the search's free front designs.
    """
    from optifin.catalog import custom_die_saving

    folder = Path(out)
    with atomic_folder(folder) as tmp:
        screen_result.table.to_csv(tmp / "table.csv", index=False)
        screen_result.shortest.to_csv(tmp / "shortest.csv", index=False)
        screen_result.front.to_csv(tmp / "front.csv", index=False)
        screen_result.ranked.to_csv(tmp / "ranked.csv", index=False)
        saving = None
        if search_result is not None:
            saving = custom_die_saving(search_result, screen_result)
            saving.to_csv(tmp / "custom_die_saving.csv", index=False)
        plot_screening(screen_result, tmp / FIGURE, search_result, _currency(problem))
        blocks = screening_blocks(screen_result, problem, tmp, search_result, saving)
        (tmp / "screening.md").write_text(to_markdown(blocks), encoding="utf-8")
        (tmp / "screening.html").write_text(to_html(blocks, title=blocks[0][2]), encoding="utf-8")
        write_json(
            tmp / "run.json", screening_record(screen_result, problem, search_result, saving)
        )
    return folder

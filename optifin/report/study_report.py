"""The material trade-off study's folder: figures, tables, a Markdown and an HTML report.

:func:`write_study` writes every file into a temporary folder beside the target and moves
it into place only when all are written, as :mod:`optifin.report.writer` does for a run: a
failed write leaves no half folder, and an existing folder of the same name is kept until
the new one is complete.

Files: ``overlay.png`` (thermal resistance against mass and against total cost, one colour
and marker per option, each option's curve as a step line), ``price_sweep.png`` (the
cheapest total cost of each option against the swept price, flips marked), ``fronts.csv``
(every option's front, ``option`` first), ``overlay.csv``, ``premium.csv``,
``premium_summary.csv``, ``sweep.csv``, ``envelopes.csv``, ``flips.csv``, ``target.csv``,
``study.md``, ``study.html`` and ``run.json`` (versions, problem hashes, each option's run
record). Figures are drawn on the Agg canvas directly, as in :mod:`optifin.report.plots`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
from matplotlib import colormaps
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from optifin.problem import problem_hash
from optifin.report.document import SAFETY, format_number, to_html, to_markdown
from optifin.report.plots import DPI, column_label
from optifin.report.writer import atomic_folder, run_record, versions, write_json

__all__ = ["CAUTIONS", "FILES", "plot_overlay", "plot_price_sweep", "study_blocks", "write_study"]

R = "thermal_resistance_K_per_W"
MASS = "mass_kg"
COST = "total_cost"
MARKERS = ("o", "s", "^", "D", "v", "P", "X", "*", "h", "<")
BASIS_WORDS = {
    "feasible": "cheapest feasible design",
    "target": "cheapest design reaching the target resistance",
}

#: Every file of a study folder.
FILES = (
    "overlay.png",
    "price_sweep.png",
    "fronts.csv",
    "overlay.csv",
    "premium.csv",
    "premium_summary.csv",
    "sweep.csv",
    "envelopes.csv",
    "flips.csv",
    "target.csv",
    "study.md",
    "study.html",
    "run.json",
)

#: Cautions of the study on top of the run report's (optifin.report.document.SAFETY).
CAUTIONS: tuple[str, ...] = (
    "Metal prices and process costs are the library's indicative figures or the problem's "
    "overrides, for relative weighting only. The price at which one option becomes cheaper "
    "than another moves with every cost term: get quotes for the few designs that matter "
    "before choosing a material.",
    "Bonded fins are rated with the library's typical bond-line (joint) resistance; the real "
    "joint depends on the adhesive or braze, the groove fit and the process, and should be "
    "measured on samples.",
    "A spreader insert is modelled in perfect thermal contact with the base around it, under "
    "one centred heat source; a press fit or a solder joint adds a contact resistance that "
    "the model does not include.",
    "Copper is about three times as dense as aluminium: check the mounting, shock and "
    "vibration loads of the heavier options.",
)


def _canvas(width: float, height: float) -> Figure:
    figure = Figure(figsize=(width, height))  # no pyplot: no global matplotlib state
    FigureCanvasAgg(figure)
    return figure


def _save(figure: Figure, path) -> Path:
    path = Path(path)
    figure.savefig(path, format="png", dpi=DPI)
    return path


def _colours(names):
    palette = colormaps["tab10"]
    return {name: (palette(i % 10), MARKERS[i % len(MARKERS)]) for i, name in enumerate(names)}


def _message(ax, text: str) -> None:
    ax.text(0.5, 0.5, text, ha="center", va="center", fontsize=10, transform=ax.transAxes)
    ax.set_axis_off()


# -- figures -----------------------------------------------------------------------------------
def plot_overlay(result, path) -> Path:
    """Thermal resistance against mass and against total cost, one curve per option.

    Each option's non-dominated designs in the pair are drawn as markers joined by a step
    line (the best resistance reached at or below each mass or cost). The target resistance
    of the sweep is a dashed line. Returns ``path``.
    """
    figure = _canvas(11.5, 4.6)
    figure.subplots_adjust(left=0.07, right=0.8, bottom=0.13, top=0.9, wspace=0.25)
    axes = figure.subplots(1, 2, squeeze=False)[0]
    names = [o.name for o in result.options]
    style = _colours(names)
    currency = result.problem.library.currency
    overlay = result.overlay
    handles = {}
    for ax, versus in zip(axes, (MASS, COST), strict=True):
        part = overlay[overlay["versus"] == versus] if len(overlay) else overlay
        if len(part) == 0:
            _message(ax, "no feasible design")
            continue
        for name in names:
            rows = part[part["option"] == name]
            if len(rows) == 0:
                continue
            x = rows[versus].to_numpy(dtype=float)
            y = rows[R].to_numpy(dtype=float)
            colour, marker = style[name]
            ax.step(x, y, where="post", color=colour, lw=1.2, alpha=0.9)
            handles[name] = ax.scatter(
                x, y, s=22, color=colour, marker=marker, label=name, zorder=3, lw=0
            )
        if result.target_resistance is not None:
            line = ax.axhline(result.target_resistance, color="0.3", ls="--", lw=0.9)
            handles.setdefault("target resistance", line)
        ax.set_xlabel(column_label(versus, currency), fontsize=9)
        ax.set_ylabel(column_label(R), fontsize=9)
        ax.grid(alpha=0.3)
        ax.tick_params(labelsize=8)
        words = "mass" if versus == MASS else "total cost"
        ax.set_title(f"Thermal resistance against {words}", fontsize=10)
    if handles:
        figure.legend(
            handles=list(handles.values()),
            labels=list(handles),
            title="option",
            loc="upper right",
            bbox_to_anchor=(0.995, 0.9),
            fontsize=8,
        )
    return _save(figure, path)


def _envelope_polyline(pieces: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    start = pieces["price_from"].to_numpy(dtype=float)
    end = pieces["price_to"].to_numpy(dtype=float)
    a = pieces["intercept"].to_numpy(dtype=float)
    b = pieces["slope_kg"].to_numpy(dtype=float)
    x = np.append(start, end[-1])
    y = np.append(a + b * start, a[-1] + b[-1] * end[-1])
    return x, y


def plot_price_sweep(result, path) -> Path:
    """The cheapest total cost of each option against the price per kg of the swept metal.

    One panel per basis (the cheapest feasible design; the cheapest reaching the target
    resistance). The lines are the exact envelopes; flips are marked and labelled with
    their price, today's price by a grey line. Returns ``path``.
    """
    envelopes = result.envelopes
    bases = [b for b in BASIS_WORDS if len(envelopes) and (envelopes["basis"] == b).any()]
    figure = _canvas(5.4 * max(len(bases), 1) + 2.0, 4.6)
    figure.subplots_adjust(left=0.08, right=0.82, bottom=0.13, top=0.88, wspace=0.25)
    if not bases:
        _message(figure.add_subplot(), "no price sweep (study.price_sweep) or no feasible design")
        return _save(figure, path)
    axes = figure.subplots(1, len(bases), squeeze=False)[0]
    names = [o.name for o in result.options]
    style = _colours(names)
    lib = result.problem.library
    currency = lib.currency
    material = lib.materials[result.swept_material]
    handles = {}
    for ax, basis in zip(axes, bases, strict=True):
        part = envelopes[envelopes["basis"] == basis]
        for name in names:
            pieces = part[part["option"] == name]
            if len(pieces) == 0:
                continue
            x, y = _envelope_polyline(pieces)
            colour, marker = style[name]
            (handles[name],) = ax.plot(
                x, y, color=colour, marker=marker, ms=4, markevery=[0, len(x) - 1], label=name
            )
        flips = result.flips[result.flips["basis"] == basis]
        for flip in flips.itertuples(index=False):
            ax.axvline(flip.price_per_kg, color="k", ls=":", lw=0.9)
            ax.plot([flip.price_per_kg], [flip.total_cost], "ko", mfc="white", ms=7, zorder=4)
            ax.annotate(
                f"{format_number(flip.price_per_kg)} {currency}/kg",
                (flip.price_per_kg, flip.total_cost),
                xytext=(5, 8),
                textcoords="offset points",
                fontsize=7,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8},
            )
        if result.price_now is not None:
            now = ax.axvline(result.price_now, color="0.55", lw=1.0)
            handles.setdefault("library price", now)
        ax.set_xlabel(f"price of {material.name} [{currency}/kg]", fontsize=9)
        ax.set_ylabel(f"total cost per part [{currency}]", fontsize=9)
        ax.grid(alpha=0.3)
        ax.tick_params(labelsize=8)
        title = BASIS_WORDS[basis]
        if basis == "target":
            title += f"\n(R ≤ {format_number(result.target_resistance, 4)} K/W)"
        ax.set_title(title[0].upper() + title[1:], fontsize=10)
    figure.legend(
        handles=list(handles.values()),
        labels=list(handles),
        title="option",
        loc="upper right",
        bbox_to_anchor=(0.995, 0.88),
        fontsize=8,
    )
    return _save(figure, path)


# -- the document ------------------------------------------------------------------------------
def _option_words(option, library) -> str:
    def name(key):
        m = library.materials.get(key)
        return f"{m.name} (`{key}`)" if m is not None else f"`{key}`"

    words = f"fins of {name(option.material)}"
    if option.base_material and option.base_material != option.material:
        words += f" on a base of {name(option.base_material)}"
    if option.insert_material:
        words += (
            f", with a {format_number(option.insert_width * 1e3)} × "
            f"{format_number(option.insert_length * 1e3)} × "
            f"{format_number(option.insert_thickness * 1e3)} mm insert of "
            f"{name(option.insert_material)} under the source"
        )
    return words


def _cell(value) -> str:
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return format_number(value, 4)
    return str(value)


def _table(frame: pd.DataFrame, columns, headers=None) -> tuple:
    columns = [c for c in columns if c in frame]
    rows = [[_cell(v) for v in row] for row in frame[columns].itertuples(index=False)]
    return ("table", list(headers or columns), rows)


def study_blocks(result) -> list[tuple]:
    """The study report as blocks of :mod:`optifin.report.document` (to_markdown, to_html)."""
    problem = result.problem
    lib = problem.library
    currency = lib.currency
    cond = problem.condition
    baseline = result.baseline
    blocks: list[tuple] = [("h", 1, f"Material trade-off study: {problem.name}")]
    if problem.description:
        blocks.append(("p", problem.description))
    objectives = ", ".join(f"{o.sense} {o.name.replace('_', ' ')}" for o in problem.objectives)
    blocks.append(
        (
            "p",
            f"Heat load {format_number(cond.total_power)} W, {cond.cooling} cooling, ambient "
            f"{format_number(cond.ambient_temperature - 273.15)} °C; objectives: {objectives}. "
            f"Each option was searched on its own with the same seed ({result.seed}) and "
            f"budget; the first option, `{baseline}`, is the baseline.",
        )
    )

    rows = []
    for option in result.options:
        run = result.results[option.name]
        processes = ", ".join(result.problems[option.name].variable("process").choices)
        rows.append(
            [
                option.name,
                _option_words(option, lib),
                processes,
                run.algorithm,
                str(run.evaluations),
                str(len(result.candidates[option.name])),
                str(len(run.front)),
            ]
        )
    blocks += [
        ("h", 2, "Options"),
        (
            "table",
            ["option", "construction", "processes", "search", "evaluated", "feasible", "front"],
            rows,
        ),
        ("h", 2, "Fronts"),
        (
            "p",
            "Each curve is the set of designs of one option that no other design of that "
            "option beats in both thermal resistance and the quantity on the x axis, among "
            "every feasible design its search evaluated (`overlay.csv`; the fronts "
            "themselves are in `fronts.csv`).",
        ),
        (
            "img",
            "overlay.png",
            "Thermal resistance against mass and against total cost, one colour and marker "
            "per option; the dashed line is the target resistance of the price sweep.",
        ),
    ]
    blocks += _premium_blocks(result, currency)
    blocks += _sweep_blocks(result, currency)
    if result.notes:
        blocks += [("h", 2, "Notes"), ("ul", list(result.notes))]
    blocks += [("h", 2, "Safety and cautions"), *(("p", t) for t in (*SAFETY, *CAUTIONS))]
    return blocks


def _premium_blocks(result, currency: str) -> list[tuple]:
    if len(result.options) < 2:
        return []
    blocks: list[tuple] = [
        ("h", 2, f"Premium over `{result.baseline}`"),
        (
            "p",
            f"Every design of the `{result.baseline}` front was rebuilt with the same fins "
            "and base (fin count, thicknesses, height, width and length) in each other "
            "option's construction, by the first of the option's processes that can make it, "
            "and rated under the same conditions (`premium.csv`). ΔR is the thermal "
            "resistance gained (baseline minus option), Δmass and Δcost what the option adds. "
            "The gain per extra kg (per extra unit of currency) is given only for pairs that "
            "gain resistance and add mass (cost); medians are over those pairs.",
        ),
    ]
    summary = result.premium_summary
    headers = [
        "option",
        "pairs",
        "median ΔR [K/W]",
        "median Δmass [kg]",
        f"median Δcost [{currency}]",
        "median K/W per kg",
        f"median K/W per {currency}",
        "knee: R [K/W]",
        "knee: ΔR [K/W]",
        "knee: K/W per kg",
        f"knee: K/W per {currency}",
    ]
    columns = [
        "option",
        "pairs",
        "median_delta_resistance_K_per_W",
        "median_delta_mass_kg",
        "median_delta_cost",
        "median_K_per_W_per_kg",
        "median_K_per_W_per_cost",
        "knee_thermal_resistance_K_per_W",
        "knee_delta_resistance_K_per_W",
        "knee_K_per_W_per_kg",
        "knee_K_per_W_per_cost",
    ]
    blocks.append(_table(summary, columns, headers))
    blocks.append(
        (
            "p",
            f"The knee is the knee of the `{result.baseline}` front (the design farthest "
            "from the line through its extremes, towards the ideal point).",
        )
    )
    return blocks


def _sweep_blocks(result, currency: str) -> list[tuple]:
    if result.swept_material is None:
        return [
            ("h", 2, "Price sweep"),
            ("p", "The problem has no `study.price_sweep`: no sweep was made."),
        ]
    material = result.problem.library.materials[result.swept_material]
    blocks: list[tuple] = [
        ("h", 2, f"Price of {material.name}"),
        (
            "p",
            f"The total cost of a design is linear in the price per kg of {material.name}: "
            "cost(p) = a + b p, with b the kilograms of it bought for the part (measured from "
            "the cost model at two prices). The cheapest cost of an option is the lower "
            "envelope of its designs' lines, over every feasible design its search evaluated; "
            "the flips are the exact prices where the envelope of all options changes owner "
            f"(`sweep.csv`, `envelopes.csv`, `flips.csv`). The library's price is "
            f"{format_number(result.price_now)} {currency}/kg.",
        ),
        (
            "img",
            "price_sweep.png",
            "Cheapest total cost per option against the price; circles mark the flips.",
        ),
    ]
    flips = result.flips
    for basis, words in BASIS_WORDS.items():
        if not len(result.sweep) or not (result.sweep["basis"] == basis).any():
            continue
        part = flips[flips["basis"] == basis] if len(flips) else flips
        title = words[0].upper() + words[1:]
        if basis == "target":
            title += f" (R ≤ {format_number(result.target_resistance, 4)} K/W)"
        sweep = result.sweep[result.sweep["basis"] == basis]
        if len(part):
            items = [
                f"at {format_number(f.price_per_kg, 4)} {currency}/kg: `{f.cheaper_below}` "
                f"below, `{f.cheaper_above}` above (total cost "
                f"{format_number(f.total_cost, 4)} {currency})"
                for f in part.itertuples(index=False)
            ]
        else:
            only = sweep[sweep["cheapest"].astype(bool)]["option"].unique()
            items = [
                f"no flip between {format_number(sweep['price_per_kg'].min())} and "
                f"{format_number(sweep['price_per_kg'].max())} {currency}/kg: "
                + ", ".join(f"`{n}`" for n in only)
                + " is cheapest throughout"
            ]
        blocks += [("h", 3, title), ("ul", items)]
        wide = sweep.pivot(index="price_per_kg", columns="option", values=COST)
        names = [o.name for o in result.options if o.name in wide.columns]
        cheapest = sweep[sweep["cheapest"].astype(bool)].drop_duplicates("price_per_kg")
        cheapest = cheapest.set_index("price_per_kg")["option"]
        step = max(1, int(np.ceil(len(wide) / 11)))
        picked = sorted(set(range(0, len(wide), step)) | {len(wide) - 1})
        rows = [
            [format_number(p, 4)]
            + [format_number(wide.loc[p, n], 4) for n in names]
            + [str(cheapest.get(p, ""))]
            for p in wide.index[picked]
        ]
        headers = [f"price [{currency}/kg]", *(f"{n} [{currency}]" for n in names), "cheapest"]
        blocks.append(("table", headers, rows))
    target = result.target
    if len(target) and result.target_resistance is not None:
        blocks += [
            ("h", 3, "Cheapest design reaching the target at today's prices"),
            (
                "p",
                f"Target: thermal resistance at most "
                f"{format_number(result.target_resistance, 4)} K/W ("
                + (
                    "the problem's study.target_resistance"
                    if getattr(result, "target_given", False)
                    else f"that of the knee of the `{result.baseline}` front"
                )
                + "). Cost as a function of the price p: a + b p.",
            ),
        ]
        rows = []
        for row in target.itertuples(index=False):
            entry = row._asdict()
            if entry.get("design", -1) < 0:
                rows.append([entry["option"], "none reaches it", "", "", "", ""])
                continue
            rows.append(
                [
                    entry["option"],
                    f"{int(entry['fin_count'])} fins × {format_number(entry['fin_thickness_mm'])}"
                    f" × {format_number(entry['fin_height_mm'])} mm, base "
                    f"{format_number(entry['base_thickness_mm'])} mm, {entry['process']}",
                    format_number(entry[R], 4),
                    format_number(entry[MASS], 4),
                    format_number(entry[COST], 4),
                    f"{format_number(entry.get('cost_intercept', np.nan), 4)} + "
                    f"{format_number(entry.get('cost_slope_kg', np.nan), 4)} p",
                ]
            )
        headers = ["option", "design", "R [K/W]", "mass [kg]", f"cost [{currency}]", "cost(p)"]
        blocks.append(("table", headers, rows))
    return blocks


# -- the folder --------------------------------------------------------------------------------
def study_record(result) -> dict:
    """The content of the study's run.json."""
    problem = result.problem
    sweep = problem.price_sweep
    options = []
    for option in result.options:
        run = result.results[option.name]
        record = run_record(run)
        record["option"] = {
            "name": option.name,
            "material": option.material,
            "base_material": option.base_material,
            "insert": option.construction() if option.insert_material else None,
            "processes": list(result.problems[option.name].variable("process").choices),
        }
        record["feasible_designs"] = len(result.candidates[option.name])
        options.append(record)
    return {
        "problem": problem.name,
        "problem_file": str(problem.source),
        "problem_sha256": problem_hash(problem),
        "seed": result.seed,
        "baseline": result.baseline,
        "options": options,
        "price_sweep": None
        if sweep is None
        else {
            "material": sweep.material,
            "low": sweep.low,
            "high": sweep.high,
            "steps": sweep.steps,
            "library_price": result.price_now,
            "currency": problem.library.currency,
        },
        "target_resistance_K_per_W": result.target_resistance,
        "flips": result.flips.to_dict(orient="records"),
        "notes": list(result.notes),
        "timings_s": dict(result.timings),
        "versions": versions(),
    }


def write_study(result, out) -> Path:
    """Write the study's folder atomically; returns its path (see the module for files)."""
    folder = Path(out)
    if folder.exists() and not folder.is_dir():
        raise FileExistsError(f"{folder} exists and is not a folder")
    with atomic_folder(folder) as tmp:
        plot_overlay(result, tmp / "overlay.png")
        plot_price_sweep(result, tmp / "price_sweep.png")
        result.fronts.to_csv(tmp / "fronts.csv", index=False)
        for name in ("overlay", "premium", "premium_summary", "sweep", "envelopes", "flips"):
            getattr(result, name).to_csv(tmp / f"{name}.csv", index=False)
        result.target.to_csv(tmp / "target.csv", index=False)
        blocks = study_blocks(result)
        (tmp / "study.md").write_text(to_markdown(blocks), encoding="utf-8")
        (tmp / "study.html").write_text(to_html(blocks, title=blocks[0][2]), encoding="utf-8")
        write_json(tmp / "run.json", study_record(result))
    return folder

"""Figures of a run: the front's scatter matrix, its parallel coordinates and convergence.

Figures are drawn on the Agg canvas directly (``matplotlib.figure.Figure`` with
``FigureCanvasAgg``): no pyplot, no backend switch, no global matplotlib state is touched,
on import or later. Every function writes one PNG and returns its path.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np
import pandas as pd
from matplotlib import colormaps
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from optifin.report.marks import marked_designs

__all__ = [
    "DEFAULT_VARIABLES",
    "column_label",
    "mark_label",
    "plot_convergence",
    "plot_front_matrix",
    "plot_parallel",
]

#: Design columns drawn on the parallel-coordinates plot, when present in the front.
DEFAULT_VARIABLES: tuple[str, ...] = (
    "fin_count",
    "fin_thickness_mm",
    "fin_height_mm",
    "base_thickness_mm",
    "width_mm",
    "length_mm",
    "fin_gap_mm",
)

#: Unit suffixes of result-table column names and how they are printed (longest first).
UNIT_SUFFIXES: tuple[tuple[str, str], ...] = (
    ("_W_per_m2K", "W/(m²·K)"),
    ("_m3_per_s", "m³/s"),
    ("_K_per_W", "K/W"),
    ("_m_per_s", "m/s"),
    ("_cm3", "cm³"),
    ("_mm", "mm"),
    ("_kg", "kg"),
    ("_Pa", "Pa"),
    ("_W", "W"),
    ("_C", "°C"),
    ("_K", "K"),
)

DPI = 110


def column_label(column: str, currency: str | None = None) -> str:
    """A readable axis label from a unit-suffixed column name.

    >>> column_label("thermal_resistance_K_per_W")
    'thermal resistance [K/W]'
    >>> column_label("total_cost", "USD")
    'total cost [USD]'
    >>> column_label("fin_count")
    'fin count'
    """
    for suffix, unit in UNIT_SUFFIXES:
        if column.endswith(suffix) and len(column) > len(suffix):
            return f"{column[: -len(suffix)].replace('_', ' ')} [{unit}]"
    words = column.replace("_", " ")
    if currency and column.endswith("cost"):
        return f"{words} [{currency}]"
    return words


def _canvas(width: float, height: float) -> Figure:
    # fixed margins: a constrained layout costs half the time of a plot (measured)
    figure = Figure(figsize=(width, height))
    figure.subplots_adjust(left=0.1, right=0.96, bottom=0.1, top=0.92, wspace=0.38, hspace=0.38)
    FigureCanvasAgg(figure)
    return figure


def _save(figure: Figure, path) -> Path:
    path = Path(path)
    figure.savefig(path, format="png", dpi=DPI)
    return path


def _message(figure: Figure, text: str) -> None:
    ax = figure.add_subplot()
    ax.set_axis_off()
    ax.text(0.5, 0.5, text, ha="center", va="center", fontsize=12, transform=ax.transAxes)


def _numeric(front: pd.DataFrame, column: str) -> np.ndarray:
    return pd.to_numeric(front[column], errors="coerce").to_numpy(dtype=float)


def material_groups(front: pd.DataFrame) -> list[tuple[str, np.ndarray, tuple]]:
    """(material, row mask, colour) for each material on the front, in order of appearance."""
    if "material" in front:
        names = front["material"].astype(str).to_numpy()
    else:
        names = np.full(len(front), "design")
    palette = colormaps["tab10"]
    keys = list(dict.fromkeys(names.tolist()))
    return [(key, names == key, palette(i % 10)) for i, key in enumerate(keys)]


def mark_label(label: str) -> str:
    """A short label of a mark for figures: ``best_mass_kg`` -> ``best mass``."""
    if label.startswith("best_"):
        name = column_label(label[len("best_") :])
        return "best " + name.split(" [")[0]
    return label.replace("_", " ")


def _labels_by_row(marks: Mapping[str, int]) -> dict[int, str]:
    rows: dict[int, list[str]] = {}
    for label, row in marks.items():
        rows.setdefault(int(row), []).append(mark_label(label))
    return {row: ", ".join(labels) for row, labels in rows.items()}


def _annotate(ax, text: str, x: float, y: float, x_all: np.ndarray, y_all: np.ndarray) -> None:
    """Label a point, the text leaning towards the middle of the data so it stays inside."""

    def side(v, values):
        finite = values[np.isfinite(values)]
        middle = 0.5 * (finite.min() + finite.max()) if finite.size else v
        return -1 if v > middle else 1

    sx, sy = side(x, x_all), side(y, y_all)
    ax.annotate(
        text,
        (x, y),
        xytext=(7 * sx, 7 * sy),
        textcoords="offset points",
        fontsize=7,
        ha="left" if sx > 0 else "right",
        va="bottom" if sy > 0 else "top",
        bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.7},
    )


def _legend(figure: Figure, groups, marked: bool, lines: bool = False, right=0.78) -> None:
    if lines:
        handles = [Line2D([], [], color=colour, label=name) for name, _, colour in groups]
        mark = Line2D([], [], color="k", lw=2.2, label="marked design")
    else:
        handles = [
            Line2D([], [], ls="", marker="o", color=colour, label=name)
            for name, _, colour in groups
        ]
        mark = Line2D([], [], ls="", marker="o", mfc="none", mec="k", ms=9, label="marked design")
    if marked:
        handles.append(mark)
    figure.subplots_adjust(right=right)
    figure.legend(
        handles=handles,
        title="material",
        loc="upper right",
        bbox_to_anchor=(0.995, 0.92),
        fontsize=8,
    )


def plot_front_matrix(
    front: pd.DataFrame,
    objective_columns: Sequence[tuple[str, str]],
    path,
    marks: Mapping[str, int] | None = None,
    currency: str | None = None,
) -> Path:
    """Scatter matrix of the front's objectives, coloured by material; returns ``path``.

    Off the diagonal, each pair of objectives; on it, a stacked histogram of one objective.
    Marked designs (:func:`~optifin.report.marks.marked_designs` unless ``marks`` is given)
    are ringed and, below the diagonal, labelled. One objective gives a histogram alone.
    """
    columns = [column for column, _ in objective_columns]
    senses = dict(objective_columns)
    m = len(columns)
    figure = _canvas(2.8 * max(m, 1) + 1.8, 2.6 * max(m, 1) + 0.4)
    if len(front) == 0 or m == 0:
        _message(figure, "no feasible design: the front is empty")
        return _save(figure, path)
    marks = marked_designs(front, objective_columns) if marks is None else marks
    labelled = _labels_by_row(marks)
    groups = material_groups(front)
    values = {column: _numeric(front, column) for column in columns}
    axes = figure.subplots(m, m, squeeze=False)
    for i, y_col in enumerate(columns):
        for j, x_col in enumerate(columns):
            ax = axes[i][j]
            x = values[x_col]
            if i == j:
                _histogram(ax, x, groups)
                ax.set_title(f"{column_label(x_col, currency)}\n({senses[x_col]})", fontsize=9)
                for row, text in labelled.items():
                    if np.isfinite(x[row]):
                        ax.axvline(x[row], color="k", lw=0.8, ls=":")
                        if m == 1:
                            ax.text(
                                x[row],
                                0.97,
                                text,
                                transform=ax.get_xaxis_transform(),
                                rotation=90,
                                ha="right",
                                va="top",
                                fontsize=7,
                            )
            else:
                y = values[y_col]
                for _, mask, colour in groups:
                    ax.scatter(x[mask], y[mask], s=16, color=colour, alpha=0.8, lw=0)
                rows = np.array(sorted(labelled), dtype=int)
                ax.scatter(x[rows], y[rows], s=80, facecolors="none", edgecolors="k", lw=1.0)
                if i > j or m == 2:
                    for row, text in labelled.items():
                        if np.isfinite(x[row]) and np.isfinite(y[row]):
                            _annotate(ax, text, x[row], y[row], x, y)
            if i == m - 1:
                ax.set_xlabel(column_label(x_col, currency), fontsize=9)
            if j == 0:
                ax.set_ylabel("designs" if i == 0 else column_label(y_col, currency), fontsize=9)
            ax.tick_params(labelsize=7)
    _legend(figure, groups, marked=bool(labelled))
    return _save(figure, path)


def _histogram(ax, x: np.ndarray, groups) -> None:
    finite = np.isfinite(x)
    if not finite.any():
        return
    values = x[finite]
    low, high = values.min(), values.max()
    if high > low:
        edges = np.histogram_bin_edges(
            values, bins=int(np.clip(np.ceil(np.sqrt(values.size)), 2, 20))
        )
    else:  # one value: one bar centred on it
        half = 0.05 * abs(low) if low != 0 else 0.5
        edges = np.array([low - half, low + half])
    data = [x[mask & finite] for _, mask, _ in groups]
    ax.hist(
        data, bins=edges, stacked=True, color=[c for *_, c in groups], edgecolor="white", lw=0.5
    )


def plot_parallel(
    front: pd.DataFrame,
    objective_columns: Sequence[tuple[str, str]],
    path,
    variables: Sequence[str] = DEFAULT_VARIABLES,
    marks: Mapping[str, int] | None = None,
    currency: str | None = None,
) -> Path:
    """Parallel coordinates of the front, one normalised axis per column; returns ``path``.

    The axes are the ``variables`` present in the front, then the objectives. Each axis
    runs from the front's lowest value (bottom) to its highest (top), printed at the ends;
    a column with one value sits at mid-height. Lines are coloured by material; marked
    designs are drawn in black and labelled at the right.
    """
    # variables that take one value on the whole front say nothing: leave them out
    names = [v for v in variables if v in front and front[v].nunique(dropna=False) > 1]
    names += [c for c, _ in objective_columns if c not in names and c in front]
    figure = _canvas(max(6.0, 1.15 * len(names) + 3.5), 4.8)
    figure.subplots_adjust(bottom=0.3, left=0.04)
    if len(front) == 0 or not names:
        _message(figure, "no feasible design: the front is empty")
        return _save(figure, path)
    marks = marked_designs(front, objective_columns) if marks is None else marks
    senses = dict(objective_columns)
    table = np.column_stack([_numeric(front, n) for n in names])
    low = np.nanmin(np.where(np.isfinite(table), table, np.nan), axis=0)
    high = np.nanmax(np.where(np.isfinite(table), table, np.nan), axis=0)
    span = high - low
    flat = ~(span > 0)
    Z = np.where(flat, 0.5, (table - low) / np.where(flat, 1.0, span))
    x = np.arange(len(names))
    ax = figure.add_subplot()
    groups = material_groups(front)
    alpha = 0.9 if len(front) <= 20 else 0.45
    for _, mask, colour in groups:
        if mask.any():  # one collection per material: far faster than a line per design
            segments = np.stack([np.broadcast_to(x, Z[mask].shape), Z[mask]], axis=-1)
            ax.add_collection(LineCollection(segments, colors=[colour], lw=1.0, alpha=alpha))
    for row, text in _labels_by_row(marks).items():
        ax.plot(x, Z[row], color="k", lw=2.2)
        ax.annotate(
            text,
            (x[-1], Z[row, -1]),
            xytext=(6, 0),
            textcoords="offset points",
            fontsize=7,
            va="center",
        )
    for k in x:
        ax.axvline(k, color="0.3", lw=0.8)
        box = {"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none"}
        ax.text(k, 1.03, _short(high[k]), ha="center", va="bottom", fontsize=7, bbox=box)
        if not flat[k]:
            ax.text(k, -0.03, _short(low[k]), ha="center", va="top", fontsize=7, bbox=box)
    labels = []
    for n in names:
        text = column_label(n, currency)
        labels.append(f"{text}\n({senses[n]})" if n in senses else text)
    ax.set_xticks(x, labels, rotation=30, ha="right", fontsize=8)
    ax.set_yticks([])
    ax.set_ylim(-0.12, 1.12)
    ax.set_xlim(-0.3, len(names) - 0.4)
    for side in ("left", "right", "top"):
        ax.spines[side].set_visible(False)
    _legend(figure, groups, marked=bool(marks), lines=True, right=0.72)
    return _save(figure, path)


def _short(value: float) -> str:
    if not np.isfinite(value):
        return "n/a"
    return f"{value:.4g}"


def plot_convergence(history: pd.DataFrame, path) -> Path:
    """Hypervolume against evaluations, and feasible designs found on a second axis.

    The hypervolume in the history is that of the running front normalised to the final
    front's ideal and nadir (reference point 1.1 per objective); ``feasible`` counts the
    feasible designs evaluated so far. Returns ``path``.
    """
    figure = _canvas(6.4, 4.0)
    if len(history) == 0 or "hypervolume" not in history:
        _message(figure, "no search history")
        return _save(figure, path)
    x_name = "evaluations" if "evaluations" in history else None
    x = _numeric(history, x_name) if x_name else np.arange(1, len(history) + 1, dtype=float)
    marker = "o" if len(history) <= 40 else None
    ax = figure.add_subplot()
    hv = _numeric(history, "hypervolume")
    (line,) = ax.plot(x, hv, color="C0", marker=marker, ms=3, label="hypervolume")
    ax.set_xlabel("evaluations" if x_name else "generation")
    ax.set_ylabel("hypervolume (normalised)")
    ax.grid(alpha=0.3)
    handles = [line]
    if "feasible" in history:
        twin = ax.twinx()
        (second,) = twin.plot(
            x,
            _numeric(history, "feasible"),
            color="C1",
            ls="--",
            marker=marker,
            ms=3,
            label="feasible designs found",
        )
        twin.set_ylabel("feasible designs found")
        handles.append(second)
    ax.legend(handles=handles, loc="lower right", fontsize=8)
    ax.set_title("Convergence of the search", fontsize=10)
    return _save(figure, path)

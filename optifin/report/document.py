"""The run report: one document structure rendered as Markdown and as self-contained HTML.

:func:`write_extras` is the hook the results writer calls
(``write_results(result, folder, extras=write_extras)``): it draws the figures and the
drawings of the marked designs and writes ``report.md`` and ``report.html`` beside them.
"""

from __future__ import annotations

import html
import math
import re
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from optifin.errors import ModelError
from optifin.model import COLUMNS
from optifin.physics import registry
from optifin.report.cad import write_marked_dxf
from optifin.report.drawing import drawing_name, format_mm, write_marked_drawings
from optifin.report.marks import binding_constraint, marked_designs
from optifin.report.plots import column_label, plot_convergence, plot_front_matrix, plot_parallel

__all__ = [
    "FIGURES",
    "SAFETY",
    "format_number",
    "report_blocks",
    "resistance_breakdown",
    "to_html",
    "to_markdown",
    "write_extras",
    "write_report",
]

ZERO_C = 273.15
LFM = 0.3048 / 60.0  #: m/s per linear foot per minute (exact, from the international foot)
CFM = 0.3048**3 / 60.0  #: m³/s per cubic foot per minute (exact)
OUT_OF_RANGE = "out_of_range_"

#: The figures of a run: file name and caption.
FIGURES: tuple[tuple[str, str], ...] = (
    (
        "front_matrix.png",
        "The Pareto front: objectives pairwise, coloured by material, "
        "with the marked designs ringed.",
    ),
    (
        "parallel.png",
        "The front in parallel coordinates: design variables and objectives, "
        "each axis from the front's lowest to highest value.",
    ),
    (
        "convergence.png",
        "Convergence: hypervolume of the front found so far and the number of "
        "feasible designs evaluated.",
    ),
)

#: Resistance components of a result row, from the device to the air.
BREAKDOWN: tuple[tuple[str, str], ...] = (
    ("interface_resistance_K_per_W", "interface material (device case to base)"),
    ("spreading_resistance_K_per_W", "spreading in the base"),
    ("base_resistance_K_per_W", "1-D conduction through the base"),
    ("convection_resistance_K_per_W", "convection (fins, exposed base, radiation)"),
)
TOTAL = "thermal_resistance_K_per_W"

VARIABLE_WORDS = {
    "fin_count": "fin count",
    "fin_thickness": "fin thickness",
    "fin_height": "fin height",
    "base_thickness": "base thickness",
    "width": "width (across the fins)",
    "length": "flow length (along the fins)",
    "material": "material",
    "process": "process",
    "finish": "surface finish",
}

#: Problem limits in words: key -> (quantity, kind of value).
LIMIT_WORDS = {
    "max_base_temperature": ("the base temperature under the hottest source", "temperature"),
    "max_source_temperature": ("the device case (source) temperature", "temperature"),
    "max_pressure_drop": ("the pressure drop across the sink", "Pa"),
    "max_fan_power": ("the air power (pressure drop times flow)", "W"),
    "max_mass": ("the mass of the sink", "kg"),
    "max_cost": ("the indicative total cost per part", "currency"),
    "max_material_cost": ("the indicative material cost per part", "currency"),
}

#: Columns of the marked-designs table (those present are shown).
DESIGN_COLUMNS = (
    "fin_type",
    "fin_count",
    "fin_thickness_mm",
    "fin_tip_thickness_mm",
    "pin_diameter_mm",
    "pin_pitch_transverse_mm",
    "pin_pitch_longitudinal_mm",
    "pin_layout",
    "pin_count",
    "fin_height_mm",
    "base_thickness_mm",
    "width_mm",
    "length_mm",
    "fin_gap_mm",
    "material",
    "base_material",
    "insert_material",
    "process",
)
METRIC_COLUMNS = (
    "thermal_resistance_K_per_W",
    "base_temperature_C",
    "source_temperature_C",
    "heat_rate_W",
    "pressure_drop_Pa",
    "volumetric_flow_m3_per_s",
    "bypass_fraction",
    "mass_kg",
    "total_cost",
)

SAFETY: tuple[str, ...] = (
    "The results are engineering estimates from published correlations, each used within "
    "(or, where flagged above, beyond) the range it was published for. They are not a "
    "measurement and carry the uncertainty of those correlations, of the material data and "
    "of the operating condition assumed.",
    "Verify the chosen design by test before relying on it: build a prototype and measure "
    "the device and sink temperatures (thermocouples on the base and case, or an infrared "
    "camera with the surface emissivity accounted for) at the worst-case ambient "
    "temperature, air flow and heat load.",
    "The device maker's temperature limits, the touch-temperature limits of the "
    "product-safety standards that apply (for example IEC 62368-1 for accessible surfaces "
    "of audio/video and ICT equipment) and local codes take precedence over anything in "
    "this report.",
    "Hot surfaces can burn: a heat sink at the temperatures above may be hot enough to "
    "injure on contact; guard it or mark it as the applicable standard requires.",
)


# -- formatting -------------------------------------------------------------------------------
def format_number(value, sig: int = 3) -> str:
    """A number to ``sig`` significant figures, fixed-point between 1e-3 and 1e6.

    >>> format_number(0.012345), format_number(1234.6), format_number(float("nan"))
    ('0.0123', '1235', 'n/a')
    """
    try:
        value = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(value):
        return "n/a"
    size = abs(value)
    if size == 0:
        return "0"
    if 1e-3 <= size < 1e6:
        decimals = max(0, sig - 1 - math.floor(math.log10(size)))
        return f"{value:.{decimals}f}"
    return f"{value:.{sig - 1}e}"


def _celsius(kelvin: float) -> str:
    return f"{format_number(kelvin - ZERO_C)} °C"


def _cell(value, column: str = "") -> str:
    if column.endswith("_mm"):
        try:
            return format_mm(float(value))
        except (TypeError, ValueError):
            return str(value)
    if column == "fin_count":
        return str(round(float(value)))
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (int, float, np.number)):
        return format_number(value, 4)
    return str(value)


# -- the document structure and its two renderings --------------------------------------------
# A block is a tuple: ("h", level, text), ("p", text), ("ul", [text, ...]),
# ("table", headers, rows), ("img", source, caption). Text may hold `code` spans.
Block = tuple


def to_markdown(blocks: Sequence[Block]) -> str:
    """Render blocks as CommonMark with pipe tables."""
    out: list[str] = []
    for block in blocks:
        kind = block[0]
        if kind == "h":
            out.append("#" * block[1] + " " + block[2])
        elif kind == "p":
            out.append(block[1])
        elif kind == "ul":
            out.append("\n".join(f"- {item}" for item in block[1]))
        elif kind == "table":
            headers, rows = block[1], block[2]
            lines = [
                "| " + " | ".join(_md_cell(h) for h in headers) + " |",
                "|" + "|".join("---" for _ in headers) + "|",
            ]
            lines += ["| " + " | ".join(_md_cell(c) for c in row) + " |" for row in rows]
            out.append("\n".join(lines))
        elif kind == "img":
            out.append(f"![{block[2]}]({block[1]})\n\n*{block[2]}*")
        else:
            raise ValueError(f"unknown block kind {kind!r}")
    return "\n\n".join(out) + "\n"


def _md_cell(text) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


CSS = (
    "body{font-family:system-ui,sans-serif;max-width:980px;margin:2em auto;padding:0 1em;"
    "color:#1d2733;line-height:1.45}"
    "table{border-collapse:collapse;margin:0.8em 0;font-size:0.92em}"
    "th,td{border:1px solid #c5ccd3;padding:0.25em 0.55em;text-align:left}"
    "th{background:#eef1f4}"
    "code{background:#f2f4f6;padding:0 0.2em}"
    "figure{margin:1em 0}img{max-width:100%}figcaption{font-style:italic;color:#4a5561}"
)


def _inline_html(text: str) -> str:
    escaped = html.escape(str(text), quote=False)
    return re.sub(r"`([^`]+)`", r"<code>\1</code>", escaped)


def to_html(blocks: Sequence[Block], title: str) -> str:
    """Render blocks as one self-contained HTML page (inline CSS, images by relative link)."""
    body: list[str] = []
    for block in blocks:
        kind = block[0]
        if kind == "h":
            level = min(int(block[1]), 6)
            body.append(f"<h{level}>{_inline_html(block[2])}</h{level}>")
        elif kind == "p":
            body.append(f"<p>{_inline_html(block[1])}</p>")
        elif kind == "ul":
            items = "".join(f"<li>{_inline_html(item)}</li>" for item in block[1])
            body.append(f"<ul>{items}</ul>")
        elif kind == "table":
            head = "".join(f"<th>{_inline_html(h)}</th>" for h in block[1])
            rows = "".join(
                "<tr>" + "".join(f"<td>{_inline_html(c)}</td>" for c in row) + "</tr>"
                for row in block[2]
            )
            body.append(f"<table><thead><tr>{head}</tr></thead><tbody>{rows}</tbody></table>")
        elif kind == "img":
            src = html.escape(block[1], quote=True)
            caption = _inline_html(block[2])
            body.append(
                f'<figure><img src="{src}" alt="{html.escape(block[2], quote=True)}">'
                f"<figcaption>{caption}</figcaption></figure>"
            )
        else:
            raise ValueError(f"unknown block kind {kind!r}")
    return (
        '<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f"<title>{html.escape(title)}</title>\n<style>{CSS}</style>\n</head>\n<body>\n"
        + "\n".join(body)
        + "\n</body>\n</html>\n"
    )


# -- content -----------------------------------------------------------------------------------
def resistance_breakdown(row: Mapping) -> list[tuple[str, float, float]]:
    """The thermal path of a result row: (component, resistance [K/W], share of the total).

    The four components (interface, spreading, base, convection) are followed by the total
    (the ``thermal_resistance_K_per_W`` column). The model defines the components so that
    they add up to the total; a share is the component over the total.
    """
    total = float(row[TOTAL])
    out = []
    for column, words in BREAKDOWN:
        value = float(row[column])
        out.append((words, value, value / total if total else math.nan))
    out.append(("total, device case to ambient", total, 1.0 if total else math.nan))
    return out


def _words(variable) -> str:
    return VARIABLE_WORDS.get(variable.name, variable.name.replace("_", " "))


def _variable_sentence(variable) -> str:
    name = _words(variable)
    if variable.kind == "choice":
        choices = ", ".join(f"`{c}`" for c in variable.choices)
        if variable.fixed:
            return f"The {name} is fixed: {choices}."
        return f"The {name} is chosen among {choices}."

    def value(x):
        return f"{format_mm(x * 1e3)} mm" if variable.kind == "length" else f"{x:g}"

    if variable.fixed:
        return f"The {name} is fixed at {value(variable.low)}."
    text = f"The {name} is searched from {value(variable.low)} to {value(variable.high)}"
    if variable.kind == "length":
        text += f" in steps of {value(variable.step)}" if variable.step else ", continuously"
    return text + "."


def _source_sentence(source, index: int) -> str:
    name = source.name if source.name != "source" else f"source {index + 1}"
    text = (
        f"Heat source `{name}` dissipates {format_number(source.power)} W over "
        f"{format_mm(source.size_x * 1e3)} mm × {format_mm(source.size_y * 1e3)} mm "
        "(across × along the fins)"
    )
    if source.x is None and source.y is None:
        text += ", centred on the base"
    else:
        parts = []
        if source.x is not None:
            parts.append(f"{format_mm(source.x * 1e3)} mm across")
        if source.y is not None:
            parts.append(f"{format_mm(source.y * 1e3)} mm along the flow")
        text += ", centred " + " and ".join(parts) + " from the corner of the base"
    if source.interface_resistance:
        text += (
            f", through an interface material of {format_number(source.interface_resistance)} K/W"
        )
    return text + "."


def _forced_sentence(cond) -> str:
    """How the air reaches the sink: set flow, approach velocity, fan, or an open sink."""
    if cond.fan is not None:
        curve = cond.fan
        text = (
            "Forced convection through a shrouded (ducted) sink driven by a fan"
            f"{' (' + curve.name + ')' if curve.name else ''}: free delivery "
            f"{format_number(curve.free_delivery / CFM)} CFM, shut-off "
            f"{format_number(curve.shutoff_pressure)} Pa; the flow of each design is the "
            "operating point where the fan curve meets the system curve (the sink's "
            "pressure drop"
        )
        extra = []
        if cond.extra_loss_coefficient:
            where = (
                "the sink frontal area"
                if cond.extra_loss_area is None
                else f"{format_number(cond.extra_loss_area * 1e4)} cm²"
            )
            extra.append(
                f"an extra loss K = {format_number(cond.extra_loss_coefficient)} on {where}"
            )
        if cond.extra_loss_pressure:
            extra.append(
                f"an extra {format_number(cond.extra_loss_pressure)} Pa at "
                f"{format_number(cond.extra_loss_flow / CFM)} CFM, scaled with flow squared"
            )
        return text + (" plus " + " and ".join(extra) if extra else "") + ")."
    if cond.volumetric_flow is not None:
        q = cond.volumetric_flow
        return (
            f"Forced convection through a shrouded (ducted) sink: "
            f"{format_number(q)} m³/s ({format_number(q / CFM)} CFM) passes "
            "through the fin channels."
        )
    v = cond.approach_velocity
    if cond.bypassed:
        side, top = cond.side_clearance or 0.0, cond.top_clearance or 0.0
        where = (
            "an open stream"
            if math.isinf(side) or math.isinf(top)
            else f"a duct with {format_number(side * 1e3)} mm beside each side and "
            f"{format_number(top * 1e3)} mm above the fin tips"
        )
        return (
            f"Forced convection over an open (unshrouded) sink in {where}: approach velocity "
            f"{format_number(v)} m/s ({format_number(v / LFM)} LFM); part of the air goes "
            "around the fins, split by a two-branch Bernoulli and continuity balance "
            "(after Simons & Schmidt 1997), and the fins are rated at their own velocity."
        )
    return (
        f"Forced convection through a shrouded (ducted) sink: approach "
        f"velocity {format_number(v)} m/s ({format_number(v / LFM)} LFM) over "
        "the fin frontal area (width × fin height), all of it passing through "
        "the fin channels."
    )


def _limit_sentence(key: str, limit: float, currency: str) -> str:
    words, kind = LIMIT_WORDS.get(key, (key.replace("_", " "), ""))
    if kind == "temperature":
        value = _celsius(limit)
    elif kind == "currency":
        value = f"{format_number(limit)} {currency}".rstrip()
    else:
        value = f"{format_number(limit)} {kind}".rstrip()
    return f"{words[0].upper()}{words[1:]} must not exceed {value} (`{key}`)."


def _problem_blocks(result) -> list[Block]:
    problem = result.problem
    cond = problem.condition
    currency = _currency(problem)
    blocks: list[Block] = [("h", 2, "The problem")]
    description = getattr(problem, "description", "")
    if description:
        blocks.append(("p", description))

    load = [_source_sentence(s, i) for i, s in enumerate(cond.sources)]
    total = f"The total heat load is {format_number(cond.total_power)} W."
    if len(cond.sources) > 1:
        total += " Temperatures and resistances are those of the hottest source."
    load.append(total)
    blocks += [("h", 3, "Heat load"), ("ul", load)]

    air = [
        f"Ambient air at {_celsius(cond.ambient_temperature)} and "
        f"{format_number(cond.pressure / 1e3, 4)} kPa."
    ]
    if cond.radiation_on:
        air.append(
            f"Radiation to surroundings at {_celsius(cond.t_surroundings)} is "
            "included, with the emissivity of the material and finish."
        )
    else:
        air.append("Radiation is neglected.")
    if cond.cooling == "forced":
        air.append(_forced_sentence(cond))
    else:
        air.append(
            "Natural convection: vertical fins on a vertical base, open at top and "
            "bottom; the flow length is the vertical length of the fins."
        )
    air.append(
        f"Model options: fin tips `{cond.tip}`, channel heat transfer "
        f"`{cond.channel_heat_transfer}`, spreading `{cond.spreading}`, entrance and "
        f"exit losses `{cond.loss_coefficients}`; production quantity "
        f"{cond.quantity} (for the share of set-up cost per part)."
    )
    blocks += [("h", 3, "Air and cooling"), ("ul", air)]

    env = getattr(problem, "envelope", None)
    bounds = []
    for key, words in (
        ("max_width", "width"),
        ("max_length", "flow length"),
        ("max_height", "height (base plus fins)"),
    ):
        value = getattr(env, key, None) if env is not None else None
        if value is not None:
            bounds.append(f"{words} at most {format_mm(value * 1e3)} mm")
    envelope = (
        "The sink must fit an envelope of " + ", ".join(bounds) + "."
        if bounds
        else "No envelope is set beyond the ranges of the variables."
    )
    blocks += [("h", 3, "Envelope"), ("p", envelope)]

    variables = getattr(problem, "variables", ())
    if variables:
        blocks += [("h", 3, "What is searched"), ("ul", [_variable_sentence(v) for v in variables])]

    objectives = [
        f"{sense.capitalize()} {column_label(column, currency)}"
        f"{': ' + _describe(column) if _describe(column) else ''}."
        for column, sense in result.objective_columns
    ]
    blocks += [("h", 3, "Objectives"), ("ul", objectives or ["No objective recorded."])]

    limits = getattr(problem, "limits", {}) or {}
    constraints = [_limit_sentence(k, v, currency) for k, v in limits.items()]
    constraints.append(
        "Each design must also respect its process's manufacturing limits "
        "(minimum fin thickness, gap and base thickness; maximum fin height "
        "to gap ratio, fin height and width) and the envelope."
    )
    blocks += [("h", 3, "Constraints"), ("ul", constraints)]
    return blocks


def _describe(column: str) -> str:
    for _, name, _, _, description in COLUMNS:
        if name == column:
            return description
    return ""


def _currency(problem) -> str:
    library = getattr(problem, "library", None)
    return getattr(library, "currency", "") or ""


def _material_name(problem, key: str) -> str:
    library = getattr(problem, "library", None)
    materials = getattr(library, "materials", {}) or {}
    material = materials.get(key)
    return getattr(material, "name", "") if material is not None else ""


def _search_blocks(result) -> list[Block]:
    timings = dict(result.timings or {})
    seconds = timings.get("search_s")
    time_text = f" in {format_number(seconds)} s" if seconds is not None else ""
    if seconds is not None and "model_s" in timings:
        time_text += f" (of which the model {format_number(timings['model_s'])} s)"
    lines = [
        f"Algorithm `{result.algorithm}`, seed {result.seed}: {result.evaluations} designs "
        f"evaluated{time_text}.",
        f"The Pareto front holds {len(result.front)} feasible design"
        f"{'' if len(result.front) == 1 else 's'}; its hypervolume is "
        f"{format_number(result.hypervolume, 4)} (objectives normalised to the front's ideal "
        "and nadir, reference point 1.1 in each).",
    ]
    notes = list(result.notes or [])
    if result.interrupted and not any("interrupt" in n for n in notes):
        notes.append("interrupted: the front is what was found before the stop")
    blocks: list[Block] = [("h", 2, "The search"), ("ul", lines)]
    if notes:
        blocks += [("p", "Notes of the run:"), ("ul", notes)]
    return blocks


def _figure_blocks(folder: Path) -> list[Block]:
    blocks: list[Block] = []
    figures = [("img", name, caption) for name, caption in FIGURES if (folder / name).exists()]
    if figures:
        blocks += [("h", 2, "Figures"), *figures]
    return blocks


def _group_marks(marks: Mapping[str, int]) -> dict[int, list[str]]:
    rows: dict[int, list[str]] = {}
    for label, row in marks.items():
        rows.setdefault(int(row), []).append(label)
    return rows


def _marked_blocks(result, marks: Mapping[str, int], folder: Path) -> list[Block]:
    front = result.front
    problem = result.problem
    currency = _currency(problem)
    blocks: list[Block] = [("h", 2, "Marked designs")]
    if not marks:
        return [*blocks, ("p", "The front is empty: no design to mark.")]
    intro = (
        "`knee`: the design farthest from the line (plane) through the ends of the "
        "normalised front (Das 1999), where improving one objective further begins to "
        "cost much more of the others; "
        "`best_<objective>`: the best design in that objective."
    )
    if len(front) < 3:
        intro += (
            f" With {len(front)} design{'s' if len(front) != 1 else ''} on the front "
            "there is no trade-off to weigh: the knee is only the first design."
        )
    blocks.append(("p", intro))
    objective_names = [c for c, _ in result.objective_columns]
    columns = [c for c in DESIGN_COLUMNS if c in front]
    columns += [
        c
        for c in dict.fromkeys((*objective_names, *METRIC_COLUMNS))
        if c in front and c not in columns
    ]
    headers = ["mark", "row", *(column_label(c, currency) for c in columns)]
    rows = [
        [f"`{label}`", str(row), *(_cell(front.iloc[row][c], c) for c in columns)]
        for label, row in marks.items()
    ]
    blocks.append(("table", headers, rows))
    blocks.append(
        (
            "p",
            "Constraint margins are normalised: 0 at the limit, positive when "
            "met (a temperature margin is the share of the allowed rise above "
            "ambient left unused, other limits are relative to the limit).",
        )
    )
    cond = problem.condition
    for row, labels in _group_marks(marks).items():
        design = front.iloc[row]
        names = ", ".join(f"`{label}`" for label in labels)
        blocks.append(("h", 3, f"{names}: front row {row}"))
        blocks.append(("p", _design_sentence(design, problem)))
        if all(c in design.index for c, _ in BREAKDOWN) and TOTAL in design.index:
            table = [
                [words, f"{value:.6f}", f"{100 * share:.1f} %"]
                for words, value, share in resistance_breakdown(design)
            ]
            blocks.append(("table", ["thermal path", "resistance [K/W]", "share"], table))
        blocks.append(("ul", _metric_lines(design, cond, currency)))
        flagged = [
            c[len(OUT_OF_RANGE) :]
            for c in design.index
            if c.startswith(OUT_OF_RANGE) and bool(design[c])
        ]
        if flagged:
            blocks.append(
                (
                    "p",
                    "Outside the published range of "
                    + ", ".join(f"`{f}`" for f in flagged)
                    + ": these results are extrapolations.",
                )
            )
        for label in labels:
            if (folder / drawing_name(label)).exists():
                blocks.append(("img", drawing_name(label), f"Cross-section, `{label}`."))
            dxf = drawing_name(label).replace(".svg", ".dxf")
            if (folder / dxf).exists():
                blocks.append(
                    ("p", f"The same section as a DXF drawing in mm, for a vendor: `{dxf}`.")
                )
                break
    return blocks


def _design_sentence(design, problem) -> str:
    n = round(float(design["fin_count"]))
    material = str(design.get("material", ""))
    full = _material_name(problem, material)
    made = f"`{material}`" + (f" ({full})" if full else "")
    for key in ("process", "finish"):
        if key in design.index and not pd.isna(design[key]):
            made += f", {key} `{design[key]}`"
    for key in ("base_material", "insert_material"):
        if key in design.index and not pd.isna(design[key]):
            made += f", {key.replace('_', ' ')} `{design[key]}`"
    size = (
        f"on a {format_mm(design['base_thickness_mm'])} mm base, "
        f"{format_mm(design['width_mm'])} mm wide and "
        f"{format_mm(design['length_mm'])} mm long along the flow"
    )
    if str(design.get("fin_type", "plate")) == "pin":
        return (
            f"{round(float(design['pin_count']))} round pins "
            f"{format_mm(design['pin_diameter_mm'])} mm in diameter and "
            f"{format_mm(design['fin_height_mm'])} mm tall, {design['pin_layout']} at "
            f"{format_mm(design['pin_pitch_transverse_mm'])} mm across and "
            f"{format_mm(design['pin_pitch_longitudinal_mm'])} mm along the flow, "
            f"{size}; {made}."
        )
    thickness = f"{format_mm(design['fin_thickness_mm'])} mm thick"
    tip = design.get("fin_tip_thickness_mm", math.nan)
    if pd.notna(tip) and tip != design["fin_thickness_mm"]:
        thickness = (
            f"tapered from {format_mm(design['fin_thickness_mm'])} mm at the root to "
            f"{format_mm(tip)} mm at the tip"
        )
    return (
        f"{n} fins {thickness} and {format_mm(design['fin_height_mm'])} mm tall {size} (gap "
        f"{format_mm(design.get('fin_gap_mm', math.nan))} mm); {made}."
    )


def _metric_lines(design, cond, currency: str) -> list[str]:
    def has(column):
        return column in design.index and pd.notna(design[column])

    lines = []
    q = cond.total_power
    if has("base_temperature_C"):
        text = (
            f"At the heat load of {format_number(q)} W and "
            f"{_celsius(cond.ambient_temperature)} ambient, the base under the hottest "
            f"source is at {format_number(design['base_temperature_C'])} °C"
        )
        if has("peak_base_temperature_C"):
            text += f" (peak {format_number(design['peak_base_temperature_C'])} °C)"
        if has("source_temperature_C"):
            text += f" and the device case at {format_number(design['source_temperature_C'])} °C"
        lines.append(text + ".")
    if has("heat_rate_W"):
        rate = float(design["heat_rate_W"])
        ratio = f" ({format_number(rate / q)} × the heat load)" if q > 0 else ""
        lines.append(f"The first temperature limit is reached at {format_number(rate)} W{ratio}.")
    else:
        lines.append("No temperature limit is set: there is no heat rate at the limit.")
    if has("pressure_drop_Pa"):
        text = f"Pressure drop {format_number(design['pressure_drop_Pa'])} Pa"
        if has("volumetric_flow_m3_per_s"):
            flow = float(design["volumetric_flow_m3_per_s"])
            text += f" at {format_number(flow)} m³/s ({format_number(flow / CFM)} CFM)"
        if has("fan_power_W"):
            text += f", air power {format_number(design['fan_power_W'])} W"
        if has("air_temperature_rise_K"):
            text += f"; the air warms by {format_number(design['air_temperature_rise_K'])} K"
        lines.append(text + ".")
    elif has("elenbaas_number"):
        lines.append(
            f"Natural convection: channel Elenbaas number "
            f"{format_number(design['elenbaas_number'])}; no pressure drop applies."
        )
    if has("mass_kg"):
        lines.append(f"Mass {format_number(design['mass_kg'])} kg.")
    if has("total_cost"):
        text = f"Indicative cost {format_number(design['total_cost'])} {currency}".rstrip()
        if has("material_cost") and has("process_cost"):
            text += (
                f" per part (material {format_number(design['material_cost'])}, process "
                f"{format_number(design['process_cost'])})"
            )
        lines.append(text + f" at a quantity of {cond.quantity}.")
    try:
        name, margin = binding_constraint(design)
    except ValueError:
        lines.append("No constraint margins were recorded for this design.")
        return lines
    text = f"Binding constraint: `{name}` (normalised margin {format_number(margin)})"
    others = sorted(
        (float(design[c]), c[len("margin_") :])
        for c in design.index
        if c.startswith("margin_") and c != f"margin_{name}" and pd.notna(design[c])
    )[:2]
    if others:
        text += "; next: " + ", ".join(f"`{n}` ({format_number(m)})" for m, n in others)
    lines.append(text + ".")
    return lines


def _validity_blocks(result) -> list[Block]:
    front = result.front
    n = len(front)
    blocks: list[Block] = [("h", 2, "Validity of the correlations")]
    flags = [c for c in front.columns if c.startswith(OUT_OF_RANGE)]
    if not flags:
        return [*blocks, ("p", "The front records no validity flags.")]
    lines = []
    any_out = False
    for column in flags:
        name = column[len(OUT_OF_RANGE) :]
        count = int(front[column].fillna(False).astype(bool).sum())
        any_out |= count > 0
        try:
            entry = registry.get(name)
            ranges = "; ".join(
                _range_text(group, low, high) for group, (low, high) in entry.validity.items()
            )
            about = (
                f" ({entry.citation()}; valid for {ranges})"
                if ranges
                else (f" ({entry.citation()})")
            )
        except ModelError:  # an unregistered name: still report the count
            about = ""
        lines.append(f"`{name}`{about}: {count} of {n} front designs outside the range.")
    blocks.append(("ul", lines))
    if any_out:
        blocks.append(
            (
                "p",
                "Results for the designs outside a correlation's range are "
                "extrapolations beyond the data the correlation was published "
                "for; they are less certain than the rest and need checking by "
                "test or a more detailed model.",
            )
        )
    else:
        blocks.append(
            ("p", "Every front design lies within the published range of every correlation used.")
        )
    return blocks


def _range_text(group: str, low, high) -> str:
    if low is None and high is None:
        return f"{group} unbounded"
    if low is None:
        return f"{group} ≤ {format_number(high)}"
    if high is None:
        return f"{group} ≥ {format_number(low)}"
    return f"{group} from {format_number(low)} to {format_number(high)}"


def report_blocks(result, folder, marks: Mapping[str, int] | None = None) -> list[Block]:
    """The report's content as blocks (see :func:`to_markdown` for the kinds).

    Figures and drawings are linked when their files exist in ``folder``.
    """
    folder = Path(folder)
    marks = marked_designs(result.front, result.objective_columns) if marks is None else marks
    blocks: list[Block] = [("h", 1, f"optifin run report: {result.problem.name}")]
    blocks += _problem_blocks(result)
    blocks += _search_blocks(result)
    blocks += _figure_blocks(folder)
    blocks += _marked_blocks(result, marks, folder)
    blocks += _catalog_blocks(result)
    blocks += _validity_blocks(result)
    blocks += [("h", 2, "Safety"), *(("p", text) for text in SAFETY)]
    return blocks


def _catalog_blocks(result) -> list[Block]:
    """With catalog parts in the search: what a custom die would save over the best part."""
    if "catalog_part" not in result.front.columns:
        return []
    from optifin.catalog import custom_die_saving

    saving = custom_die_saving(result)
    on_front = int((result.front["catalog_part"] != "").sum())
    blocks: list[Block] = [
        ("h", 2, "Catalog parts against a custom die"),
        (
            "p",
            f"{on_front} of the {len(result.front)} front designs are stock catalog parts "
            "(process `catalog_cut`: no die set-up, priced by the catalog). For each "
            "objective, the best feasible catalog part against the best feasible free design, "
            "whose extrusion needs a new die:",
        ),
    ]
    lines = []
    for _, row in saving.iterrows():
        if pd.isna(row["saving"]):
            lines.append(f"`{row['column']}`: no feasible design on one side.")
            continue
        better = "the free design" if row["saving"] > 0 else "the catalog part"
        text = (
            f"`{row['column']}`: catalog `{row['catalog_part']}` cut to "
            f"{format_number(row['catalog_cut_length_mm'])} mm gives "
            f"{format_number(row['catalog_value'])}, the free design "
            f"({row['free_design']}) {format_number(row['free_value'])} {row['unit']}: "
            f"{better} is better by {format_number(abs(row['saving']))} {row['unit']}"
        )
        if "setup_cost" in row and pd.notna(row.get("setup_cost")):
            pays = "pays" if row["pays_setup"] else "does not pay"
            text += (
                f"; the die set-up of {format_number(row['setup_cost'])} over "
                f"{int(row['quantity'])} parts ({format_number(row['setup_per_part'])} per "
                f"part) {pays} for itself"
            )
            if np.isfinite(row.get("break_even_quantity", np.nan)):
                text += f", break-even at {round(row['break_even_quantity'])} parts"
        lines.append(text + ".")
    blocks.append(("ul", lines))
    return blocks


def write_report(result, folder, marks: Mapping[str, int] | None = None) -> list[Path]:
    """Write ``report.md`` and ``report.html`` into ``folder``; returns the two paths."""
    folder = Path(folder)
    blocks = report_blocks(result, folder, marks)
    md = folder / "report.md"
    page = folder / "report.html"
    md.write_text(to_markdown(blocks), encoding="utf-8")
    page.write_text(to_html(blocks, title=blocks[0][2]), encoding="utf-8")
    return [md, page]


def write_extras(result, folder) -> list[Path]:
    """Figures, drawings of the marked designs and the report, into ``folder``.

    This is the ``extras`` hook of :func:`optifin.report.writer.write_results`.
    """
    folder = Path(folder)
    front = result.front
    marks = marked_designs(front, result.objective_columns)
    currency = _currency(result.problem)
    paths = [
        plot_front_matrix(
            front,
            result.objective_columns,
            folder / "front_matrix.png",
            marks=marks,
            currency=currency,
        ),
        plot_parallel(
            front, result.objective_columns, folder / "parallel.png", marks=marks, currency=currency
        ),
        plot_convergence(result.history, folder / "convergence.png"),
    ]
    paths += write_marked_drawings(front, marks, folder)
    paths += write_marked_dxf(front, marks, folder)
    paths += write_report(result, folder, marks)
    return paths

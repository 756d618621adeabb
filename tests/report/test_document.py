"""The run report: Markdown and HTML from one structure, with every section the brief asks."""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser

import pandas as pd
import pytest

from optifin.report.document import (
    CFM,
    LFM,
    format_number,
    report_blocks,
    resistance_breakdown,
    to_html,
    to_markdown,
    write_extras,
    write_report,
)
from optifin.report.marks import marked_designs
from optifin.units import to_si

from ._data import OBJECTIVES, forced_condition, front_table, make_result, natural_condition

VOID = {"meta", "img", "br", "hr", "link", "input"}


class Checker(HTMLParser):
    """Collects tags, image sources and text; fails on unbalanced non-void elements."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.images: list[str] = []
        self.headings: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        if tag == "img":
            self.images.append(dict(attrs)["src"])
        if tag not in VOID:
            self.stack.append(tag)
        if tag in ("h1", "h2", "h3"):
            self.headings.append("")

    def handle_endtag(self, tag):
        assert self.stack and self.stack[-1] == tag, (self.stack[-3:], tag)
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)
        if {"h1", "h2", "h3"} & set(self.stack):
            self.headings[-1] += data


def parse_html(text: str) -> Checker:
    checker = Checker()
    checker.feed(text)
    checker.close()
    assert checker.stack == []
    return checker


@pytest.fixture(scope="module")
def forced_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("forced")
    front = front_table(forced_condition())
    # two designs flagged outside Teertstra's range, to see the validity section count them
    front["out_of_range_nusselt_teertstra_1999"] = [False, True, False, True, False]
    result = make_result(front, forced_condition(), notes=["a note of the run"])
    paths = write_extras(result, folder)
    return result, folder, paths


def test_invariant_extras_writes_figures_drawings_and_report(forced_run):
    """Invariant: the hook writes the three PNGs, one SVG per mark and the two reports."""
    result, _, paths = forced_run
    names = {p.name for p in paths}
    marks = marked_designs(result.front, result.objective_columns)
    assert {
        "front_matrix.png",
        "parallel.png",
        "convergence.png",
        "report.md",
        "report.html",
    } <= names
    assert {f"design_{label}.svg" for label in marks} <= names
    assert all(p.exists() and p.stat().st_size > 0 for p in paths)


def test_invariant_breakdown_sums_to_the_total(forced_run):
    """Invariant: interface + spreading + base + convection = total resistance (1e-6 K/W),
    in the structure and, within the rounding of the printed six decimals, in report.md."""
    result, folder, _ = forced_run
    for _, row in result.front.iterrows():
        parts = resistance_breakdown(row)
        assert sum(v for _, v, _ in parts[:-1]) == pytest.approx(parts[-1][1], abs=1e-6)
        assert sum(s for _, _, s in parts[:-1]) == pytest.approx(1.0, abs=1e-9)
    md = (folder / "report.md").read_text(encoding="utf-8")
    tables = re.findall(r"\| thermal path .*?\n((?:\|.*\n)+)", md)
    marks = marked_designs(result.front, result.objective_columns)
    assert len(tables) == len(set(marks.values()))
    for table in tables:
        values = [float(line.split("|")[2]) for line in table.splitlines()[1:]]
        assert len(values) == 5
        # each printed value is within 5e-7 of the exact one: 5 roundings, at most 2.5e-6
        assert sum(values[:4]) == pytest.approx(values[4], abs=2.5e-6)


def test_invariant_report_names_every_marked_design_and_its_metrics(forced_run):
    """Invariant: each mark appears in the table and in its own section with the row's
    base temperature, mass and binding constraint (the smallest margin)."""
    result, folder, _ = forced_run
    md = (folder / "report.md").read_text(encoding="utf-8")
    marks = marked_designs(result.front, result.objective_columns)
    for label, row in marks.items():
        assert f"| `{label}` | {row} |" in md
        design = result.front.iloc[row]
        assert f"front row {row}" in md
        assert f"{format_number(design['base_temperature_C'])} °C" in md
        assert f"Mass {format_number(design['mass_kg'])} kg" in md
        margins = {c[len("margin_") :]: design[c] for c in design.index if c.startswith("margin_")}
        assert f"Binding constraint: `{min(margins, key=margins.get)}`" in md
    first_label = {}
    for label, row in marks.items():
        first_label.setdefault(row, label)
    for label in first_label.values():  # each design section shows its drawing
        assert f"![Cross-section, `{label}`.](design_{label}.svg)" in md


def test_invariant_problem_and_search_in_words(forced_run):
    """Invariant: the problem's heat load, ambient, flow, envelope, variables, objectives
    and limits, and the search's algorithm, seed, evaluations, front size and notes."""
    _, folder, _ = forced_run
    md = (folder / "report.md").read_text(encoding="utf-8")
    for text in (
        "Heat source `cpu` dissipates 40.0 W over 30 mm × 30 mm",
        "interface material of 0.0500 K/W",
        "Ambient air at 35.0 °C",
        "approach velocity 2.00 m/s (394 LFM)",
        "width at most 80 mm",
        "height (base plus fins) at most 40 mm",
        "The fin count is searched from 8 to 24.",
        "The fin height is searched from 10 mm to 30 mm in steps of 1 mm.",
        "The base thickness is searched from 3 mm to 6 mm, continuously.",
        "The width (across the fins) is fixed at 60 mm.",
        "chosen among `al_6063_t5`, `cu_c11000`",
        "Minimise thermal resistance [K/W]",
        "Minimise mass [kg]",
        "must not exceed 95.0 °C (`max_base_temperature`)",
        "must not exceed 0.500 kg (`max_mass`)",
        "Algorithm `nsga2`, seed 7: 200 designs evaluated in 1.50 s",
        "The Pareto front holds 5 feasible designs; its hypervolume is 0.8200",
        "a note of the run",
    ):
        assert text in md, text


def test_cross_method_trade_units_against_pint():
    """Cross-method: the report's LFM and CFM factors (exact, from the international foot
    0.3048 m) against optifin.units, which uses pint."""
    assert to_si("1 LFM", "velocity") == pytest.approx(LFM, rel=1e-12)
    assert to_si("1 CFM", "volumetric_flow") == pytest.approx(CFM, rel=1e-12)
    assert LFM == pytest.approx(0.00508, rel=1e-12)  # 1 ft/min = 0.00508 m/s, by definition


def test_invariant_validity_section_counts_flags(forced_run):
    """Invariant: each out_of_range_ column is counted over the front, with its reference,
    and flagged results are called extrapolations."""
    result, folder, _ = forced_run
    md = (folder / "report.md").read_text(encoding="utf-8")
    section = md.split("## Validity of the correlations")[1].split("## Safety")[0]
    n = len(result.front)
    for column in [c for c in result.front if c.startswith("out_of_range_")]:
        name = column[len("out_of_range_") :]
        count = int(result.front[column].sum())
        assert re.search(rf"`{name}`.*: {count} of {n} front designs outside the range", section)
    assert "Teertstra" in section and "re_b_star from 0.100 to 100" in section
    assert "extrapolations" in section


def test_invariant_safety_section(forced_run):
    """Invariant: the safety text: estimates, test on a prototype at the worst-case ambient,
    maker's limits, IEC 62368-1 touch temperatures, local codes, burns."""
    _, folder, _ = forced_run
    md = (folder / "report.md").read_text(encoding="utf-8")
    safety = md.split("## Safety")[1]
    for text in (
        "engineering estimates from published correlations",
        "prototype",
        "thermocouples",
        "infrared",
        "worst-case ambient",
        "device maker's",
        "IEC 62368-1",
        "local codes",
        "can burn",
    ):
        assert text in safety, text


def test_invariant_html_parses_and_mirrors_the_markdown(forced_run):
    """Invariant: report.html is balanced HTML, links only files that exist, and has the
    same headings as report.md (both come from one structure)."""
    _, folder, _ = forced_run
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>")
    checker = parse_html(page)
    assert {"front_matrix.png", "parallel.png", "convergence.png"} <= set(checker.images)
    assert all((folder / src).exists() for src in checker.images)
    md = (folder / "report.md").read_text(encoding="utf-8")
    md_headings = [re.sub(r"`", "", h) for h in re.findall(r"^#+ (.*)$", md, re.M)]
    assert checker.headings == md_headings
    assert "IEC 62368-1" in "".join(checker.text)


def test_invariant_renderers_escape_text():
    """Invariant: markup characters in text are escaped in HTML and pipes in table cells
    in Markdown; code spans become <code>."""
    blocks = [
        ("h", 1, "a <b> & c"),
        ("p", "x `y<z`"),
        ("table", ["h|1"], [["v|2"]]),
        ("ul", ["<li>"]),
    ]
    page = to_html(blocks, "t")
    assert "a &lt;b&gt; &amp; c" in page and "<code>y&lt;z</code>" in page
    parse_html(page)
    md = to_markdown(blocks)
    assert "| h\\|1 |" in md and "| v\\|2 |" in md


@pytest.mark.parametrize("rows", [0, 1, 2])
def test_invariant_tiny_and_empty_fronts(tmp_path, rows):
    """Invariant: fronts of 0, 1 and 2 designs still give every file and a valid report."""
    front = front_table(forced_condition()).iloc[:rows].reset_index(drop=True)
    result = make_result(
        front,
        forced_condition(),
        history=pd.DataFrame(columns=["generation", "evaluations", "hypervolume", "feasible"])
        if rows == 0
        else None,
    )
    paths = write_extras(result, tmp_path)
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    parse_html((tmp_path / "report.html").read_text(encoding="utf-8"))
    assert "## Safety" in md and "## Validity of the correlations" in md
    if rows == 0:
        assert "The front is empty" in md
        assert not [p for p in paths if p.suffix == ".svg"]
    else:
        assert "`knee`" in md


def test_invariant_natural_convection_single_objective_interrupted(tmp_path):
    """Invariant: a natural-convection run with one objective and no temperature limit,
    interrupted without a note, reports the mode, the missing limit and the interruption."""
    front = front_table(natural_condition())
    result = make_result(front, natural_condition(), interrupted=True, objectives=[OBJECTIVES[0]])
    write_extras(result, tmp_path)
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "Natural convection: vertical fins on a vertical base" in md
    assert "Radiation to surroundings at 25.0 °C is included" in md
    assert "No temperature limit is set" in md
    assert "interrupted" in md
    assert "pressure drop" not in md.split("## Marked designs")[1].split("## Validity")[0].replace(
        "no pressure drop applies", ""
    )


def test_invariant_write_report_alone_links_only_existing_files(tmp_path):
    """Invariant: without the figures in the folder the report links no image."""
    front = front_table(forced_condition())
    result = make_result(front, forced_condition())
    md_path, html_path = write_report(result, tmp_path)
    assert "![" not in md_path.read_text(encoding="utf-8")
    assert parse_html(html_path.read_text(encoding="utf-8")).images == []
    kinds = {b[0] for b in report_blocks(result, tmp_path)}
    assert kinds == {"h", "p", "ul", "table"}


def test_invariant_the_writer_hook_end_to_end(tmp_path):
    """Invariant: write_results with extras=write_extras moves the report, figures and
    drawings into the results folder beside run.json."""
    from optifin.report.writer import write_results

    front = front_table(forced_condition())
    front.attrs["correlations"] = ["nusselt_teertstra_1999"]
    result = make_result(front, forced_condition())
    folder = write_results(result, tmp_path / "run", extras=write_extras)
    names = {p.name for p in folder.iterdir()}
    assert {
        "report.md",
        "report.html",
        "front_matrix.png",
        "design_knee.svg",
        "run.json",
        "front.csv",
    } <= names
    assert json.loads((folder / "run.json").read_text())["front_size"] == len(front)

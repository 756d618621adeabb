"""``optifin draw`` and ``optifin.draw``: section drawings a vendor can use.

Kinds of check: invariant (the DXF outline's area times the length times the density is the
mass the model reports) and error handling (clear one-line errors, exit code 2).
"""

from pathlib import Path

import numpy as np
import pytest

from optifin.api import evaluate_designs, load_problem
from optifin.cli import main
from optifin.library import load_library
from optifin.report.outline import polygon_area

ezdxf = pytest.importorskip("ezdxf")

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "problems" / "power_module.yaml"
DESIGN = [
    "fin_count=18",
    "fin_thickness=1.4 mm",
    "fin_height=28 mm",
    "base_thickness=6 mm",
    "material=cu_c11000",
    "process=skived",
]


def _outline(path: Path) -> np.ndarray:
    doc = ezdxf.readfile(path)
    auditor = doc.audit()
    assert not auditor.has_errors
    outlines = [e for e in doc.modelspace() if e.dxf.layer == "OUTLINE"]
    assert len(outlines) == 1 and outlines[0].closed
    return np.array([p[:2] for p in outlines[0].get_points()])


def test_invariant_drawn_outline_carries_the_reported_mass(tmp_path):
    """Invariant: area x length x density of the DXF outline = the model's mass."""
    out = tmp_path / "copper"
    args = ["draw", str(EXAMPLE), "--out", str(out)]
    for item in DESIGN:
        args += ["--set", item]
    assert main(args) == 0
    assert (tmp_path / "copper.svg").read_text().startswith("<")
    vertices = _outline(tmp_path / "copper.dxf")
    problem = load_problem(EXAMPLE)
    row = evaluate_designs(problem, dict(item.split("=", 1) for item in DESIGN)).iloc[0]
    density = load_library().materials["cu_c11000"].density.si
    mass = polygon_area(vertices) * 1e-6 * row["length_mm"] * 1e-3 * density
    assert mass == pytest.approx(row["mass_kg"], rel=1e-9)


def test_invariant_catalog_part_drawing_has_the_cut_length_mass(tmp_path):
    """Invariant: a catalog part drawn at a cut has mass = outline area x cut x density."""
    out = tmp_path / "part"
    code = main(
        ["draw", str(EXAMPLE), "--profile", "DEMO-100-A", "--cut", "90 mm", "--out", str(out)]
    )
    assert code == 0
    vertices = _outline(tmp_path / "part.dxf")
    from optifin.catalog import load_catalog

    catalog = load_catalog()
    alloy = catalog.profiles.loc[catalog.ids.index("DEMO-100-A"), "alloy"]
    density = load_library().materials[alloy].density.si
    designs, _ = catalog.take([catalog.ids.index("DEMO-100-A")]).designs(np.array([0.09]))
    from optifin.model import evaluate

    row = evaluate(designs, load_problem(EXAMPLE).condition).iloc[0]
    assert polygon_area(vertices) * 1e-6 * 0.09 * density == pytest.approx(row["mass_kg"], rel=1e-9)


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        (["--profile", "NO-SUCH"], "--profile needs --cut"),
        (["--profile", "NO-SUCH", "--cut", "90 mm"], "not in"),
        (["--set", "fin_count"], "expected NAME=VALUE"),
    ],
)
def test_bad_draw_requests_are_one_line_errors(args, fragment, capsys):
    assert main(["draw", str(EXAMPLE), *args]) == 2
    assert fragment in capsys.readouterr().err


def test_results_folder_needs_a_valid_row(tmp_path, capsys):
    assert main(["draw", str(tmp_path)]) == 2
    assert "no front.csv" in capsys.readouterr().err

"""``optifin catalog`` and ``optifin study`` end to end on the bundled examples.

Kinds of check: invariants of the written folders (every file, the front feasible, the
report's cautions) and one-line errors for bad requests.
"""

from pathlib import Path

import pandas as pd
import pytest

from optifin.cli import main

ROOT = Path(__file__).resolve().parents[1]


def test_invariant_catalog_command_writes_a_screening_folder(tmp_path):
    out = tmp_path / "screen"
    code = main(
        [
            "catalog",
            str(ROOT / "problems" / "vendor_catalog.yaml"),
            "--out",
            str(out),
            "--orientation",
            "along",
            "--quiet",
        ]
    )
    assert code == 0
    for name in ("table.csv", "shortest.csv", "front.csv", "screening.md", "screening.png"):
        assert (out / name).exists(), name
    front = pd.read_csv(out / "front.csv")
    assert len(front) and front["feasible"].all()
    assert set(front["orientation"]) == {"along"}
    text = (out / "screening.md").read_text()
    assert "verify" in text.lower()


def test_invariant_study_command_writes_a_study_folder(tmp_path):
    out = tmp_path / "study"
    code = main(
        ["study", str(ROOT / "problems" / "copper_study.yaml"), "--out", str(out), "--quiet"]
    )
    assert code == 0
    fronts = pd.read_csv(out / "fronts.csv")
    assert set(fronts["option"]) == {
        "aluminium",
        "copper",
        "copper base + aluminium fins",
        "aluminium + copper insert",
    }
    flips = pd.read_csv(out / "flips.csv")
    assert len(flips) >= 1  # the example's target makes the insert win below a copper price
    assert (out / "overlay.png").exists() and (out / "price_sweep.png").exists()


def test_study_needs_a_study_section(capsys):
    assert main(["study", str(ROOT / "problems" / "power_module.yaml")]) == 2
    assert "no study section" in capsys.readouterr().err


@pytest.mark.parametrize("command", ["catalog", "study"])
def test_missing_problem_file_is_a_one_line_error(command, tmp_path, capsys):
    assert main([command, str(tmp_path / "nope.yaml")]) == 2
    assert "nope.yaml" in capsys.readouterr().err


def test_invariant_api_screen_equals_command_front(tmp_path):
    """Invariant: optifin.screen_catalog and `optifin catalog` give the same front."""
    import optifin

    problem = optifin.load_problem(ROOT / "problems" / "vendor_catalog.yaml")
    result = optifin.screen_catalog(problem, out=tmp_path / "api")
    assert (
        main(
            [
                "catalog",
                str(ROOT / "problems" / "vendor_catalog.yaml"),
                "--out",
                str(tmp_path / "cli"),
                "--quiet",
            ]
        )
        == 0
    )
    cli = pd.read_csv(tmp_path / "cli" / "front.csv")
    assert len(cli) == len(result.front)
    assert (tmp_path / "api" / "front.csv").exists()

"""The command line end to end: a run's files parse and agree; user errors are one line."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optifin.cli import main
from optifin.search.pareto import nondominated

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "problems" / "power_module.yaml"
VARIABLES = (
    "fin_count",
    "fin_thickness",
    "fin_height",
    "base_thickness",
    "width",
    "length",
    "material",
    "process",
    "finish",
)


@pytest.fixture(scope="module")
def run_folder(tmp_path_factory):
    out = tmp_path_factory.mktemp("run") / "power_module"
    code = main(["run", str(EXAMPLE), "--out", str(out), "--evaluations", "3000", "--quiet"])
    assert code == 0
    return out


def test_run_writes_every_file(run_folder):
    names = {p.name for p in run_folder.iterdir()}
    for expected in (
        "front.csv",
        "history.csv",
        "run.json",
        "report.md",
        "report.html",
        "front_matrix.png",
        "parallel.png",
        "convergence.png",
    ):
        assert expected in names
    assert names & {"designs.parquet", "designs.csv"}
    assert any(n.startswith("design_") and n.endswith(".svg") for n in names)
    assert not any(p.name.endswith(".tmp") for p in run_folder.parent.iterdir())


def test_front_is_feasible_non_dominated_and_sorted(run_folder):
    front = pd.read_csv(run_folder / "front.csv")
    record = json.loads((run_folder / "run.json").read_text())
    assert front["feasible"].all()
    columns = [c for c, _ in record["objectives"]]
    senses = [s for _, s in record["objectives"]]
    F = np.column_stack(
        [front[c] * (-1 if s == "maximise" else 1) for c, s in zip(columns, senses, strict=True)]
    )
    assert nondominated(F).all()
    assert np.all(np.diff(F[:, 0]) >= 0)
    assert record["seed"] == 1 and record["front_size"] == len(front)
    assert record["versions"]["pymoo"] == "0.6.2"
    assert "nusselt_teertstra_1999" in record["correlations"]
    assert len(record["problem_sha256"]) == 64


def test_front_metrics_equal_evaluate(run_folder, capsys):
    """Every metric of a front row equals `optifin evaluate --json` of the same design."""
    front = pd.read_csv(run_folder / "front.csv")
    row = front.iloc[len(front) // 2]
    args = ["evaluate", str(EXAMPLE), "--json"]
    for name in VARIABLES:
        column = name if name in front.columns else f"{name}_mm"
        value = row[column]
        args += ["--set", f"{name}={value} mm" if column.endswith("_mm") else f"{name}={value}"]
    assert main(args) == 0
    record = json.loads(capsys.readouterr().out)
    assert set(record) == set(front.columns)
    for key, value in record.items():
        if isinstance(value, float):
            assert value == pytest.approx(row[key], rel=1e-8, abs=1e-12), key
        elif isinstance(value, bool):
            assert bool(row[key]) == value, key
    for key in (
        "thermal_resistance_K_per_W",
        "base_temperature_C",
        "heat_rate_W",
        "pressure_drop_Pa",
        "mass_kg",
        "fin_efficiency",
        "h_W_per_m2K",
        "material_cost",
    ):
        assert key in record


def test_history_and_archive_parse(run_folder):
    history = pd.read_csv(run_folder / "history.csv")
    assert list(history.columns[:4]) == ["generation", "evaluations", "hypervolume", "feasible"]
    archive_file = next(run_folder.glob("designs.*"))
    archive = (
        pd.read_parquet(archive_file)
        if archive_file.suffix == ".parquet"
        else pd.read_csv(archive_file)
    )
    assert len(archive) == history["evaluations"].iloc[-1]


def test_every_result_column_is_documented_in_the_readme(run_folder):
    readme = (ROOT / "README.md").read_text()
    front = pd.read_csv(run_folder / "front.csv")
    for column in front.columns:
        documented = f"`{column}`" in readme or any(
            column.startswith(prefix) and f"`{prefix}<" in readme
            for prefix in ("out_of_range_", "margin_")
        )
        assert documented, column


def _cli(*args):
    return subprocess.run(
        [sys.executable, "-m", "optifin.cli", *args], capture_output=True, text=True, cwd=ROOT
    )


def test_user_error_is_one_line_and_exit_2(tmp_path):
    bad = tmp_path / "bad.yaml"
    bad.write_text(EXAMPLE.read_text().replace("fin_thickness:", "fin_thicknes:"))
    out = tmp_path / "out"
    proc = _cli("run", str(bad), "--out", str(out))
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert "fin_thicknes" in proc.stderr and "did you mean 'fin_thickness'" in proc.stderr
    assert not out.exists()  # nothing written


def test_missing_file_and_debug_flag(tmp_path):
    proc = _cli("check", str(tmp_path / "nope.yaml"))
    assert proc.returncode == 2 and len(proc.stderr.strip().splitlines()) == 1
    proc = _cli("check", str(tmp_path / "nope.yaml"), "--debug")
    assert proc.returncode != 0 and "Traceback" in proc.stderr


def test_evaluate_names_a_missing_variable(capsys):
    code = main(["evaluate", str(EXAMPLE), "--set", "fin_count=20"])
    err = capsys.readouterr().err
    assert code == 2
    assert "fin_thickness: the problem searches it" in err


def test_check_materials_processes_schema(capsys):
    assert main(["check", str(EXAMPLE)]) == 0
    assert "ok" in capsys.readouterr().out
    assert main(["materials", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {r["key"] for r in data["rows"]} >= {"al_6063_t5", "cu_c11000"}
    assert all(data["sources"].values())
    assert main(["processes"]) == 0
    assert "extrusion" in capsys.readouterr().out
    assert main(["schema"]) == 0
    schema = json.loads(capsys.readouterr().out)
    assert schema["type"] == "object"


def test_ci_runs_the_readme_test_command():
    readme = (ROOT / "README.md").read_text()
    block = readme.split("<!-- test-command -->")[1].split("<!-- /test-command -->")[0]
    command = [line for line in block.splitlines() if line and not line.startswith("```")]
    assert len(command) == 1
    ci = (ROOT / ".ci" / "run").read_text()
    assert "test-command" in ci  # .ci/run extracts and runs exactly that line

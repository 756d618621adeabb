"""Figures: PNG files for fronts of any size and 1 to 3 objectives; labels; no global state."""

from __future__ import annotations

import struct
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

from optifin.report.plots import (
    column_label,
    mark_label,
    plot_convergence,
    plot_front_matrix,
    plot_parallel,
)

from ._data import OBJECTIVES, forced_condition, front_table

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), section 5.2


def png_size(path) -> tuple[int, int]:
    """Width and height from the IHDR chunk, which the PNG specification puts first."""
    data = path.read_bytes()
    assert data[:8] == PNG_SIGNATURE
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


@pytest.fixture(scope="module")
def front():
    return front_table(forced_condition())


def test_invariant_column_labels_carry_units():
    """Invariant: the unit suffix of a column becomes a bracketed unit."""
    assert column_label("thermal_resistance_K_per_W") == "thermal resistance [K/W]"
    assert column_label("base_temperature_C") == "base temperature [°C]"
    assert column_label("h_W_per_m2K") == "h [W/(m²·K)]"
    assert column_label("volumetric_flow_m3_per_s") == "volumetric flow [m³/s]"
    assert column_label("fin_gap_mm") == "fin gap [mm]"
    assert column_label("total_cost", "EUR") == "total cost [EUR]"
    assert column_label("fin_count") == "fin count"
    assert mark_label("best_mass_kg") == "best mass"


@pytest.mark.parametrize("rows", [0, 1, 2, 5])
@pytest.mark.parametrize("n_obj", [1, 2, 3])
def test_invariant_front_matrix_is_a_png_for_any_size(tmp_path, front, rows, n_obj):
    """Invariant: the scatter matrix is written as a PNG for 0-5 designs, 1-3 objectives."""
    objectives = [*OBJECTIVES, ("pressure_drop_Pa", "minimise")][:n_obj]
    path = tmp_path / "front.png"
    assert plot_front_matrix(front.iloc[:rows], objectives, path) == path
    width, height = png_size(path)
    assert width > 200 and height > 200


def test_invariant_front_matrix_grows_with_the_objectives(tmp_path, front):
    """Invariant: three objectives give a larger figure than two (a 3 x 3 grid)."""
    two = png_size(plot_front_matrix(front, OBJECTIVES, tmp_path / "a.png"))
    three = png_size(
        plot_front_matrix(front, [*OBJECTIVES, ("heat_rate_W", "maximise")], tmp_path / "b.png")
    )
    assert three[0] > two[0] and three[1] > two[1]


@pytest.mark.parametrize("rows", [0, 1, 2, 5])
def test_invariant_parallel_is_a_png_for_any_size(tmp_path, front, rows):
    """Invariant: parallel coordinates are written for 0-5 designs, with constant columns
    (width, length) and a custom variable list with an absent name."""
    path = plot_parallel(front.iloc[:rows], OBJECTIVES, tmp_path / "p.png")
    assert png_size(path)[0] > 200
    path = plot_parallel(
        front.iloc[:rows],
        OBJECTIVES[:1],
        tmp_path / "q.png",
        variables=("fin_count", "no_such_column"),
    )
    assert png_size(path)[0] > 200


@pytest.mark.parametrize("rows", [0, 1, 30])
def test_invariant_convergence_is_a_png(tmp_path, rows):
    """Invariant: the convergence plot is written for empty, one-row and longer histories,
    and without the feasible column."""
    history = pd.DataFrame(
        {
            "generation": np.arange(1, rows + 1),
            "evaluations": 50 * np.arange(1, rows + 1),
            "hypervolume": np.linspace(0.5, 0.9, rows),
            "feasible": 10 * np.arange(1, rows + 1),
        }
    )
    assert png_size(plot_convergence(history, tmp_path / "c.png"))[0] > 200
    assert png_size(plot_convergence(history.drop(columns="feasible"), tmp_path / "d.png"))[0]


def test_invariant_no_global_matplotlib_state():
    """Invariant: importing and plotting touch neither pyplot nor the backend nor rcParams
    (checked in a fresh interpreter)."""
    code = (
        "import matplotlib, sys, tempfile, pathlib, pandas as pd\n"
        "def state():  # the stored values, read without resolving the backend\n"
        "    return {k: repr(dict.__getitem__(matplotlib.rcParams, k))\n"
        "            for k in dict.keys(matplotlib.rcParams)}\n"
        "rc = state()\n"
        "import optifin.report.plots as p\n"
        "d = pathlib.Path(tempfile.mkdtemp())\n"
        "f = pd.DataFrame({'a': [1.0, 2.0, 3.0], 'b': [3.0, 1.5, 1.0]})\n"
        "p.plot_front_matrix(f, [('a', 'minimise'), ('b', 'minimise')], d / 'x.png')\n"
        "assert 'matplotlib.pyplot' not in sys.modules\n"
        "assert state() == rc\n"
        "print('ok')\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "ok"

"""The material trade-off study (optifin.study) and its folder (optifin.report.study_report).

Every test names its kind: invariant (a property the study must have whatever the numbers)
or cross-method (a number of the study recomputed here another way: by hand from the
library's data, by brute force, or through optifin.model.evaluate). The problem below is
invented; its small exact grid (468 designs per option) keeps the whole study near a second.

The fixture's costs are set so that the price sweep has a flip inside its range: at a batch
of 100 parts the extrusion die (1500 USD of set-up) weighs more than the skiving set-up, so
skived copper is the cheaper sink when copper is cheap; the bonded process is given a high
per-part cost (an invented quote) so that the copper-base hybrid stays out of the cheapest
place and the flip is between copper and aluminium.
"""

from __future__ import annotations

import html
import json

import numpy as np
import pandas as pd
import pytest
from matplotlib import image

from optifin.errors import ConfigError
from optifin.model import evaluate
from optifin.problem import load_problem_text, problem_hash
from optifin.problem.spec import MaterialOption
from optifin.report import study_report
from optifin.report.document import SAFETY
from optifin.report.study_report import CAUTIONS, FILES, write_study
from optifin.study import GEOMETRY_COLUMNS, lower_envelope, option_problem, run_study

STUDY = """
name: study_test
heat_load: {power: "60 W", footprint: ["30 mm", "30 mm"]}
ambient: {temperature: "35 degC"}
cooling: {mode: forced, approach_velocity: "2 m/s"}
envelope: {max_width: "80 mm", max_length: "80 mm", max_height: "40 mm"}
variables:
  fin_count: {min: 12, max: 24}
  fin_thickness: {min: "1.0 mm", max: "2.0 mm", step: "0.5 mm"}
  fin_height: {min: "20 mm", max: "35 mm", step: "5 mm"}
  base_thickness: {min: "5 mm", max: "8 mm", step: "1.5 mm"}
  width: "80 mm"
  length: "80 mm"
  material: [al_6063_t5]
  process: [extrusion]
objectives: [thermal_resistance, mass]
constraints: {max_base_temperature: "90 degC"}
production: {quantity: 100}
processes: {bonded: {cost: {per_part: "15 USD"}}}
study:
  materials:
    - {name: aluminium, material: al_6063_t5, process: [extrusion]}
    - {name: copper, material: cu_c11000, process: [skived]}
    - {name: cu base al fins, material: al_6063_t5, base_material: cu_c11000,
       process: [bonded]}
    - {name: al + cu insert, material: al_6063_t5, process: [extrusion],
       insert: {material: cu_c11000, thickness: "4 mm", footprint: ["40 mm", "40 mm"]}}
  price_sweep: {material: cu_c11000, min: "0.5 USD/kg", max: "60 USD/kg", steps: 60}
"""
AL, CU = "al_6063_t5", "cu_c11000"


@pytest.fixture(scope="module")
def problem():
    return load_problem_text(STUDY, "study_test.yaml")


@pytest.fixture(scope="module")
def calls():
    return []


@pytest.fixture(scope="module")
def study(problem, calls):
    return run_study(problem, progress=lambda name, done, total: calls.append(name))


@pytest.fixture(scope="module")
def folder(study, tmp_path_factory):
    return write_study(study, tmp_path_factory.mktemp("study") / "out")


def _feasible_sweep(study):
    return study.sweep[study.sweep["basis"] == "feasible"]


# -- the option problems -----------------------------------------------------------------------
def test_option_problems_restrict_material_process_and_construction(problem, study):
    """Invariant: each option's problem searches only the option's material and processes,
    fixes its construction, and hashes differently from the others."""
    for option in problem.study:
        p = study.problems[option.name]
        assert p.variable("material").choices == (option.material,)
        assert p.variable("process").choices == option.processes
        assert p.construction == option.construction()
        assert p.study == () and p.price_sweep is None
    insert = study.problems["al + cu insert"].construction
    assert insert == {
        "insert_material": CU,
        "insert_thickness": pytest.approx(0.004),
        "insert_width": pytest.approx(0.04),
        "insert_length": pytest.approx(0.04),
    }
    assert study.problems["cu base al fins"].construction == {"base_material": CU}
    hashes = {problem_hash(p) for p in study.problems.values()}
    assert len(hashes) == len(problem.study)


def test_option_problem_rejects_what_cannot_be_searched(problem):
    """Invariant: a base of another metal by a monolithic process, an insert under an
    off-centre source and an insert thicker than the thinnest base are refused."""
    skived = MaterialOption("x", AL, processes=("skived",), base_material=CU)
    with pytest.raises(ConfigError, match="joins fins to a base"):
        option_problem(problem, skived)
    thick = MaterialOption(
        "y",
        AL,
        ("extrusion",),
        None,
        CU,
        insert_thickness=0.006,
        insert_width=0.04,
        insert_length=0.04,
    )
    with pytest.raises(ConfigError, match="exceeds the smallest base thickness"):
        option_problem(problem, thick)
    shifted = load_problem_text(
        STUDY.replace(
            'footprint: ["30 mm", "30 mm"]}',
            'footprint: ["30 mm", "30 mm"], position: ["30 mm", "40 mm"]}',
        ).split("    - {name: cu base al fins")[0],
        "shifted.yaml",
    )
    ok = MaterialOption("z", AL, ("extrusion",), None, CU, 0.004, 0.04, 0.04)
    with pytest.raises(ConfigError, match="one heat source centred"):
        option_problem(shifted, ok)


def test_run_study_needs_a_study_section():
    """Invariant: a problem without study options is refused with a readable error."""
    plain = load_problem_text(STUDY.split("study:")[0], "plain.yaml")
    with pytest.raises(ConfigError, match="no study section"):
        run_study(plain)


# -- fronts and overlay --------------------------------------------------------------------------
def test_one_front_per_option(problem, study, calls):
    """Invariant: one search and one non-empty, feasible front per option, of the option's
    material and construction, all with the same seed; progress names every option."""
    names = [o.name for o in problem.study]
    assert list(study.results) == names
    assert set(calls) == set(names)
    for option in problem.study:
        run = study.results[option.name]
        assert run.seed == study.seed
        assert len(run.front) > 0 and run.front["feasible"].all()
        assert set(run.front["material"].astype(str)) == {option.material}
        assert set(run.front["process"].astype(str)) <= set(option.processes)
    hybrid = study.results["cu base al fins"].front
    assert set(hybrid["base_material"].astype(str)) == {CU}
    insert = study.results["al + cu insert"].front
    assert set(insert["insert_material"].astype(str)) == {CU}
    assert np.allclose(insert["insert_thickness_mm"], 4.0)
    fronts = study.fronts
    assert list(fronts.columns[:1]) == ["option"]
    assert fronts["option"].value_counts().to_dict() == {
        n: len(study.results[n].front) for n in names
    }


def test_mass_overlay_is_the_front(study):
    """Invariant: the problem's objectives are exactly thermal resistance and mass, so the
    R-mass overlay of an option (non-dominated feasible designs of its archive) is its
    front, point for point; the cost overlay is non-dominated in (R, cost)."""
    for name, run in study.results.items():
        part = study.overlay[(study.overlay["option"] == name)]
        mass = part[part["versus"] == "mass_kg"]
        got = np.sort(mass[["thermal_resistance_K_per_W", "mass_kg"]].to_numpy(), axis=0)
        want = np.sort(run.front[["thermal_resistance_K_per_W", "mass_kg"]].to_numpy(), axis=0)
        np.testing.assert_allclose(got, want, rtol=1e-12)
        cost = part[part["versus"] == "total_cost"][["thermal_resistance_K_per_W", "total_cost"]]
        F = cost.to_numpy()
        # no point of the curve is beaten in both by another (brute force)
        beaten = (F[None, :, 0] <= F[:, None, 0]) & (F[None, :, 1] <= F[:, None, 1])
        beaten &= (F[None, :, 0] < F[:, None, 0]) | (F[None, :, 1] < F[:, None, 1])
        assert not beaten.any()
        # and no candidate design beats a point of it
        c = study.candidates[name][["thermal_resistance_K_per_W", "total_cost"]].to_numpy()
        better = (c[None, :, 0] <= F[:, None, 0]) & (c[None, :, 1] <= F[:, None, 1])
        better &= (c[None, :, 0] < F[:, None, 0]) | (c[None, :, 1] < F[:, None, 1])
        assert not better.any()


def test_candidate_costs_are_the_model_costs(study):
    """Cross-method: the candidates' mass and cost (cost model alone) equal the full model's
    columns for the same designs (the fronts, rated by the search)."""
    for name, run in study.results.items():
        cand = study.candidates[name]
        keys = list(GEOMETRY_COLUMNS)
        merged = run.front.merge(cand, on=keys, suffixes=("", "_cand"))
        assert len(merged) == len(run.front)
        for column in ("mass_kg", "total_cost", "material_cost", "thermal_resistance_K_per_W"):
            np.testing.assert_allclose(merged[f"{column}_cand"], merged[column], rtol=1e-12)


# -- matched designs -----------------------------------------------------------------------------
def test_matched_pairs_have_identical_geometry(study):
    """Invariant: each matched pair is one baseline front design rebuilt with the same fin
    count, thicknesses, height, base, width and length; every baseline design is matched in
    every option here (each process can make them)."""
    base = study.results[study.baseline].front
    for option in study.options[1:]:
        part = study.premium[study.premium["option"] == option.name]
        assert sorted(part["baseline_row"]) == list(range(len(base)))
        rows = base.iloc[part["baseline_row"].to_numpy()]
        for column in GEOMETRY_COLUMNS:
            np.testing.assert_array_equal(part[column].to_numpy(), rows[column].to_numpy())
        np.testing.assert_array_equal(
            part["thermal_resistance_baseline_K_per_W"], rows["thermal_resistance_K_per_W"]
        )
        assert set(part["material"]) == {option.material}
        assert set(part["process"]) <= set(option.processes)


def test_matched_pair_is_what_the_model_gives(study, problem):
    """Cross-method: a matched copper and insert design rated again through
    optifin.model.evaluate from explicit columns gives the premium table's values."""
    premium = study.premium
    for name, extra in (
        ("copper", {"material": CU, "process": "skived"}),
        (
            "al + cu insert",
            {
                "material": AL,
                "process": "extrusion",
                "insert_material": CU,
                "insert_thickness": 0.004,
                "insert_width": 0.04,
                "insert_length": 0.04,
            },
        ),
    ):
        row = premium[(premium["option"] == name) & premium["knee"]].iloc[0]
        design = {c: row[c] for c in GEOMETRY_COLUMNS} | extra
        got = evaluate(pd.DataFrame([design]), problem.condition, problem.library).iloc[0]
        for column in ("thermal_resistance_K_per_W", "mass_kg", "total_cost"):
            assert row[column] == pytest.approx(got[column], rel=1e-12), (name, column)


def test_premium_signs_and_ratios(study, problem):
    """Invariant and cross-method: copper gains resistance and adds mass in every pair; the
    ratios are ΔR/Δmass and ΔR/Δcost; the insert adds exactly (rho_cu - rho_al) V_insert of
    mass (by hand from the library's densities)."""
    premium = study.premium
    cu = premium[premium["option"] == "copper"]
    assert (cu["delta_resistance_K_per_W"] > 0).all()
    assert (cu["delta_mass_kg"] > 0).all()
    assert (cu["thermal_resistance_K_per_W"] < cu["thermal_resistance_baseline_K_per_W"]).all()
    np.testing.assert_allclose(
        cu["K_per_W_per_kg"], cu["delta_resistance_K_per_W"] / cu["delta_mass_kg"], rtol=1e-12
    )
    dearer = cu["delta_cost"] > 0
    np.testing.assert_allclose(
        cu.loc[dearer, "K_per_W_per_cost"],
        cu.loc[dearer, "delta_resistance_K_per_W"] / cu.loc[dearer, "delta_cost"],
        rtol=1e-12,
    )
    assert cu.loc[~dearer, "K_per_W_per_cost"].isna().all()
    assert cu["verdict"].str.startswith("lower R, heavier").all()
    ins = premium[premium["option"] == "al + cu insert"]
    lib = problem.library
    rho = {m: lib.materials[m].density.si for m in (AL, CU)}
    extra = (rho[CU] - rho[AL]) * 0.004 * 0.04 * 0.04
    np.testing.assert_allclose(ins["delta_mass_kg"], extra, rtol=1e-9)
    assert (ins["delta_resistance_K_per_W"] > 0).all()
    summary = study.premium_summary.set_index("option")
    assert summary.loc["copper", "median_K_per_W_per_kg"] == pytest.approx(
        np.median(cu["K_per_W_per_kg"]), rel=1e-12
    )
    knee = cu[cu["knee"]]
    assert len(knee) == 1
    assert summary.loc["copper", "knee_K_per_W_per_kg"] == knee["K_per_W_per_kg"].iloc[0]


def test_no_ratio_when_nothing_is_added():
    """Invariant: a pair that adds no mass or cost (or gains nothing) gets no ratio, and no
    division by zero happens."""
    from optifin.study import _deltas

    part = pd.DataFrame(
        {
            "thermal_resistance_baseline_K_per_W": [0.5, 0.5, 0.5],
            "thermal_resistance_K_per_W": [0.4, 0.5, 0.6],
            "mass_baseline_kg": [0.2, 0.2, 0.2],
            "mass_kg": [0.2, 0.3, 0.3],
            "total_cost_baseline": [3.0, 3.0, 3.0],
            "total_cost": [2.0, 3.0, 4.0],
        }
    )
    with np.errstate(all="raise"):
        out = _deltas(part)
    assert out["K_per_W_per_kg"].isna().all()
    assert out["K_per_W_per_cost"].isna().all()
    assert list(out["verdict"]) == [
        "lower R, same mass, cheaper",
        "same R, heavier, same cost",
        "higher R, heavier, dearer",
    ]


# -- price sweep -------------------------------------------------------------------------------
def test_cost_slope_is_the_copper_bought(study, problem):
    """Cross-method by hand: d(cost)/d(copper price) is the copper stock bought: the part's
    copper mass over the process's material yield (net stock), nothing for aluminium; and
    the line through today's price gives today's cost."""
    lib = problem.library
    rho_cu = lib.materials[CU].density.si
    price = lib.materials[CU].price.si
    for name, cand in study.candidates.items():
        w, length = cand["width_mm"] * 1e-3, cand["length_mm"] * 1e-3
        tb = cand["base_thickness_mm"] * 1e-3
        process = cand["process"].astype(str)
        yields = process.map(lambda p: lib.processes[p].limit("material_yield"))
        if name == "aluminium":
            copper = 0.0 * w
        elif name == "copper":
            copper = cand["mass_kg"]
        elif name == "cu base al fins":
            copper = rho_cu * w * length * tb
        else:
            copper = rho_cu * 0.004 * 0.04 * 0.04 + 0.0 * w
        np.testing.assert_allclose(cand["cost_slope_kg"], copper / yields, rtol=1e-9, atol=1e-15)
        np.testing.assert_allclose(
            cand["cost_intercept"] + price * cand["cost_slope_kg"], cand["total_cost"], rtol=1e-12
        )


def test_sweep_is_the_cheapest_of_all_candidates(study):
    """Cross-method: at every price, each option's swept cost is the minimum of a + b p over
    all its feasible designs (brute force, no envelope), and `cheapest` marks the lowest."""
    sweep = _feasible_sweep(study)
    for name, cand in study.candidates.items():
        part = sweep[sweep["option"] == name]
        p = part["price_per_kg"].to_numpy()
        brute = (
            cand["cost_intercept"].to_numpy()[:, None]
            + cand["cost_slope_kg"].to_numpy()[:, None] * p[None, :]
        ).min(axis=0)
        np.testing.assert_allclose(part["total_cost"], brute, rtol=1e-12)
    wide = sweep.pivot(index="price_per_kg", columns="option", values="total_cost")
    flagged = sweep[sweep["cheapest"]].set_index("price_per_kg")["option"]
    assert (flagged.reindex(wide.index) == wide.idxmin(axis=1)).all()


def test_flip_is_where_the_cheapest_lines_cross(study):
    """Cross-method: the flip price equals the crossing of the two options' cheapest-cost
    lines, recomputed by hand from the sweep table: at the grid prices on either side, each
    option's cheapest design is the same one, and its line a + b p crosses the other's at
    p = (a_1 - a_2)/(b_2 - b_1), which also is where the linear interpolation of the cost
    difference between the two grid prices vanishes."""
    flips = study.flips[study.flips["basis"] == "feasible"]
    assert len(flips) == 1
    flip = flips.iloc[0]
    assert (flip["cheaper_below"], flip["cheaper_above"]) == ("copper", "aluminium")
    sweep = _feasible_sweep(study)
    prices = np.sort(sweep["price_per_kg"].unique())
    k = np.searchsorted(prices, flip["price_per_kg"])
    below, above = prices[k - 1], prices[k]
    rows = {}
    for name in ("copper", "aluminium"):
        part = sweep[sweep["option"] == name].set_index("price_per_kg")
        assert part.loc[below, "design"] == part.loc[above, "design"]
        rows[name] = part
    a1, b1 = rows["copper"].loc[below, ["cost_intercept", "cost_slope_kg"]]
    a2, b2 = rows["aluminium"].loc[below, ["cost_intercept", "cost_slope_kg"]]
    crossing = (a1 - a2) / (b2 - b1)
    assert flip["price_per_kg"] == pytest.approx(crossing, rel=1e-12)
    assert below < crossing < above
    d_below = rows["copper"].loc[below, "total_cost"] - rows["aluminium"].loc[below, "total_cost"]
    d_above = rows["copper"].loc[above, "total_cost"] - rows["aluminium"].loc[above, "total_cost"]
    interpolated = below + (above - below) * d_below / (d_below - d_above)
    assert flip["price_per_kg"] == pytest.approx(interpolated, rel=1e-9)
    assert flip["total_cost"] == pytest.approx(a2 + b2 * crossing, rel=1e-12)


def test_far_from_the_flip(study):
    """Invariant of the fixture: far below the flip copper is the cheapest option, far above
    it aluminium (whose cost does not depend on the copper price at all)."""
    sweep = _feasible_sweep(study)
    cheapest = sweep[sweep["cheapest"]].set_index("price_per_kg")["option"].sort_index()
    assert len(cheapest) == sweep["price_per_kg"].nunique()
    flip = study.flips[study.flips["basis"] == "feasible"]["price_per_kg"].iloc[0]
    assert (cheapest[cheapest.index < 0.5 * flip] == "copper").all()
    assert (cheapest[cheapest.index > 2.0 * flip] == "aluminium").all()
    assert cheapest.iloc[0] == "copper" and cheapest.iloc[-1] == "aluminium"
    al = sweep[sweep["option"] == "aluminium"]["total_cost"]
    assert al.max() == al.min()


def test_target_basis_reaches_the_target(study):
    """Invariant: the default target is the baseline knee's resistance; every design the
    target basis picks reaches it; the target table's copper design is the cheapest
    candidate that does, at today's price (brute force)."""
    base = study.results[study.baseline].front
    knee = study.premium.query("option == 'copper' and knee")["baseline_row"].iloc[0]
    assert study.target_resistance == base["thermal_resistance_K_per_W"].iloc[knee]
    target = study.sweep[study.sweep["basis"] == "target"]
    assert len(target) > 0
    assert (target["thermal_resistance_K_per_W"] <= study.target_resistance).all()
    cand = study.candidates["copper"]
    ok = cand[cand["thermal_resistance_K_per_W"] <= study.target_resistance]
    row = study.target.set_index("option").loc["copper"]
    assert row["total_cost"] == ok["total_cost"].min()


def test_lower_envelope_against_brute_force():
    """Cross-method: the exact envelope of random lines (with ties and parallels) equals the
    brute-force minimum on a dense grid, its pieces are contiguous, and neighbouring lines
    meet at each breakpoint."""
    rng = np.random.default_rng(3)
    a = rng.uniform(0, 10, 400)
    b = rng.uniform(-1, 1, 400)
    a[10], b[10] = a[11], b[11]  # identical lines
    b[20] = b[21]  # parallel lines
    env = lower_envelope(a, b, -5.0, 7.0)
    assert env["start"].iloc[0] == -5.0 and env["end"].iloc[-1] == 7.0
    np.testing.assert_array_equal(env["start"].to_numpy()[1:], env["end"].to_numpy()[:-1])
    x = np.linspace(-5.0, 7.0, 20001)
    brute = (a[:, None] + b[:, None] * x[None, :]).min(axis=0)
    piece = np.searchsorted(env["end"].to_numpy(), x).clip(0, len(env) - 1)
    line = env["line"].to_numpy()[piece]
    np.testing.assert_allclose(a[line] + b[line] * x, brute, rtol=1e-12, atol=1e-12)
    lines = env["line"].to_numpy()
    at = env["start"].to_numpy()[1:]
    np.testing.assert_allclose(
        a[lines[:-1]] + b[lines[:-1]] * at, a[lines[1:]] + b[lines[1:]] * at, rtol=1e-12
    )
    assert (np.diff(b[lines]) < 0).all()  # a concave envelope: slopes fall


# -- the folder ----------------------------------------------------------------------------------
def test_folder_has_every_file(folder, study, problem):
    """Invariant: every file is written; PNGs open; CSVs load with their key columns; the
    reports name every option and carry the safety cautions; run.json has the hash."""
    assert sorted(p.name for p in folder.iterdir()) == sorted(FILES)
    for name in ("overlay.png", "price_sweep.png"):
        pixels = image.imread(folder / name)
        assert pixels.ndim == 3 and pixels.shape[0] > 100 and pixels.shape[1] > 100
    fronts = pd.read_csv(folder / "fronts.csv")
    assert set(fronts["option"]) == {o.name for o in problem.study}
    premium = pd.read_csv(folder / "premium.csv")
    assert {"delta_resistance_K_per_W", "K_per_W_per_kg", "K_per_W_per_cost"} <= set(premium)
    sweep = pd.read_csv(folder / "sweep.csv")
    assert len(sweep) == len(study.sweep)
    flips = pd.read_csv(folder / "flips.csv")
    assert flips["price_per_kg"].to_numpy() == pytest.approx(study.flips["price_per_kg"])
    for name in ("study.md", "study.html"):
        text = html.unescape((folder / name).read_text(encoding="utf-8"))
        for option in problem.study:
            assert f"{option.name} |" in text or f"<td>{option.name}</td>" in text
        for caution in (*SAFETY, *CAUTIONS):
            assert caution in text, (name, caution[:40])
    record = json.loads((folder / "run.json").read_text())
    assert record["problem_sha256"] == problem_hash(problem)
    assert [o["option"]["name"] for o in record["options"]] == [o.name for o in problem.study]
    assert record["versions"]["numpy"] == np.__version__


def test_write_is_atomic(study, tmp_path, monkeypatch):
    """Invariant: a write that fails leaves the previous folder as it was and no temporary
    folder behind; a write that succeeds replaces it and leaves nothing else."""
    out = write_study(study, tmp_path / "s")
    (out / "mine.txt").write_text("old")

    def broken(*args, **kwargs):
        raise RuntimeError("disk full")

    monkeypatch.setattr(study_report, "plot_price_sweep", broken)
    with pytest.raises(RuntimeError, match="disk full"):
        write_study(study, out)
    assert (out / "mine.txt").read_text() == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s"]
    monkeypatch.undo()
    write_study(study, out)
    assert not (out / "mine.txt").exists()
    assert sorted(p.name for p in out.iterdir()) == sorted(FILES)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s"]

"""Catalog parts inside the search: the part gene, mixed fronts, the saving of a custom die.

The profiles are optifin's invented demo catalog (optifin/data/profiles_demo.csv); the
problems are invented. Checks against the catalog read the CSV's numbers (as loaded by
load_catalog), not the search's part table.
"""

import dataclasses
import json

import numpy as np
import pandas as pd
import pytest

from optifin.catalog import custom_die_saving, load_catalog, screen_catalog
from optifin.problem import load_problem_text
from optifin.search import design_table, optimise
from optifin.search.encoding import Encoding

MIXED = """
name: mixed_catalog
heat_load: {{power: "40 W", footprint: ["30 mm", "30 mm"]}}
ambient: {{temperature: "35 degC"}}
cooling: {{mode: forced, approach_velocity: "2.5 m/s"}}
envelope: {{max_width: "100 mm", max_length: "80 mm", max_height: "40 mm"}}
variables:
{variables}
  material: {{choices: [al_6063_t5]}}
  process: {{choices: [extrusion]}}
objectives: [{objectives}]
constraints:
  max_source_temperature: "{limit} degC"
  max_pressure_drop: "40 Pa"
catalog:
  cut_lengths: {{min: "40 mm", max: "80 mm", step: "10 mm"}}
  in_search: {in_search}
search: {{algorithm: nsga2, population: 60, evaluations: 4000, seed: 3}}
"""
FREE = """  fin_count: {min: 8, max: 24}
  fin_thickness: {min: "0.8 mm", max: "2.0 mm", step: "0.4 mm"}
  fin_height: {min: "15 mm", max: "35 mm", step: "5 mm"}
  base_thickness: "5 mm"
  width: {min: "60 mm", max: "100 mm", step: "20 mm"}
  length: {min: "40 mm", max: "80 mm", step: "20 mm"}"""
#: free designs of few, short fins on a narrow base: none reaches a 75 degC case
WEAK = """  fin_count: {min: 4, max: 6}
  fin_thickness: {min: "1.0 mm", max: "2.0 mm", step: "0.5 mm"}
  fin_height: "10 mm"
  base_thickness: "4 mm"
  width: {min: "40 mm", max: "50 mm", step: "10 mm"}
  length: {min: "40 mm", max: "80 mm", step: "20 mm"}"""
CUTS_MM = (40.0, 50.0, 60.0, 70.0, 80.0)
KEY = ["catalog_part", "length_mm"]


def _problem(
    variables=FREE, objectives="thermal_resistance, total_cost", limit=90, in_search="true"
):
    text = MIXED.format(
        variables=variables, objectives=objectives, limit=limit, in_search=in_search
    )
    return load_problem_text(text, "mixed.yaml")


@pytest.fixture(scope="module")
def problem():
    return _problem()


@pytest.fixture(scope="module")
def demo():
    return load_catalog()


@pytest.fixture(scope="module")
def exact(problem):
    return optimise(problem, algorithm="exact")


@pytest.fixture(scope="module")
def ga(problem):
    return optimise(problem)


@pytest.fixture(scope="module")
def screened_along(problem, demo):
    """The same parts rated by screening (orientation along, the problem's cut grid)."""
    return screen_catalog(
        problem, demo, cut_lengths=np.array(CUTS_MM) * 1e-3, orientations=("along",)
    )


def _fitting_pairs(demo):
    """(id, cut mm) of every demo profile that fits the 100 x 80 x 40 mm envelope, by hand."""
    p = demo.profiles
    fits = (p["width"] <= 0.100 + 1e-12) & (p["base_thickness"] + p["fin_height"] <= 0.040)
    return {(pid, cut) for pid in p.loc[fits, "id"] for cut in CUTS_MM}


def _minimised(frame, objective_columns):
    return np.column_stack(
        [
            frame[c].to_numpy(float) * (-1.0 if s == "maximise" else 1.0)
            for c, s in objective_columns
        ]
    )


def _dominated_by(A, B):
    """Row i of A is dominated by some row of B (all objectives minimised), brute force."""
    le = np.all(B[None, :, :] <= A[:, None, :], axis=2)
    lt = np.any(B[None, :, :] < A[:, None, :], axis=2)
    return (le & lt).any(axis=1)


# -- the part gene -------------------------------------------------------------------------------
def test_part_gene_decodes_to_the_catalog_geometry_invariant(problem, demo):
    """Invariant: every part code decodes to its profile's numbers in the CSV, cut to length,
    as a catalog_cut part of the profile's alloy, finish bare, whatever its free genes say."""
    enc = Encoding(problem)
    assert enc.genes[-1].name == "part" and enc.genes[-1].integer
    k = len(enc.parts)
    assert {
        (i, round(c * 1e3, 9)) for i, c in enc.parts.index[["id", "cut_length"]].to_numpy()
    } == (_fitting_pairs(demo))
    rng = np.random.default_rng(5)
    x = enc.snap(rng.uniform(enc.xl, enc.xu, size=(k, enc.n_var)))
    x[:, -1] = np.arange(1, k + 1)  # every part once, free genes at random
    d = enc.decode(x)
    lib = problem.library
    p = demo.profiles.set_index("id").loc[enc.parts.index["id"].to_numpy()]
    np.testing.assert_array_equal(d.width, p["width"].to_numpy())
    np.testing.assert_array_equal(d.base_thickness, p["base_thickness"].to_numpy())
    np.testing.assert_array_equal(d.fin_count, p["fin_count"].to_numpy())
    np.testing.assert_array_equal(d.fin_thickness, p["fin_thickness"].to_numpy())
    np.testing.assert_array_equal(d.fin_tip_thickness, p["fin_tip_thickness"].to_numpy())
    np.testing.assert_array_equal(d.fin_height, p["fin_height"].to_numpy())
    np.testing.assert_array_equal(d.length, enc.parts.index["cut_length"].to_numpy())
    assert [lib.material_keys[m] for m in d.material] == p["alloy"].tolist()
    assert {lib.process_keys[c] for c in d.process} == {"catalog_cut"}
    assert {lib.finishes[f] for f in d.finish} == {"bare"}
    np.testing.assert_array_equal(enc.part_codes(x), np.arange(1, k + 1))


def test_free_rows_decode_as_without_a_catalog_invariant(problem):
    """Invariant: part <= 0 is a free design decoded exactly as by the catalog-free encoding;
    without in_search the encoding has no part gene at all."""
    plain = _problem(in_search="false")
    enc, ref = Encoding(problem), Encoding(plain)
    assert ref.parts is None and [g.name for g in ref.genes] == [g.name for g in enc.genes[:-1]]
    assert ref.grid_size == enc.grid_size - len(enc.parts)
    rng = np.random.default_rng(11)
    x = enc.snap(rng.uniform(enc.xl, enc.xu, size=(500, enc.n_var)))
    x[:, -1] = -rng.integers(0, len(enc.parts) + 1, size=500)  # every value <= 0: free
    ours, theirs = enc.decode(x), ref.decode(x[:, :-1])
    for name in ("fin_count", "fin_thickness", "fin_height", "base_thickness", "width", "length"):
        np.testing.assert_array_equal(getattr(ours, name), getattr(theirs, name))
    np.testing.assert_array_equal(ours.process, theirs.process)
    assert not ours.is_tapered
    assert "catalog_part" not in optimise(plain, algorithm="exact").front.columns


def test_uniform_sampling_offers_free_designs_and_parts_alike_invariant(problem):
    """Invariant: a uniform sample of the genes is about half free designs (part <= 0)."""
    enc = Encoding(problem)
    x = enc.snap(np.random.default_rng(2).uniform(enc.xl, enc.xu, size=(20000, enc.n_var)))
    share = np.mean(enc.part_codes(x) == 0)
    k = len(enc.parts)
    assert share == pytest.approx((k + 0.5) / (2 * k + 1), abs=0.02)  # rounding: -K..0 of -K..K


def test_catalog_rows_take_no_construction_invariant(problem):
    """Invariant: a fixed base material or insert applies to free designs, not stock parts."""
    fixed = dataclasses.replace(problem, construction={"base_material": "cu_c11000"})
    enc = Encoding(fixed)
    x = np.vstack([enc.grid_chunk(0, 2), enc.grid_chunk(enc.grid_size - 2, enc.grid_size)])
    d = enc.decode(x)
    copper = fixed.library.material_code("cu_c11000")
    np.testing.assert_array_equal(d.base_material, [copper, copper, -1, -1])


# -- the exact grid ------------------------------------------------------------------------------
def test_exact_grid_covers_every_pair_invariant(problem, demo, exact):
    """Invariant: the exact mode rates the free grid once and every fitting (profile, cut)
    pair exactly once (pairs found by hand from the CSV)."""
    enc = Encoding(problem)
    free_grid = 17 * 4 * 5 * 3 * 3  # fin counts x thicknesses x heights x widths x lengths
    pairs = _fitting_pairs(demo)
    assert enc.grid_size == free_grid + len(pairs) == exact.evaluations
    archive = exact.archive
    parts = archive[archive["catalog_part"] != ""]
    seen = list(map(tuple, parts[KEY].to_numpy()))
    assert len(seen) == len(set(seen)) == len(pairs)
    assert set(seen) == pairs
    assert (archive["catalog_part"] == "").sum() == free_grid


def test_exact_front_is_nondominated_over_the_union_cross_method(problem, exact, screened_along):
    """Cross-method: the exact mixed front equals the brute-force non-dominated set of the
    union of the feasible free designs of the archive and the feasible parts of an
    independent screening of the same catalog (objectives of each side as reported)."""
    cols = exact.objective_columns
    archive = exact.archive
    free = archive[(archive["catalog_part"] == "") & archive["feasible"]]
    rated = screened_along.table[screened_along.table["feasible"]]
    union = np.vstack([_minimised(free, cols), _minimised(rated, screened_along.objective_columns)])
    front = _minimised(exact.front, cols)
    assert not _dominated_by(front, union).any()
    brute = union[~_dominated_by(union, union)]
    np.testing.assert_allclose(
        np.unique(np.round(front, 10), axis=0), np.unique(np.round(brute, 10), axis=0), rtol=1e-9
    )
    kinds = exact.front["catalog_part"] != ""
    assert kinds.any() and (~kinds).any()  # the front mixes catalog parts and free designs


# -- the search against screening ----------------------------------------------------------------
COMPARED = (
    "fin_count",
    "fin_thickness_mm",
    "fin_tip_thickness_mm",
    "fin_height_mm",
    "base_thickness_mm",
    "width_mm",
    "thermal_resistance_K_per_W",
    "source_temperature_C",
    "pressure_drop_Pa",
    "mass_kg",
    "process_cost",
    "margin_max_source_temperature",
    "margin_max_pressure_drop",
)


@pytest.mark.parametrize("which", ["ga", "exact"])
def test_front_catalog_rows_equal_screening_rows_cross_method(request, which, screened_along, demo):
    """Cross-method: each catalog row of a mixed search front equals screen_catalog's row of
    the same (profile, cut); the search's material and total cost of a catalog part are the
    screening's catalog price and catalog total cost, and the price is the CSV's price per kg
    times the mass or per metre times the cut."""
    result = request.getfixturevalue(which)
    front = result.front
    parts = front[front["catalog_part"] != ""]
    assert len(parts) >= 2 and (front["catalog_part"] == "").any()
    ref = screened_along.table.set_index(["profile_id", "cut_length_mm"])
    prices = demo.profiles.set_index("id")
    for _, row in parts.iterrows():
        other = ref.loc[(row["catalog_part"], row["length_mm"])]
        assert str(row["process"]) == str(other["process"]) == "catalog_cut"
        for column in COMPARED:
            assert row[column] == pytest.approx(other[column], rel=1e-9, abs=1e-12), column
        assert row["material_cost"] == pytest.approx(other["catalog_price"], rel=1e-12)
        assert row["total_cost"] == pytest.approx(other["catalog_total_cost"], rel=1e-12)
        assert bool(row["feasible"]) and bool(other["feasible"])
        p = prices.loc[row["catalog_part"]]
        by_hand = (
            p["price_per_kg"] * row["mass_kg"]
            if np.isfinite(p["price_per_kg"])
            else p["price_per_m"] * row["length_mm"] * 1e-3
        )
        assert row["material_cost"] == pytest.approx(by_hand, rel=1e-12)


def test_design_table_names_parts_without_their_codes_invariant(problem, exact):
    """Invariant: design_table of decoded designs names the same parts when it matches the
    designs to the catalog as when it is given the part codes."""
    enc = Encoding(problem)
    x = np.vstack([enc.grid_chunk(0, 40), enc.grid_chunk(enc.grid_size - 60, enc.grid_size)])
    designs = enc.decode(x)
    given = design_table(problem, designs, part=enc.part_codes(x))
    matched = design_table(problem, designs)
    pd.testing.assert_frame_equal(given, matched)
    assert (given["catalog_part"] != "").sum() == 60


def test_archive_objectives_use_the_catalog_price_invariant(exact):
    """Invariant: the archive's cost objective of a catalog part is the front's catalog price
    (the search compares catalog parts at their catalog price)."""
    front = exact.front[exact.front["catalog_part"] != ""]
    archive = exact.archive.set_index(KEY)
    for _, row in front.iterrows():
        value = archive.loc[(row["catalog_part"], row["length_mm"]), "total_cost"]
        assert value == pytest.approx(row["total_cost"], rel=1e-12)


def test_limit_only_catalog_parts_meet_gives_a_catalog_front_invariant(demo):
    """Invariant: when no free design can meet the limit (few short fins, 75 degC case) the
    GA's front holds catalog parts only, and each is feasible in screening too."""
    problem = _problem(variables=WEAK, objectives="thermal_resistance, mass", limit=75)
    every = optimise(problem, algorithm="exact").archive  # the whole free grid fails
    assert not every.loc[every["catalog_part"] == "", "feasible"].any()
    result = optimise(problem, evaluations=2000)  # the GA finds catalog parts only
    assert result.algorithm == "nsga2"
    assert len(result.front) >= 2 and (result.front["catalog_part"] != "").all()
    screened = screen_catalog(
        problem, demo, cut_lengths=np.array(CUTS_MM) * 1e-3, orientations=("along",)
    )
    ok = screened.table[screened.table["feasible"]]
    feasible_pairs = set(map(tuple, ok[["profile_id", "cut_length_mm"]].to_numpy()))
    assert set(map(tuple, result.front[KEY].to_numpy())) <= feasible_pairs


# -- custom-die saving ---------------------------------------------------------------------------
def test_custom_die_saving_agrees_with_a_hand_computation_invariant(problem, exact, screened_along):
    """Invariant: the saving is the difference of the best catalog part (screening) and the
    best free design (archive), found here with pandas; the die pays when the saving before
    the set-up share covers the extrusion set-up over the quantity.

    Set-up 1500 USD for extrusion (optifin/data/processes.yaml, indicative figure, common
    practice, no source) and the default quantity 1000: 1.5 USD per part.
    """
    saving = custom_die_saving(exact, screened_along).set_index("objective")
    rated = screened_along.table[screened_along.table["feasible"]]
    archive = exact.archive
    free = archive[(archive["catalog_part"] == "") & archive["feasible"]]

    best_r = rated.loc[rated["thermal_resistance_K_per_W"].idxmin()]
    r = saving.loc["thermal_resistance"]
    assert r["catalog_part"] == best_r["profile_id"]
    assert r["catalog_cut_length_mm"] == best_r["cut_length_mm"]
    assert r["catalog_value"] == best_r["thermal_resistance_K_per_W"]
    assert r["free_value"] == free["thermal_resistance_K_per_W"].min()
    assert r["saving"] == pytest.approx(r["catalog_value"] - r["free_value"], rel=1e-12)
    assert np.isnan(r["setup_cost"])

    c = saving.loc["total_cost"]
    catalog_best = rated["catalog_total_cost"].min()
    free_best = free["total_cost"].min()
    assert c["catalog_value"] == catalog_best and c["free_value"] == free_best
    assert c["saving"] == pytest.approx(catalog_best - free_best, rel=1e-12)
    assert (c["setup_cost"], c["quantity"], c["setup_per_part"]) == (1500.0, 1000, 1.5)
    gross = catalog_best - (free_best - 1.5)
    assert c["gross_saving_per_part"] == pytest.approx(gross, rel=1e-12)
    assert c["pays_setup"] == (gross * 1000 >= 1500)
    expected = 1500 / gross if gross > 0 else np.inf
    assert c["break_even_quantity"] == pytest.approx(expected, rel=1e-12)
    # without a screening, the search's own catalog parts are the candidates
    own = custom_die_saving(exact).set_index("objective")
    parts = exact.archive[(exact.archive["catalog_part"] != "") & exact.archive["feasible"]]
    assert own.loc["total_cost", "catalog_value"] == pytest.approx(parts["total_cost"].min())
    assert own.loc["thermal_resistance", "catalog_orientation"] == "along"


# -- the screening folder ------------------------------------------------------------------------
def test_write_screening_writes_every_file_invariant(tmp_path, problem, demo, ga):
    """Invariant: the folder holds every file; the report names every profile of the shortest
    table, the saving and the safety cautions; run.json carries the problem's hash."""
    from optifin.catalog import screen_problem
    from optifin.problem import problem_hash
    from optifin.report.document import SAFETY
    from optifin.report.screening import write_screening

    screened = screen_problem(problem, demo)
    assert set(screened.table["orientation"]) == {"along", "across"}
    assert sorted(screened.table["cut_length_mm"].unique()) == list(CUTS_MM)
    out = write_screening(screened, problem, tmp_path / "screen", search_result=ga)
    names = {p.name for p in out.iterdir()}
    expected = {"table.csv", "shortest.csv", "front.csv", "ranked.csv", "screening.png"}
    expected |= {"screening.md", "screening.html", "run.json", "custom_die_saving.csv"}
    assert names == expected
    assert (out / "screening.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert len(pd.read_csv(out / "table.csv")) == len(screened.table)
    assert len(pd.read_csv(out / "front.csv")) == len(screened.front)
    md = (out / "screening.md").read_text(encoding="utf-8")
    page = (out / "screening.html").read_text(encoding="utf-8")
    for pid in screened.shortest["profile_id"]:
        assert f"`{pid}`" in md and f"<code>{pid}</code>" in page
    assert "What a custom die saves" in md and SAFETY[-1] in md
    record = json.loads((out / "run.json").read_text())
    assert record["problem_sha256"] == problem_hash(problem)
    assert record["rated"] == len(screened.table) and record["front_size"] == len(screened.front)
    assert [r["objective"] for r in record["custom_die_saving"]] == [
        "thermal_resistance",
        "total_cost",
    ]


def test_write_screening_is_atomic_invariant(tmp_path, problem, demo, monkeypatch):
    """Invariant: a failed write keeps the previous folder and leaves no temporary folder;
    a complete one replaces it."""
    import optifin.report.screening as screening

    screened = screen_catalog(
        problem, demo.take(range(8)), cut_lengths=[0.05], orientations=("along",)
    )
    out = tmp_path / "screen"
    out.mkdir()
    (out / "old.txt").write_text("previous")

    def fail(*args, **kwargs):
        raise RuntimeError("disk full")

    monkeypatch.setattr(screening, "plot_screening", fail)
    with pytest.raises(RuntimeError, match="disk full"):
        screening.write_screening(screened, problem, out)
    assert [p.name for p in tmp_path.iterdir()] == ["screen"]
    assert (out / "old.txt").read_text() == "previous"
    monkeypatch.undo()
    screening.write_screening(screened, problem, out)
    assert not (out / "old.txt").exists() and (out / "screening.md").exists()
    assert [p.name for p in tmp_path.iterdir()] == ["screen"]

"""Extrusion-profile catalogs: reading and checking the CSV, and screening against a problem.

The profiles in these tests and in optifin/data/profiles_demo.csv are invented demo data.
"""

import dataclasses

import numpy as np
import pytest

from optifin.catalog import CatalogError, load_catalog, parse_catalog
from optifin.errors import DataError

HEADER = (
    "id, width [mm], base_thickness [mm], fin_count, fin_thickness_root [mm], "
    "fin_thickness_tip [mm], fin_height [mm], alloy, price [USD/kg]"
)
GOOD = "P1, 60, 5, 10, 1.6, 1.2, 25, al_6063_t5, 5.5"


def _write(tmp_path, *lines, name="cat.csv"):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _error(tmp_path, *lines) -> CatalogError:
    path = _write(tmp_path, *lines)
    with pytest.raises(CatalogError) as info:
        load_catalog(path)
    assert isinstance(info.value, DataError)
    assert str(path) in str(info.value)
    return info.value


def _only(error: CatalogError, path_suffix="cat.csv") -> str:
    assert len(error.problems) == 1, error.problems
    (problem,) = error.problems
    assert path_suffix in problem
    return problem


# -- loading ---------------------------------------------------------------------------------
def test_demo_catalog_loads_invariant():
    """Invariant: the bundled demo loads, says it is invented, and its values are in SI."""
    catalog = load_catalog()
    assert 30 <= len(catalog) <= 60
    assert len(set(catalog.ids)) == len(catalog)
    with open(catalog.source, encoding="utf-8") as f:
        head = f.read(2000)
    assert "INVENTED DEMO DATA" in head and "none is any vendor's profile" in head
    p = catalog.profiles
    # ranges asked of the demo (widths ~40-300 mm, 6-40 fins, ...), in metres after loading
    assert p["width"].between(0.040, 0.300).all()
    assert p["fin_count"].between(6, 40).all()
    assert p["base_thickness"].between(0.002, 0.012).all()
    assert p["fin_height"].between(0.010, 0.080).all()
    assert (p["fin_tip_thickness"] <= p["fin_thickness"]).all()
    assert (p["fin_tip_thickness"] < p["fin_thickness"]).sum() > len(p) // 2  # mostly tapered
    assert p["price_per_kg"].notna().sum() > 0 and p["price_per_m"].notna().sum() > 0
    assert (p["price_per_kg"].isna() ^ p["price_per_m"].isna()).all()  # exactly one price
    assert (p["alloy"] == "al_6063_t5").mean() > 0.5
    assert {"al_6061_t6", "al_1050a"} <= set(p["alloy"])
    # the line numbers point at the rows: the first profile's line holds its id
    lines = open(catalog.source, encoding="utf-8").read().splitlines()
    assert lines[int(p["line"].iloc[0]) - 1].startswith(p["id"].iloc[0] + ",")


def test_units_convert_invariant(tmp_path):
    """Invariant: the same profile in mm, in and thou loads to the same SI values.

    1 in = 25.4 mm exactly and 1 thou = 0.001 in (international inch, 1959 definition).
    """
    mm = parse_catalog(f"{HEADER}\n{GOOD}\n", "mm.csv")
    header_in = (
        "id, width [in], base_thickness [in], fin_count, fin_thickness_root [thou], "
        "fin_thickness_tip [thou], fin_height [cm], alloy, price [USD/lb]"
    )
    inch = parse_catalog(
        f"{header_in}\nP1, {60 / 25.4}, {5 / 25.4}, 10, {1.6 / 0.0254}, {1.2 / 0.0254}, 2.5, "
        f"al_6063_t5, {5.5 * 0.45359237}\n",
        "in.csv",
    )
    for name in ("width", "base_thickness", "fin_thickness", "fin_tip_thickness", "fin_height"):
        assert inch.profiles[name].iloc[0] == pytest.approx(mm.profiles[name].iloc[0], rel=1e-12)
    assert mm.profiles["width"].iloc[0] == pytest.approx(0.060, rel=1e-12)
    # 1 lb = 0.45359237 kg exactly (international pound)
    assert inch.profiles["price_per_kg"].iloc[0] == pytest.approx(5.5, rel=1e-12)


def test_tip_blank_or_absent_is_untapered_invariant(tmp_path):
    """Invariant: a blank or absent tip thickness gives a tip equal to the root."""
    blank = parse_catalog(f"{HEADER}\nP1, 60, 5, 10, 1.6, , 25, al_6063_t5, 5.5\n")
    header = HEADER.replace(" fin_thickness_tip [mm],", "")
    absent = parse_catalog(f"{header}\nP1, 60, 5, 10, 1.6, 25, al_6063_t5, 5.5\n")
    for catalog in (blank, absent):
        p = catalog.profiles
        assert p["fin_tip_thickness"].iloc[0] == p["fin_thickness"].iloc[0] == 0.0016


def test_price_per_metre_and_mixed_columns_invariant():
    """Invariant: prices per metre load; with both columns each row gives exactly one."""
    header = HEADER + ", price [USD/m], note"
    text = f"{header}\nP1, 60, 5, 10, 1.6, 1.2, 25, al_6063_t5, , 12.5, per metre\n"
    text += "P2, 60, 5, 10, 1.6, 1.2, 25, al_6063_t5, 5.5, ,\n"
    p = parse_catalog(text).profiles
    assert p["price_per_m"].iloc[0] == 12.5 and np.isnan(p["price_per_kg"].iloc[0])
    assert p["price_per_kg"].iloc[1] == 5.5 and np.isnan(p["price_per_m"].iloc[1])
    assert p["note"].tolist() == ["per metre", ""]


def test_comments_and_blank_lines_keep_file_line_numbers(tmp_path):
    """Invariant: error lines are lines of the file, counting comments and blank lines."""
    err = _error(tmp_path, "# invented demo data", "", HEADER, "# a comment", GOOD, "P2, 60, -5")
    problem = _only(err)
    assert "cat.csv:6:" in problem and "expected 9 cells" in problem


def test_missing_column_names_file_line_and_column(tmp_path):
    """Invariant: a missing required column names the header line and the column."""
    header = HEADER.replace(" fin_height [mm],", "")
    err = _error(tmp_path, "# demo", header, "P1, 60, 5, 10, 1.6, 1.2, al_6063_t5, 5.5")
    problem = _only(err)
    assert "cat.csv:2:" in problem and "column 'fin_height'" in problem
    assert "missing column" in problem and "fin_height [mm]" in problem


def test_bad_unit_names_file_line_and_column(tmp_path):
    """Invariant: a unit that is not a length (or none at all) is an error of the header."""
    header = HEADER.replace("fin_height [mm]", "fin_height [kg]").replace("width [mm]", "width")
    err = _error(tmp_path, header, GOOD)
    assert len(err.problems) == 2
    height, width = sorted(err.problems, key=lambda p: "width" in p)
    assert "cat.csv:1:" in height and "column 'fin_height'" in height
    assert "[kg] is not a length unit" in height
    assert "cat.csv:1:" in width and "column 'width'" in width and "no unit" in width


def test_bad_price_unit_and_currency(tmp_path):
    """Invariant: a price must be per mass or length, in the library's currency."""
    err = _error(tmp_path, HEADER.replace("USD/kg", "USD/s"), GOOD)
    assert "column 'price'" in _only(err) and "neither a price per mass nor per length" in str(err)
    err = _error(tmp_path, HEADER.replace("USD/kg", "EUR/kg"), GOOD)
    assert "column 'price'" in _only(err) and "must be in USD" in str(err)


def test_unknown_alloy_names_nearest_key(tmp_path):
    """Invariant: an unknown alloy names file, line, column and the nearest library key."""
    err = _error(tmp_path, HEADER, GOOD, GOOD.replace("P1", "P2").replace("6063_t5", "6036_t5"))
    problem = _only(err)
    assert "cat.csv:3:" in problem and "column 'alloy'" in problem
    assert "'al_6036_t5'" in problem and "did you mean 'al_6063_t5'" in problem


@pytest.mark.parametrize(
    ("cells", "column"),
    [
        ("P1, 0, 5, 10, 1.6, 1.2, 25, al_6063_t5, 5.5", "width"),
        ("P1, 60, -5, 10, 1.6, 1.2, 25, al_6063_t5, 5.5", "base_thickness"),
        ("P1, 60, 5, 10, 1.6, 1.2, 0, al_6063_t5, 5.5", "fin_height"),
        ("P1, 60, 5, 10, 1.6, 0, 25, al_6063_t5, 5.5", "fin_thickness_tip"),
        ("P1, 60, 5, 10, 1.6, 1.2, 25, al_6063_t5, -1", "price"),
    ],
)
def test_non_positive_value_names_file_line_and_column(tmp_path, cells, column):
    """Invariant: zero or negative values are refused, naming line and column."""
    problem = _only(_error(tmp_path, HEADER, cells))
    assert "cat.csv:2:" in problem and f"column {column!r}" in problem
    assert "must be positive" in problem


def test_bad_numbers_and_counts(tmp_path):
    """Invariant: text where a number belongs and fractional fin counts are refused."""
    err = _error(
        tmp_path,
        HEADER,
        "P1, 60, five, 10, 1.6, 1.2, 25, al_6063_t5, 5.5",
        "P2, 60, 5, 9.5, 1.6, 1.2, 25, al_6063_t5, 5.5",
        "P3, 60, 5, 10, 1.6, 1.2, inf, al_6063_t5, 5.5",
    )
    assert len(err.problems) == 3
    assert "cat.csv:2: column 'base_thickness': expected a number, found 'five'" in err.problems[0]
    assert "cat.csv:3: column 'fin_count'" in err.problems[1]
    assert "cat.csv:4: column 'fin_height'" in err.problems[2]


def test_tip_thicker_than_root_names_file_line_and_column(tmp_path):
    """Invariant: a tip thicker than the root is refused at the tip column."""
    problem = _only(_error(tmp_path, HEADER, "P1, 60, 5, 10, 1.6, 1.8, 25, al_6063_t5, 5.5"))
    assert "cat.csv:2:" in problem and "column 'fin_thickness_tip'" in problem
    assert "thicker than the root" in problem


def test_fins_not_fitting_names_file_line_and_column(tmp_path):
    """Invariant: N t_root >= W is refused (20 fins x 3 mm = 60 mm on a 60 mm base)."""
    problem = _only(_error(tmp_path, HEADER, "P1, 60, 5, 20, 3, 2, 25, al_6063_t5, 5.5"))
    assert "cat.csv:2:" in problem and "column 'fin_count'" in problem
    assert "do not fit across the width" in problem and "60 mm" in problem


def test_duplicate_id_names_both_lines(tmp_path):
    """Invariant: a repeated id is refused on its second line, naming the first."""
    problem = _only(_error(tmp_path, HEADER, GOOD, "# x", GOOD))
    assert "cat.csv:4:" in problem and "column 'id'" in problem
    assert "duplicate id 'P1' (first on line 2)" in problem


def test_unknown_and_repeated_columns(tmp_path):
    """Invariant: a misspelt field and a repeated one are errors of the header."""
    header = HEADER.replace("fin_height [mm]", "fin_heigth [mm]") + ", alloy"
    err = _error(tmp_path, header, GOOD + ", al_6063_t5")
    text = "\n".join(err.problems)
    assert "column 'fin_heigth': unknown field; did you mean 'fin_height'?" in text
    assert "column 'alloy': given twice" in text
    assert "column 'fin_height': missing column" in text


def test_every_error_is_collected(tmp_path):
    """Invariant: all errors of a file are reported together, each with its line."""
    err = _error(
        tmp_path,
        "# invented",
        HEADER,
        "P1, 60, 5, 10, 1.6, 1.8, 25, al_6063_t5, 5.5",  # line 3: tip > root
        "P2, 60, 5, 10, 1.6, 1.2, 25, copper, 5.5",  # line 4: unknown alloy
        "P1, 60, 5, 40, 1.6, 1.2, 25, al_6063_t5, ",  # line 5: duplicate, no fit, no price
    )
    assert len(err.problems) == 5, err.problems
    assert str(err).startswith(f"{tmp_path / 'cat.csv'}: 5 errors")
    expected = [
        ("3", "fin_thickness_tip"),
        ("4", "alloy"),
        ("5", "price"),
        ("5", "fin_count"),
        ("5", "id"),
    ]
    for line, column in expected:
        assert any(f"cat.csv:{line}: column {column!r}" in p for p in err.problems), (line, column)


def test_missing_file_and_empty_file(tmp_path):
    """Invariant: an absent or empty file is a CatalogError naming the file."""
    with pytest.raises(CatalogError, match="file not found"):
        load_catalog(tmp_path / "absent.csv")
    err = _error(tmp_path, "# only a comment")
    assert "no header line" in _only(err)
    err = _error(tmp_path, HEADER)
    assert "no profiles" in _only(err)


def test_catalog_is_frozen():
    """Invariant: a Catalog cannot be reassigned (frozen dataclass)."""
    catalog = load_catalog()
    with pytest.raises(dataclasses.FrozenInstanceError):
        catalog.source = "x"


# -- screening -------------------------------------------------------------------------------
# An invented problem: a 60 W chip off-centre on the base, a 120 x 80 x 45 mm envelope.
PROBLEM = """
name: catalog_screen
heat_load:
  name: chip
  power: "60 W"
  footprint: ["30 mm", "20 mm"]
  position: ["25 mm", "40 mm"]
  interface_resistance_per_area: "0.2 K*cm^2/W"
ambient: {{temperature: "35 degC"}}
cooling: {{mode: forced, approach_velocity: "2.5 m/s"}}
envelope: {{max_width: "120 mm", max_length: "80 mm", max_height: "45 mm"}}
variables:
  fin_count: {{min: 6, max: 40}}
  fin_thickness: {{min: "0.8 mm", max: "3 mm", step: "0.1 mm"}}
  fin_height: {{min: "10 mm", max: "40 mm", step: "1 mm"}}
  base_thickness: {{min: "3 mm", max: "8 mm", step: "0.5 mm"}}
  width: {{min: "40 mm", max: "120 mm", step: "5 mm"}}
  length: {{min: "20 mm", max: "80 mm", step: "5 mm"}}
  material: {{choices: [al_6063_t5, al_6061_t6, al_1050a]}}
  process: {{choices: [extrusion]}}
objectives: [{objectives}]
constraints:
  max_source_temperature: "{limit} degC"
  max_pressure_drop: "45 Pa"
"""


def _problem(limit=95, objectives="thermal_resistance, mass, pressure_drop"):
    from optifin.problem.loader import load_problem_text

    return load_problem_text(PROBLEM.format(limit=limit, objectives=objectives), "screen.yaml")


@pytest.fixture(scope="module")
def problem():
    return _problem()


@pytest.fixture(scope="module")
def demo():
    return load_catalog()


@pytest.fixture(scope="module")
def screened(problem, demo):
    from optifin.catalog import screen_catalog

    return screen_catalog(problem, demo)


def _fitting(catalog):
    """The profiles that fit the test envelope along (fewer parts: quicker screens)."""
    p = catalog.profiles
    fits = (p["width"] <= 0.120) & (p["base_thickness"] + p["fin_height"] <= 0.045)
    return catalog.take(np.flatnonzero(fits.to_numpy()))


def _minimised(frame, objective_columns):
    return np.column_stack(
        [
            frame[c].to_numpy(float) * (-1.0 if s == "maximise" else 1.0)
            for c, s in objective_columns
        ]
    )


def test_default_cut_grid_invariant(problem, screened):
    """Invariant: the default grid is every 5 mm from 20 mm to the longest envelope side."""
    from optifin.catalog import default_cut_lengths

    grid = default_cut_lengths(problem)
    np.testing.assert_allclose(grid * 1e3, np.arange(20, 121, 5), atol=1e-9)
    np.testing.assert_array_equal(screened.cut_lengths, grid)
    along = screened.table[screened.table["orientation"] == "along"]
    across = screened.table[screened.table["orientation"] == "across"]
    assert along["cut_length_mm"].max() == pytest.approx(80.0)  # envelope length
    assert across["cut_length_mm"].max() == pytest.approx(120.0)  # envelope width


def test_only_parts_that_fit_the_envelope_are_rated_invariant(screened, demo):
    """Invariant: rated parts fit the envelope in their orientation; the rest are named."""
    t = screened.table
    height = t["base_thickness_mm"] + t["fin_height_mm"]
    assert (height <= 45 + 1e-9).all()
    along, across = t["orientation"] == "along", t["orientation"] == "across"
    assert (t.loc[along, "width_mm"] <= 120 + 1e-9).all()
    assert (t.loc[along, "cut_length_mm"] <= 80 + 1e-9).all()
    assert (t.loc[across, "width_mm"] <= 80 + 1e-9).all()
    assert (t.loc[across, "cut_length_mm"] <= 120 + 1e-9).all()
    # a 100 mm wide, 43 mm tall profile fits only "along" (the envelope is 80 mm long)
    row = screened.shortest.set_index("profile_id").loc["DEMO-100-A"]
    assert "width 100 mm exceeds the envelope's length 80 mm" in row["across_reason"]
    # every profile taller than the envelope is named as such in both orientations
    tall = demo.profiles["base_thickness"] + demo.profiles["fin_height"] > 0.045
    reasons = screened.shortest.loc[tall.to_numpy(), ["along_reason", "across_reason"]]
    assert reasons.map(lambda r: "height" in r and "exceeds" in r).all().all()
    assert len(screened.shortest) == len(demo)


def _hand_condition(problem, orientation):
    """The condition of an orientation written out by hand (not through rotate_condition)."""
    from optifin.model import Condition, HeatSource

    c = problem.condition
    (s,) = c.sources
    if orientation == "across":  # turned 90°: 30 x 20 mm at (25, 40) mm becomes 20 x 30 at (40, 25)
        s = HeatSource(
            s.power, 0.020, 0.030, x=0.040, y=0.025, interface_resistance=s.interface_resistance
        )
    return Condition(
        sources=(s,),
        ambient_temperature=c.ambient_temperature,
        pressure=c.pressure,
        approach_velocity=c.approach_velocity,
        max_source_temperature=c.max_source_temperature,
        quantity=c.quantity,
    )


def test_screened_part_equals_evaluate_cross_method(problem, screened, demo):
    """Cross-method: a screened part equals optifin.model.evaluate of the design built by hand.

    The hand design takes the profile's numbers straight from the demo CSV (mm), and the
    rotated source of the "across" orientation is written out by hand.
    """
    from optifin.model import evaluate

    t = screened.table
    checked = 0
    for pid, orientation, cut in [
        ("DEMO-080-A", "along", 60.0),
        ("DEMO-080-A", "across", 85.0),
        ("DEMO-065-A", "across", 45.0),
        ("DEMO-070-B", "along", 50.0),  # priced per metre
    ]:
        row = t[(t.profile_id == pid) & (t.orientation == orientation) & (t.cut_length_mm == cut)]
        assert len(row) == 1
        row = row.iloc[0]
        p = demo.profiles.set_index("id").loc[pid]
        hand = {
            "fin_count": int(p["fin_count"]),
            "fin_thickness_mm": p["fin_thickness"] * 1e3,
            "fin_tip_thickness_mm": p["fin_tip_thickness"] * 1e3,
            "fin_height_mm": p["fin_height"] * 1e3,
            "base_thickness_mm": p["base_thickness"] * 1e3,
            "width_mm": p["width"] * 1e3,
            "length_mm": cut,
            "material": p["alloy"],
            "process": "catalog_cut",  # a stock profile cut to length: no die set-up
        }
        ref = evaluate(hand, _hand_condition(problem, orientation), problem.library).iloc[0]
        for column in (
            "thermal_resistance_K_per_W",
            "source_temperature_C",
            "pressure_drop_Pa",
            "mass_kg",
            "material_cost",
            "total_cost",
        ):
            assert row[column] == pytest.approx(ref[column], rel=1e-12), (pid, column)
        price = p["price_per_kg"] * ref["mass_kg"] if np.isfinite(p["price_per_kg"]) else None
        price = p["price_per_m"] * cut * 1e-3 if price is None else price
        assert row["catalog_price"] == pytest.approx(price, rel=1e-12)
        assert row["catalog_total_cost"] == pytest.approx(price + row["process_cost"], rel=1e-12)
        checked += 1
    assert checked == 4


def test_rotation_swaps_source_axes_invariant(problem, screened):
    """Invariant: "across" swaps the source's footprint and position axes.

    The chip sits 25 mm across and 40 mm along the envelope; turned, it lies 40 mm across the
    part's fins and 25 mm along them. So in "across" a 45 mm cut holds it (25 + 10 mm)
    while "along" needs at least 40 + 10 = 50 mm of cut.
    """
    from optifin.catalog import rotate_condition

    (s,) = rotate_condition(problem.condition).sources
    (o,) = problem.condition.sources
    assert (s.size_x, s.size_y, s.x, s.y) == (o.size_y, o.size_x, o.y, o.x)
    assert (s.x, s.y, s.size_x, s.size_y) == pytest.approx((0.040, 0.025, 0.020, 0.030))
    assert rotate_condition(rotate_condition(problem.condition)) == problem.condition
    t = screened.table.set_index(["profile_id", "orientation", "cut_length_mm"])
    fit = "a heat source does not fit on the base"
    assert fit in t.loc[("DEMO-065-A", "along", 45.0), "infeasible_reason"]
    assert fit not in t.loc[("DEMO-065-A", "along", 50.0), "infeasible_reason"]
    assert fit not in t.loc[("DEMO-065-A", "across", 45.0), "infeasible_reason"]
    assert fit in t.loc[("DEMO-065-A", "across", 35.0), "infeasible_reason"]
    # turned, the chip spans 30-50 mm across the fins: a 45 mm wide profile never holds it,
    # while along (10-40 mm across) it does
    assert fit in t.loc[("DEMO-045-A", "across", 60.0), "infeasible_reason"]
    assert fit not in t.loc[("DEMO-045-A", "along", 60.0), "infeasible_reason"]
    shortest = screened.shortest.set_index("profile_id")
    assert shortest.loc["DEMO-045-A", "across_reason"] == (
        f"no feasible cut up to 120 mm; at that length: {fit}"  # and no "... not met" noise
    )


def test_shortest_cut_is_feasible_and_next_shorter_is_not_invariant(screened):
    """Invariant: each shortest cut is feasible and the next shorter grid cut is not."""
    t = screened.table.set_index(["profile_id", "orientation", "cut_length_mm"])
    step = 5.0
    found = 0
    for orientation in ("along", "across"):
        column = f"{orientation}_cut_length_mm"
        for pid, cut in screened.shortest[["profile_id", column]].itertuples(index=False):
            rated = screened.table[
                (screened.table.profile_id == pid) & (screened.table.orientation == orientation)
            ]
            if np.isnan(cut):
                assert not rated["feasible"].any()
                continue
            found += 1
            assert t.loc[(pid, orientation, cut), "feasible"]
            shorter = cut - step
            if shorter >= 20.0 - 1e-9:
                assert not t.loc[(pid, orientation, shorter), "feasible"]
            assert not rated.loc[rated.cut_length_mm < cut, "feasible"].any()
    assert found >= 5  # the test problem lets a fair share of the demo through
    # and the profiles with no feasible cut say why
    none = screened.shortest["shortest_cut_length_mm"].isna()
    assert (screened.shortest.loc[none, "along_reason"] != "").all()


def test_front_is_nondominated_and_feasible_invariant(screened):
    """Invariant: every front member is feasible and no feasible part dominates it.

    Dominance is checked by brute force here, independently of moocore's filter.
    """
    front, table, cols = screened.front, screened.table, screened.objective_columns
    assert len(front) >= 2 and front["feasible"].all()
    F = _minimised(front, cols)
    all_F = _minimised(table[table["feasible"]], cols)
    dominated = np.all(all_F[:, None, :] <= F[None, :, :], axis=2) & np.any(
        all_F[:, None, :] < F[None, :, :], axis=2
    )
    assert not dominated.any()
    # and every feasible part not on the front is dominated by a front member
    rest = table[table["feasible"]].merge(
        front[["profile_id", "orientation", "cut_length_mm"]], how="left", indicator=True
    )
    rest_F = _minimised(rest[rest["_merge"] == "left_only"], cols)
    covered = np.all(F[None, :, :] <= rest_F[:, None, :], axis=2) & np.any(
        F[None, :, :] < rest_F[:, None, :], axis=2
    )
    assert covered.any(axis=1).all()


def test_ranked_is_sorted_and_feasible_invariant(screened):
    """Invariant: ranked holds every feasible part, best first by the first objective."""
    column, sense = screened.objective_columns[0]
    ranked = screened.ranked
    assert len(ranked) == int(screened.table["feasible"].sum())
    values = ranked[column].to_numpy(float) * (-1.0 if sense == "maximise" else 1.0)
    assert np.all(np.diff(values) >= 0)
    assert ranked["rank"].tolist() == list(range(1, len(ranked) + 1))


def test_stricter_temperature_limit_never_shortens_a_cut_invariant(demo):
    """Invariant (monotonicity): a lower temperature limit never makes a shorter cut feasible."""
    from optifin.catalog import screen_catalog

    loose = screen_catalog(_problem(limit=100), _fitting(demo))
    strict = screen_catalog(_problem(limit=80), _fitting(demo))
    assert (loose.table["profile_id"].to_numpy() == strict.table["profile_id"].to_numpy()).all()
    assert not (strict.table["feasible"] & ~loose.table["feasible"]).any()
    assert (loose.table["feasible"] & ~strict.table["feasible"]).any()  # the limit bites
    for orientation in ("along", "across"):
        column = f"{orientation}_cut_length_mm"
        a = loose.shortest[column].to_numpy(float)
        b = strict.shortest[column].to_numpy(float)
        assert not np.any(np.isnan(a) & ~np.isnan(b))
        both = ~np.isnan(a) & ~np.isnan(b)
        assert np.all(b[both] >= a[both])


def test_table_agrees_with_design_table_cross_method(problem, demo, screened):
    """Cross-method: the screening rows equal optifin.search.design_table of the same designs."""
    from optifin.search import design_table

    cuts = screened.cut_lengths[screened.cut_lengths <= 0.080 + 1e-12]
    designs, _ = _fitting(demo).designs(cuts, problem.library)
    ref = design_table(problem, designs)
    ours = screened.table[screened.table["orientation"] == "along"]
    keys = ["width_mm", "fin_count", "fin_height_mm", "base_thickness_mm", "length_mm"]
    ref = ref.sort_values(keys, kind="stable").reset_index(drop=True)
    ours = ours.sort_values(keys, kind="stable").reset_index(drop=True)
    assert len(ref) == len(ours) > 0
    missing = [c for c in ref.columns if c not in ours.columns]
    assert not missing
    for column in ref.columns:
        a, b = ref[column], ours[column]
        if a.dtype.kind == "f":
            np.testing.assert_allclose(b.to_numpy(float), a.to_numpy(float), rtol=1e-12)
        else:
            assert (a.astype(str).to_numpy() == b.astype(str).to_numpy()).all(), column


def test_cost_objectives_use_the_catalog_price_invariant(demo):
    """Invariant: with material_cost as an objective, the front is taken on catalog_price."""
    from optifin.catalog import screen_catalog

    result = screen_catalog(
        _problem(objectives="thermal_resistance, material_cost"), _fitting(demo)
    )
    assert [c for c, _ in result.objective_columns] == [
        "thermal_resistance_K_per_W",
        "catalog_price",
    ]
    feasible = result.table[result.table["feasible"]]
    F = feasible[["thermal_resistance_K_per_W", "catalog_price"]].to_numpy(float)
    dominated = np.all(F[:, None, :] <= F[None, :, :], axis=2) & np.any(
        F[:, None, :] < F[None, :, :], axis=2
    )
    expected = feasible[~dominated.any(axis=0)]
    key = ["profile_id", "orientation", "cut_length_mm"]
    assert sorted(map(tuple, expected[key].to_numpy())) == sorted(
        map(tuple, result.front[key].to_numpy())
    )
    # the catalog and library prices differ, so the choice matters
    assert not np.allclose(feasible["catalog_price"], feasible["material_cost"])


def test_demo_mostly_meets_extrusion_limits_invariant(demo, problem, screened):
    """Invariant: most demo profiles meet the extrusion limits; a few break them on purpose.

    The limits are those of optifin/data/processes.yaml (common practice, no source). A
    catalog part is a profile that exists already: it is rated as ``catalog_cut``, whose
    loose sanity limits every demo profile meets, so screening names no process limit.
    """
    from optifin.model.geometry import BIT, manufacturing_reasons

    designs, _ = demo.designs([0.1], problem.library, process="extrusion")
    reasons = manufacturing_reasons(designs, problem.library)
    broken = reasons != 0
    assert 2 <= broken.sum() <= len(demo) // 5
    for name in ("min_gap", "max_aspect_ratio", "min_fin_thickness"):
        assert (reasons & BIT[name]).any(), name
    stock, _ = demo.designs([0.1], problem.library)
    assert set(np.asarray(stock.process)) == {problem.library.process_code("catalog_cut")}
    assert not manufacturing_reasons(stock, problem.library).any()
    # screening rates the dense-fin profile without the extrusion gap limit
    t = screened.table
    dense = t[t.profile_id == "DEMO-090-B"]
    assert len(dense) and not dense["infeasible_reason"].str.contains("gap narrower").any()
    assert (dense["process"].astype(str) == "catalog_cut").all()


def test_orientations_argument(problem, demo):
    """Invariant: one orientation rates only that one; unknown ones are refused."""
    from optifin.catalog import screen_catalog
    from optifin.errors import SearchError

    only = screen_catalog(problem, demo.take(range(10)), orientations=("across",))
    assert set(only.table["orientation"]) == {"across"}
    assert "along_reason" not in only.shortest.columns
    with pytest.raises(SearchError, match="orientations"):
        screen_catalog(problem, demo, orientations=("sideways",))


# -- catalog parts in the search: the problem side and the custom-die saving -----------------
def test_search_parts_only_with_in_search_invariant(problem):
    """Invariant: a problem without a catalog in its search offers no catalog parts."""
    from optifin.catalog import search_parts

    assert problem.catalog is None and search_parts(problem) is None
    with_catalog = dataclasses.replace(
        problem,
        catalog=dataclasses.replace(_catalog_choice(), in_search=False),
    )
    assert search_parts(with_catalog) is None
    parts = search_parts(dataclasses.replace(problem, catalog=_catalog_choice()))
    # the 120 x 80 x 45 mm envelope, along: width <= 120 mm, base + fins <= 45 mm, cut 50 mm
    fits = _fitting(load_catalog())
    assert parts.ids.tolist() == fits.ids and (parts.index["cut_length"] == 0.05).all()


def _catalog_choice():
    from optifin.problem.spec import CatalogChoice

    return CatalogChoice(path=None, cut_lengths=(0.05,), orientations=("along",), in_search=True)


def test_custom_die_saving_by_hand_invariant():
    """Invariant: the saving and the set-up test on a hand-made result.

    Free designs: R 0.5 and 0.4 K/W, total cost 2.0 and 3.0 USD, heat rate 50 and 60 W, both
    extruded; catalog part P1: 0.6 K/W, 1.0 USD, 40 W; P2 (better in all) is infeasible.
    Extrusion set-up 1500 USD over the default quantity 1000 is 1.5 USD per part
    (optifin/data/processes.yaml, indicative, common practice, no source). By hand:
    R saving 0.6 - 0.4 = 0.2 K/W (1/3 of 0.6); heat rate saving 60 - 40 = 20 W (maximised);
    cost saving 1.0 - 2.0 = -1.0 USD, before the set-up share -1.0 + 1.5 = 0.5 USD per
    part, 500 USD over 1000 parts < 1500 USD: it does not pay; break-even 1500 / 0.5 = 3000.
    """
    from types import SimpleNamespace

    import pandas as pd

    from optifin.catalog import custom_die_saving
    from optifin.errors import SearchError

    problem = _problem(objectives="thermal_resistance, total_cost, heat_rate")
    archive = pd.DataFrame(
        {
            "catalog_part": ["", "", "P1", "P2"],
            "fin_count": [10, 12, 9, 9],
            "fin_thickness_mm": [1.2, 1.0, 1.5, 1.5],
            "fin_height_mm": [30.0, 35.0, 25.0, 25.0],
            "base_thickness_mm": [5.0, 5.0, 4.0, 4.0],
            "width_mm": [80.0, 90.0, 60.0, 60.0],
            "length_mm": [60.0, 70.0, 50.0, 40.0],
            "material": ["al_6063_t5"] * 4,
            "process": ["extrusion", "extrusion", "catalog_cut", "catalog_cut"],
            "thermal_resistance_K_per_W": [0.5, 0.4, 0.6, 0.1],
            "total_cost": [2.0, 3.0, 1.0, 0.1],
            "heat_rate_W": [50.0, 60.0, 40.0, 100.0],
            "feasible": [True, True, True, False],
        }
    )
    result = SimpleNamespace(
        problem=problem,
        objective_columns=[
            ("thermal_resistance_K_per_W", "minimise"),
            ("total_cost", "minimise"),
            ("heat_rate_W", "maximise"),
        ],
        archive=archive,
        front=archive.iloc[:0],
    )
    out = custom_die_saving(result).set_index("objective")
    r, c, q = out.loc["thermal_resistance"], out.loc["total_cost"], out.loc["heat_rate"]
    assert (r["catalog_part"], r["catalog_value"], r["free_value"]) == ("P1", 0.6, 0.4)
    assert r["saving"] == pytest.approx(0.2, rel=1e-12)
    assert r["relative_saving"] == pytest.approx(1 / 3, rel=1e-12)
    assert r["unit"] == "K/W" and np.isnan(r["setup_cost"]) and np.isnan(r["pays_setup"])
    assert "12 fins 1 mm" in r["free_design"] and r["catalog_cut_length_mm"] == 50.0
    assert q["saving"] == pytest.approx(20.0) and q["sense"] == "maximise"
    assert (c["catalog_value"], c["free_value"], c["unit"]) == (1.0, 2.0, "USD")
    assert c["saving"] == pytest.approx(-1.0, rel=1e-12)
    assert (c["setup_cost"], c["quantity"], c["setup_per_part"]) == (1500.0, 1000, 1.5)
    assert c["gross_saving_per_part"] == pytest.approx(0.5, rel=1e-12)
    assert isinstance(c["pays_setup"], bool) and not c["pays_setup"]
    assert c["break_even_quantity"] == pytest.approx(3000.0, rel=1e-12)
    only = custom_die_saving(result, objective="total_cost")
    assert only["objective"].tolist() == ["total_cost"]
    with pytest.raises(SearchError, match="not an objective"):
        custom_die_saving(result, objective="mass")

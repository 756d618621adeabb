"""Hybrid sinks through optifin.model.evaluate: a base of another material, a spreader insert.

Every test names its kind: invariant (a property the physics must have whatever the
numbers) or cross-method (the model's column against the same quantity written out here
by hand, from the library's data, or from a physics function called on its own). Material
properties and prices come from the bundled library (optifin/data/materials.yaml), so the
by-hand values use exactly the data the model uses.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate
from optifin.physics.layered_base import insert_base_resistance
from optifin.physics.spreading import spreading_song_lee_au_1994

LIB = load_library()
AL, CU = "al_6063_t5", "cu_c11000"
K = {m: LIB.materials[m].conductivity.si for m in (AL, CU)}
RHO = {m: LIB.materials[m].density.si for m in (AL, CU)}
PRICE = {m: LIB.materials[m].price.si for m in (AL, CU)}

# an invented sink: 60 x 60 mm base 5 mm thick, 20 fins 1 x 25 mm, a 30 x 30 mm source
W = L = 0.06
N, T, H, TB = 20, 1e-3, 0.025, 0.005
SOURCE = 0.03
SINK = dict(fin_count=N, fin_thickness=T, fin_height=H, base_thickness=TB, width=W, length=L)
INSERT = dict(insert_thickness=0.003, insert_width=0.04, insert_length=0.04)


def _condition(spreading: str = "auto") -> Condition:
    return Condition(
        sources=[HeatSource(40.0, SOURCE, SOURCE)],
        ambient_temperature=300.0,
        approach_velocity=2.0,
        max_base_temperature=370.0,
        spreading=spreading,
    )


def _rate(rows: list[dict], spreading: str = "auto") -> pd.DataFrame:
    return evaluate(pd.DataFrame(rows), _condition(spreading), LIB)


def _bonded(**kw) -> dict:
    return {**SINK, "material": AL, "process": "bonded", **kw}


def test_copper_base_lies_between_aluminium_and_copper_sinks():
    """Invariant: fins of aluminium on a copper base sit between the all-aluminium and the
    all-copper bonded sinks of the same geometry, in thermal resistance and in mass (raising
    the conductivity of any part cannot raise the resistance; copper is denser)."""
    for spreading in ("auto", "muzychka_2003"):
        t = _rate([_bonded(), _bonded(base_material=CU), _bonded(material=CU)], spreading)
        assert t["feasible"].all()
        r, m = t["thermal_resistance_K_per_W"], t["mass_kg"]
        assert r[0] > r[1] > r[2]
        assert m[0] < m[1] < m[2]


def test_copper_base_resistance_column():
    """Cross-method: the base column of a copper base under aluminium fins is the 1-D
    conduction t_b/(k_cu W L) with k_cu from the library, not the fins' conductivity."""
    row = _rate([_bonded(base_material=CU)]).iloc[0]
    assert row["base_resistance_K_per_W"] == pytest.approx(TB / (K[CU] * W * L), rel=1e-12)


def test_copper_base_mass_by_hand():
    """Cross-method: mass = rho_cu W L t_b + rho_al N t H L (library densities)."""
    row = _rate([_bonded(base_material=CU)]).iloc[0]
    by_hand = RHO[CU] * W * L * TB + RHO[AL] * N * T * H * L
    assert row["mass_kg"] == pytest.approx(by_hand, rel=1e-12)


def test_copper_base_spreading_uses_the_base_conductivity():
    """Cross-method: with the Song, Lee & Au (1994) closed form (the default for one centred
    source), the sink resistance of a copper base under aluminium fins is
    1/(h_eff A) + t_b/(k_cu A) + R_sp(k_cu), with the model's h_eff = 1/(R_conv A), A = W L,
    and the spreading function called here with the copper conductivity."""
    row = _rate([_bonded(base_material=CU)], "song_lee_au_1994").iloc[0]
    area = W * L
    h_eff = 1.0 / (row["convection_resistance_K_per_W"] * area)
    r_sp, _ = spreading_song_lee_au_1994(SOURCE * SOURCE, area, TB, K[CU], h_eff)
    expected = 1.0 / (h_eff * area) + TB / (K[CU] * area) + float(r_sp)
    assert row["sink_resistance_K_per_W"] == pytest.approx(expected, rel=1e-9)


def test_full_copper_insert_equals_copper_base():
    """Cross-method: an insert of copper through the whole base over the whole plate makes
    the base copper; the variational insert model (optifin.physics.layered_base) must then
    give the flux-channel series (Muzychka et al. 2003) of a copper base, and the masses and
    material costs must be equal."""
    full = dict(insert_material=CU, insert_thickness=TB, insert_width=W, insert_length=L)
    t = _rate([_bonded(**full), _bonded(base_material=CU)], "muzychka_2003")
    assert t["sink_resistance_K_per_W"][0] == pytest.approx(
        t["sink_resistance_K_per_W"][1], rel=1e-4
    )
    assert t["mass_kg"][0] == pytest.approx(t["mass_kg"][1], rel=1e-12)
    assert t["material_cost"][0] == pytest.approx(t["material_cost"][1], rel=1e-12)


def test_insert_of_the_base_material_is_the_plain_base():
    """Invariant: an insert of the base's own material changes nothing. The resistance is
    compared with the exact series of the plain base (spreading method muzychka_2003): the
    two series are truncated differently, to about 2e-5 of the rise (the truncation stated
    in optifin.physics.layered_base); mass and cost are the same to round-off."""
    t = _rate([_bonded(), _bonded(insert_material=AL, **INSERT)], "muzychka_2003")
    r = t["thermal_resistance_K_per_W"]
    assert r[1] == pytest.approx(r[0], rel=2e-5)
    for column in ("mass_kg", "material_cost", "total_cost"):
        assert t[column][1] == pytest.approx(t[column][0], rel=1e-12), column


def test_copper_insert_lowers_resistance_more_when_thicker_or_larger():
    """Invariant: a copper insert lowers the resistance of an aluminium base, and a thicker
    or a larger insert lowers it further (more copper on the heat path)."""
    thin = _bonded(insert_material=CU, **INSERT)
    thick = {**thin, "insert_thickness": 0.0045}
    large = {**thin, "insert_width": 0.055, "insert_length": 0.055}
    t = _rate([_bonded(), thin, thick, large])
    r = t["thermal_resistance_K_per_W"]
    assert r[1] < r[0]
    assert r[2] < r[1]
    assert r[3] < r[1]


def test_insert_sink_resistance_is_the_variational_insert_model():
    """Cross-method: the insert design's sink resistance is insert_base_resistance of
    optifin.physics.layered_base called directly with the library conductivities and the
    model's h_eff = 1/(R_conv W L) (the sink's conductance spread over the base)."""
    row = _rate([_bonded(insert_material=CU, **INSERT)]).iloc[0]
    h_eff = 1.0 / (row["convection_resistance_K_per_W"] * W * L)
    r_mean, _ = insert_base_resistance(
        W,
        L,
        TB,
        K[AL],
        INSERT["insert_width"],
        INSERT["insert_length"],
        INSERT["insert_thickness"],
        K[CU],
        SOURCE,
        SOURCE,
        h_eff,
    )
    assert row["sink_resistance_K_per_W"] == pytest.approx(float(r_mean), rel=1e-9)


def test_material_cost_prices_each_part_at_its_material():
    """Cross-method by hand: material cost = (sum of part mass x its price) / yield for the
    net-stock bonded process; the insert's volume is taken out of the base."""
    yield_ = LIB.processes["bonded"].limit("material_yield")
    fins = RHO[AL] * N * T * H * L
    t = _rate([_bonded(base_material=CU), _bonded(insert_material=CU, **INSERT)])
    base_cu = RHO[CU] * W * L * TB
    assert t["material_cost"][0] == pytest.approx(
        (fins * PRICE[AL] + base_cu * PRICE[CU]) / yield_, rel=1e-12
    )
    v_insert = INSERT["insert_thickness"] * INSERT["insert_width"] * INSERT["insert_length"]
    base_al = RHO[AL] * (W * L * TB - v_insert)
    insert_cu = RHO[CU] * v_insert
    assert t["mass_kg"][1] == pytest.approx(fins + base_al + insert_cu, rel=1e-12)
    assert t["material_cost"][1] == pytest.approx(
        ((fins + base_al) * PRICE[AL] + insert_cu * PRICE[CU]) / yield_, rel=1e-12
    )


def test_monolithic_process_cannot_join_two_materials():
    """Invariant: a monolithic process (skiving forms both metals, but from one block)
    cannot put aluminium fins on a copper base: the "construction" reason, and only it."""
    t = _rate([{**SINK, "material": AL, "process": "skived", "base_material": CU}])
    assert not t["feasible"][0]
    assert (
        t["infeasible_reason"][0]
        == "the process cannot join a base and fins of different materials"
    )
    # the same construction by bonding is feasible
    assert _rate([_bonded(base_material=CU)])["feasible"][0]


def test_insert_that_does_not_fit_is_infeasible():
    """Invariant: an insert thicker than the base, or wider than it, is not a sink."""
    t = _rate(
        [
            _bonded(insert_material=CU, **{**INSERT, "insert_thickness": TB * 1.2}),
            _bonded(insert_material=CU, **{**INSERT, "insert_width": W * 1.1}),
        ]
    )
    assert not t["feasible"].any()
    assert t["infeasible_reason"].str.contains("insert does not fit").all()
    assert np.isnan(t["thermal_resistance_K_per_W"]).all()

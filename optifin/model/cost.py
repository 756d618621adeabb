"""Mass, envelope volume and the cost of making a heat sink (plate or pin fins)."""

from __future__ import annotations

import numpy as np

from optifin.library import Library
from optifin.model.design import Designs
from optifin.model.geometry import Geometry


def mass_and_cost(
    designs: Designs, geometry: Geometry, library: Library, quantity: int
) -> dict[str, np.ndarray]:
    """Mass [kg], envelope volume [m³], and material, process and total cost per part.

    Part volume V = W L t_b + N A_fin L for plate fins (A_fin = (t + t_tip) H / 2) and
    W L t_b + N π D² H / 4 for pins. The base may be of another material than the fins
    (bonded fins), and an insert of volume w_i l_i t_i replaces base material under the
    sources; each part is priced at its own material. Material is bought as the part mass over the
    process's material yield (``stock: net``), or as the enclosing block W L (t_b + H)
    (``stock: block``, machining). Process cost per part:
    setup/quantity + per_part + per_kg·mass + per_fin·N + per_volume_removed·(stock - part).
    The cost figures are indicative (see processes.yaml).
    """
    g = geometry
    p, m = designs.process, designs.material
    lib = library.array
    density, price = lib("density"), lib("price")
    rho_fin = np.take(density, m)
    fin_volume = g.n * g.fin_volume
    base_volume = g.base_area * g.base
    part_volume = base_volume + fin_volume
    envelope = g.base_area * (g.base + g.height)
    if designs.is_plain:
        mass = rho_fin * part_volume
        bought_price = np.take(price, m)  # one material: price per kg of the part
        mean_density = rho_fin
    else:
        base_m = designs.base_material_code
        rho_base = np.take(density, base_m)
        has_insert = designs.insert_material >= 0
        insert_m = np.where(has_insert, designs.insert_material, base_m)
        insert_volume = np.where(
            has_insert,
            np.nan_to_num(designs.insert_width * designs.insert_length * designs.insert_thickness),
            0.0,
        )
        rho_insert = np.take(density, insert_m)
        fin_mass = rho_fin * fin_volume
        base_mass = rho_base * (base_volume - insert_volume)
        insert_mass = rho_insert * insert_volume
        mass = fin_mass + base_mass + insert_mass
        worth = (
            fin_mass * np.take(price, m)
            + base_mass * np.take(price, base_m)
            + insert_mass * np.take(price, insert_m)
        )
        bought_price = worth / mass
        mean_density = mass / part_volume
    block = np.take(lib("stock_block"), p)
    stock_mass = np.where(block, mean_density * envelope, mass / np.take(lib("material_yield"), p))
    material_cost = bought_price * stock_mass
    removed = np.where(block, envelope - part_volume, 0.0)
    process_cost = (
        np.take(lib("cost_setup"), p) / quantity
        + np.take(lib("cost_per_part"), p)
        + np.take(lib("cost_per_kg"), p) * mass
        + np.take(lib("cost_per_fin"), p) * g.n
        + np.take(lib("cost_per_volume_removed"), p) * removed
    )
    return {
        "mass": mass,
        "volume": envelope,
        "material_cost": material_cost,
        "process_cost": process_cost,
        "total_cost": material_cost + process_cost,
    }

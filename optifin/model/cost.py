"""Mass, envelope volume and the cost of making a plate-fin sink."""

from __future__ import annotations

import numpy as np

from optifin.library import Library
from optifin.model.design import Designs
from optifin.model.geometry import Geometry


def mass_and_cost(
    designs: Designs, geometry: Geometry, library: Library, quantity: int
) -> dict[str, np.ndarray]:
    """Mass [kg], envelope volume [m³], and material, process and total cost per part.

    Part volume V = W L t_b + N t H L. Material is bought as the part mass over the
    process's material yield (``stock: net``), or as the enclosing block W L (t_b + H)
    (``stock: block``, machining). Process cost per part:
    setup/quantity + per_part + per_kg·mass + per_fin·N + per_volume_removed·(stock - part).
    The cost figures are indicative (see processes.yaml).
    """
    g = geometry
    p, m = designs.process, designs.material
    lib = library.array
    density = np.take(lib("density"), m)
    part_volume = g.base_area * g.base + g.n * g.t * g.height * g.length
    envelope = g.base_area * (g.base + g.height)
    mass = density * part_volume
    block = np.take(lib("stock_block"), p)
    stock_mass = np.where(block, density * envelope, mass / np.take(lib("material_yield"), p))
    material_cost = np.take(lib("price"), m) * stock_mass
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

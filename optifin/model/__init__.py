"""The heat-sink model: N designs in, a table of metrics out.

>>> from optifin.model import Condition, HeatSource, evaluate
>>> cond = Condition(sources=[HeatSource(40.0, 0.03, 0.03)], approach_velocity=2.0,
...                  max_base_temperature=358.15)
>>> table = evaluate({"fin_count": 20, "fin_thickness": 1e-3, "fin_height": 0.025,
...                   "base_thickness": 0.004, "width": 0.05, "length": 0.05,
...                   "material": "al_6063_t5", "process": "extrusion"}, cond)
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd

from optifin.library import Library, load_library
from optifin.model.condition import Condition, HeatSource
from optifin.model.design import FIN_TYPES, OPTIONAL, PIN_LAYOUTS, Designs
from optifin.model.geometry import describe
from optifin.model.sink import evaluate_arrays

__all__ = ["COLUMNS", "Condition", "Designs", "HeatSource", "evaluate", "evaluate_arrays"]

ZERO_C = 273.15

#: Result columns: (array key, column name, scale, offset, description). The column value
#: is ``array * scale + offset``. Documented in the README.
COLUMNS: tuple[tuple[str, str, float, float, str], ...] = (
    ("fin_count", "fin_count", 1.0, 0.0, "number of fins (of pins, for pin fins)"),
    ("fin_thickness", "fin_thickness_mm", 1e3, 0.0, "fin thickness"),
    ("fin_height", "fin_height_mm", 1e3, 0.0, "fin height above the base"),
    ("base_thickness", "base_thickness_mm", 1e3, 0.0, "base thickness"),
    ("width", "width_mm", 1e3, 0.0, "base width, across the fins"),
    ("length", "length_mm", 1e3, 0.0, "flow length, along the fins"),
    ("material", "material", 1.0, 0.0, "material key (optifin materials)"),
    ("process", "process", 1.0, 0.0, "process key (optifin processes)"),
    ("finish", "finish", 1.0, 0.0, "surface finish"),
    ("fin_type", "fin_type", 1.0, 0.0, "plate or pin fins"),
    ("fin_tip_thickness", "fin_tip_thickness_mm", 1e3, 0.0, "fin thickness at the tip (tapered)"),
    ("pin_diameter", "pin_diameter_mm", 1e3, 0.0, "pin diameter"),
    ("pin_pitch_transverse", "pin_pitch_transverse_mm", 1e3, 0.0, "pin pitch across the flow"),
    ("pin_pitch_longitudinal", "pin_pitch_longitudinal_mm", 1e3, 0.0, "pin pitch along the flow"),
    ("pin_layout", "pin_layout", 1.0, 0.0, "in-line or staggered pins"),
    ("pin_count", "pin_count", 1.0, 0.0, "number of pins"),
    ("pin_rows", "pin_rows", 1.0, 0.0, "rows of pins along the flow"),
    ("base_material", "base_material", 1.0, 0.0, "base material where it differs from the fins"),
    ("insert_material", "insert_material", 1.0, 0.0, "spreader insert material"),
    ("insert_thickness", "insert_thickness_mm", 1e3, 0.0, "spreader insert thickness"),
    ("insert_width", "insert_width_mm", 1e3, 0.0, "spreader insert width"),
    ("insert_length", "insert_length_mm", 1e3, 0.0, "spreader insert length"),
    ("gap", "fin_gap_mm", 1e3, 0.0, "clear gap between fins b = (W - N t)/(N - 1)"),
    ("aspect_ratio", "aspect_ratio", 1.0, 0.0, "fin height over gap"),
    (
        "thermal_resistance",
        "thermal_resistance_K_per_W",
        1.0,
        0.0,
        "total resistance, device case (hottest source) to ambient air, per total watt",
    ),
    (
        "sink_resistance",
        "sink_resistance_K_per_W",
        1.0,
        0.0,
        "sink resistance, base under the hottest source to ambient (no interface)",
    ),
    (
        "convection_resistance",
        "convection_resistance_K_per_W",
        1.0,
        0.0,
        "1/G: fins with their efficiency, exposed base, radiation in parallel",
    ),
    ("base_resistance", "base_resistance_K_per_W", 1.0, 0.0, "1-D conduction through the base"),
    (
        "spreading_resistance",
        "spreading_resistance_K_per_W",
        1.0,
        0.0,
        "extra resistance of sources smaller than the base (mean over the source)",
    ),
    (
        "interface_resistance",
        "interface_resistance_K_per_W",
        1.0,
        0.0,
        "thermal interface material, per total watt",
    ),
    (
        "base_temperature",
        "base_temperature_C",
        1.0,
        -ZERO_C,
        "mean base temperature under the hottest source at the heat load",
    ),
    (
        "peak_base_temperature",
        "peak_base_temperature_C",
        1.0,
        -ZERO_C,
        "base temperature at the centre of the hottest source at the heat load",
    ),
    (
        "source_temperature",
        "source_temperature_C",
        1.0,
        -ZERO_C,
        "device case temperature (base plus interface) at the heat load",
    ),
    (
        "fin_root_temperature",
        "fin_root_temperature_C",
        1.0,
        -ZERO_C,
        "mean temperature of the finned face of the base",
    ),
    (
        "heat_rate",
        "heat_rate_W",
        1.0,
        0.0,
        "heat load at which the first temperature limit is reached",
    ),
    ("fin_efficiency", "fin_efficiency", 1.0, 0.0, "efficiency of one fin (of the inner fins)"),
    ("h", "h_W_per_m2K", 1.0, 0.0, "convective coefficient in the fin channels"),
    (
        "radiation_fraction",
        "radiation_fraction",
        1.0,
        0.0,
        "share of the conductance that is radiation",
    ),
    ("volumetric_flow", "volumetric_flow_m3_per_s", 1.0, 0.0, "air flow through the sink"),
    ("channel_velocity", "channel_velocity_m_per_s", 1.0, 0.0, "mean velocity in the channels"),
    ("channel_reynolds", "channel_reynolds", 1.0, 0.0, "Re on the channel hydraulic diameter"),
    ("channel_reynolds_star", "channel_reynolds_star", 1.0, 0.0, "Re_b* = Re_b b/L"),
    ("pressure_drop", "pressure_drop_Pa", 1.0, 0.0, "static pressure drop across the sink"),
    (
        "system_pressure_drop",
        "system_pressure_drop_Pa",
        1.0,
        0.0,
        "fan operating point: sink plus extra system loss",
    ),
    ("bypass_velocity", "bypass_velocity_m_per_s", 1.0, 0.0, "air velocity around the sink"),
    ("bypass_fraction", "bypass_fraction", 1.0, 0.0, "share of the duct flow that bypasses"),
    (
        "entropy_generation_rate",
        "entropy_generation_rate_W_per_K",
        1.0,
        0.0,
        "Q² R/T² + Δp V/T (Culham & Muzychka 2001)",
    ),
    ("fan_power", "fan_power_W", 1.0, 0.0, "air power: pressure drop times flow"),
    (
        "air_temperature_rise",
        "air_temperature_rise_K",
        1.0,
        0.0,
        "mean air heating at the heat load, Q/(m-dot c_p)",
    ),
    (
        "heat_capacity_limited",
        "heat_capacity_limited",
        1.0,
        0.0,
        "conductance capped at m-dot c_p (starved flow)",
    ),
    ("elenbaas_number", "elenbaas_number", 1.0, 0.0, "channel Elenbaas number (natural)"),
    ("mass", "mass_kg", 1.0, 0.0, "mass of the sink"),
    ("volume", "volume_cm3", 1e6, 0.0, "envelope volume W L (t_b + H)"),
    ("material_cost", "material_cost", 1.0, 0.0, "metal bought, indicative, library currency"),
    ("process_cost", "process_cost", 1.0, 0.0, "making one part, indicative"),
    ("total_cost", "total_cost", 1.0, 0.0, "material plus process cost"),
)
COLUMN_NAMES = {key: name for key, name, *_ in COLUMNS}


def evaluate(
    designs: Designs | Mapping | pd.DataFrame,
    condition: Condition,
    library: Library | None = None,
) -> pd.DataFrame:
    """Evaluate N designs under one operating condition, vectorised.

    Parameters
    ----------
    designs
        A :class:`Designs`, or columns (dict or DataFrame) accepted by
        :meth:`Designs.from_columns`: ``fin_count``, ``fin_thickness``, ``fin_height``,
        ``base_thickness``, ``width``, ``length`` [m] (or the ``_mm`` columns of a result
        table), ``material``, ``process`` and optionally ``finish``.
    condition
        The operating condition (:class:`Condition`).
    library
        Materials and processes; the bundled library by default.

    Returns
    -------
    pandas.DataFrame
        One row per design, columns of :data:`COLUMNS` that apply to the cooling mode, one
        ``out_of_range_<correlation>`` flag per correlation used, ``feasible`` and
        ``infeasible_reason``. ``df.attrs["correlations"]`` lists the correlations used.
        A design that cannot exist has NaN metrics and says why in ``infeasible_reason``.
    """
    library = library or load_library()
    if not isinstance(designs, Designs):
        designs = Designs.from_columns(designs, library)
    arrays = evaluate_arrays(designs, condition, library)
    names = [s.name for s in condition.sources]
    if len(set(names)) < len(names):
        names = [f"{name}{i + 1}" for i, name in enumerate(names)]
    return to_frame(designs, arrays, library, names)


#: Per-source temperature arrays (N, S) and the column suffix of each.
PER_SOURCE = (
    ("per_source_base_temperature", "base_temperature"),
    ("per_source_peak_temperature", "peak_base_temperature"),
    ("per_source_temperature", "temperature"),
)
CODED = {"fin_type": FIN_TYPES, "pin_layout": PIN_LAYOUTS}


def _used_design_columns(designs: Designs) -> set[str]:
    """The optional design columns a set of designs uses (the others are left out)."""
    used = set()
    if designs.has_pins:
        used |= {"fin_type", "pin_diameter", "pin_pitch_transverse", "pin_pitch_longitudinal"}
        used |= {"pin_layout", "pin_count", "pin_rows"}
    if designs.is_tapered:
        used.add("fin_tip_thickness")
    if designs.has_base_material:
        used.add("base_material")
    if designs.has_inserts:
        used |= {"insert_material", "insert_thickness", "insert_width", "insert_length"}
    return used


def _coded(codes: np.ndarray, key: str, library: Library):
    return pd.Categorical.from_codes(np.asarray(codes, dtype=np.int64), categories=CODED[key])


def to_frame(
    designs: Designs, arrays: Mapping, library: Library, source_names=None
) -> pd.DataFrame:
    """The result table of :func:`evaluate` from designs and model arrays.

    ``source_names`` names the per-source temperature columns (``<name>_temperature_C``
    ...) of several sources; default ``source1``, ``source2``, ...
    """
    if source_names is None and "per_source_temperature" in arrays:
        source_names = [f"source{i + 1}" for i in range(arrays["per_source_temperature"].shape[1])]
    data: dict[str, np.ndarray] = {}
    keys = {
        "material": library.material_keys,
        "process": library.process_keys,
        "finish": library.finishes,
        "base_material": library.material_keys,
        "insert_material": library.material_keys,
    }
    used = _used_design_columns(designs)
    for key, name, scale, offset, _ in COLUMNS:
        if key in OPTIONAL and key not in used:
            continue
        if key in keys:
            data[name] = pd.Categorical.from_codes(getattr(designs, key), categories=keys[key])
        elif key in CODED:
            data[name] = _coded(getattr(designs, key), key, library)
        elif hasattr(designs, key):
            value = getattr(designs, key)
            data[name] = value if scale == 1.0 else value * scale
        elif key in arrays:
            value = arrays[key]
            if value.dtype == bool or (scale == 1.0 and offset == 0.0):
                data[name] = value
            else:
                data[name] = value * scale + offset
    if designs.has_pins:  # blank what does not apply to each fin type
        pin = designs.fin_type == 1
        data["fin_count"] = np.where(pin, arrays["pin_count"], designs.fin_count)
        data["fin_thickness_mm"] = np.where(pin, np.nan, designs.fin_thickness * 1e3)
        for name in ("pin_diameter_mm", "pin_pitch_transverse_mm", "pin_pitch_longitudinal_mm"):
            data[name] = np.where(pin, data[name], np.nan)
        for name in ("pin_count", "pin_rows"):
            data[name] = np.where(pin, data[name], np.nan)
        data["pin_layout"] = _coded(np.where(pin, designs.pin_layout, -1), "pin_layout", library)
    for key, suffix in PER_SOURCE:
        if key in arrays:
            for i, name in enumerate(source_names):
                data[f"{name}_{suffix}_C"] = arrays[key][:, i] - ZERO_C
    for name, flag in arrays["flags"].items():
        data[f"out_of_range_{name}"] = flag
    reasons = arrays["reasons"]
    data["feasible"] = reasons == 0
    data["infeasible_reason"] = describe(reasons)
    frame = pd.DataFrame(data, copy=False)
    frame.attrs["correlations"] = list(arrays["used"])
    return frame

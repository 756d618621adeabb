"""Extrusion-profile catalogs: read a CSV of stock profiles and screen it against a problem.

A catalog lists extruded heat-sink profiles sold by the metre; a part is a profile cut to a
length. :func:`load_catalog` reads and checks a catalog file, :func:`screen_catalog` rates
every profile at every cut length in both orientations in the problem's envelope and tells,
for each profile, the shortest cut that meets the problem's limits.

Catalog CSV format
------------------
One profile per line, comma-separated; the first line that is neither blank nor a comment
is the header. Lines starting with ``#`` are comments (use them to say where the data come
from). A cell may be quoted (``"a, b"``) but a record never spans lines. Each header cell
names a field and, for quantities, its unit in brackets; any length unit pint knows works
(``mm``, ``cm``, ``in``, ``thou``). A file (header and row wrapped here, one line each
in the file)::

    # invented demo data
    id, width [mm], base_thickness [mm], fin_count, fin_thickness_root [mm],
        fin_thickness_tip [mm], fin_height [mm], alloy, price [USD/kg], note
    P-100, 100, 8, 15, 2.0,
        1.3, 35, al_6063_t5, 5.4, a 100 mm profile

=======================  ========  =========================================================
field                    unit      meaning
=======================  ========  =========================================================
``id``                   --        unique profile name (required)
``width``                length    base width, across the fins (required)
``base_thickness``       length    base thickness (required)
``fin_count``            --        number of plate fins, a whole number >= 2 (required)
``fin_thickness_root``   length    fin thickness at the base (required)
``fin_thickness_tip``    length    fin thickness at the tip; optional, blank or absent:
                                   untapered (tip = root); never thicker than the root
``fin_height``           length    fin height above the base (required)
``alloy``                --        material key of the library, e.g. ``al_6063_t5``
                                   (required; see :func:`optifin.library.load_library`)
``price``                price     per mass (``price [USD/kg]``) or per length
                                   (``price [USD/m]``, ``[USD/ft]``); a file may carry one
                                   column of each, and every row gives exactly one of them
``note``                 --        free text (optional)
=======================  ========  =========================================================

The currency must be the library's (USD). Other columns are refused (put free text in
``note``), so a misspelt field name is caught. Every finding of a file is collected and one
:class:`CatalogError` (a :class:`~optifin.errors.DataError`) lists them all, each as
``<file>:<line>: column '<field>': <what was found and what was expected>``, with the
1-based line number in the file: missing columns, bad units, cells that are not numbers,
unknown alloys (with the nearest key), values that are not positive, tips thicker than
roots, fins that do not fit across the width (N t_root >= W), duplicate ids.
``optifin/data/profiles_demo.csv`` is the bundled catalog: invented demo data.

Screening
---------
Every profile is cut to every length of a grid (default every 5 mm from 20 mm up to the
envelope's bound) and placed in the envelope two ways:

``along``
    profile width across the envelope width, cut along the envelope length: the problem's
    frame, its heat sources as given.
``across``
    turned by 90° in the plane of the base: profile width along the envelope length, cut
    across the envelope width. The heat sources' footprints and positions swap axes
    (:func:`rotate_condition`: ``x <-> y``, ``size_x <-> size_y``), and so do the
    envelope's width and length bounds.

The model's air always flows along the fins (the cut), so ``across`` also turns the flow
relative to the envelope: the problem's flow (approach velocity, fan) is reused as it is,
which assumes the duct or fan can be arranged along either axis. A part is rated in an
orientation only where it fits the envelope (width, cut length, and height = base + fin
height; a bound the envelope leaves open falls back to the upper end of the problem's
``width``, ``length``, ``base_thickness + fin_height`` variables). All parts of one
orientation are rated with one :func:`optifin.search.objectives.score` call.

Catalog price
-------------
A bought profile is priced by the catalog, not by the library's price of its alloy:
``catalog_price`` is the price per kg times the part mass, or the price per metre times the
cut length (no allowance for saw kerf or offcuts), and ``catalog_total_cost`` is that plus
the model's ``process_cost``. Both are reported next to the model's ``material_cost`` and
``total_cost``; wherever the problem's objectives or limits use ``material_cost`` or
``total_cost`` (``max_material_cost``, ``max_cost``), screening uses the catalog figures
instead.

A part is rated as process ``catalog_cut`` (optifin/data/processes.yaml): a stock profile
cut to length, with no die set-up and only loose sanity limits (the profile exists and its
die met the press's limits when it was made); the envelope and the problem's limits apply
in full.

Catalog parts in the search
---------------------------
With ``in_search`` in the problem's catalog section, :func:`search_parts` lists the
(profile, cut length) pairs of orientation ``along`` that fit the envelope and the search
offers them beside free designs through one integer gene (see
:mod:`optifin.search.encoding`). In the search's tables (``design_table``,
``archive_table``) a catalog part's ``material_cost`` is its catalog price and its
``total_cost`` that plus ``process_cost``, computed where the table is built
(:meth:`SearchParts.costs`); the column ``catalog_part`` names its profile (``""`` for a
free design). Screening keeps the model's ``material_cost`` and ``total_cost`` beside
``catalog_price`` and ``catalog_total_cost``; the figures a front is taken on are the same.

What a custom die saves
-----------------------
:func:`custom_die_saving` compares, per objective, the best catalog part with the best
free design (whose die or tooling set-up is shared over the production quantity inside its
``process_cost``) and says whether the saving pays for that set-up.
"""

from __future__ import annotations

import csv
import dataclasses
import difflib
import math
import re
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from optifin.errors import DataError, ModelError, SearchError, UnitError
from optifin.library import CURRENCIES, Library, load_library
from optifin.units import to_si

if TYPE_CHECKING:  # the model is imported only when designs are built: reading needs none
    from optifin.model.condition import Condition
    from optifin.model.design import Designs
    from optifin.problem.spec import Problem

__all__ = [
    "DEMO_CATALOG",
    "ORIENTATIONS",
    "Catalog",
    "CatalogError",
    "ScreenResult",
    "SearchParts",
    "catalog_price",
    "catalog_scores",
    "custom_die_saving",
    "default_cut_lengths",
    "load_catalog",
    "parse_catalog",
    "rotate_condition",
    "screen_catalog",
    "screen_problem",
    "search_parts",
]

DEMO_CATALOG = "profiles_demo.csv"  #: the bundled catalog in optifin/data (invented)
ORIENTATIONS = ("along", "across")
DEFAULT_CUT_STEP = 5e-3  #: [m] default grid of cut lengths: every 5 mm ...
DEFAULT_CUT_MIN = 20e-3  #: [m] ... from 20 mm

#: Catalog fields: header name -> (column of :attr:`Catalog.profiles`, kind, required).
#: Kinds: ``text``, ``count``, ``length`` and ``price`` (per mass or per length).
FIELDS: dict[str, tuple[str, str, bool]] = {
    "id": ("id", "text", True),
    "width": ("width", "length", True),
    "base_thickness": ("base_thickness", "length", True),
    "fin_count": ("fin_count", "count", True),
    "fin_thickness_root": ("fin_thickness", "length", True),
    "fin_thickness_tip": ("fin_tip_thickness", "length", False),
    "fin_height": ("fin_height", "length", True),
    "alloy": ("alloy", "text", True),
    "price": ("price", "price", True),
    "note": ("note", "text", False),
}
EXAMPLES = {"length": "[mm]", "price": "[USD/kg] or [USD/m]"}
#: Columns of :attr:`Catalog.profiles` (SI: m, price per kg [1/kg] and per metre [1/m]).
PROFILE_COLUMNS = (
    "id",
    "width",
    "base_thickness",
    "fin_count",
    "fin_thickness",
    "fin_tip_thickness",
    "fin_height",
    "alloy",
    "price_per_kg",
    "price_per_m",
    "note",
    "line",
)
_HEADER_CELL = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)\s*(?:\[([^\]]*)\])?$")
_TOLERANCE = 1e-9  #: relative slack of size comparisons (unit conversions round)


class CatalogError(DataError):
    """A catalog file that is not valid; ``problems`` lists every finding, one line each."""

    def __init__(self, problems: list[str], source: str):
        self.problems = list(problems)
        self.source = source
        if len(self.problems) == 1:
            message = self.problems[0]
        else:
            lines = "\n".join(f"  - {p}" for p in self.problems)
            message = f"{source}: {len(self.problems)} errors in the catalog\n{lines}"
        super().__init__(message)


# -- the catalog -----------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class Catalog:
    """Extrusion profiles in SI: one row of :attr:`profiles` per profile, and the source.

    ``profiles`` has the columns of :data:`PROFILE_COLUMNS`: lengths in metres,
    ``fin_tip_thickness`` equal to ``fin_thickness`` for untapered fins, ``price_per_kg``
    [1/kg] or ``price_per_m`` [1/m] (the other NaN), ``line`` the line in the file.
    """

    profiles: pd.DataFrame
    source: str

    def __len__(self) -> int:
        return len(self.profiles)

    @property
    def ids(self) -> list[str]:
        return self.profiles["id"].tolist()

    def take(self, rows) -> Catalog:
        """The catalog of some profiles (positions); their index labels are kept."""
        return Catalog(
            profiles=self.profiles.iloc[np.asarray(rows, dtype=np.int64)], source=self.source
        )

    def designs(
        self, cut_lengths, library: Library | None = None, process: str = "catalog_cut"
    ) -> tuple[Designs, pd.DataFrame]:
        """The designs of every profile cut to every length, profile by profile.

        Parameters
        ----------
        cut_lengths
            Cut lengths [m] (the design ``length``, along the fins); positive.
        library
            Materials and processes; the bundled library by default.
        process
            Process key of every design; default ``catalog_cut``: a stock profile cut to
            length, no die set-up, loose sanity limits only (the profile exists already).

        Returns
        -------
        (Designs, pandas.DataFrame)
            P x C designs (width = profile width, fin_thickness = root, fin_tip_thickness =
            tip, material = alloy, finish bare) and their index frame: ``profile`` (index
            label of :attr:`profiles`), ``id``, ``line``, ``cut_length`` [m],
            ``price_per_kg``, ``price_per_m``.
        """
        from optifin.model.design import Designs

        library = library or load_library()
        cuts = np.atleast_1d(np.asarray(cut_lengths, dtype=float))
        if cuts.ndim != 1 or not np.all(np.isfinite(cuts) & (cuts > 0)):
            raise ModelError("catalog designs: cut lengths must be positive finite numbers [m]")
        p = self.profiles
        n_cut = cuts.size
        row = np.repeat(np.arange(len(p)), n_cut)
        n = row.size

        def col(name):
            return np.take(p[name].to_numpy(), row)

        try:
            material = np.array([library.material_code(a) for a in p["alloy"]], dtype=np.int64)
        except DataError as exc:
            raise DataError(f"{self.source}: {exc}") from None
        columns = {
            "fin_count": col("fin_count").astype(np.int64),
            "fin_thickness": col("fin_thickness").astype(float),
            "fin_tip_thickness": col("fin_tip_thickness").astype(float),
            "fin_height": col("fin_height").astype(float),
            "base_thickness": col("base_thickness").astype(float),
            "width": col("width").astype(float),
            "length": np.tile(cuts, len(p)),
            "material": np.take(material, row),
            "process": np.full(n, library.process_code(process), dtype=np.int64),
            "finish": np.full(n, library.finish_code("bare"), dtype=np.int64),
        }
        designs = Designs.from_columns(columns, library)
        index = pd.DataFrame(
            {
                "profile": np.take(p.index.to_numpy(), row),
                "id": col("id"),
                "line": col("line"),
                "cut_length": columns["length"],
                "price_per_kg": col("price_per_kg").astype(float),
                "price_per_m": col("price_per_m").astype(float),
            }
        )
        return designs, index


def catalog_price(index: pd.DataFrame, mass: np.ndarray) -> np.ndarray:
    """Price of cut parts: price per kg times mass [kg], or per metre times the cut length.

    ``index`` is the index frame of :meth:`Catalog.designs` (one row per part); NaN where
    the mass is not finite (a part that cannot exist).
    """
    per_kg = index["price_per_kg"].to_numpy(dtype=float)
    per_m = index["price_per_m"].to_numpy(dtype=float)
    cut = index["cut_length"].to_numpy(dtype=float)
    return np.where(np.isnan(per_kg), per_m * cut, per_kg * np.asarray(mass, dtype=float))


def catalog_scores(problem: Problem, s, material_cost, total_cost):
    """Objectives, constraints and feasibility of scored designs at other cost figures.

    ``s`` is a :func:`optifin.search.objectives.score` of the designs; ``material_cost``
    and ``total_cost`` [currency] replace the model's figures wherever the problem's
    objectives (``material_cost``, ``total_cost``) and limits (``max_material_cost``,
    ``max_cost``) use them, with the same normalisation as ``score``. Rows whose figures
    equal the model's get the model's values bit for bit. Returns ``(F, G, feasible)``.
    """
    from optifin.problem.spec import LIMITS
    from optifin.search.objectives import BAD, constraint_names

    cost = {"material_cost": material_cost, "total_cost": total_cost}
    F = np.array(s.F, dtype=float, copy=True)
    for j, objective in enumerate(problem.objectives):
        if objective.key in cost:
            value = cost[objective.key]
            value = -value if objective.sense == "maximise" else value
            F[:, j] = np.where(np.isfinite(value), value, BAD)
    G = np.array(s.G, dtype=float, copy=True)
    names = constraint_names(problem)
    for name, (key, _) in LIMITS.items():
        if name in problem.limits and key in cost and name in names:
            limit = problem.limits[name]
            with np.errstate(invalid="ignore"):
                column = (cost[key] - limit) / abs(limit)
            G[:, names.index(name)] = np.where(np.isfinite(column), column, 1e3)
    feasible = np.all(G <= 0, axis=1) & (s.arrays["reasons"] == 0)
    return F, G, feasible


# -- catalog parts inside the search -----------------------------------------------------------
@dataclass(frozen=True, eq=False)
class SearchParts:
    """The catalog parts a search offers beside free designs: part codes 1..K.

    Part ``k`` (1-based; 0 is a free design) is row ``k - 1`` of :attr:`designs` and
    :attr:`index`: one (profile, cut length) pair in orientation ``along`` that fits the
    problem's envelope, as built by :meth:`Catalog.designs` (process ``catalog_cut``,
    finish bare, material the profile's alloy), profile by profile, cuts ascending.
    """

    catalog: Catalog
    cut_lengths: np.ndarray  #: [m] the grid the pairs were taken from
    designs: Designs  #: K designs
    index: pd.DataFrame  #: K rows: profile, id, line, cut_length [m], price_per_kg/_m

    def __len__(self) -> int:
        return len(self.index)

    @property
    def ids(self) -> np.ndarray:
        return self.index["id"].to_numpy(dtype=object)

    def part_ids(self, part) -> np.ndarray:
        """Profile id of each part code, ``""`` for free designs (code 0)."""
        part = np.asarray(part, dtype=np.int64)
        if not len(self):
            return np.full(part.shape, "", dtype=object)
        ids = np.take(self.ids, np.maximum(part - 1, 0))
        return np.where(part > 0, ids, "").astype(object)

    def price(self, part, mass) -> np.ndarray:
        """Catalog price [currency] of each part code at its mass [kg]; NaN for code 0.

        Price per kg times the mass, or price per metre times the cut length (as
        :func:`catalog_price`).
        """
        part = np.asarray(part, dtype=np.int64)
        k = np.maximum(part - 1, 0)
        per_kg = np.take(self.index["price_per_kg"].to_numpy(dtype=float), k)
        per_m = np.take(self.index["price_per_m"].to_numpy(dtype=float), k)
        cut = np.take(self.index["cut_length"].to_numpy(dtype=float), k)
        mass = np.asarray(mass, dtype=float)
        price = np.where(np.isnan(per_kg), per_m * cut, per_kg * mass)
        return np.where(part > 0, price, np.nan)

    def costs(self, part, arrays) -> tuple[np.ndarray, np.ndarray]:
        """Material and total cost of designs: the catalog price for catalog parts.

        ``arrays`` are the model arrays of the designs. Free designs (code 0) keep the
        model's ``material_cost`` and ``total_cost``; a catalog part's material cost is its
        catalog price and its total cost that plus the model's ``process_cost``.
        """
        part = np.asarray(part, dtype=np.int64)
        price = self.price(part, arrays["mass"])
        is_part = part > 0
        material = np.where(is_part, price, arrays["material_cost"])
        total = np.where(is_part, price + arrays["process_cost"], arrays["total_cost"])
        return material, total

    def match(self, designs: Designs) -> np.ndarray:
        """Part code of each design (0 where a design is no catalog part).

        A design is catalog part ``k`` when its process is ``catalog_cut`` and its fin
        count, material, width, base thickness, root and tip thickness, fin height and
        length equal those of part ``k`` (lengths to 1 nm). Where two parts share all of
        these, the first is named. Used when designs come without their part codes.
        """
        lib_codes = self.designs.process
        code = int(lib_codes[0]) if len(lib_codes) else -1

        def keys(d: Designs) -> pd.DataFrame:
            nm = {
                name: np.rint(getattr(d, name) * 1e9).astype(np.int64)
                for name in (
                    "width",
                    "base_thickness",
                    "fin_thickness",
                    "fin_tip_thickness",
                    "fin_height",
                    "length",
                )
            }
            return pd.DataFrame(
                {
                    "fin_count": np.asarray(d.fin_count, dtype=np.int64),
                    "material": np.asarray(d.material, dtype=np.int64),
                    "process": np.asarray(d.process, dtype=np.int64),
                    **nm,
                }
            )

        ours = keys(self.designs)
        ours["part"] = np.arange(1, len(ours) + 1, dtype=np.int64)
        ours = ours.drop_duplicates(subset=[c for c in ours.columns if c != "part"])
        theirs = keys(designs)
        theirs["process"] = np.where(theirs["process"] == code, code, -2)
        merged = theirs.merge(ours, how="left", on=[c for c in theirs.columns])
        return merged["part"].fillna(0).to_numpy(dtype=np.int64)


def search_parts(problem: Problem, catalog: Catalog | None = None) -> SearchParts | None:
    """The catalog parts of a problem's search, or None when the search offers none.

    None unless ``problem.catalog`` is set with ``in_search``. The catalog is read from
    ``problem.catalog.path`` (the bundled demo for None) unless given. Cut lengths are
    ``problem.catalog.cut_lengths`` or :func:`default_cut_lengths`; the pairs kept are those
    of orientation ``along`` that fit the envelope (width, height = base + fins, cut
    length; an open bound falls back to the variables' upper ends, as in screening).
    Returns a :class:`SearchParts` with no part (``len() == 0``) when nothing fits.
    """
    choice = problem.catalog
    if choice is None or not choice.in_search:
        return None
    if catalog is None:
        catalog = load_catalog(choice.path, problem.library)
    cuts = (
        np.unique(np.asarray(choice.cut_lengths, dtype=float))
        if choice.cut_lengths
        else default_cut_lengths(problem)
    )
    width_bound, length_bound, height_bound = _envelope_bounds(problem)
    p = catalog.profiles
    height = (p["base_thickness"] + p["fin_height"]).to_numpy(dtype=float)
    fits = p["width"].to_numpy(dtype=float) <= width_bound * (1 + _TOLERANCE)
    fits &= height <= height_bound * (1 + _TOLERANCE)
    grid = cuts[cuts <= length_bound * (1 + _TOLERANCE)]
    designs, index = catalog.take(np.flatnonzero(fits)).designs(grid, problem.library)
    return SearchParts(catalog=catalog, cut_lengths=cuts, designs=designs, index=index)


# -- what a custom die saves -------------------------------------------------------------------
#: Objectives priced in the library's currency.
COST_OBJECTIVES = ("material_cost", "total_cost")


def custom_die_saving(search, screen: ScreenResult | None = None, objective=None) -> pd.DataFrame:
    """What the best free (custom-die) design saves over the best catalog part, per objective.

    Parameters
    ----------
    search
        A :class:`optifin.search.SearchResult`. Its free designs are the feasible rows of
        its archive (its front when the archive is empty) whose ``catalog_part`` is ``""``
        (every row when the problem offered no catalog to the search).
    screen
        A :class:`ScreenResult` of the same problem: its feasible parts, in every
        orientation it rated, are the catalog candidates. Without it the candidates are the
        search's own feasible catalog parts (``catalog_part`` not ``""``).
    objective
        One objective name (``"thermal_resistance"``) or column; default every objective
        of the problem.

    Returns
    -------
    pandas.DataFrame
        One row per objective: ``objective``, ``column``, ``sense``, ``unit``; the best
        catalog part (``catalog_part``, ``catalog_orientation``, ``catalog_cut_length_mm``,
        ``catalog_value``) and the best free design (``free_design``, a short description,
        ``free_process``, ``free_value``) in that objective;

        ``saving``
            catalog_value - free_value for a minimised objective, free_value -
            catalog_value for a maximised one, in the objective's unit: positive when the
            free design is better, negative when the catalog part is. NaN when either side
            has no feasible design.
        ``relative_saving``
            saving / abs(catalog_value).

        For the cost objectives (``material_cost``, ``total_cost``) also ``quantity`` (the
        problem's production quantity), ``setup_cost`` (the one-off set-up of the free
        design's process: die, fixture), ``setup_per_part`` = setup_cost / quantity,
        ``gross_saving_per_part``, ``pays_setup`` and ``break_even_quantity``:

        * ``total_cost``: the free design's total cost already holds setup_cost /
          quantity (inside its ``process_cost``); a catalog part has no set-up. The gross
          saving is the saving before that share, saving + setup_per_part.
        * ``material_cost``: no set-up is in either material cost; the gross saving is the
          saving itself.

        ``pays_setup`` is gross_saving_per_part x quantity >= setup_cost (for
        ``total_cost``: saving >= 0), and ``break_even_quantity`` = setup_cost /
        gross_saving_per_part, the smallest batch at which the die pays for itself (inf
        when the free design saves nothing per part before its set-up). For other
        objectives these columns are NaN.

    Notes
    -----
    Costs are the indicative figures of the library (optifin/data/processes.yaml) and the
    catalog's prices. A catalog part's material cost is its catalog price (see the module
    docstring). The best design in one objective is on the Pareto front of its kind, but
    the two best designs compared here need not be the same in every objective row.
    """
    from optifin.report.plots import column_label

    problem = search.problem
    lib = problem.library
    columns = [(c, sense) for c, sense in search.objective_columns]
    names = [o.name for o in problem.objectives]
    if objective is not None:
        picks = [i for i, (c, _) in enumerate(columns) if objective in (c, names[i])]
        if not picks:
            raise SearchError(f"custom_die_saving: {objective!r} is not an objective")
    else:
        picks = list(range(len(columns)))

    free = search.archive if len(search.archive) else search.front
    free = free[free["feasible"].to_numpy(dtype=bool)] if len(free) else free
    if "catalog_part" in free.columns:
        free_rows = free[free["catalog_part"].astype(str) == ""]
        own_parts = free[free["catalog_part"].astype(str) != ""]
    else:
        free_rows, own_parts = free, free.iloc[:0]
    if screen is not None:
        rated = screen.table[screen.table["feasible"].to_numpy(dtype=bool)]
        parts = rated.rename(columns={"profile_id": "catalog_part"})
        part_columns = [c for c, _ in screen.objective_columns]
        orientation = parts["orientation"] if "orientation" in parts else None
    else:
        parts = own_parts
        part_columns = [c for c, _ in columns]
        orientation = None
    quantity = int(problem.condition.quantity)
    setup = lib.array("cost_setup")
    currency = getattr(lib, "currency", "")

    out = []
    for i in picks:
        column, sense = columns[i]
        sign = -1.0 if sense == "maximise" else 1.0
        row: dict = {
            "objective": names[i],
            "column": column,
            "sense": sense,
            "unit": _unit(column_label(column, currency)),
        }
        best_part = _best(parts, part_columns[i], sign)
        best_free = _best(free_rows, column, sign)
        if best_part is not None:
            cut = best_part.get("cut_length_mm", best_part.get("length_mm", np.nan))
            row.update(
                catalog_part=str(best_part["catalog_part"]),
                catalog_orientation=(
                    str(orientation.loc[best_part.name]) if orientation is not None else "along"
                ),
                catalog_cut_length_mm=float(cut),
                catalog_value=float(best_part[part_columns[i]]),
            )
        else:
            row.update(
                catalog_part="",
                catalog_orientation="",
                catalog_cut_length_mm=np.nan,
                catalog_value=np.nan,
            )
        if best_free is not None:
            row.update(
                free_design=_free_words(best_free),
                free_process=str(best_free.get("process", "")),
                free_value=float(best_free[column]),
            )
        else:
            row.update(free_design="", free_process="", free_value=np.nan)
        saving = sign * (row["catalog_value"] - row["free_value"])
        row["saving"] = saving
        with np.errstate(divide="ignore", invalid="ignore"):
            row["relative_saving"] = saving / abs(row["catalog_value"])
        key = problem.objectives[i].key
        if key in COST_OBJECTIVES and best_free is not None and row["free_process"]:
            s_cost = float(setup[lib.process_code(row["free_process"])])
            per_part = s_cost / quantity
            gross = saving + per_part if key == "total_cost" else saving
            row.update(
                quantity=quantity,
                setup_cost=s_cost,
                setup_per_part=per_part,
                gross_saving_per_part=gross,
                pays_setup=bool(gross * quantity >= s_cost) if np.isfinite(gross) else False,
                break_even_quantity=(
                    s_cost / gross if gross > 0 else (0.0 if s_cost == 0 and gross == 0 else np.inf)
                ),
            )
        else:
            row.update(
                quantity=np.nan,
                setup_cost=np.nan,
                setup_per_part=np.nan,
                gross_saving_per_part=np.nan,
                pays_setup=np.nan,
                break_even_quantity=np.nan,
            )
        out.append(row)
    return pd.DataFrame(out)


def _unit(label: str) -> str:
    match = re.search(r"\[([^\]]*)\]$", label)
    return match.group(1) if match else ""


def _best(frame: pd.DataFrame, column: str, sign: float):
    """The row of ``frame`` best in ``column`` (minimised after ``sign``), or None."""
    if not len(frame) or column not in frame.columns:
        return None
    values = sign * frame[column].to_numpy(dtype=float)
    if not np.isfinite(values).any():
        return None
    return frame.iloc[int(np.nanargmin(np.where(np.isfinite(values), values, np.nan)))]


def _free_words(row) -> str:
    """A short description of a design row (plate or pin fins)."""

    def mm(name):
        value = row.get(name, np.nan)
        return f"{float(value):.6g}" if pd.notna(value) else "?"

    size = f"{mm('width_mm')} x {mm('length_mm')} mm on a {mm('base_thickness_mm')} mm base"
    made = ", ".join(str(row[k]) for k in ("material", "process") if k in row.index)
    if str(row.get("fin_type", "plate")) == "pin":
        fins = f"pins {mm('pin_diameter_mm')} mm, {mm('fin_height_mm')} mm tall"
    else:
        fins = (
            f"{round(float(row['fin_count']))} fins {mm('fin_thickness_mm')} mm, "
            f"{mm('fin_height_mm')} mm tall"
        )
    return f"{fins}, {size}; {made}"


# -- reading ---------------------------------------------------------------------------------
def load_catalog(path=None, library: Library | None = None) -> Catalog:
    """Read and check a catalog CSV file (the bundled invented demo catalog by default).

    Raises
    ------
    CatalogError
        Listing every problem of the file, each with the file, line and column.
    """
    if path is None:
        resource = resources.files("optifin.data").joinpath(DEMO_CATALOG)
        return parse_catalog(resource.read_text(encoding="utf-8"), str(resource), library)
    source = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CatalogError([f"{source}: file not found"], source) from None
    except IsADirectoryError:
        raise CatalogError([f"{source}: is a directory, not a catalog file"], source) from None
    except UnicodeDecodeError as exc:
        raise CatalogError([f"{source}: not UTF-8 text ({exc.reason})"], source) from None
    return parse_catalog(text, source, library)


def parse_catalog(text: str, source: str = "<text>", library: Library | None = None) -> Catalog:
    """Check and convert the text of a catalog CSV file (format in the module docstring)."""
    library = library or load_library()
    errors: list[str] = []

    def bad(line: int, column: str | None, message: str) -> None:
        where = f"{source}:{line}: " + (f"column {column!r}: " if column else "")
        errors.append(where + message)

    records = []
    for number, raw in enumerate(text.splitlines(), start=1):
        if not raw.strip() or raw.lstrip().startswith("#"):
            continue
        cells = next(csv.reader([raw], skipinitialspace=True), [])
        records.append((number, [c.strip() for c in cells]))
    if not records:
        raise CatalogError([f"{source}:1: no header line (and no profiles)"], source)
    header_line, header = records[0]
    columns = _header(header, header_line, library, bad)
    if len(records) == 1:
        bad(header_line, None, "no profiles below the header")

    rows: list[dict] = []
    first_line: dict[str, int] = {}
    for line, cells in records[1:]:
        extra = cells[len(header) :]
        if len(cells) < len(header) or any(extra):
            bad(line, None, f"expected {len(header)} cells as in the header, found {len(cells)}")
            continue
        row = _row(cells, line, columns, library, bad)
        _cross_checks(row, line, bad)
        pid = row.get("id")
        if pid:
            if pid in first_line:
                bad(line, "id", f"duplicate id {pid!r} (first on line {first_line[pid]})")
            else:
                first_line[pid] = line
        rows.append(row)
    if errors:
        raise CatalogError(errors, source)
    profiles = pd.DataFrame(rows, columns=list(PROFILE_COLUMNS))
    profiles["fin_count"] = profiles["fin_count"].astype(np.int64)
    profiles["line"] = profiles["line"].astype(np.int64)
    for name in ("price_per_kg", "price_per_m"):
        profiles[name] = profiles[name].astype(float)
    return Catalog(profiles=profiles.reset_index(drop=True), source=source)


@dataclass
class _Column:
    field: str  #: header name
    position: int  #: cell index
    kind: str
    factor: float | None  #: SI per unit of the column; None where the unit is bad
    unit: str = ""
    target: str = ""  #: price columns: price_per_kg or price_per_m


def _header(header: list[str], line: int, library: Library, bad) -> dict[str, list[_Column]]:
    """The columns of a header line: field name -> its columns (two for prices)."""
    columns: dict[str, list[_Column]] = {}
    for position, cell in enumerate(header):
        match = _HEADER_CELL.match(cell)
        if not match:
            bad(line, cell, "expected a field name and a unit in brackets, e.g. 'width [mm]'")
            continue
        name, unit = match.group(1), (match.group(2) or "").strip()
        if name not in FIELDS:
            near = difflib.get_close_matches(name, FIELDS, n=1)
            hint = f"; did you mean {near[0]!r}?" if near else ""
            bad(line, name, f"unknown field{hint} (fields: {', '.join(FIELDS)})")
            continue
        _, kind, _ = FIELDS[name]
        column = _Column(name, position, kind, 1.0, unit)
        if kind == "length":
            column.factor = _unit_factor(unit, "length", name, line, bad)
        elif kind == "price":
            column.factor, column.target = _price_unit(unit, name, line, library, bad)
        elif unit and not (kind == "count" and unit in ("1", "-")):
            bad(line, name, f"takes no unit, found [{unit}]")
        same = columns.setdefault(name, [])
        if same and (kind != "price" or any(c.target == column.target for c in same)):
            what = "price per kg or per metre" if kind == "price" else "column"
            bad(line, name, f"given twice: one {what} column only")
            continue
        same.append(column)
    for name, (_, kind, required) in FIELDS.items():
        if required and name not in columns:
            example = f"{name} {EXAMPLES[kind]}" if kind in EXAMPLES else name
            bad(line, name, f"missing column (expected a header cell such as '{example}')")
    return columns


def _unit_factor(unit: str, kind: str, name: str, line: int, bad) -> float | None:
    if not unit:
        bad(line, name, f"no unit: write it in brackets, e.g. '{name} [mm]'")
        return None
    try:
        return to_si(f"1 {unit}", kind, name)
    except UnitError:
        bad(line, name, f"[{unit}] is not a length unit (expected e.g. [mm], [in], [thou])")
        return None


def _price_unit(unit: str, name: str, line: int, library: Library, bad):
    currency = library.currency
    others = [t for t in re.findall(r"[A-Z]{3}", unit) if t in CURRENCIES and t != currency]
    if others or currency not in unit:
        bad(line, name, f"[{unit}]: prices must be in {currency}, e.g. [{currency}/kg]")
        return None, ""
    rest = re.sub(r"^/", "1/", unit.replace(currency, "").strip()) or "1"
    for kind, target in (("price_per_mass", "price_per_kg"), ("price_per_length", "price_per_m")):
        try:
            return to_si(f"1 {rest}", kind, name), target
        except UnitError:
            continue
    bad(line, name, f"[{unit}] is neither a price per mass nor per length ([USD/kg], [USD/m])")
    return None, ""


def _number(text: str, column: _Column, line: int, bad) -> float | None:
    try:
        value = float(text)
    except ValueError:
        bad(line, column.field, f"expected a number, found {text!r}")
        return None
    if not math.isfinite(value):
        bad(line, column.field, f"expected a finite number, found {text!r}")
        return None
    return value


def _row(cells: list[str], line: int, columns: dict[str, list[_Column]], library, bad) -> dict:
    """One profile in SI (keys of PROFILE_COLUMNS; None where a cell was bad or missing)."""
    row: dict = {"line": line, "note": "", "price_per_kg": np.nan, "price_per_m": np.nan}
    for name, group in columns.items():
        target, kind, required = FIELDS[name]
        if kind == "price":
            given = [c for c in group if cells[c.position]]
            if not given:
                bad(line, name, "missing price (give one per kg or per metre)")
                row["price"] = None
            elif len(given) > 1:
                bad(line, name, "give the price per kg or per metre, not both")
                row["price"] = None
            else:
                c = given[0]
                value = _number(cells[c.position], c, line, bad)
                if value is not None and not value > 0:
                    bad(line, name, f"must be positive, found {cells[c.position]} {c.unit}")
                elif value is not None and c.factor is not None:
                    row[c.target] = value * c.factor
                    row["price"] = True
            continue
        column = group[0]
        text = cells[column.position]
        if not text:
            if required:
                bad(line, name, "missing value")
            row[target] = "" if kind == "text" and not required else None
            continue
        if kind == "text":
            row[target] = text
            if name == "alloy" and text not in library.material_keys:
                near = difflib.get_close_matches(text, library.material_keys, n=1)
                hint = f"; did you mean {near[0]!r}?" if near else ""
                keys = ", ".join(library.material_keys)
                bad(line, name, f"unknown alloy {text!r}{hint} (library materials: {keys})")
                row[target] = None
            continue
        value = _number(text, column, line, bad)
        if value is None:
            row[target] = None
        elif kind == "count":
            if value % 1 != 0 or value < 2:
                bad(line, name, f"expected a whole number of fins, at least 2, found {text!r}")
                row[target] = None
            else:
                row[target] = int(value)
        elif not value > 0:
            bad(line, name, f"must be positive, found {text} {column.unit}")
            row[target] = None
        else:
            row[target] = None if column.factor is None else value * column.factor
    tip = columns.get("fin_thickness_tip")
    if not tip or not cells[tip[0].position]:
        row["fin_tip_thickness"] = row.get("fin_thickness")  # untapered
    return row


def _cross_checks(row: dict, line: int, bad) -> None:
    root, tip = row.get("fin_thickness"), row.get("fin_tip_thickness")
    if root is not None and tip is not None and tip > root * (1 + _TOLERANCE):
        bad(
            line,
            "fin_thickness_tip",
            f"the tip ({tip * 1e3:.6g} mm) is thicker than the root ({root * 1e3:.6g} mm): "
            "expected a tip no thicker than the root",
        )
    n, width = row.get("fin_count"), row.get("width")
    if n is not None and width is not None and root is not None:
        if n * root >= width * (1 - _TOLERANCE):
            bad(
                line,
                "fin_count",
                f"the fins do not fit across the width: {n} fins x {root * 1e3:.6g} mm = "
                f"{n * root * 1e3:.6g} mm >= width {width * 1e3:.6g} mm (expected N t_root < W)",
            )


# -- screening -------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class ScreenResult:
    """Catalog parts rated against a problem.

    ``table``: every rated part (profile x cut x orientation that fits the envelope), with
    ``profile_id``, ``orientation``, ``cut_length_mm``, the model's result columns, the
    margins of :func:`optifin.search.design_table`, ``catalog_price`` and
    ``catalog_total_cost``, ``feasible`` and ``infeasible_reason``, and ``profile`` (the
    row label in ``catalog.profiles``); by orientation, in catalog order, cut lengths
    ascending. ``shortest``: one row per profile, per orientation the shortest
    feasible cut and its metrics (``<orientation>_...``) or ``<orientation>_reason`` why none
    works. ``front``: the Pareto set of the feasible parts under the problem's objectives
    (best first by the first objective). ``ranked``: every feasible part by the first
    objective, with ``rank`` (1 best). ``objective_columns`` names the column of each
    objective (catalog prices for cost objectives) and its sense.
    """

    problem: Problem
    catalog: Catalog
    cut_lengths: np.ndarray  #: [m] the grid
    table: pd.DataFrame
    shortest: pd.DataFrame
    front: pd.DataFrame
    ranked: pd.DataFrame
    objective_columns: list[tuple[str, str]]
    notes: list[str] = field(default_factory=list)


def rotate_condition(condition: Condition) -> Condition:
    """The condition seen by a sink turned 90° in the plane of its base.

    Each source's footprint and position swap axes: ``size_x <-> size_y`` and ``x <-> y``
    (a source placed ``x`` from the envelope's width edge now sits ``x`` along the sink's
    flow length). Everything else is kept.
    """
    sources = tuple(
        dataclasses.replace(s, size_x=s.size_y, size_y=s.size_x, x=s.y, y=s.x)
        for s in condition.sources
    )
    return dataclasses.replace(condition, sources=sources)


def _rotate_problem(problem: Problem) -> Problem:
    """The problem in the frame of a part turned 90°: sources and envelope axes swapped."""
    env = problem.envelope
    swap = {"width": "length", "length": "width"}
    variables = tuple(
        dataclasses.replace(v, name=swap.get(v.name, v.name)) for v in problem.variables
    )
    return dataclasses.replace(
        problem,
        condition=rotate_condition(problem.condition),
        envelope=dataclasses.replace(env, max_width=env.max_length, max_length=env.max_width),
        variables=variables,
    )


def _envelope_bounds(problem: Problem) -> tuple[float, float, float]:
    """Largest width, length and height (base plus fins) a part may have [m]."""
    env = problem.envelope
    return (
        _bound(problem, env.max_width, "width"),
        _bound(problem, env.max_length, "length"),
        _bound(problem, env.max_height, "base_thickness", "fin_height"),
    )


def _bound(problem: Problem, envelope_value, *variables: str) -> float:
    """An envelope bound [m], else the sum of the variables' upper ends, else inf."""
    if envelope_value is not None:
        return float(envelope_value)
    try:
        return float(sum(problem.variable(name).high for name in variables))
    except (KeyError, TypeError):
        return math.inf


def default_cut_lengths(problem: Problem) -> np.ndarray:
    """Every 5 mm from 20 mm to the longest cut the envelope allows in either orientation."""
    env = problem.envelope
    longest = max(
        _bound(problem, env.max_length, "length"), _bound(problem, env.max_width, "width")
    )
    if not math.isfinite(longest):
        raise SearchError(
            "catalog screening: the problem bounds neither the length nor the width; "
            "give cut_lengths or an envelope"
        )
    steps = math.floor((longest - DEFAULT_CUT_MIN) / DEFAULT_CUT_STEP + 1e-9)
    return (20.0 + 5.0 * np.arange(max(steps + 1, 0))) * 1e-3


def screen_catalog(
    problem: Problem,
    catalog: Catalog,
    cut_lengths=None,
    orientations=ORIENTATIONS,
) -> ScreenResult:
    """Rate every profile x cut length x orientation of a catalog against a problem.

    Parameters
    ----------
    problem
        The problem (its condition, objectives, limits, envelope and library).
    catalog
        The profiles (:func:`load_catalog`); every part is a stock profile cut to length
        (process ``catalog_cut``), finish bare.
    cut_lengths
        Cut lengths [m]; default :func:`default_cut_lengths` (every 5 mm from 20 mm).
    orientations
        Some of ``"along"`` and ``"across"`` (see the module docstring).

    Returns
    -------
    ScreenResult
        See :class:`ScreenResult`. Cost objectives and limits use the catalog price.
    """
    from optifin.search.objectives import score

    orientations = tuple(orientations)
    unknown = [o for o in orientations if o not in ORIENTATIONS]
    if unknown or not orientations or len(set(orientations)) < len(orientations):
        raise SearchError(
            f"catalog screening: orientations must be distinct, some of {ORIENTATIONS}; "
            f"found {orientations}"
        )
    if cut_lengths is None:
        cuts = default_cut_lengths(problem)
    else:
        cuts = np.unique(np.atleast_1d(np.asarray(cut_lengths, dtype=float)))
        if cuts.ndim != 1 or not np.all(np.isfinite(cuts) & (cuts > 0)):
            raise SearchError("catalog screening: cut lengths must be positive numbers [m]")
    if cuts.size == 0:
        raise SearchError("catalog screening: no cut length to rate (the envelope is too short)")

    width_bound, length_bound, height_bound = _envelope_bounds(problem)
    profiles = catalog.profiles
    height = (profiles["base_thickness"] + profiles["fin_height"]).to_numpy(dtype=float)
    width = profiles["width"].to_numpy(dtype=float)

    pieces, objective_values, fit_reasons, grids = [], [], {}, {}
    for orientation in orientations:
        along = orientation == "along"
        oriented = problem if along else _rotate_problem(problem)
        across_bound, cut_bound = (
            (width_bound, length_bound) if along else (length_bound, width_bound)
        )
        axis = "width" if along else "length"
        fits_w = width <= across_bound * (1 + _TOLERANCE)
        fits_h = height <= height_bound * (1 + _TOLERANCE)
        fit_reasons[orientation] = _fit_reasons(
            width, height, fits_w, fits_h, axis, across_bound, height_bound
        )
        grid = cuts[cuts <= cut_bound * (1 + _TOLERANCE)]
        grids[orientation] = (grid, cut_bound)
        rows = np.flatnonzero(fits_w & fits_h)
        if rows.size == 0 or grid.size == 0:
            continue
        designs, index = catalog.take(rows).designs(grid, oriented.library)
        s = score(oriented, designs)
        F, G, feasible, price, total = _catalog_costs(oriented, s, index)
        table = _rows(oriented, designs, s, G, feasible)
        table.insert(0, "profile_id", index["id"].to_numpy())
        table.insert(1, "orientation", orientation)
        table.insert(2, "cut_length_mm", np.round(index["cut_length"].to_numpy() * 1e3, 9))
        table.insert(3, "profile", index["profile"].to_numpy())
        _insert_after(table, "material_cost", "catalog_price", price)
        _insert_after(table, "total_cost", "catalog_total_cost", total)
        pieces.append(table)
        objective_values.append(F)

    objective_columns = [(_objective_column(o.name), o.sense) for o in problem.objectives]
    notes = []
    if pieces:
        table = pd.concat(pieces, ignore_index=True)
        F = np.vstack(objective_values)
    else:
        empty = ["profile_id", "orientation", "cut_length_mm", "profile", "feasible"]
        table = pd.DataFrame(columns=[*empty, "infeasible_reason"])
        F = np.zeros((0, len(problem.objectives)))
        notes.append("no catalog part fits the envelope in any orientation")
    feasible = table["feasible"].to_numpy(dtype=bool)
    if pieces and not feasible.any():
        notes.append("no catalog part meets the problem's limits")
    front, ranked = _front_and_ranked(table, F, feasible)
    shortest = _shortest(catalog, table, orientations, fit_reasons, grids, objective_columns)
    return ScreenResult(
        problem=problem,
        catalog=catalog,
        cut_lengths=cuts,
        table=table,
        shortest=shortest,
        front=front,
        ranked=ranked,
        objective_columns=objective_columns,
        notes=notes,
    )


def screen_problem(problem: Problem, catalog: Catalog | None = None) -> ScreenResult:
    """:func:`screen_catalog` with the problem's own catalog settings.

    The catalog of ``problem.catalog`` (its file, or the bundled demo for none; ``catalog``
    stands for it when given), its ``cut_lengths`` (the default grid when empty) and its
    ``orientations``. A problem without a catalog section screens the demo catalog at the
    default grid in both orientations.
    """
    choice = problem.catalog
    if catalog is None:
        catalog = load_catalog(choice.path if choice else None, problem.library)
    cuts = choice.cut_lengths if choice and choice.cut_lengths else None
    orientations = choice.orientations if choice else ORIENTATIONS
    return screen_catalog(problem, catalog, cut_lengths=cuts, orientations=orientations)


def _objective_column(name: str) -> str:
    from optifin.search import objective_column

    return {"material_cost": "catalog_price", "total_cost": "catalog_total_cost"}.get(
        name, objective_column(name)
    )


def _fit_reasons(width, height, fits_w, fits_h, axis, across_bound, height_bound) -> np.ndarray:
    """Why each profile does not fit an orientation ("" where it fits)."""
    w_text = np.char.add(
        np.char.mod("width %.6g mm exceeds the envelope's ", width * 1e3),
        f"{axis} {across_bound * 1e3:.6g} mm",
    )
    h_text = np.char.add(
        np.char.mod("height %.6g mm exceeds the envelope's ", height * 1e3),
        f"{height_bound * 1e3:.6g} mm",
    )
    both = np.char.add(np.char.add(w_text, "; "), h_text)
    return np.where(
        ~fits_w & ~fits_h, both, np.where(~fits_w, w_text, np.where(~fits_h, h_text, ""))
    )


def _catalog_costs(problem: Problem, s, index: pd.DataFrame):
    """Objectives, constraints and feasibility with the catalog price as material cost."""
    price = catalog_price(index, s.arrays["mass"])
    total = price + s.arrays["process_cost"]
    F, G, feasible = catalog_scores(problem, s, price, total)
    return F, G, feasible, price, total


def _rows(problem: Problem, designs, s, G: np.ndarray, feasible: np.ndarray) -> pd.DataFrame:
    """The rows of :func:`optifin.search.design_table` from one score, in design order.

    ``design_table`` scores the designs again and sorts them; here one evaluation serves
    the catalog's objectives, its costs and the table, and the order stays that of the
    index frame (a test checks the two tables agree). ``G`` and ``feasible`` are the
    catalog-priced constraints (:func:`catalog_scores`).
    """
    from dataclasses import replace

    from optifin.search import design_rows

    return design_rows(problem, designs, replace(s, G=G, feasible=feasible))


def _insert_after(table: pd.DataFrame, after: str, name: str, values) -> None:
    position = table.columns.get_loc(after) + 1 if after in table.columns else len(table.columns)
    table.insert(position, name, values)


def _front_and_ranked(table: pd.DataFrame, F: np.ndarray, feasible: np.ndarray):
    from optifin.search.pareto import nondominated

    rows = np.flatnonzero(feasible)
    order = rows[np.argsort(F[rows, 0], kind="stable")] if rows.size else rows
    ranked = table.iloc[order].reset_index(drop=True)
    ranked.insert(0, "rank", np.arange(1, len(ranked) + 1))
    on_front = order[nondominated(F[order])] if order.size else order
    front = table.iloc[on_front].reset_index(drop=True)
    return front, ranked


#: Metric columns reported per orientation in :attr:`ScreenResult.shortest`.
SHORTEST_METRICS = (
    "cut_length_mm",
    "thermal_resistance_K_per_W",
    "base_temperature_C",
    "source_temperature_C",
    "heat_rate_W",
    "pressure_drop_Pa",
    "mass_kg",
    "catalog_price",
    "catalog_total_cost",
)


_NOT_MET = r"(?:^|; )[^;]* not met"  #: the limit texts of design_table's reasons


def _shortest(catalog, table, orientations, fit_reasons, grids, objective_columns):
    """One row per profile: the shortest feasible cut of each orientation, or why none."""
    p = catalog.profiles
    out = pd.DataFrame(
        {
            "profile_id": p["id"].to_numpy(),
            "alloy": p["alloy"].to_numpy(),
            "width_mm": p["width"].to_numpy() * 1e3,
            "base_thickness_mm": p["base_thickness"].to_numpy() * 1e3,
            "fin_count": p["fin_count"].to_numpy(),
            "fin_height_mm": p["fin_height"].to_numpy() * 1e3,
        },
        index=p.index,
    )
    metrics = [m for m in SHORTEST_METRICS if m in table.columns]
    metrics += [c for c, _ in objective_columns if c in table.columns and c not in metrics]
    cuts_by_orientation = []
    for orientation in orientations:
        grid, cut_bound = grids[orientation]
        rated = table[table["orientation"] == orientation]
        ok = rated[rated["feasible"].to_numpy(dtype=bool)]
        first = ok.groupby("profile", sort=False)["cut_length_mm"].idxmin()
        best = table.loc[first.to_numpy()].set_index("profile")
        for metric in metrics:
            out[f"{orientation}_{metric}"] = best[metric].reindex(out.index).to_numpy()
        reason = pd.Series(fit_reasons[orientation], index=out.index, dtype=object)
        if grid.size == 0:
            reason = reason.where(
                reason != "",
                f"no cut on the grid fits the envelope's {cut_bound * 1e3:.6g} mm",
            )
        longest = rated.groupby("profile", sort=False)["cut_length_mm"].idxmax()
        at_longest = table.loc[longest.to_numpy()].set_index("profile")
        failed = at_longest.index.difference(best.index)
        if len(failed):
            rows = at_longest.loc[failed]
            why = rows["infeasible_reason"].astype(str)
            # a part that cannot exist (NaN metrics) fails every limit: name only why
            gone = rows["thermal_resistance_K_per_W"].isna()
            cleaned = why.str.replace(_NOT_MET, "", regex=True).str.strip("; ")
            why = why.where(~gone | (cleaned == ""), cleaned)
            text = (
                "no feasible cut up to "
                + rows["cut_length_mm"].map("{:.6g} mm".format)
                + "; at that length: "
                + why
            )
            reason.loc[failed] = text
        out[f"{orientation}_reason"] = reason.to_numpy()
        cuts_by_orientation.append(out[f"{orientation}_cut_length_mm"].to_numpy(dtype=float))
    cuts = np.column_stack(cuts_by_orientation)
    has = ~np.all(np.isnan(cuts), axis=1)
    pick = np.argmin(np.where(np.isnan(cuts), np.inf, cuts), axis=1)
    out["shortest_cut_length_mm"] = np.where(
        has, np.take_along_axis(cuts, pick[:, None], 1)[:, 0], np.nan
    )
    out["shortest_orientation"] = np.where(has, np.asarray(orientations, dtype=object)[pick], "")
    return out.reset_index(drop=True)

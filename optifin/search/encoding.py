"""Encoding of the searched variables as one float vector per design.

Every gene is a number between bounds: the fin count as itself, a stepped length as the
index of its step, a continuous length as itself, and material, process and finish together
as one index into the list of combinations the library can actually make (so that the search
never wastes evaluations on extruded copper or anodised copper; the fin type, plate or pin,
joins that combination, since only some processes make pins). The pin layout is a gene of
its own when both layouts are offered. Integer genes are snapped by rounding only those
columns.

Catalog parts
-------------
When the problem offers its catalog to the search (``catalog.in_search``), one more integer
gene, ``part``, chooses between a free design and a catalog part: a (profile, cut length)
pair of :func:`optifin.catalog.search_parts` (orientation ``along``, fitting the envelope).
Its decoded code (:meth:`Encoding.part_codes`) is 0 for a free design and 1..K for part
k. The gene itself spans -K..K and every value <= 0 is a free design, so that a uniformly
sampled population is about half free designs and half catalog parts (on 0..K a free
design would be one value in K + 1 and the GA would hardly ever try one). A catalog part
takes the profile's width, base thickness, fin count, root and tip thickness and fin
height, the cut as its length, the alloy as its material, process ``catalog_cut`` and
finish bare; the free genes of its row are ignored, and the problem's fixed construction
(base material, insert) does not apply to it (a stock profile is one piece of its alloy).
The exact grid enumerates the free grid once (part 0) and then each part once (the free
genes at their lower bounds): ``grid_size`` = free grid + K, not their product. The genetic
search (:func:`optifin.search.optimise`) rates every part exactly first and then runs with
the ``part`` gene held at "free": in one mixed population the parts, which need no die,
crowd out the free designs before the good ones are found (measured on the vendor example:
lightest free design 0.173 kg mixed against 0.052 kg free-only).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from optifin.catalog import SearchParts, search_parts
from optifin.errors import SearchError
from optifin.model.design import FIN_TYPES, PIN_LAYOUTS, Designs
from optifin.problem.spec import Problem, Variable

NUMERIC = (
    "fin_count",
    "fin_thickness",
    "fin_height",
    "base_thickness",
    "width",
    "length",
    "fin_taper",
    "pin_diameter",
    "pin_pitch_transverse",
    "pin_pitch_longitudinal",
)
CHOICE = ("material", "process", "finish", "fin_type")


@dataclass(frozen=True)
class Gene:
    name: str  #: a variable name, or "make" for the material-process-finish combination
    low: float
    high: float
    integer: bool
    variable: Variable | None = None

    @property
    def count(self) -> int | None:
        """Number of values of an integer gene (None for a continuous one)."""
        return round(self.high - self.low) + 1 if self.integer else None


class Encoding:
    """Maps gene vectors of a problem to designs and back.

    ``catalog`` (a :class:`optifin.catalog.Catalog`) stands for the file of
    ``problem.catalog`` when the problem offers catalog parts to the search; it is read
    otherwise. ``parts`` is the :class:`optifin.catalog.SearchParts` of the ``part`` gene,
    None without one; ``notes`` says what the search was offered.
    """

    def __init__(self, problem: Problem, catalog=None):
        self.problem = problem
        lib = problem.library
        self.fixed: dict[str, float] = {}
        genes: list[Gene] = []
        for name in NUMERIC:
            v = problem.variable(name)
            if v.fixed:
                self.fixed[name] = float(v.low)
            elif v.kind == "integer":
                genes.append(Gene(name, float(v.low), float(v.high), True, v))
            elif v.step is not None:
                genes.append(Gene(name, 0.0, float(len(v.grid()) - 1), True, v))
            else:
                genes.append(Gene(name, float(v.low), float(v.high), False, v))
        # the buildable (material, process, finish, fin type) combinations among the choices
        allowed = lib.array("allowed")
        emissivity = lib.array("emissivity")
        makes = {"plate": lib.array("makes_plates"), "pin": lib.array("makes_pins")}
        combos = []
        for m, p, f, t in itertools.product(*(problem.variable(c).choices for c in CHOICE)):
            mc, pc, fc = lib.material_code(m), lib.process_code(p), lib.finish_code(f)
            if allowed[pc, mc] and np.isfinite(emissivity[mc, fc]) and makes[t][pc]:
                combos.append((mc, pc, fc, FIN_TYPES.index(t)))
        if not combos:
            raise SearchError(
                "no material, process, finish and fin type among the choices can be made"
            )
        self.combos = np.array(combos, dtype=np.int64)
        if len(combos) > 1:
            genes.append(Gene("make", 0.0, float(len(combos) - 1), True))
        self.layouts = np.array(
            [PIN_LAYOUTS.index(v) for v in problem.variable("pin_layout").choices], dtype=np.int64
        )
        if len(self.layouts) > 1:
            genes.append(Gene("pin_layout", 0.0, float(len(self.layouts) - 1), True))
        self.parts: SearchParts | None = None
        self.notes: list[str] = []
        parts = search_parts(problem, catalog)
        if parts is not None and len(parts):
            self.parts = parts
            genes.append(Gene("part", -float(len(parts)), float(len(parts)), True))
            profiles = parts.index["profile"].nunique()
            self.notes.append(
                f"catalog: {len(parts)} parts ({profiles} profiles at cut lengths, orientation "
                "along) offered to the search beside free designs; their material cost is "
                "the catalog price"
            )
        elif parts is not None:
            self.notes.append(
                "catalog: no catalog part fits the envelope; the search holds free designs only"
            )
        self.genes = tuple(genes)
        self.xl = np.array([g.low for g in genes])
        self.xu = np.array([g.high for g in genes])
        self.integer_columns = np.array([i for i, g in enumerate(genes) if g.integer], dtype=int)

    @property
    def n_var(self) -> int:
        return len(self.genes)

    @property
    def discrete(self) -> bool:
        return all(g.integer for g in self.genes)

    @property
    def part_column(self) -> int | None:
        """Column of the ``part`` gene, None without one."""
        return len(self.genes) - 1 if self.parts is not None else None

    @property
    def grid_size(self) -> int | None:
        """Number of designs on the full grid, or None when a gene is continuous.

        With a ``part`` gene: the free grid plus one design per catalog part.
        """
        if not self.discrete:
            return None
        free = [g.count for g in self._free_genes()]
        size = int(np.prod(free, dtype=object)) if free else 1
        return size + len(self.parts) if self.parts is not None else size

    def _free_genes(self) -> tuple[Gene, ...]:
        return self.genes[:-1] if self.parts is not None else self.genes

    def part_codes(self, x: np.ndarray) -> np.ndarray:
        """The part code of each gene vector: 0 free design, k catalog part k (1..K)."""
        x = np.atleast_2d(np.asarray(x, dtype=float))
        if self.parts is None:
            return np.zeros(x.shape[0], dtype=np.int64)
        return np.clip(np.rint(x[:, self.part_column]), 0, len(self.parts)).astype(np.int64)

    def canonical(self, x: np.ndarray) -> np.ndarray:
        """Snapped gene vectors with one spelling per design.

        The ``part`` gene is set to its code (every free value to 0) and the ignored free
        genes of catalog parts to their lower bounds, so that the same design is the same
        vector. Without a ``part`` gene this is :meth:`snap`.
        """
        x = self.snap(x)
        if self.parts is None:
            return x
        part = self.part_codes(x)
        x[:, self.part_column] = part
        ignored = np.ones(self.n_var, dtype=bool)
        ignored[self.part_column] = False
        return np.where((part > 0)[:, None] & ignored[None, :], self.xl, x)

    def snap(self, x: np.ndarray) -> np.ndarray:
        """Round the integer genes (and only those) and clip every gene to its bounds."""
        x = np.array(x, dtype=float, copy=True)
        if x.ndim == 1:
            x = x[None, :]
        if self.integer_columns.size:
            x[:, self.integer_columns] = np.rint(x[:, self.integer_columns])
        return np.clip(x, self.xl, self.xu)

    def decode(self, x: np.ndarray) -> Designs:
        """Designs for snapped gene vectors (rows of ``x``)."""
        x = np.atleast_2d(np.asarray(x, dtype=float))
        n = x.shape[0]
        columns: dict[str, np.ndarray] = {}
        for name, value in self.fixed.items():
            columns[name] = np.full(n, value)
        make = np.zeros(n, dtype=np.int64)
        layout = np.zeros(n, dtype=np.int64)
        for i, gene in enumerate(self.genes):
            col = x[:, i]
            if gene.name == "make":
                make = np.rint(col).astype(np.int64)
            elif gene.name == "pin_layout":
                layout = np.rint(col).astype(np.int64)
            elif gene.name == "part":
                continue  # read by part_codes
            elif gene.name == "fin_count":
                columns["fin_count"] = np.rint(col)
            elif gene.integer:
                v = gene.variable
                columns[gene.name] = v.low + v.step * np.rint(col)
            else:
                columns[gene.name] = col
        combo = self.combos[make]
        optional = {}
        fin_type = combo[:, 3].copy()
        if np.any(fin_type == 1):
            optional.update(
                fin_type=fin_type,
                pin_layout=self.layouts[layout],
                pin_diameter=columns["pin_diameter"],
                pin_pitch_transverse=columns["pin_pitch_transverse"],
                pin_pitch_longitudinal=columns["pin_pitch_longitudinal"],
            )
        taper = columns["fin_taper"]
        if np.any(taper != 1.0):
            optional["fin_tip_thickness"] = columns["fin_thickness"] * taper
        optional.update(self._construction(n))
        design = {
            "fin_count": columns["fin_count"].astype(np.int64),
            "fin_thickness": columns["fin_thickness"],
            "fin_height": columns["fin_height"],
            "base_thickness": columns["base_thickness"],
            "width": columns["width"],
            "length": columns["length"],
            "material": combo[:, 0].copy(),
            "process": combo[:, 1].copy(),
            "finish": combo[:, 2].copy(),
        }
        if self.parts is not None:
            design, optional = self._catalog_rows(self.part_codes(x), design, optional)
        return Designs(**design, **optional)

    def _catalog_rows(self, part, design: dict, optional: dict) -> tuple[dict, dict]:
        """The columns with catalog parts' rows (code > 0) taken from the catalog."""
        is_part = part > 0
        k = np.maximum(part - 1, 0)
        stock = self.parts.designs

        def pick(free, name):
            return np.where(is_part, np.take(getattr(stock, name), k), free)

        design = {name: pick(value, name) for name, value in design.items()}
        optional = dict(optional)
        # free rows: their tip (the root when untapered); parts: the profile's tip
        tip = optional.get("fin_tip_thickness", design["fin_thickness"])
        optional["fin_tip_thickness"] = pick(tip, "fin_tip_thickness")
        if "fin_type" in optional:
            optional["fin_type"] = np.where(is_part, 0, optional["fin_type"])
        for name in ("base_material", "insert_material"):
            if name in optional:
                optional[name] = np.where(is_part, -1, optional[name])
        if "insert_thickness" in optional:
            optional["insert_thickness"] = np.where(is_part, 0.0, optional["insert_thickness"])
        for name in ("insert_width", "insert_length"):
            if name in optional:
                optional[name] = np.where(is_part, np.nan, optional[name])
        return design, optional

    def _construction(self, n: int) -> dict:
        """The problem's fixed construction columns (base material, insert) for n designs."""
        fixed = self.problem.construction
        if not fixed:
            return {}
        lib = self.problem.library
        out = {}
        for name, value in fixed.items():
            if name.endswith("material"):
                out[name] = np.full(n, lib.material_code(value), dtype=np.int64)
            else:
                out[name] = np.full(n, float(value))
        return out

    def grid_chunk(self, start: int, stop: int) -> np.ndarray:
        """Gene vectors of grid designs ``start`` to ``stop`` (row-major over the genes).

        With a ``part`` gene the free grid (part 0) comes first, then the catalog parts
        1..K, one design each, their free genes at the lower bounds.
        """
        genes = self._free_genes()
        counts = [g.count for g in genes]
        flat = np.arange(start, stop, dtype=np.int64)
        size = int(np.prod(counts, dtype=object)) if counts else 1
        free = flat[flat < size]
        if counts:
            idx = np.unravel_index(free, counts)
            x = np.column_stack([g.low + i for g, i in zip(genes, idx, strict=True)])
            x = x.astype(float)
        else:
            x = np.zeros((free.size, 0))
        if self.parts is None:
            return x
        x = np.column_stack([x, np.zeros(free.size)])
        part = flat[flat >= size] - size + 1
        catalog = np.tile(self.xl, (part.size, 1))
        catalog[:, self.part_column] = part
        return np.vstack([x, catalog])

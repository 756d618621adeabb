"""Encoding of the searched variables as one float vector per design.

Every gene is a number between bounds: the fin count as itself, a stepped length as the
index of its step, a continuous length as itself, and material, process and finish together
as one index into the list of combinations the library can actually make (so that the search
never wastes evaluations on extruded copper or anodised copper; the fin type, plate or pin,
joins that combination, since only some processes make pins). The pin layout is a gene of
its own when both layouts are offered. Integer genes are snapped by rounding only those
columns.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

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
    """Maps gene vectors of a problem to designs and back."""

    def __init__(self, problem: Problem):
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
    def grid_size(self) -> int | None:
        """Number of designs on the full grid, or None when a gene is continuous."""
        if not self.discrete:
            return None
        return int(np.prod([g.count for g in self.genes], dtype=object)) if self.genes else 1

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
        return Designs(
            fin_count=columns["fin_count"].astype(np.int64),
            fin_thickness=columns["fin_thickness"],
            fin_height=columns["fin_height"],
            base_thickness=columns["base_thickness"],
            width=columns["width"],
            length=columns["length"],
            material=combo[:, 0].copy(),
            process=combo[:, 1].copy(),
            finish=combo[:, 2].copy(),
            **optional,
        )

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
        """Gene vectors of grid designs ``start`` to ``stop`` (row-major over the genes)."""
        counts = [g.count for g in self.genes]
        flat = np.arange(start, stop, dtype=np.int64)
        if not counts:
            return np.zeros((flat.size, 0))
        idx = np.unravel_index(flat, counts)
        return np.column_stack([g.low + i for g, i in zip(self.genes, idx, strict=True)]).astype(
            float
        )

"""Design tables: N plate-fin heat sinks as columns of numpy arrays (SI, integer codes)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from optifin.errors import ModelError
from optifin.library import Library

#: Real-valued geometry columns [m] and the suffix-free names the API accepts.
GEOMETRY = ("fin_thickness", "fin_height", "base_thickness", "width", "length")
CATEGORIES = ("material", "process", "finish")
COLUMNS = ("fin_count", *GEOMETRY, *CATEGORIES)


@dataclass(frozen=True)
class Designs:
    """N designs as equal-length arrays.

    Geometry in metres: ``width`` across the fins, ``length`` along them (the flow length,
    or the vertical fin length in natural convection). ``material``, ``process`` and
    ``finish`` are integer codes into the library's keys.
    """

    fin_count: np.ndarray
    fin_thickness: np.ndarray
    fin_height: np.ndarray
    base_thickness: np.ndarray
    width: np.ndarray
    length: np.ndarray
    material: np.ndarray
    process: np.ndarray
    finish: np.ndarray

    def __len__(self) -> int:
        return int(self.fin_count.shape[0])

    def take(self, index) -> Designs:
        return Designs(**{c: getattr(self, c)[index] for c in COLUMNS})

    @classmethod
    def from_columns(cls, columns: Mapping, library: Library) -> Designs:
        """Build from a mapping (dict or DataFrame) of columns; scalars broadcast.

        Geometry may be given in metres under the plain names (``fin_thickness``) or in
        millimetres under the names of the result tables (``fin_thickness_mm``).
        Categories may be keys (``"al_6063_t5"``) or integer codes; ``finish`` defaults to
        ``"bare"``.
        """
        get = {}
        for name in GEOMETRY:
            if name in columns:
                get[name] = np.asarray(columns[name], dtype=float)
            elif f"{name}_mm" in columns:
                get[name] = np.asarray(columns[f"{name}_mm"], dtype=float) * 1e-3
            else:
                raise ModelError(f"designs: missing column {name!r} (or {name}_mm)")
        if "fin_count" not in columns:
            raise ModelError("designs: missing column 'fin_count'")
        count = np.asarray(columns["fin_count"])
        if not np.all(np.isfinite(count.astype(float))) or np.any(np.asarray(count) % 1 != 0):
            raise ModelError("designs: fin_count must be whole numbers")
        get["fin_count"] = count.astype(np.int64)
        coders = {
            "material": (library.material_keys, library.material_code),
            "process": (library.process_keys, library.process_code),
            "finish": (library.finishes, library.finish_code),
        }
        for name, (keys, coder) in coders.items():
            value = columns.get(name, "bare" if name == "finish" else None)
            if value is None:
                raise ModelError(f"designs: missing column {name!r}")
            get[name] = _codes(value, keys, coder, name)
        n = max(np.size(v) for v in get.values())
        try:
            arrays = {k: np.broadcast_to(np.asarray(v), (n,)).copy() for k, v in get.items()}
        except ValueError:
            raise ModelError("designs: columns have different lengths") from None
        return cls(**arrays)


def _codes(value, keys, coder, name) -> np.ndarray:
    arr = np.asarray(value)
    if arr.dtype.kind in "iu":
        if arr.size and (arr.min() < 0 or arr.max() >= len(keys)):
            raise ModelError(f"designs: {name} code out of range 0..{len(keys) - 1}")
        return arr.astype(np.int64)
    if arr.dtype.kind == "f":
        if np.any(arr % 1 != 0):
            raise ModelError(f"designs: {name} codes must be whole numbers")
        return _codes(arr.astype(np.int64), keys, coder, name)
    flat = np.asarray(arr, dtype=object).ravel()
    uniques, inverse = np.unique(flat.astype(str), return_inverse=True)
    lookup = np.array([coder(u) for u in uniques], dtype=np.int64)
    return lookup[inverse].reshape(arr.shape)

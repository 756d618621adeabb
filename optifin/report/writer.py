"""Writing a run's results folder: all files into a temporary folder, moved in at the end.

A failed run never leaves half a result: the files are written to a sibling temporary
folder and that folder is renamed into place only when everything is written. A previous
result of the same name is kept (renamed with a ``.previous`` suffix) until the new one is
in place, then removed.
"""

from __future__ import annotations

import contextlib
import json
import os
import platform
import shutil
import tempfile
from collections.abc import Callable, Iterator
from importlib import metadata
from pathlib import Path

import numpy as np
import pandas as pd

from optifin.physics import registry
from optifin.problem import problem_hash


def versions() -> dict[str, str]:
    out = {"python": platform.python_version()}
    for name in ("optifin", "numpy", "scipy", "pandas", "pymoo", "moocore", "CoolProp", "pint"):
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    return out


def run_record(result, extra_timings: dict | None = None) -> dict:
    """The content of run.json."""
    problem = result.problem
    correlations = correlation_record(result.front.attrs.get("correlations", []))
    return {
        "problem": problem.name,
        "problem_file": str(problem.source),
        "problem_sha256": problem_hash(problem),
        "algorithm": result.algorithm,
        "seed": result.seed,
        "evaluations": result.evaluations,
        "front_size": len(result.front),
        "hypervolume": result.hypervolume,
        "interrupted": result.interrupted,
        "notes": list(result.notes),
        "timings_s": {**result.timings, **(extra_timings or {})},
        "versions": versions(),
        "correlations": correlations,
        "objectives": [[c, s] for c, s in result.objective_columns],
    }


def correlation_record(names) -> dict:
    """Quantity, reference and validity ranges of each correlation used, for run.json."""
    correlations = {}
    for name in sorted(set(names)):
        entry = registry.get(name)
        correlations[name] = {
            "quantity": entry.quantity,
            "reference": entry.citation(),
            "validity": {k: list(v) for k, v in entry.validity.items()},
        }
    return correlations


def write_json(path: Path, record: dict) -> Path:
    """A run record as indented JSON (numpy scalars and arrays as plain values)."""
    path = Path(path)
    path.write_text(json.dumps(record, indent=2, default=_json_default))
    return path


@contextlib.contextmanager
def atomic_folder(folder) -> Iterator[Path]:
    """A temporary sibling folder to write into, moved over ``folder`` on success.

    On any failure the temporary folder is removed and an existing ``folder`` is left as
    it was; a previous ``folder`` is replaced only once the new one is complete.
    """
    folder = Path(folder)
    folder.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{folder.name}.", suffix=".tmp", dir=folder.parent))
    try:
        yield tmp
        _move_into_place(tmp, folder)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise


def write_table(frame: pd.DataFrame, path_stem: Path) -> Path:
    """Parquet when pyarrow is installed, else CSV; returns the path written."""
    try:
        import pyarrow  # noqa: F401
    except ImportError:
        path = path_stem.with_suffix(".csv")
        frame.to_csv(path, index=False)
        return path
    path = path_stem.with_suffix(".parquet")
    frame.to_parquet(path, index=False)
    return path


def write_results(
    result,
    folder: Path,
    extras: Callable[[object, Path], list[Path]] | None = None,
) -> Path:
    """Write every result file into ``folder`` atomically; returns the folder.

    ``extras(result, tmp_folder)`` writes further files (plots, drawings, report) into the
    temporary folder before it is moved into place.
    """
    folder = Path(folder)
    with atomic_folder(folder) as tmp:
        result.front.to_csv(tmp / "front.csv", index=False)  # shortest round-trip floats
        write_table(result.archive, tmp / "designs")
        result.history.to_csv(tmp / "history.csv", index=False)
        if extras is not None:
            extras(result, tmp)
        write_json(tmp / "run.json", run_record(result))
    return folder


def _move_into_place(tmp: Path, folder: Path) -> None:
    """Rename ``tmp`` to ``folder``; an old ``folder`` is kept aside until then."""
    old = None
    if folder.exists():
        old = folder.with_name(folder.name + ".previous")
        if old.exists():
            shutil.rmtree(old)
        os.replace(folder, old)
    try:
        os.replace(tmp, folder)
    except BaseException:
        if old is not None:  # put the old folder back
            os.replace(old, folder)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def _json_default(value):
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    return str(value)

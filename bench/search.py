"""The genetic search against the exact grid front, and the whole example, in one run.

For the first example problem: the wall time of the whole command (load + search + every
output file, as a user runs it), and the hypervolume the GA's archive front reaches against
search time and evaluations, as a fraction of the exact grid front's hypervolume (both
normalised by the exact front's ideal and nadir points). Prints figures, not verdicts.

    python bench/search.py [--problem problems/power_module.yaml] [--seeds 1 2 3]
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from optifin.api import load_problem
from optifin.search import optimise
from optifin.search.pareto import hypervolume, normaliser

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--problem", default=str(ROOT / "problems" / "power_module.yaml"))
    parser.add_argument("--seeds", type=int, nargs="+", default=[1, 2, 3])
    parser.add_argument("--evaluations", type=int, default=20000)
    args = parser.parse_args()

    with tempfile.TemporaryDirectory() as tmp:
        start = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "optifin.cli", "run", args.problem, "--out", tmp, "--quiet"],
            check=True,
            stdout=subprocess.DEVNULL,
        )
        whole = time.perf_counter() - start
    print(f"whole example (python -m optifin.cli run, all outputs): {whole:.2f} s")

    problem = load_problem(args.problem)
    start = time.perf_counter()
    exact = optimise(problem, algorithm="exact")
    exact_s = time.perf_counter() - start
    columns = [c for c, _ in exact.objective_columns]
    minimised = np.column_stack(
        [
            exact.front[c].to_numpy() * (-1 if sense == "maximise" else 1)
            for c, sense in exact.objective_columns
        ]
    )
    normalise = normaliser(minimised)
    reference = hypervolume(minimised, normalise)
    print(
        f"exact grid: {exact.evaluations:,} designs, {len(exact.front)} Pareto designs, "
        f"{exact_s:.2f} s"
    )

    marks_s = (0.5, 1.0, 2.0, 4.0)
    marks_n = (2000, 5000, 10000, 20000)
    print(
        f"\n{'seed':>4} "
        + " ".join(f"{f'HV@{m}s':>9}" for m in marks_s)
        + " "
        + " ".join(f"{f'HV@{n // 1000}k':>9}" for n in marks_n)
        + f" {'time to 99.5%':>14}"
    )
    for seed in args.seeds:
        result = optimise(problem, algorithm="nsga2", seed=seed, evaluations=args.evaluations)
        hv = np.array([hypervolume(F, normalise) for F in result.snapshots]) / reference
        elapsed = result.history["elapsed_s"].to_numpy()
        evals = result.history["evaluations"].to_numpy()

        def at(limit, axis, hv=hv):
            reached = hv[axis <= limit]
            return reached[-1] if reached.size else 0.0

        hit = np.flatnonzero(hv >= 0.995)
        to_target = f"{elapsed[hit[0]]:.2f} s" if hit.size else "not reached"
        print(
            f"{seed:>4} "
            + " ".join(f"{at(m, elapsed):>9.4f}" for m in marks_s)
            + " "
            + " ".join(f"{at(n, evals):>9.4f}" for n in marks_n)
            + f" {to_target:>14}"
        )
    print(f"\nobjectives: {', '.join(columns)}; HV as a fraction of the exact front's")


if __name__ == "__main__":
    main()

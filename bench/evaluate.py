"""Throughput of the vectorised model against the same model one design at a time.

Prints designs per second for each and their ratio, measured in one run (the machines are
shared and noisy: compare ratios, not absolute figures, between runs).

    python bench/evaluate.py [--designs 1000000] [--loop 300]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate
from optifin.model.design import Designs
from optifin.model.sink import evaluate_arrays


def random_designs(n: int, library, rng) -> Designs:
    materials = [library.material_code(k) for k in ("al_6063_t5", "al_1050a", "cu_c11000")]
    processes = [library.process_code(k) for k in ("extrusion", "skived", "bonded")]
    return Designs(
        fin_count=rng.integers(6, 40, n),
        fin_thickness=rng.uniform(0.3e-3, 2.5e-3, n),
        fin_height=rng.uniform(10e-3, 50e-3, n),
        base_thickness=rng.uniform(3e-3, 10e-3, n),
        width=rng.uniform(60e-3, 120e-3, n),
        length=rng.uniform(50e-3, 120e-3, n),
        material=rng.choice(materials, n),
        process=rng.choice(processes, n),
        finish=np.zeros(n, dtype=np.int64),
    )


def best_of(repeats: int, func) -> float:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--designs", type=int, default=1_000_000)
    parser.add_argument("--loop", type=int, default=300, help="designs for the one-by-one loop")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()

    library = load_library()
    rng = np.random.default_rng(1)
    designs = random_designs(args.designs, library, rng)
    cases = {
        "forced": Condition(
            sources=[HeatSource(60.0, 0.04, 0.04)],
            ambient_temperature=308.15,
            approach_velocity=2.5,
            max_base_temperature=368.15,
        ),
        "natural": Condition(
            sources=[HeatSource(15.0, 0.04, 0.04)],
            ambient_temperature=308.15,
            cooling="natural",
            max_base_temperature=368.15,
        ),
    }
    evaluate_arrays(designs.take(slice(0, 10)), cases["forced"], library)  # warm the tables
    print(f"{'case':<8} {'path':<22} {'designs':>9} {'designs/s':>12}")
    for name, cond in cases.items():
        n = args.designs if name == "forced" else max(args.designs // 10, 1000)
        batch = designs.take(slice(0, n))
        t_arrays = best_of(args.repeats, lambda b=batch, c=cond: evaluate_arrays(b, c, library))
        t_frame = best_of(args.repeats, lambda b=batch, c=cond: evaluate(b, c, library))
        single = [designs.take(slice(i, i + 1)) for i in range(args.loop)]

        def loop(c=cond, single=single):
            for one in single:
                evaluate(one, c, library)

        t_loop = best_of(1, loop)
        rate_arrays, rate_frame = n / t_arrays, n / t_frame
        rate_loop = args.loop / t_loop
        print(f"{name:<8} {'vectorised (arrays)':<22} {n:>9} {rate_arrays:>12.3g}")
        print(f"{name:<8} {'vectorised (DataFrame)':<22} {n:>9} {rate_frame:>12.3g}")
        print(f"{name:<8} {'one design per call':<22} {args.loop:>9} {rate_loop:>12.3g}")
        print(
            f"{name:<8} ratio vectorised/loop: arrays {rate_arrays / rate_loop:.0f}x, "
            f"DataFrame {rate_frame / rate_loop:.0f}x"
        )


if __name__ == "__main__":
    main()

"""Throughput of the vectorised model against the same model one design at a time.

Prints designs per second for each and their ratio, measured in one run (the machines are
shared and noisy: compare ratios, not absolute figures, between runs).

    python bench/evaluate.py [--designs 1000000] [--loop 300] [--case-designs 200000]
                             [--slow-designs 2000] [--repeats 3]

The first table compares the vectorised model with one design per call, for plain plate
fins in forced and natural convection. The second measures, in the same run and on the
arrays path the search uses (``evaluate_arrays``), the features that take other code paths,
each as designs/s and as a ratio to the plain forced case of the first table:

``fan``
    forced by the bundled demo fan ``demo_60x25`` (invented data): the flow is the operating
    point of the fan curve on each design's system curve (a bracketed root per design).
``bypass``
    forced, open sink with 8 mm side and 10 mm top clearances: the approach flow splits
    between the fins and the gaps (an iteration per design).
``pins``
    round pin fins, forged, staggered (al_1050a, al_6063_t5, cu_c11000).
``sources3``
    forced, three eccentric sources in a row (18, 18 and 12 W on 16 x 20 mm): the
    flux-channel series (Muzychka-Culham-Yovanovich 2003), its cost growing as terms².
``taper``
    forced, plate fins tapered to a tip 0.4-1 times the root thickness.
``insert``
    forced, aluminium extrusion with a 2 mm copper spreader insert (50 x 50 mm) under one
    centred source.

The cheap cases use ``--case-designs`` designs (default 200 000); ``sources3`` and
``insert`` are about a thousand times slower per design and use ``--slow-designs``
(default 2 000), so that the default run stays under about a minute on a 2-core machine.
Their ratios compare rates, not equal batch sizes; at 2 000 designs the per-call overhead
is well under 1 % of their time. The insert designs are drawn so that their fins fit
across the base: a design that cannot exist gets the geometry's stand-in 1 mm base, which
the insert model refuses for a thicker insert. The plain forced case is the throughput
target (2e6 designs/s in good runs); the last line says so beside the rate measured.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from optifin.fans import load_fans
from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate
from optifin.model.design import Designs
from optifin.model.sink import evaluate_arrays

#: The throughput the plain forced case reaches in good runs [designs/s].
TARGET = 2e6


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


def with_columns(designs: Designs, **columns) -> Designs:
    """The designs with some columns replaced or added."""
    fields = {c: getattr(designs, c) for c in ("fin_count", "fin_thickness", "fin_height")}
    fields.update(
        {c: getattr(designs, c) for c in ("base_thickness", "width", "length", "finish")},
        material=designs.material,
        process=designs.process,
    )
    fields.update(columns)
    return Designs(**fields)


def feature_cases(n: int, n_slow: int, library, rng) -> dict:
    """name -> (designs, condition, description) of the features with their own paths."""
    one = [HeatSource(60.0, 0.04, 0.04)]
    common = {"ambient_temperature": 308.15, "max_base_temperature": 368.15}
    plain = random_designs(n, library, rng)
    code = library.material_code
    pins = with_columns(
        plain,
        fin_count=np.full(n, 2),  # ignored for pins
        fin_height=rng.uniform(10e-3, 40e-3, n),
        material=rng.choice([code(k) for k in ("al_1050a", "al_6063_t5", "cu_c11000")], n),
        process=np.full(n, library.process_code("forging")),
        fin_type=np.ones(n, dtype=np.int64),
        pin_layout=np.ones(n, dtype=np.int64),
        pin_diameter=rng.uniform(1.5e-3, 4e-3, n),
        pin_pitch_transverse=rng.uniform(4e-3, 10e-3, n),
        pin_pitch_longitudinal=rng.uniform(4e-3, 10e-3, n),
    )
    row = random_designs(n_slow, library, rng)
    row = with_columns(
        row, width=rng.uniform(100e-3, 120e-3, n_slow), length=rng.uniform(70e-3, 120e-3, n_slow)
    )
    three = [
        HeatSource(18.0, 0.016, 0.020, x=0.020, y=0.035),
        HeatSource(18.0, 0.016, 0.020, x=0.050, y=0.035),
        HeatSource(12.0, 0.016, 0.020, x=0.080, y=0.035),
    ]
    inserted = with_columns(
        random_designs(n_slow, library, rng),
        fin_count=rng.integers(6, 30, n_slow),  # 30 x 1.5 mm < 60 mm: every design exists
        fin_thickness=rng.uniform(0.3e-3, 1.5e-3, n_slow),
        width=rng.uniform(60e-3, 120e-3, n_slow),
        length=rng.uniform(60e-3, 120e-3, n_slow),
        material=np.full(n_slow, code("al_6063_t5")),
        process=np.full(n_slow, library.process_code("extrusion")),
        insert_material=np.full(n_slow, code("cu_c11000")),
        insert_thickness=np.full(n_slow, 2e-3),
        insert_width=np.full(n_slow, 50e-3),
        insert_length=np.full(n_slow, 50e-3),
    )
    forced = Condition(sources=one, approach_velocity=2.5, **common)
    return {
        "fan": (
            plain,
            Condition(sources=one, fan=load_fans()["demo_60x25"].curve, **common),
            "fan demo_60x25, operating point",
        ),
        "bypass": (
            plain,
            Condition(
                sources=one,
                approach_velocity=2.5,
                side_clearance=8e-3,
                top_clearance=10e-3,
                **common,
            ),
            "open, clearances 8/10 mm",
        ),
        "pins": (pins, forced, "pin fins, forging, staggered"),
        "sources3": (
            row,
            Condition(
                sources=three,
                ambient_temperature=308.15,
                approach_velocity=2.5,
                max_source_temperature=383.15,
            ),
            "3 eccentric sources, flux-channel series",
        ),
        "taper": (
            with_columns(plain, fin_tip_thickness=plain.fin_thickness * rng.uniform(0.4, 1, n)),
            forced,
            "tapered plate fins",
        ),
        "insert": (inserted, forced, "copper insert in an aluminium base"),
    }


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
    parser.add_argument(
        "--case-designs", type=int, default=200_000, help="designs for fan, bypass, pins, taper"
    )
    parser.add_argument(
        "--slow-designs", type=int, default=2_000, help="designs for sources3 and insert"
    )
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
    rates = {}
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
        rates[name] = rate_arrays
        print(f"{name:<8} {'vectorised (arrays)':<22} {n:>9} {rate_arrays:>12.3g}")
        print(f"{name:<8} {'vectorised (DataFrame)':<22} {n:>9} {rate_frame:>12.3g}")
        print(f"{name:<8} {'one design per call':<22} {args.loop:>9} {rate_loop:>12.3g}")
        print(
            f"{name:<8} ratio vectorised/loop: arrays {rate_arrays / rate_loop:.0f}x, "
            f"DataFrame {rate_frame / rate_loop:.0f}x"
        )

    features = feature_cases(args.case_designs, args.slow_designs, library, rng)
    print()
    print(f"{'case':<8} {'path':<22} {'designs':>9} {'designs/s':>12} {'vs forced':>10}  what")
    for name, (batch, cond, what) in features.items():
        evaluate_arrays(batch.take(slice(0, 10)), cond, library)  # warm this path
        t = best_of(args.repeats, lambda b=batch, c=cond: evaluate_arrays(b, c, library))
        rate = len(batch) / t
        print(
            f"{name:<8} {'vectorised (arrays)':<22} {len(batch):>9} {rate:>12.3g} "
            f"{rate / rates['forced']:>9.3g}x  {what}"
        )
    note = (
        f"note: forced (plain plate fins, vectorised arrays) is the throughput target, "
        f"{TARGET:.0e} designs/s in good runs; this run {rates['forced']:.3g} designs/s"
    )
    print(note.replace("e+0", "e"))


if __name__ == "__main__":
    main()

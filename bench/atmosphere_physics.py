"""Benchmark: standard-atmosphere properties for many altitudes, ours against ambiance.

Both sides start from the same random geometric altitudes in [-5 km, 86 km] and produce six
properties: pressure, temperature, density, speed of sound, dynamic and kinematic viscosity
(ours includes the geometric -> geopotential conversion, as ambiance does internally). The
time is the best of ``repeat`` runs; the ratio is ours / ambiance's. The goal is <= 0.05.

ambiance refuses geometric heights above 81 020 m (its tables stop at 80 km geopotential);
it is called with ``check_bounds=False``, which extends its last layer (-2 K/km from 71 km,
the same layer as the 1976 standard's up to 84.852 km geopotential) over the rest of the
range, and also skips its bounds check, which only makes ambiance faster (the ratio is, if
anything, pessimistic for us).

Environment: single-threaded NumPy ufuncs only; no BLAS routine is used, so OPENBLAS_* /
OMP_* thread variables make no difference here.

Run from the repository root::

    /work/venv/bin/python -m bench.atmosphere_physics
"""

from __future__ import annotations

import time
import timeit

import numpy as np
from ambiance import Atmosphere

from service.physics import atmosphere as atm

PROPERTIES = (
    "pressure",
    "temperature",
    "density",
    "speed_of_sound",
    "dynamic_viscosity",
    "kinematic_viscosity",
)


def ours(h: np.ndarray) -> dict[str, np.ndarray]:
    """The six properties with qbar's physics functions, from geometric altitude [m]."""
    T, p = atm.standard_state(atm.geopotential_altitude(h))
    rho = atm.density(p, T)
    return {
        "pressure": p,
        "temperature": T,
        "density": rho,
        "speed_of_sound": atm.speed_of_sound(T),
        "dynamic_viscosity": atm.dynamic_viscosity(T),
        "kinematic_viscosity": atm.kinematic_viscosity(T, rho),
    }


def theirs(h: np.ndarray) -> dict[str, np.ndarray]:
    """The same six properties with ambiance, from geometric altitude [m]."""
    air = Atmosphere(h, check_bounds=False)
    return {name: getattr(air, name) for name in PROPERTIES}


def _best_times(h: np.ndarray, repeat: int) -> tuple[float, float, dict, dict]:
    """Best-of-``repeat`` times of ours and theirs, interleaved so both see the same load."""
    ours_s = ambiance_s = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        mine = ours(h)
        middle = time.perf_counter()
        other = theirs(h)
        end = time.perf_counter()
        ours_s, ambiance_s = min(ours_s, middle - start), min(ambiance_s, end - middle)
    return ours_s, ambiance_s, mine, other


def run(n: int = 1_000_000, repeat: int = 5, seed: int = 20_260_101) -> dict:
    """Time both implementations on ``n`` random altitudes; compare their results.

    Returns a dict: ``n``, ``ours_s`` and ``ambiance_s`` (best of ``repeat``, seconds),
    ``ratio`` (ours / ambiance), ``max_rel_diff`` (per property, largest |ours/theirs - 1|)
    and ``scalar_us`` (microseconds per call of ``standard_state`` on one float).
    """
    h = np.random.default_rng(seed).uniform(-5_000.0, 86_000.0, n)
    ours(h[:1000])  # warm-up
    theirs(h[:1000])
    ours_s, ambiance_s, mine, other = _best_times(h, repeat)
    max_rel_diff = {
        name: float(np.max(np.abs(mine[name] / other[name] - 1.0))) for name in PROPERTIES
    }
    calls = 20_000
    scalar_us = min(
        timeit.repeat(lambda: atm.standard_state(1234.5), number=calls, repeat=repeat)
    ) / calls * 1e6
    return {
        "n": n,
        "ours_s": ours_s,
        "ambiance_s": ambiance_s,
        "ratio": ours_s / ambiance_s,
        "max_rel_diff": max_rel_diff,
        "scalar_us": scalar_us,
    }


def main() -> None:
    result = run()
    print(f"{result['n']:,} random geometric altitudes in [-5 km, 86 km], six properties")
    print(f"{'':24}{'time [ms]':>12}")
    print(f"{'qbar':24}{result['ours_s'] * 1e3:12.1f}")
    print(f"{'ambiance':24}{result['ambiance_s'] * 1e3:12.1f}")
    print(f"{'ratio qbar / ambiance':24}{result['ratio']:12.4f}   (goal <= 0.05)")
    print(f"{'standard_state(scalar)':24}{result['scalar_us']:12.2f}   us per call")
    print("largest relative difference, qbar vs ambiance:")
    for name, diff in result["max_rel_diff"].items():
        print(f"  {name:22}{diff:12.2e}")


if __name__ == "__main__":
    main()

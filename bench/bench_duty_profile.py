"""Time the reduction of a measured duty profile of 1,000,000 samples (best of 5).

Run: python bench/bench_duty_profile.py

The profile is a seeded, repeating machine cycle (accelerate, run with load ripple,
brake, dwell with holding torque) plus measurement noise, at the motor shaft.
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from rulecheck.physics.dynamics import reduce_profile  # noqa: E402

SAMPLES = 1_000_000
SEED = 20240611
RPM = 2 * math.pi / 60


def make_profile(samples: int = SAMPLES, seed: int = SEED) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Return time [s], speed [rad/s] and torque [N*m] of a 100 s cycle sampled ``samples`` times."""
    rng = np.random.default_rng(seed)
    t = np.linspace(0.0, 100.0, samples)
    phase = np.mod(t, 20.0)  # five 20 s cycles
    top = 1455 * RPM
    speed = np.select(
        [phase < 2.0, phase < 12.0, phase < 14.0],
        [top * phase / 2.0, np.full_like(t, top), top * (14.0 - phase) / 2.0],
        default=0.0,
    )
    inertia = 0.6  # kg*m^2 at the motor shaft
    accel = np.select([phase < 2.0, phase < 12.0, phase < 14.0], [top / 2.0, 0.0, -top / 2.0], default=0.0)
    load = np.where(speed > 0, 30.0 + 4.0 * np.sin(2 * np.pi * t / 0.7), 8.0)  # holding torque in the dwell
    torque = load + inertia * accel + rng.normal(0.0, 0.5, samples)
    return t, speed + rng.normal(0.0, 0.2, samples), torque


def main() -> None:
    t, speed, torque = make_profile()
    best = math.inf
    for _ in range(5):
        start = time.perf_counter()
        result = reduce_profile(t, speed, torque)
        best = min(best, time.perf_counter() - start)
    print(f"samples            {t.size:,}")
    print(f"best of 5          {best * 1000:.1f} ms")
    print(f"peak torque        {result.peak_torque:.2f} N*m at {result.speed_at_peak / RPM:.0f} r/min")
    print(f"RMS torque         {result.rms_torque:.2f} N*m (standstill cooling factor 0.5)")
    print(f"mean |torque|      {result.mean_abs_torque:.2f} N*m")
    print(f"regenerated energy {result.regenerative_energy / 1000:.2f} kJ per profile")
    print(f"peak braking power {result.peak_braking_power / 1000:.2f} kW")
    print(f"standstill time    {result.standstill_time:.2f} s of {result.cycle_time:.2f} s")


if __name__ == "__main__":
    main()

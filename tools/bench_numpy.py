#!/usr/bin/python3
"""Plain vectorised NumPy version of shoreward's C-layout forward-backward step, for `shoreward bench`.

usage: bench_numpy.py N STEPS {float64,float32}

Same scheme as src/model/layout_c.c: eta at cell centres, u on east faces, v on north faces, arrays padded
with one halo cell, walls all round, constant depth; eta first from the old velocities, then the
velocities from the new eta. Prints one JSON object: {"cell_updates_per_s": ..., "seconds": ...}.
This is the straightforward NumPy a modeller would write; it is not tuned (no numexpr, no in-place
tricks beyond -=).
"""
import json
import sys
import time

import numpy as np


def main():
    n, steps, dtype = int(sys.argv[1]), int(sys.argv[2]), np.dtype(sys.argv[3])
    g, h, d = 9.81, 1000.0, 1000.0
    dt = 0.9 * d / (np.sqrt(g * h) * np.sqrt(2.0))   # 90 % of the C-layout 2D limit, dx / (c sqrt 2)
    shape = (n + 2, n + 2)
    eta = np.zeros(shape, dtype)
    u = np.zeros(shape, dtype)
    v = np.zeros(shape, dtype)
    hx = np.zeros(shape, dtype)
    hy = np.zeros(shape, dtype)
    hx[1:-1, 1:-2] = h          # east faces of interior cells, walls at the domain edges
    hy[1:-2, 1:-1] = h
    y, x = np.mgrid[0:n, 0:n]
    eta[1:-1, 1:-1] = np.exp(-((x - n / 2) ** 2 + (y - n / 2) ** 2) / (n / 8) ** 2)
    cx = cy = dtype.type(dt / d)
    gx = gy = dtype.type(g * dt / d)

    def step():
        eta[1:-1, 1:-1] -= (cx * (hx[1:-1, 1:-1] * u[1:-1, 1:-1] - hx[1:-1, :-2] * u[1:-1, :-2])
                            + cy * (hy[1:-1, 1:-1] * v[1:-1, 1:-1] - hy[:-2, 1:-1] * v[:-2, 1:-1]))
        u[1:-1, :-1] = np.where(hx[1:-1, :-1] > 0, u[1:-1, :-1] - gx * (eta[1:-1, 1:] - eta[1:-1, :-1]), 0)
        v[:-1, 1:-1] = np.where(hy[:-1, 1:-1] > 0, v[:-1, 1:-1] - gy * (eta[1:, 1:-1] - eta[:-1, 1:-1]), 0)

    step()   # warm-up
    t0 = time.perf_counter()
    for _ in range(steps):
        step()
    sec = time.perf_counter() - t0
    out = {"cell_updates_per_s": n * n * steps / sec, "seconds": sec, "n": n, "steps": steps,
           "dtype": str(dtype)}
    print(json.dumps(out))


if __name__ == "__main__":
    main()

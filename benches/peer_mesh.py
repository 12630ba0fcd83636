#!/usr/bin/env python3
"""Side-by-side meshing throughput: fluxwright's mesher against the
general-purpose `triangle` package from PyPI (pip install triangle).

The geometry is the device-like model of benches/mesh.rs (E core, armature
across a 1 mm air gap, two coil sides, air box; dimensions in mm). Our
mesher runs through the bench binary in peer mode (FLUXWRIGHT_MESH_PEER),
with its size field. `triangle` gets the same planar straight-line graph,
quality `q25` and one global area limit, tuned so that it makes the same
number of triangles; both report the median of five runs.

Usage: python3 benches/peer_mesh.py [triangles ...]   (default 100000 1000000)
"""
import glob
import json
import os
import subprocess
import sys
import time

import numpy as np
import triangle


def device_pslg():
    """Vertices, segments, and one region point per shape."""
    loops = [
        [(-100, -80), (100, -80), (100, 80), (-100, 80)],
        [(-30, 0), (30, 0), (30, 40), (22, 40), (22, 6), (8, 6), (8, 40),
         (-8, 40), (-8, 6), (-22, 6), (-22, 40), (-30, 40)],
        [(-30, 41), (30, 41), (30, 47), (-30, 47)],
        [(-20, 8), (-10, 8), (-10, 38), (-20, 38)],
        [(10, 8), (20, 8), (20, 38), (10, 38)],
    ]
    vertices, segments = [], []
    for loop in loops:
        base = len(vertices)
        vertices.extend(loop)
        n = len(loop)
        segments.extend([base + i, base + (i + 1) % n] for i in range(n))
    regions = [[0, -40, 1, 0], [-26, 20, 2, 0], [0, 44, 3, 0], [-15, 20, 4, 0], [15, 20, 5, 0]]
    return dict(vertices=np.array(vertices, float), segments=np.array(segments),
                regions=np.array(regions, float))


def triangle_run(pslg, area):
    t = time.perf_counter()
    out = triangle.triangulate(pslg, f"pq25a{area:.10g}AQ")
    return time.perf_counter() - t, len(out["triangles"])


def triangle_matching(pslg, target):
    area = 32000.0 * 2.31 / target  # first guess: uniform equilateral count
    for _ in range(6):
        _, n = triangle_run(pslg, area)
        area *= n / target
    times = []
    for _ in range(5):
        dt, n = triangle_run(pslg, area)
        times.append(dt)
    return sorted(times)[2], n


def ours(target):
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    subprocess.run(["cargo", "bench", "--bench", "mesh", "--no-run"], cwd=root, check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    candidates = [p for p in glob.glob(os.path.join(root, "target", "release", "deps", "mesh-*"))
                  if os.access(p, os.X_OK) and not p.endswith(".d")]
    binary = max(candidates, key=os.path.getmtime)
    env = dict(os.environ, FLUXWRIGHT_MESH_PEER=str(target))
    env.pop("FLUXWRIGHT_MESH_TIMING", None)
    out = subprocess.run([binary], env=env, check=True, capture_output=True, text=True).stdout
    return json.loads(out.strip().splitlines()[-1])


def main():
    targets = [int(a) for a in sys.argv[1:]] or [100_000, 1_000_000]
    pslg = device_pslg()
    print(f"{'target':>9} {'ours tris':>10} {'ours s':>8} {'ours tri/s':>11} "
          f"{'triangle tris':>13} {'triangle s':>10} {'triangle tri/s':>14} {'ratio':>6}")
    for target in targets:
        mine = ours(target)
        t_time, t_tris = triangle_matching(pslg, mine["triangles"])
        ours_rate = mine["triangles"] / mine["median_seconds"]
        peer_rate = t_tris / t_time
        print(f"{target:>9} {mine['triangles']:>10} {mine['median_seconds']:>8.3f} {ours_rate:>11.3e} "
              f"{t_tris:>13} {t_time:>10.3f} {peer_rate:>14.3e} {ours_rate / peer_rate:>6.2f}")


if __name__ == "__main__":
    main()

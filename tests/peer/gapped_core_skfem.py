#!/usr/bin/env python3
"""Outside reference for fluxwright's nonlinear solver.

An invented planar model (not a real product): a gapped C-core choke for a
made-up 3 kW inverter, driven by an invented fault current far into
saturation. This script solves it with the general-purpose finite-element
library scikit-fem (its own structured triangle mesh, its own assembly, our
own few-line Newton iteration on top) and writes

* ``gapped_core.toml``: the same model in fluxwright's model format, with
  the B-H law below sampled into ``bh_curve``;
* ``gapped_core_reference.json``: energy and probe values of the finest
  scikit-fem solve, the convergence table, library versions and the date.

Rerun from the repository root (see README.md beside this file)::

    pip install scikit-fem==12.0.2
    python3 tests/peer/gapped_core_skfem.py

Formulation: planar, A = A_z(x, y), B = (dA/dy, -dA/dx), so |B| = |grad A|.
Weak form  integral of nu(|B|^2) grad A . grad v  =  integral of J v,  with
A = 0 on the outer box. Newton's tangent is
nu grad du . grad v + 2 (dnu/dB^2) (grad A . grad du)(grad A . grad v).
Quadratic (P2) Lagrange triangles, degree-4 quadrature (scikit-fem's
default for P2).

Iron law (analytic, used by the reference solve):
    B(H) = mu0 H + Js (2/pi) atan(pi (mu_i - 1) mu0 H / (2 Js)),
initial relative permeability mu_i, slope tending to mu0 in saturation.
"""

import datetime
import json
import math
import platform
import sys
import time
from pathlib import Path

import numpy as np
import scipy
import scipy.sparse.linalg as spla
import skfem
from skfem import Basis, BilinearForm, CellBasis, ElementTriP2, LinearForm, MeshTri, asm, condense
from skfem.helpers import dot, grad

HERE = Path(__file__).resolve().parent
TOML_PATH = HERE / "gapped_core.toml"
JSON_PATH = HERE / "gapped_core_reference.json"

MU0 = 4.0e-7 * math.pi  # the value fluxwright uses (pre-2019 exact)
NU0 = 1.0 / MU0
MM = 1e-3

# ---------------------------------------------------------------- B-H law
JS = 1.9  # saturation polarisation, T
MU_I = 3000.0  # initial relative permeability
K_ATAN = math.pi * (MU_I - 1.0) * MU0 / (2.0 * JS)  # 1/(A/m)
BH_SAMPLES = 56  # sampled points besides the origin
BH_H_FIRST = 10.0  # A/m, first sample
BH_B_LAST = 4.0  # T, the table ends where B reaches this


def b_of_h(h):
    """The analytic law B(H), T."""
    return MU0 * h + JS * (2.0 / math.pi) * np.arctan(K_ATAN * h)


def coenergy_density_of_h(h):
    """Integral of B dH from 0 to H (closed form), J/m^3."""
    kh = K_ATAN * h
    return 0.5 * MU0 * h * h + JS * (2.0 / math.pi) * (h * np.arctan(kh) - np.log1p(kh * kh) / (2.0 * K_ATAN))


def h_of_b(b):
    """Inverse of b_of_h, A/m, vectorised.

    With u = atan(k H): B = (mu0/k) tan u + (2 Js/pi) u, convex and
    increasing in u on [0, pi/2), so Newton's method started right of the
    root converges monotonically. Both u = pi B/(2 Js) (when below pi/2)
    and u = atan(k B/mu0) lie right of the root.
    """
    b = np.abs(np.asarray(b, dtype=float))
    c1, c2 = MU0 / K_ATAN, 2.0 * JS / math.pi
    u = np.arctan(K_ATAN * b / MU0)
    below = b < JS
    u[below] = np.minimum(u[below], math.pi * b[below] / (2.0 * JS))
    for _ in range(100):
        t = np.tan(u)
        g = c1 * t + c2 * u - b
        step = g / (c1 * (1.0 + t * t) + c2)
        u = u - step
        if np.all(np.abs(step) <= 1e-15 * np.maximum(u, 1e-300)):
            break
    return np.tan(u) / K_ATAN


class AnalyticLaw:
    """Reluctivity and energy density of the analytic law."""

    name = "analytic atan law"

    # Series H = B/a + c B^3 near B = 0 (a = mu0 mu_i), used for dnu/dB^2
    # below SMALL_B where H'B - H cancels.
    _a = MU0 * MU_I
    _c = ((MU_I - 1.0) * MU0 * K_ATAN**2 / 3.0) / _a**4
    SMALL_B = 1e-3

    def reluctivity(self, b2):
        b = np.sqrt(b2)
        small = b < self.SMALL_B
        bs = np.where(small, 1.0, b)
        h = h_of_b(bs)
        dh = 1.0 / (MU0 + JS * (2.0 / math.pi) * K_ATAN / (1.0 + (K_ATAN * h) ** 2))
        nu = h / bs
        dnu = (dh * bs - h) / (2.0 * bs**3)
        nu = np.where(small, 1.0 / self._a + self._c * b2, nu)
        dnu = np.where(small, self._c, dnu)
        return nu, dnu

    def energy_density(self, b):
        h = h_of_b(b)
        return np.abs(b) * h - coenergy_density_of_h(h)


class SampledLaw:
    """The sampled table interpolated as fluxwright does (a port of
    fluxwright-solver's material.rs, used only to measure what the sampling
    changes): monotone cubic Hermite H(B), Fritsch-Butland interior slopes,
    clamped three-point first slope, last slope 1/mu0, straight line of
    slope 1/mu0 beyond the last point."""

    name = "sampled table, monotone cubic H(B)"

    def __init__(self, h, b):
        self.h = np.asarray(h, float)
        self.b = np.asarray(b, float)
        n = len(self.b)
        w = np.diff(self.b)
        sec = np.diff(self.h) / w
        s = np.zeros(n)
        for k in range(1, n - 1):
            h0, h1 = w[k - 1], w[k]
            w1, w2 = 2 * h1 + h0, h1 + 2 * h0
            s[k] = (w1 + w2) / (w1 / sec[k - 1] + w2 / sec[k])
        three = ((2 * w[0] + w[1]) * sec[0] - w[0] * sec[1]) / (w[0] + w[1])
        s[0] = min(max(three, 0.5 * sec[0]), 3.0 * sec[0])
        s[-1] = NU0
        self.s = s
        assert sec[-1] * 3.0 >= NU0, "table must end in saturation (no continuation knot)"
        e = np.zeros(n)
        for k in range(1, n):
            e[k] = e[k - 1] + self._seg_integral(np.array([k - 1]), np.array([1.0]))[0]
        self.e = e

    def _seg_integral(self, k, t):
        w = self.b[k + 1] - self.b[k]
        t2, t3, t4 = t * t, t**3, t**4
        i00 = 0.5 * t4 - t3 + t
        i10 = 0.25 * t4 - 2.0 / 3.0 * t3 + 0.5 * t2
        i01 = -0.5 * t4 + t3
        i11 = 0.25 * t4 - t3 / 3.0
        return w * (i00 * self.h[k] + i10 * w * self.s[k] + i01 * self.h[k + 1] + i11 * w * self.s[k + 1])

    def h_and_slope(self, b):
        b = np.abs(b)
        n = len(self.b)
        k = np.clip(np.searchsorted(self.b, b, side="right") - 1, 0, n - 2)
        past = b >= self.b[-1]
        w = self.b[k + 1] - self.b[k]
        t = (b - self.b[k]) / w
        t2, t3 = t * t, t**3
        hk, hk1, dk, dk1 = self.h[k], self.h[k + 1], self.s[k] * w, self.s[k + 1] * w
        val = (2 * t3 - 3 * t2 + 1) * hk + (t3 - 2 * t2 + t) * dk + (-2 * t3 + 3 * t2) * hk1 + (t3 - t2) * dk1
        der = ((6 * t2 - 6 * t) * hk + (3 * t2 - 4 * t + 1) * dk + (-6 * t2 + 6 * t) * hk1 + (3 * t2 - 2 * t) * dk1) / w
        val = np.where(past, self.h[-1] + NU0 * (b - self.b[-1]), val)
        der = np.where(past, NU0, der)
        return val, der

    def reluctivity(self, b2):
        b = np.sqrt(np.maximum(b2, 0.0))
        w, h1, d0, d1 = self.b[1], self.h[1], self.s[0], self.s[1]
        a2 = (3 * h1 / w - 2 * d0 - d1) / w
        a3 = (d0 + d1 - 2 * h1 / w) / (w * w)
        first = b < w
        bs = np.maximum(b, 1e-9 * w)
        h, dh = self.h_and_slope(bs)
        nu = np.where(first, d0 + a2 * b + a3 * b * b, h / bs)
        dnu = np.where(first, (a2 + 2 * a3 * bs) / (2 * bs), (dh * bs - h) / (2 * bs**3))
        return nu, dnu

    def energy_density(self, b):
        b = np.abs(b)
        n = len(self.b)
        k = np.clip(np.searchsorted(self.b, b, side="right") - 1, 0, n - 2)
        t = (b - self.b[k]) / (self.b[k + 1] - self.b[k])
        inside = self.e[k] + self._seg_integral(k, t)
        d = b - self.b[-1]
        past = self.e[-1] + self.h[-1] * d + 0.5 * NU0 * d * d
        return np.where(b >= self.b[-1], past, inside)


def bh_table():
    """The sampled points (origin first): geometric in H from BH_H_FIRST to
    the H where B = BH_B_LAST."""
    h_last = float(h_of_b(np.array([BH_B_LAST]))[0])
    h = np.concatenate([[0.0], np.geomspace(BH_H_FIRST, h_last, BH_SAMPLES)])
    return h, b_of_h(h)


# --------------------------------------------------------------- geometry
# All in mm. Shapes are drawn in this order; a later one covers earlier ones.
DEPTH_MM = 25.0
TURNS = 120
CURRENT_A = 250.0
CORE = ((0.0, 0.0), (60.0, 50.0))
WINDOW = ((12.0, 12.0), (48.0, 38.0))
GAP = ((48.0, 24.5), (60.0, 25.5))
COIL_GO = ((14.0, 14.0), (24.0, 36.0))  # in the window, +z
COIL_RETURN = ((-12.0, 14.0), (-2.0, 36.0))  # outside the wound leg, -z
OUTER = ((-60.0, -50.0), (120.0, 100.0))
PROBES = {
    # Away from corners and grid lines of either mesh where possible.
    "wound_leg": (6.0, 25.0),
    "top_yoke": (30.0, 44.0),
    "gapped_leg": (54.0, 17.0),
    "gap_centre": (54.0, 25.0),
}

# Mesh sizes for fluxwright's own (fast) solve in the Rust test, mm.
FW_MAX_SIZE = 12.0
FW_CORE_SIZE = 2.0
FW_GAP_SIZE = 0.5
FW_COIL_SIZE = 3.0


def axis_nodes(breaks, size):
    """1D grid through every break point, spacing following `size(x)`."""
    nodes = [breaks[0]]
    for a, b in zip(breaks[:-1], breaks[1:]):
        xs = np.linspace(a, b, 2001)
        dens = np.cumsum(np.concatenate([[0.0], 0.5 * (1 / size(xs[1:]) + 1 / size(xs[:-1])) * np.diff(xs)]))
        n = max(1, int(math.ceil(dens[-1] - 1e-9)))
        targets = np.linspace(0.0, dens[-1], n + 1)[1:]
        nodes.extend(np.interp(targets, dens, xs))
        nodes[-1] = b
    return np.array(nodes)


def dist_to_interval(x, lo, hi):
    return np.maximum(0.0, np.maximum(lo - x, x - hi))


def structured_mesh(level):
    """scikit-fem tensor triangle mesh in metres: grid lines through every
    material edge, graded towards the gap edges; sizes halve per level."""
    f = 0.5**level
    h_core, h_gap, h_max, grow = 1.5 * f, 0.2 * f, 8.0 * f, 0.25

    def size_x(x):
        near_core = h_core + grow * dist_to_interval(x, COIL_RETURN[0][0], CORE[1][0])
        near_gap = h_gap + grow * np.minimum(np.abs(x - GAP[0][0]), np.abs(x - GAP[1][0]))
        return np.minimum(np.minimum(near_core, near_gap), h_max)

    def size_y(y):
        near_core = h_core + grow * dist_to_interval(y, CORE[0][1], CORE[1][1])
        near_gap = h_gap + grow * dist_to_interval(y, GAP[0][1], GAP[1][1])
        return np.minimum(np.minimum(near_core, near_gap), h_max)

    rects = [CORE, WINDOW, GAP, COIL_GO, COIL_RETURN, OUTER]
    xb = sorted({r[0][0] for r in rects} | {r[1][0] for r in rects})
    yb = sorted({r[0][1] for r in rects} | {r[1][1] for r in rects})
    x = axis_nodes(xb, size_x)
    y = axis_nodes(yb, size_y)
    return MeshTri.init_tensor(x * MM, y * MM)


def inside(rect, px, py):
    (x0, y0), (x1, y1) = rect
    return (px > x0 * MM) & (px < x1 * MM) & (py > y0 * MM) & (py < y1 * MM)


def regions(mesh):
    """Per element: iron mask and current density (A/m^2)."""
    c = mesh.p[:, mesh.t].mean(axis=1)
    px, py = c[0], c[1]
    iron = inside(CORE, px, py) & ~inside(WINDOW, px, py) & ~inside(GAP, px, py)
    j = np.zeros(mesh.t.shape[1])
    ni = TURNS * CURRENT_A
    for rect, sign in ((COIL_GO, 1.0), (COIL_RETURN, -1.0)):
        (x0, y0), (x1, y1) = rect
        j[inside(rect, px, py)] = sign * ni / ((x1 - x0) * (y1 - y0) * MM * MM)
    return iron, j


# ----------------------------------------------------------------- solver
@BilinearForm
def tangent(u, v, w):
    gu, gv = grad(u), grad(v)
    ga_u = w.gx * gu[0] + w.gy * gu[1]
    ga_v = w.gx * gv[0] + w.gy * gv[1]
    return w.nu * dot(gu, gv) + 2.0 * w.dnu * ga_u * ga_v


@LinearForm
def residual_form(v, w):
    gv = grad(v)
    return w.nu * (w.gx * gv[0] + w.gy * gv[1]) - w.j * v


class Problem:
    def __init__(self, level, law):
        self.mesh = structured_mesh(level)
        self.basis = Basis(self.mesh, ElementTriP2())
        self.law = law
        iron, j = regions(self.mesh)
        nq = self.basis.X.shape[1]
        self.iron = np.repeat(iron[:, None], nq, axis=1)
        self.j = np.repeat(j[:, None], nq, axis=1)
        self.dirichlet = self.basis.get_dofs().all()
        self.free = np.setdiff1d(np.arange(self.basis.N), self.dirichlet)

    def fields(self, a):
        g = self.basis.interpolate(a).grad
        b2 = g[0] ** 2 + g[1] ** 2
        nu = np.full_like(b2, NU0)
        dnu = np.zeros_like(b2)
        if self.iron.any():
            nu_i, dnu_i = self.law.reluctivity(b2[self.iron])
            nu[self.iron], dnu[self.iron] = nu_i, dnu_i
        return g, b2, nu, dnu

    def energy_density(self, b2):
        w = 0.5 * NU0 * b2
        w[self.iron] = self.law.energy_density(np.sqrt(b2[self.iron]))
        return w

    def functional(self, a):
        """Pi(A) = integral of w(B) - J A (per metre of depth)."""
        g = self.basis.interpolate(a)
        b2 = g.grad[0] ** 2 + g.grad[1] ** 2
        return float(np.sum((self.energy_density(b2) - self.j * g.value) * self.basis.dx))

    def residual(self, a, with_tangent):
        g, _, nu, dnu = self.fields(a)
        r = asm(residual_form, self.basis, nu=nu, gx=g[0], gy=g[1], j=self.j)
        k = asm(tangent, self.basis, nu=nu, dnu=dnu, gx=g[0], gy=g[1]) if with_tangent else None
        return r, k

    def newton(self, tol=1e-11, max_steps=60, log=print):
        a = np.zeros(self.basis.N)
        r, k = self.residual(a, True)
        r0 = np.linalg.norm(r[self.free])
        history, steps = [1.0], []
        pi_a = self.functional(a)
        while len(steps) < max_steps:
            kc, rc, _, _ = condense(k, -r, D=self.dirichlet)
            lu = spla.splu(kc.tocsc(), permc_spec="MMD_AT_PLUS_A")
            delta = np.zeros_like(a)
            delta[self.free] = lu.solve(rc)
            slope = float(r @ delta)
            alpha = 1.0
            # Armijo backtracking on the convex energy functional; the full
            # step is kept when the energy change is at rounding level.
            for _ in range(30):
                pi_t = self.functional(a + alpha * delta)
                if pi_t <= pi_a + 1e-4 * alpha * slope or abs(pi_t - pi_a) <= 1e-13 * abs(pi_a):
                    break
                alpha *= 0.5
            a = a + alpha * delta
            pi_a = pi_t
            r, k = self.residual(a, True)
            rel = np.linalg.norm(r[self.free]) / r0
            history.append(rel)
            steps.append(alpha)
            log(f"    step {len(steps):2d}: alpha {alpha:.4f}  |R|/|R0| {rel:.3e}")
            if rel <= tol:
                break
        return a, history, steps

    def energy_j(self, a):
        _, b2, _, _ = self.fields(a)
        return float(np.sum(self.energy_density(b2) * self.basis.dx)) * DEPTH_MM * MM

    def probe(self, a, xy_mm):
        """B (T) at a point: the P2 field's gradient evaluated there."""
        x = np.array([[xy_mm[0] * MM], [xy_mm[1] * MM]])
        el = int(self.mesh.element_finder()(x[0], x[1])[0])
        local = self.mesh.mapping().invF(x[:, :, None], tind=np.array([el]))[:, 0, :]
        cb = CellBasis(self.mesh, ElementTriP2(), elements=np.array([el]), quadrature=(local, np.array([1.0])))
        g = cb.interpolate(a).grad
        bx, by = float(g[1][0, 0]), float(-g[0][0, 0])
        return [bx, by]

    def saturation(self, a):
        """Peak |B| in the iron (over quadrature points) and the share of
        iron area above 1.8 T."""
        _, b2, _, _ = self.fields(a)
        b = np.sqrt(b2)
        dx = self.basis.dx
        iron_area = np.sum(dx[self.iron])
        return float(b[self.iron].max()), float(np.sum(dx[self.iron & (b > 1.8)]) / iron_area)


def solve_level(level, law, log=print):
    t0 = time.perf_counter()
    p = Problem(level, law)
    log(f"  level {level} ({law.name}): {p.mesh.t.shape[1]} triangles, {len(p.free)} unknowns")
    a, history, steps = p.newton(log=log)
    peak, share = p.saturation(a)
    out = {
        "level": level,
        "law": law.name,
        "triangles": int(p.mesh.t.shape[1]),
        "unknowns": int(len(p.free)),
        "newton_steps": len(steps),
        "relative_residual": history[-1],
        "energy_j": p.energy_j(a),
        "peak_iron_b_t": peak,
        "iron_area_share_above_1_8_t": share,
        "probes": {},
        "seconds": None,
    }
    for name, xy in PROBES.items():
        b = p.probe(a, xy)
        out["probes"][name] = {"at_mm": list(xy), "b_t": b, "b_magnitude_t": math.hypot(*b)}
    out["seconds"] = round(time.perf_counter() - t0, 2)
    log(f"    energy {out['energy_j']:.6f} J, peak |B| {peak:.3f} T, iron > 1.8 T: {100 * share:.1f} %")
    return out


# ------------------------------------------------------------- the model
def rect_toml(rect):
    (x0, y0), (x1, y1) = rect
    return f"{{ min = [{x0:g}, {y0:g}], max = [{x1:g}, {y1:g}] }}"


def model_toml(h, b):
    hs = ", ".join(repr(float(v)) for v in h)
    bs = ", ".join(repr(float(v)) for v in b)
    probes = "".join(f'\n[[probe]]\nname = "{n}"\nat = [{x:g}, {y:g}]\n' for n, (x, y) in PROBES.items())
    return f"""# Written by tests/peer/gapped_core_skfem.py: edit the script, not this file.
#
# Invented scenario (not a real product): a gapped C-core choke for a made-up
# 3 kW inverter, at an invented fault current of {CURRENT_A:g} A that drives
# the iron far into saturation. The B-H curve samples the analytic law
#   B(H) = mu0 H + Js (2/pi) atan(pi (mu_i - 1) mu0 H / (2 Js)),
#   Js = {JS} T, mu_i = {MU_I:g}
# at {BH_SAMPLES} points geometric in H from {BH_H_FIRST:g} A/m to B = {BH_B_LAST:g} T.

[model]
title = "Saturated gapped C-core (scikit-fem peer)"
length_unit = "mm"
depth = {DEPTH_MM:g}
element_order = 2

[mesh]
max_size = {FW_MAX_SIZE:g}

[materials.iron]
bh_curve = {{ h = [{hs}], b = [{bs}] }}

[windings.main]
turns = {TURNS}
current = {CURRENT_A:g}

[[shape]]
name = "core"
rectangle = {rect_toml(CORE)}
material = "iron"
mesh_size = {FW_CORE_SIZE:g}

[[shape]]
name = "window"
rectangle = {rect_toml(WINDOW)}
mesh_size = {FW_COIL_SIZE:g}

[[shape]]
name = "gap"
rectangle = {rect_toml(GAP)}
mesh_size = {FW_GAP_SIZE:g}

[[shape]]
name = "coil_go"
rectangle = {rect_toml(COIL_GO)}
winding = "main"
direction = 1
mesh_size = {FW_COIL_SIZE:g}

[[shape]]
name = "coil_return"
rectangle = {rect_toml(COIL_RETURN)}
winding = "main"
direction = -1
mesh_size = {FW_COIL_SIZE:g}

[outer]
shape = {{ rectangle = {rect_toml(OUTER)} }}
condition = "zero-potential"
{probes}"""


def main():
    levels = [int(a) for a in sys.argv[1:]] or [0, 1, 2]
    h, b = bh_table()
    TOML_PATH.write_text(model_toml(h, b))
    print(f"wrote {TOML_PATH}")

    analytic, sampled = AnalyticLaw(), SampledLaw(h, b)
    bb = np.linspace(1e-3, BH_B_LAST, 40001)
    h_exact = h_of_b(bb)
    h_interp = sampled.h_and_slope(bb)[0]
    w_exact, w_interp = analytic.energy_density(bb), sampled.energy_density(bb)
    law_gap = {
        "max_relative_h_difference": float(np.max(np.abs(h_interp - h_exact) / h_exact)),
        "max_relative_energy_density_difference": float(np.max(np.abs(w_interp - w_exact) / w_exact)),
    }
    print(f"sampled vs analytic law on 0 < B <= {BH_B_LAST} T: {law_gap}")

    runs = [solve_level(level, analytic) for level in levels]
    # What the sampling and fluxwright's interpolation change: the same
    # mesh solved with the ported interpolant of the sampled table.
    compare_level = levels[-2] if len(levels) > 1 else levels[-1]
    with_table = solve_level(compare_level, sampled)
    same = next(r for r in runs if r["level"] == compare_level)
    law_gap["energy_relative_difference_at_level"] = compare_level
    law_gap["energy_relative_difference"] = (with_table["energy_j"] - same["energy_j"]) / same["energy_j"]
    law_gap["probe_relative_differences"] = {
        n: with_table["probes"][n]["b_magnitude_t"] / same["probes"][n]["b_magnitude_t"] - 1.0 for n in PROBES
    }
    finest = runs[-1]
    if len(runs) > 1:
        prev = runs[-2]
        change = {
            "energy_relative_change_last_refinement": finest["energy_j"] / prev["energy_j"] - 1.0,
            "probe_relative_change_last_refinement": {
                n: finest["probes"][n]["b_magnitude_t"] / prev["probes"][n]["b_magnitude_t"] - 1.0 for n in PROBES
            },
        }
    else:
        change = {}
    reference = {
        "format": "fluxwright-peer-reference/1",
        "what": "Saturated gapped C-core (invented), planar, P2, scikit-fem with its own structured mesh",
        "model_file": "tests/peer/gapped_core.toml",
        "script": "tests/peer/gapped_core_skfem.py",
        "library": {
            "scikit-fem": skfem.__version__,
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "python": platform.python_version(),
        },
        "date": datetime.date.today().isoformat(),
        "depth_m": DEPTH_MM * MM,
        "law": {"js_t": JS, "mu_i": MU_I, "form": "B = mu0 H + Js (2/pi) atan(pi (mu_i - 1) mu0 H / (2 Js))"},
        "energy_j": finest["energy_j"],
        "probes": finest["probes"],
        "peak_iron_b_t": finest["peak_iron_b_t"],
        "iron_area_share_above_1_8_t": finest["iron_area_share_above_1_8_t"],
        "convergence": change,
        "sampled_law_effect": law_gap,
        "runs": runs + [with_table],
    }
    JSON_PATH.write_text(json.dumps(reference, indent=2) + "\n")
    print(f"wrote {JSON_PATH}")


if __name__ == "__main__":
    main()

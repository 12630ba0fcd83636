#!/usr/bin/env python3
"""Time fluxwright's CLI against scikit-fem on the NONLINEAR saturating core.

The invented gapped C-core of tests/peer/ (driven deep into saturation, P2
elements), solved by both in the same run:

* scikit-fem: the reference script's own structured mesh at a refinement
  level, its assembly and Newton iteration (Armijo line search on the
  energy), each Newton step's linear solve by CHOLMOD (scikit-sparse, the
  symbolic analysis done once and kept; simplicial LDL', since the
  supernodal LL' refused a later step's tangent as not positive definite)
  when it imports, else SciPy's SuperLU as in the reference script; the
  reference's analytic B-H law (fluxwright's model file carries it
  sampled); to a relative residual of 1e-8 (fluxwright's stopping rule);
* fluxwright: `target/release/fluxwright solve` on tests/peer/gapped_core.toml
  with every mesh size scaled so that the unknowns match the peer's,
  timed end to end as a subprocess; its own mesh + solve time from
  results.json is shown too.

Run from the repository root after `cargo build --release -p fluxwright-cli`
(pip install scikit-fem==12.0.2):

    python3 benches/peer_nonlinear.py 3      # level 3: about 1M P2 unknowns
    python3 benches/peer_nonlinear.py 1 2    # smaller levels
"""

import importlib.util
import json
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
BINARY = ROOT / "target" / "release" / "fluxwright"
MODEL = ROOT / "tests" / "peer" / "gapped_core.toml"

spec = importlib.util.spec_from_file_location("peer", ROOT / "tests" / "peer" / "gapped_core_skfem.py")
peer = importlib.util.module_from_spec(spec)
spec.loader.exec_module(peer)


def cholmod_newton(problem, tol):
    """The reference script's Newton iteration with CHOLMOD for the steps
    (symbolic analysis once, numeric LDL' factorisation per step)."""
    import numpy as np
    from sksparse.cholmod import analyze
    from skfem import condense

    a = np.zeros(problem.basis.N)
    r, k = problem.residual(a, True)
    r0 = np.linalg.norm(r[problem.free])
    pi_a = problem.functional(a)
    symbolic, steps = None, 0
    while steps < 60:
        kc, rc, _, _ = condense(k, -r, D=problem.dirichlet)
        kc = kc.tocsc()
        if symbolic is None:
            symbolic = analyze(kc, mode="simplicial")
        factor = symbolic.cholesky(kc)
        delta = np.zeros_like(a)
        delta[problem.free] = factor(rc)
        slope = float(r @ delta)
        alpha = 1.0
        for _ in range(30):
            pi_t = problem.functional(a + alpha * delta)
            if pi_t <= pi_a + 1e-4 * alpha * slope or abs(pi_t - pi_a) <= 1e-13 * abs(pi_a):
                break
            alpha *= 0.5
        a, pi_a, steps = a + alpha * delta, pi_t, steps + 1
        r, k = problem.residual(a, True)
        if np.linalg.norm(r[problem.free]) / r0 <= tol:
            break
    return a, steps


def scaled_model(scale):
    """The model file with every `max_size`/`mesh_size` multiplied by scale."""
    text = MODEL.read_text()
    return re.sub(
        r"^(\s*(?:max_size|mesh_size)\s*=\s*)([0-9.eE+-]+)",
        lambda m: f"{m.group(1)}{float(m.group(2)) * scale:.6g}",
        text,
        flags=re.M,
    )


def run_fluxwright(scale, tmp):
    model = Path(tmp) / f"core-{scale:.4f}.toml"
    model.write_text(scaled_model(scale))
    out = Path(tmp) / f"out-{scale:.4f}"
    start = time.perf_counter()
    subprocess.run([str(BINARY), "solve", str(model), "-o", str(out)], check=True, stdout=subprocess.DEVNULL)
    seconds = time.perf_counter() - start
    r = json.loads((out / "results.json").read_text())
    return r["mesh"]["unknowns"], seconds, r["solve"]["seconds"], r["solve"]["iterations"], r["energy_j"]


def main():
    levels = [int(a) for a in sys.argv[1:]] or [3]
    if not BINARY.exists():
        sys.exit(f"{BINARY} is missing: run `cargo build --release -p fluxwright-cli` first")
    # The reference solve's analytic law; fluxwright's model carries it
    # sampled (tests/peer/README.md: energies agree to about 1e-4).
    law = peer.AnalyticLaw()
    print(f"{'case':32} {'unknowns':>9} {'seconds':>9} {'Newton':>7} {'energy J':>12}")
    with tempfile.TemporaryDirectory() as tmp:
        # Unknowns go as scale^-2: calibrate once on a coarse mesh.
        n0 = run_fluxwright(1.0, tmp)[0]
        for level in levels:
            start = time.perf_counter()
            problem = peer.Problem(level, law)
            try:
                a, n_steps = cholmod_newton(problem, 1e-8)
                linear = "cholmod"
            except ImportError:
                a, _, steps = problem.newton(tol=1e-8, log=lambda _: None)
                n_steps, linear = len(steps), "superlu"
            energy = problem.energy_j(a)
            peer_s = time.perf_counter() - start
            n_peer = len(problem.free)
            # Then correct until the unknowns match within 5 % (the
            # mesh's fixed features break the scale^-2 law a little).
            scale = (n0 / n_peer) ** 0.5
            for _ in range(4):
                n, total, own, iterations, our_energy = run_fluxwright(scale, tmp)
                if abs(n / n_peer - 1) <= 0.05:
                    break
                scale *= (n / n_peer) ** 0.5
            print(f"{'fluxwright CLI (end to end)':32} {n:9d} {total:9.2f} {iterations:7d} {our_energy:12.6f}")
            print(f"{'  of which mesh + solve':32} {n:9d} {own:9.2f}")
            print(f"{'scikit-fem + ' + linear:32} {n_peer:9d} {peer_s:9.2f} {n_steps:7d} {energy:12.6f}")
            print(
                f"  ratio fluxwright / scikit-fem: {total / peer_s:.3f} end to end, {own / peer_s:.3f} mesh + solve;"
                f" energies differ by {our_energy / energy - 1:+.2e}"
            )


if __name__ == "__main__":
    main()

#!/usr/bin/env python3
"""Independent numpy reference for cagerank's tight-binding energies (src/energy), and the numpy
side of the speed comparison.

The orthogonal sp3 tight-binding model for carbon of Xu, Wang, Chan & Ho, J. Phys.: Condens.
Matter 4 (1992) 6047, written from the published formulas with whole-array numpy operations:
the Hamiltonian as an (n, 4, n, 4) tensor, numpy.linalg.eigh, the full density matrix and the
derivative tensor of every hopping. It shares no code with the Rust implementation.

Reference mode (the default) evaluates the committed geometries of tests/data/tb and prints
JSON; the committed tests/data/tb/reference.json was made with

    python3 scripts/reference_tb.py > tests/data/tb/reference.json

Timing mode (`--time`) measures, in CPU time of this process, for C60, C70 and C84:23 at the
committed start geometries:
  (a) one energy + forces evaluation, best and median of 20, with two numpy implementations:
      the all-pairs reference above and `evaluate_pairs`, the same model over the neighbour
      pairs only with the density blocks from the occupied eigenvectors (what a numpy user
      tuning for speed writes; checked against the reference before it is timed);
  (b) a full relaxation from the same geometry to a largest per-atom force below 1e-3 eV/A,
      the way a numpy user would: scipy.optimize.minimize with L-BFGS-B (scipy's defaults,
      memory 10) and the analytic gradient of `evaluate_pairs`, stopped by a callback on the
      same force criterion as cagerank (scipy's own ftol and gtol tests switched off so they
      neither stop it early nor late); best and median of 3, with iterations and evaluations.
Run it on one core, as `cargo bench -p cagerank-benches --bench energy` runs the Rust side:

    OPENBLAS_NUM_THREADS=1 OMP_NUM_THREADS=1 python3 scripts/reference_tb.py --time

`--compare` first runs the matching Rust benchmarks (`cargo bench -p cagerank-benches --bench energy --
side-by-side`, CPU time, one thread) and then the numpy timings, and prints both with their
ratios, so both sides are measured in one run under the same machine load.

Needs numpy (and scipy for --time and --compare). CI does not run this script.
"""

import json
import pathlib
import sys
import time

import numpy as np

DATA = pathlib.Path(__file__).resolve().parent.parent / "tests" / "data" / "tb"

# (file, charge): closed shells, the distorted C60 with pairs in both cutoff tails at three
# charges (one odd), and La@C82 modelled as C82 with charge -3 (odd).
CASES = [
    ("c60_start.xyz", 0),
    ("c60_distorted.xyz", 0),
    ("c60_distorted.xyz", -6),
    ("c60_distorted.xyz", -1),
    ("c70_start.xyz", 0),
    ("c82_9_start.xyz", -3),
    ("c84_23_start.xyz", 0),
]

# Xu, Wang, Chan & Ho (1992), eV and angstrom.
ES, EP = -2.99, 3.71
VSS, VSP, VPPS, VPPP = -5.00, 4.70, 5.50, -1.55
CUT = 2.6
S_R0, S_N, S_NC, S_RC, S_T = 1.536329, 2.0, 6.5, 2.18, 2.45
S_TAIL = [6.7392620074314e-3, -8.1885359517898e-2, 0.1932365259144, 0.3542874332380]
P_0, P_D0, P_M, P_MC, P_DC, P_T = 8.18555, 1.64, 3.30304, 8.6655, 2.1052, 2.57
P_TAIL = [2.2504290109e-8, -1.4408640561e-6, 2.1043303374e-5, 6.6024390226e-5]
F_COEF = [-2.5909765118191, 0.5721151498619, -1.7896349903996e-3,
          2.3539221516757e-5, -1.24251169551587e-7]
# Levels closer than this (eV) count as one degenerate level (as documented in src/energy).
DEGENERATE = 1e-5


def read_xyz(path):
    lines = pathlib.Path(path).read_text().splitlines()
    n = int(lines[0])
    return np.array([[float(v) for v in line.split()[1:4]] for line in lines[2:2 + n]])


def radial(r, r0, n, nc, rc, t0, tail, scale=1.0):
    """Piecewise radial function and its derivative, elementwise on an array of distances."""
    with np.errstate(divide="ignore", invalid="ignore"):
        core = scale * (r0 / r) ** n * np.exp(n * (-(r / rc) ** nc + (r0 / rc) ** nc))
        dcore = -core * n / r * (1.0 + nc * (r / rc) ** nc)
    t = r - t0
    poly = np.polynomial.polynomial.polyval(t, tail)
    dpoly = np.polynomial.polynomial.polyval(t, np.polynomial.polynomial.polyder(tail))
    inner, mid = r <= t0, (r > t0) & (r < CUT)
    value = np.where(inner, core, np.where(mid, poly, 0.0))
    slope = np.where(inner, dcore, np.where(mid, dpoly, 0.0))
    return value, slope


def geometry(xyz):
    d = xyz[None, :, :] - xyz[:, None, :]          # d[i, j] = R_j - R_i
    r = np.linalg.norm(d, axis=2)
    near = (r < CUT) & ~np.eye(len(xyz), dtype=bool)
    r_safe = np.where(near, r, 1.0)
    u = np.where(near[:, :, None], d / r_safe[:, :, None], 0.0)
    return r_safe, u, near


def hamiltonian(xyz):
    n = len(xyz)
    r, u, near = geometry(xyz)
    s, ds = radial(r, S_R0, S_N, S_NC, S_RC, S_T, S_TAIL)
    s, ds = s * near, ds * near
    eye = np.eye(3)
    # g[i, j, mu, nu]: angular Slater-Koster factors (Slater & Koster, Phys. Rev. 94 (1954) 1498).
    g = np.zeros((n, n, 4, 4))
    g[:, :, 0, 0] = VSS
    g[:, :, 0, 1:] = VSP * u
    g[:, :, 1:, 0] = -VSP * u
    g[:, :, 1:, 1:] = (VPPS - VPPP) * u[:, :, :, None] * u[:, :, None, :] + VPPP * eye
    h = (s[:, :, None, None] * g).transpose(0, 2, 1, 3).copy()
    idx = np.arange(n)
    h[idx, 0, idx, 0] = ES
    for a in range(1, 4):
        h[idx, a, idx, a] = EP
    return h.reshape(4 * n, 4 * n), (r, u, near, s, ds, g)


def occupations(levels, electrons):
    f = np.zeros_like(levels)
    start, left = 0, float(electrons)
    while left > 0:
        end = start + 1
        while end < len(levels) and levels[end] - levels[start] <= DEGENERATE:
            end += 1
        f[start:end] = min(2.0, left / (end - start))
        left -= f[start:end].sum()
        last = (start, end)
        start = end
    return f, last


def frontier(levels, f, last):
    s, e = last
    level = levels[s:e].mean()
    if f[s] < 2.0 and e - s > 1:
        return level, level, 0.0, True
    k = e
    while k < len(levels) and levels[k] - levels[e] <= DEGENERATE:
        k += 1
    above = levels[e:k].mean()
    return level, above, above - level, False


def evaluate(xyz, charge, forces=True):
    n = len(xyz)
    electrons = 4 * n - charge
    h, (r, u, near, s, ds, g) = hamiltonian(xyz)
    levels, vectors = np.linalg.eigh(h)
    f, last = occupations(levels, electrons)
    band = float(f @ levels)
    phi, dphi = radial(r, P_D0, P_M, P_MC, P_DC, P_T, P_TAIL, scale=P_0)
    phi, dphi = phi * near, dphi * near
    x = phi.sum(axis=1)
    poly = np.polynomial.polynomial
    repulsive = float(poly.polyval(x, F_COEF).sum())
    homo, lumo, gap, partly = frontier(levels, f, last)
    out = {"electrons": int(electrons), "band_ev": band, "repulsive_ev": repulsive,
           "total_ev": band + repulsive, "homo_ev": float(homo), "lumo_ev": float(lumo),
           "gap_ev": float(gap), "partly_filled": bool(partly)}
    if not forces:
        return out, None
    # Density matrix and dH/dd for d = R_j - R_i: d s(r) g(u) / dd_c = ds u_c g + s dg/du . du/dd,
    # du_a/dd_c = (delta_ac - u_a u_c) / r.
    rho = ((vectors * f) @ vectors.T).reshape(n, 4, n, 4).transpose(0, 2, 1, 3)
    proj = (np.eye(3) - u[:, :, :, None] * u[:, :, None, :]) / r[:, :, None, None]
    dg = np.zeros((n, n, 4, 4, 3))
    dg[:, :, 0, 1:, :] = VSP * proj
    dg[:, :, 1:, 0, :] = -VSP * proj
    dg[:, :, 1:, 1:, :] = (VPPS - VPPP) * (proj[:, :, :, None, :] * u[:, :, None, :, None]
                                           + u[:, :, :, None, None] * proj[:, :, None, :, :])
    dh = (ds[:, :, None, None, None] * g[..., None] * u[:, :, None, None, :]
          + s[:, :, None, None, None] * dg)
    # E_band = sum over ordered pairs of rho_ij . H_ij(R_j - R_i); both orders give the same term.
    grad = -2.0 * np.einsum("ijmn,ijmnc->ic", rho, dh)
    fprime = poly.polyval(x, poly.polyder(F_COEF))
    grad -= np.einsum("ij,ijc->ic", (fprime[:, None] + fprime[None, :]) * dphi, u)
    return out, grad


def reference():
    results = []
    for name, charge in CASES:
        xyz = read_xyz(DATA / name)
        out, grad = evaluate(xyz, charge)
        out.update({"file": name, "charge": charge,
                    "max_force": float(np.linalg.norm(grad, axis=1).max()),
                    "gradient_norm": float(np.linalg.norm(grad))})
        results.append(out)
    json.dump({"command": "python3 scripts/reference_tb.py > tests/data/tb/reference.json",
               "numpy": np.__version__, "cases": results}, sys.stdout, indent=1)
    sys.stdout.write("\n")


def neighbour_pairs(xyz):
    """Pairs i < j closer than the cutoff: indices, distances and unit vectors from i to j."""
    d = xyz[None, :, :] - xyz[:, None, :]
    r = np.linalg.norm(d, axis=2)
    i, j = np.nonzero(np.triu(r < CUT, 1))
    rij = r[i, j]
    return i, j, rij, d[i, j] / rij[:, None]


def evaluate_pairs(xyz, charge):
    """Total energy (eV) and gradient (eV/A) over the neighbour pairs only; the same formulas as
    `evaluate`, with the density blocks of the pairs from the occupied eigenvectors."""
    n = len(xyz)
    i, j, r, u = neighbour_pairs(xyz)
    s, ds = radial(r, S_R0, S_N, S_NC, S_RC, S_T, S_TAIL)
    eye = np.eye(3)
    g = np.empty((len(r), 4, 4))
    g[:, 0, 0] = VSS
    g[:, 0, 1:] = VSP * u
    g[:, 1:, 0] = -VSP * u
    g[:, 1:, 1:] = (VPPS - VPPP) * u[:, :, None] * u[:, None, :] + VPPP * eye
    h = np.zeros((n, 4, n, 4))
    h[i, :, j, :] = s[:, None, None] * g
    h[j, :, i, :] = (s[:, None, None] * g).transpose(0, 2, 1)
    idx = np.arange(n)
    h[idx, 0, idx, 0] = ES
    for a in range(1, 4):
        h[idx, a, idx, a] = EP
    levels, vectors = np.linalg.eigh(h.reshape(4 * n, 4 * n))
    f, _ = occupations(levels, 4 * n - charge)
    occupied = np.count_nonzero(f)
    band = float(f[:occupied] @ levels[:occupied])
    w = (vectors[:, :occupied] * np.sqrt(f[:occupied])).reshape(n, 4, occupied)
    rho = w[i] @ w[j].transpose(0, 2, 1)
    proj = (eye - u[:, :, None] * u[:, None, :]) / r[:, None, None]
    dg = np.zeros((len(r), 4, 4, 3))
    dg[:, 0, 1:, :] = VSP * proj
    dg[:, 1:, 0, :] = -VSP * proj
    dg[:, 1:, 1:, :] = (VPPS - VPPP) * (proj[:, :, None, :] * u[:, None, :, None]
                                        + u[:, :, None, None] * proj[:, None, :, :])
    dh = ds[:, None, None, None] * g[..., None] * u[:, None, None, :] + s[:, None, None, None] * dg
    pair = 2.0 * np.einsum("pab,pabc->pc", rho, dh)
    phi, dphi = radial(r, P_D0, P_M, P_MC, P_DC, P_T, P_TAIL, scale=P_0)
    x = np.bincount(i, phi, n) + np.bincount(j, phi, n)
    poly = np.polynomial.polynomial
    repulsive = float(poly.polyval(x, F_COEF).sum())
    fprime = poly.polyval(x, poly.polyder(F_COEF))
    pair += ((fprime[i] + fprime[j]) * dphi)[:, None] * u
    grad = np.zeros((n, 3))
    np.add.at(grad, j, pair)
    np.add.at(grad, i, -pair)
    return band + repulsive, grad


def relax_scipy(xyz, charge, max_force=1e-3):
    """L-BFGS-B from `xyz` until the largest per-atom force is below `max_force` (eV/A).
    Returns (energy, largest force, iterations, evaluations)."""
    from scipy.optimize import minimize
    last = {}

    def energy_and_gradient(flat):
        energy, grad = evaluate_pairs(flat.reshape(-1, 3), charge)
        last.update(x=flat.copy(), grad=grad, energy=energy, count=last.get("count", 0) + 1)
        return energy, grad.ravel()

    def stop_at_the_force_threshold(intermediate_result):
        if not np.array_equal(intermediate_result.x, last["x"]):
            energy_and_gradient(intermediate_result.x)
        if np.linalg.norm(last["grad"], axis=1).max() < max_force:
            raise StopIteration

    result = minimize(energy_and_gradient, xyz.ravel(), jac=True, method="L-BFGS-B",
                      callback=stop_at_the_force_threshold,
                      options={"maxiter": 100000, "maxfun": 100000, "ftol": 0.0, "gtol": 0.0})
    force = float(np.linalg.norm(last["grad"], axis=1).max())
    return last["energy"], force, int(result.nit), last["count"]


def cpu_times(job, repeats):
    times = []
    for _ in range(repeats):
        c = time.process_time()
        job()
        times.append(time.process_time() - c)
    return min(times), float(np.median(times))


TIMED = ["c60_start.xyz", "c70_start.xyz", "c84_23_start.xyz"]


def timing():
    """Numpy CPU times (s) per geometry: evaluations (both implementations) and relaxations."""
    results = {}
    for name in TIMED:
        xyz = read_xyz(DATA / name)
        out, grad = evaluate(xyz, 0)
        energy, grad_pairs = evaluate_pairs(xyz, 0)
        assert abs(energy - out["total_ev"]) < 1e-9 and np.abs(grad - grad_pairs).max() < 1e-9
        row = {"dense": cpu_times(lambda: evaluate(xyz, 0), 20),
               "pairs": cpu_times(lambda: evaluate_pairs(xyz, 0), 20)}
        relaxed = []
        row["relax"] = cpu_times(lambda: relaxed.append(relax_scipy(xyz, 0)), 3)
        row["relaxed"] = relaxed[-1]
        results[name] = row
    return results


def print_numpy(results):
    print("numpy CPU time, one thread (min / median):")
    for name, row in results.items():
        energy, force, nit, nfev = row["relaxed"]
        print(f"  {name}: evaluation all-pairs {row['dense'][0] * 1e3:.1f} / "
              f"{row['dense'][1] * 1e3:.1f} ms, pair-list {row['pairs'][0] * 1e3:.1f} / "
              f"{row['pairs'][1] * 1e3:.1f} ms; relaxation {row['relax'][0]:.3f} / "
              f"{row['relax'][1]:.3f} s ({nit} iterations, {nfev} evaluations, "
              f"E = {energy:.6f} eV, max force {force:.1e} eV/A)")


def rust_side():
    """Runs the Rust benchmarks and returns their median CPU times (s) and relaxation counts."""
    import os
    import re
    import subprocess
    root = DATA.parent.parent.parent
    run = subprocess.run(["cargo", "bench", "-p", "cagerank-benches", "--bench", "energy", "--", "side-by-side"],
                         cwd=root, capture_output=True, text=True, check=True)
    counts = {}
    for m in re.finditer(r"relax (\S+): (\d+) iterations, (\d+) evaluations, E = (\S+) eV",
                         run.stdout):
        counts[m.group(1)] = (int(m.group(2)), int(m.group(3)), float(m.group(4)))
    target = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", root / "target"))
    medians = {}
    for kind in ["evaluation", "relaxation"]:
        for name in TIMED:
            bench = f"{kind} {name}"
            path = target / "criterion" / "side-by-side" / bench / "new" / "estimates.json"
            medians[(kind, name)] = json.loads(path.read_text())["median"]["point_estimate"] * 1e-9
    return medians, counts


def compare():
    import os
    load = [os.getloadavg()[0]]
    rust, counts = rust_side()
    load.append(os.getloadavg()[0])
    numpy = timing()
    load.append(os.getloadavg()[0])
    print(f"1-min load average: {load[0]:.2f} before Rust, {load[1]:.2f} between, "
          f"{load[2]:.2f} after numpy (2 cores)")
    print_numpy(numpy)
    print("Rust CPU time, one thread (criterion median), and numpy median / Rust median:")
    for name in TIMED:
        row = numpy[name]
        evaluation, relaxation = rust[("evaluation", name)], rust[("relaxation", name)]
        nit, nfev, energy = counts[name]
        _, _, np_nit, np_nfev = row["relaxed"]
        print(f"  {name}: evaluation {evaluation * 1e3:.2f} ms: x{row['pairs'][1] / evaluation:.2f} "
              f"against pair-list numpy (x{row['dense'][1] / evaluation:.2f} all-pairs); "
              f"relaxation {relaxation:.3f} s ({nit} iterations, {nfev} evaluations, "
              f"E = {energy:.6f} eV): x{row['relax'][1] / relaxation:.2f} "
              f"(numpy {np_nit} iterations, {np_nfev} evaluations)")


if __name__ == "__main__":
    if "--compare" in sys.argv:
        compare()
    elif "--time" in sys.argv:
        print_numpy(timing())
    else:
        reference()

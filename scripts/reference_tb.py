#!/usr/bin/env python3
"""Independent numpy reference for cagerank's tight-binding energies (src/energy).

The orthogonal sp3 tight-binding model for carbon of Xu, Wang, Chan & Ho, J. Phys.: Condens.
Matter 4 (1992) 6047, written from the published formulas with whole-array numpy operations:
the Hamiltonian as an (n, 4, n, 4) tensor, numpy.linalg.eigh, the full density matrix and the
derivative tensor of every hopping. It shares no code with the Rust implementation.

Reference mode (the default) evaluates the committed geometries of tests/data/tb and prints
JSON; the committed tests/data/tb/reference.json was made with

    python3 scripts/reference_tb.py > tests/data/tb/reference.json

Timing mode measures one energy + forces evaluation per geometry (best of 20, wall and CPU
time), for a side-by-side comparison with `cargo bench --bench energy`; run it on one core:

    OPENBLAS_NUM_THREADS=1 OMP_NUM_THREADS=1 python3 scripts/reference_tb.py --time

Needs numpy only. CI does not run this script.
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


def timing():
    for name in ["c60_start.xyz", "c70_start.xyz", "c84_23_start.xyz"]:
        xyz = read_xyz(DATA / name)
        evaluate(xyz, 0)
        wall = cpu = float("inf")
        for _ in range(20):
            t, c = time.perf_counter(), time.process_time()
            evaluate(xyz, 0)
            wall = min(wall, time.perf_counter() - t)
            cpu = min(cpu, time.process_time() - c)
        print(f"{name}: energy + forces best of 20: wall {wall * 1e3:.1f} ms, cpu {cpu * 1e3:.1f} ms")


if __name__ == "__main__":
    timing() if "--time" in sys.argv else reference()

"""Screen the IPR isomers of C84 with tight-binding energies, notebook style.

Scenario: which of the 24 IPR C84 cages deserve DFT time? Enumerate them with their cheap
descriptors, relax every one with the carbon tight-binding model of Xu et al. (1992), tabulate
relative energies, and plot the tight-binding HOMO-LUMO gap against the relative energy.

    python examples/screen_c84.py --out screen_c84.png

Needs the cagerank package (pip install ./python) and matplotlib; pandas is used when present.
"""

import argparse
import time

import matplotlib

matplotlib.use("Agg")  # files only, no display needed
import matplotlib.pyplot as plt  # noqa: E402

import cagerank  # noqa: E402

# kJ/mol per eV (CODATA 2018: e N_A / 1000, exact).
KJ_PER_MOL_PER_EV = 96.48533212331002

CAUTIONS = [
    "Rankings are screening heuristics built from published rules of thumb, not predictions "
    "of real-world stability or of safety.",
    "Tight-binding energies are 0 K electronic energies of the bare cage (no zero-point "
    "energy, entropy or spin polarisation): refine the candidates with proper quantum "
    "chemistry before drawing conclusions.",
]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default="screen_c84.png", help="PNG file to write")
    parser.add_argument("--threads", type=int, default=0, help="0 = every core")
    args = parser.parse_args()

    # 1. Every IPR C84 isomer with its graph descriptors (24, OEIS A046880).
    cages = list(cagerank.isomers(84, ipr=True, score=True))
    print(f"C84: {len(cages)} IPR isomers")

    # 2. Tight-binding relaxations, in parallel off the GIL.
    started = time.monotonic()
    relaxed = cagerank.tight_binding(cages, threads=args.threads)
    print(f"relaxed in {time.monotonic() - started:.0f} s")

    usable = [t for t in relaxed if t.rankable]
    lowest = min(t.energy_ev for t in usable)
    rows = []
    for t in relaxed:
        d = t.isomer.descriptors
        rows.append({
            "id": t.isomer.id,
            "point_group": d["point_group"],
            "relative_energy_kj": (t.energy_ev - lowest) * KJ_PER_MOL_PER_EV if t.rankable else None,
            "tb_gap_ev": t.gap_ev,
            "huckel_gap": d["gap"],
            "rankable": t.rankable,
        })
    rows.sort(key=lambda r: (r["relative_energy_kj"] is None, r["relative_energy_kj"] or 0.0))

    # 3. The table, best first.
    try:
        import pandas

        print(pandas.DataFrame(rows).to_string(index=False, float_format=lambda x: f"{x:.3f}"))
    except ImportError:
        for r in rows:
            print(r)

    # 4. Gap against relative energy: the low, wide-gap corner holds the candidates.
    ranked = [r for r in rows if r["rankable"]]
    fig, ax = plt.subplots(figsize=(7, 5), dpi=120)
    ax.scatter([r["relative_energy_kj"] for r in ranked], [r["tb_gap_ev"] for r in ranked],
               color="tab:blue")
    for k, r in enumerate(ranked[:6]):
        # Alternate above and below: the two lowest isomers sit close together.
        ax.annotate(f'{r["id"].split(":")[1]} {r["point_group"]}',
                    (r["relative_energy_kj"], r["tb_gap_ev"]),
                    textcoords="offset points", xytext=(6, 5 if k % 2 else -11), fontsize=8)
    ax.set_xlabel("relative tight-binding energy (kJ/mol)")
    ax.set_ylabel("tight-binding HOMO-LUMO gap (eV)")
    ax.set_title("IPR C84 isomers: gap vs relative energy (Xu et al. 1992 tight binding)")
    ax.grid(alpha=0.3)
    fig.tight_layout()
    fig.savefig(args.out)
    print(f"wrote {args.out}")
    for c in CAUTIONS:
        print("Caution:", c)


if __name__ == "__main__":
    main()

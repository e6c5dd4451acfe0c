#!/usr/bin/env python3
"""Independent checks of `cagerank derive` and the derivative molecule builder (not run by CI).

1. Kekulé counts: for every C60H2 and C60(CH2)2 pattern, every C20Hk pattern (k = 2, 4) and
   every C24 and C28 pattern with 4 addends, the count `cagerank derive` reports is compared with
   a count of perfect matchings made here by plain backtracking on a networkx graph of the cage
   (edges from `cagerank show --json`), and the existence flag with networkx's maximum matching.
2. Hückel levels with heteroatoms: HOMO and LUMO of every C58N2 and C58B2 pattern recomputed
   with numpy.linalg.eigvalsh from the Van-Catledge parameters (J. Org. Chem. 45 (1980) 4801).
3. SDF: every record of tests/data/derivatives.sdf (written by the ignored test
   `write_reference_sdf` in tests/suite/derivative.rs) is read and sanitised by RDKit; the script
   reports formula, formal charge, radical electrons and the range of bond lengths per element
   pair.
4. Exported SDF: `cagerank export --ids <pattern IDs> --format sdf` writes derivatives of
   C60 (H, F, Cl, CH2 bridges, N, B; and C59N+ with --charge 1) into a temporary directory;
   RDKit sanitises every file and its formula must equal the `formula` field the export wrote.

    pip install numpy networkx rdkit
    cargo build --release
    python3 scripts/check_derivatives.py > scripts/check_derivatives.out
"""
import json
import os
import re
import subprocess
import sys
import tempfile

import networkx as nx
import numpy as np

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.path.join(ROOT, "target", "release", "cagerank")


def run(*args):
    env = dict(os.environ, CAGERANK_CATALOGUE=os.path.join(ROOT, "catalogues"))
    out = subprocess.run([BIN, *args], check=True, capture_output=True, text=True, env=env)
    return out.stdout


def cage_edges(cage_id, ipr):
    args = ["show", cage_id, "--json", "--no-numbers"] + (["--ipr"] if ipr else [])
    return [tuple(e) for e in json.loads(run(*args))["edges"]]


def patterns(cage_id, k, extra):
    text = run("derive", cage_id, "--add", str(k), "--sort", "id", "--format", "json", *extra)
    return [json.loads(line) for line in text.splitlines()]


def count_matchings(graph):
    """Perfect matchings by backtracking: match the smallest free atom with each neighbour."""
    nodes = sorted(graph.nodes)
    used = set()

    def go():
        free = next((v for v in nodes if v not in used), None)
        if free is None:
            return 1
        used.add(free)
        total = 0
        for u in graph.neighbors(free):
            if u not in used:
                used.add(u)
                total += go()
                used.discard(u)
        used.discard(free)
        return total

    return go()


def check_kekule(label, cage_id, ipr, k, extra):
    edges = cage_edges(cage_id.split(":")[0] + ":" + cage_id.split("-")[-1], ipr)
    full = nx.Graph(edges)
    rows = patterns(cage_id, k, extra)
    bad = 0
    for row in rows:
        g = full.copy()
        g.remove_nodes_from(a - 1 for a in row["atoms"])
        count = count_matchings(g)
        matching = nx.max_weight_matching(g, maxcardinality=True)
        has = 2 * len(matching) == g.number_of_nodes()
        if str(count) != row["kekule"] or has != row["kekule_structure"] or has != (count > 0):
            bad += 1
            print(f"  MISMATCH {row['id']}: ours {row['kekule']}, here {count}")
    radicals = sum(1 for r in rows if not r["kekule_structure"])
    print(f"kekule {label}: {len(rows)} patterns, {radicals} without a Kekulé structure, "
          f"{bad} mismatches")
    return bad


H_PARAM = {"N": 0.51, "B": -0.45}
K_PARAM = {("C", "N"): 1.02, ("B", "C"): 0.73, ("N", "N"): 1.09, ("B", "B"): 0.87}


def check_hetero(element):
    edges = cage_edges("C60:1", True)
    rows = patterns("C60:IPR-1", 2, ["--substitute", element.lower()])
    worst = 0.0
    for row in rows:
        kind = ["C"] * 60
        for a in row["atoms"]:
            kind[a - 1] = element
        m = np.zeros((60, 60))
        for v in range(60):
            m[v, v] = H_PARAM.get(kind[v], 0.0)
        for u, v in edges:
            pair = tuple(sorted((kind[u], kind[v])))
            k = 1.0 if pair == ("C", "C") else K_PARAM[pair]
            m[u, v] = m[v, u] = k
        x = np.sort(np.linalg.eigvalsh(m))[::-1]
        electrons = 60 + (2 if element == "N" else -2)
        homo, lumo = x[electrons // 2 - 1], x[electrons // 2]
        worst = max(worst, abs(homo - row["homo"]), abs(lumo - row["lumo"]))
    print(f"huckel C58{element}2: {len(rows)} patterns, largest HOMO/LUMO difference {worst:.1e}")
    return worst > 1e-9


def check_sdf(path=os.path.join(ROOT, "tests", "data", "derivatives.sdf"), label="sdf"):
    from rdkit import Chem, RDLogger
    from rdkit.Chem import rdMolDescriptors

    RDLogger.DisableLog("rdApp.warning")
    supplier = Chem.SDMolSupplier(path, sanitize=False, removeHs=False)
    failures = 0
    for mol in supplier:
        name = mol.GetProp("_Name")
        try:
            Chem.SanitizeMol(mol)
        except Exception as e:  # RDKit raises several exception types on bad valences
            failures += 1
            print(f"{label} {name}: SANITIZE FAILED: {e}")
            continue
        conf = mol.GetConformer()
        lengths = {}
        for b in mol.GetBonds():
            a, c = b.GetBeginAtom(), b.GetEndAtom()
            key = "-".join(sorted((a.GetSymbol(), c.GetSymbol())))
            d = (conf.GetAtomPosition(a.GetIdx()) - conf.GetAtomPosition(c.GetIdx())).Length()
            lo, hi = lengths.get(key, (d, d))
            lengths[key] = (min(lo, d), max(hi, d))
        radicals = sum(a.GetNumRadicalElectrons() for a in mol.GetAtoms())
        ranges = ", ".join(f"{k} {lo:.2f}-{hi:.2f}" for k, (lo, hi) in sorted(lengths.items()))
        formula = rdMolDescriptors.CalcMolFormula(mol)
        if mol.HasProp("formula") and split_formula(mol.GetProp("formula")) != split_formula(formula):
            failures += 1
            print(f"{label} {name}: FORMULA {formula} but the file says {mol.GetProp('formula')}")
        print(f"{label} {name}: sanitised, {formula}, charge "
              f"{Chem.GetFormalCharge(mol)}, radical electrons {radicals}; bonds Å: {ranges}")
    return failures


def split_formula(text):
    """(elements, charge) of a formula with its charge written either way: RDKit's `C60H2-2`
    and `C59N+`, or cagerank's `C60H2 2-` and `C59N+`."""
    m = re.fullmatch(r"(.*?)(?: (\d+)([+-])|([+-])(\d*))?", text.strip())
    body, size_first, sign_last, sign_first, size_last = m.groups()
    sign = sign_last or sign_first
    if sign is None:
        return (body, 0)
    size = int(size_first or size_last or 1)
    return (body, size if sign == "+" else -size)


EXPORTED = [
    ("0", "C60:IPR-1+2H:5,C60:IPR-1+4F:217,C60:IPR-1+2Cl:3,C60:IPR-1+2CH2@66:8,"
          "C60:IPR-1+2CH2:1,C60:IPR-1+2N:5,C60:IPR-1+2B:7,C60:IPR-1+2H:1"),
    ("1", "C60:IPR-1+1N:1"),
    ("-2", "C60:IPR-1+2H:5"),
]


def check_exported_sdf():
    failures = 0
    with tempfile.TemporaryDirectory() as tmp:
        for charge, ids in EXPORTED:
            out = os.path.join(tmp, f"charge{charge}")
            run("export", "--ids", ids, "--charge", charge, "--format", "sdf", "--out", out)
            for name in sorted(os.listdir(out)):
                if name.endswith(".sdf") and name != "shortlist.sdf":
                    failures += check_sdf(os.path.join(out, name), f"export {name}:")
    return failures


def main():
    bad = 0
    bad += check_kekule("C60H2", "C60:IPR-1", True, 2, [])
    bad += check_kekule("C60(CH2)2", "C60:IPR-1", True, 2, ["--on", "bonds"])
    bad += check_kekule("C20H2", "C20:all-1", False, 2, [])
    bad += check_kekule("C20H4", "C20:all-1", False, 4, [])
    bad += check_kekule("C24H4", "C24:all-1", False, 4, [])
    bad += check_kekule("C28H4 (isomer 2)", "C28:all-2", False, 4, [])
    bad += check_hetero("N")
    bad += check_hetero("B")
    bad += check_sdf()
    bad += check_exported_sdf()
    print("all checks passed" if bad == 0 else f"{bad} checks FAILED")
    return 0 if bad == 0 else 1


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/env python3
"""Independent check of `cagerank export` for cages of other face sets (not run by CI).

`cagerank export --ids B12N12:4-6-iso-1,C24:4-5-6-all-7,C32:5-6-7h1-all-5 --format sdf,xyz`
writes into a temporary directory; for every SDF file RDKit (an independent toolkit) reads
the connection table without sanitising, sanitises it, and the script reports:

- the formula RDKit computes, which must equal the `formula` data field of the export;
- that every atom has exactly three bonds (a cubic cage) and, for the BN cage, that every
  bond joins B to N (the colouring alternates);
- the ring sizes of the cage's faces, traced here in the planar embedding networkx finds for
  the bond graph (the faces of a 3-connected planar graph are unique, Whitney 1933), and
  Euler's relation for cubic polyhedra, sum over faces of (6 - size) = 12;
- the range of bond lengths per element pair (the carbon force field: B-N lengths not fitted).

The XYZ file must list the same elements in the same order as the SDF.

    pip install networkx rdkit
    cargo build --release
    python3 scripts/check_cage_exports.py > scripts/check_cage_exports.out
"""
import collections
import os
import subprocess
import sys
import tempfile

import networkx as nx
from rdkit import Chem
from rdkit.Chem import rdMolDescriptors

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.path.join(ROOT, "target", "release", "cagerank")
IDS = ["B12N12:4-6-iso-1", "C24:4-5-6-all-7", "C32:5-6-7h1-all-5"]


def faces_of(mol):
    """Face sizes of the cage: networkx's planar embedding of the bond graph, faces traced."""
    g = nx.Graph()
    g.add_edges_from((b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in mol.GetBonds())
    planar, emb = nx.check_planarity(g)
    if not planar:
        return None
    seen, sizes = set(), []
    for u, v in emb.edges():
        if (u, v) in seen:
            continue
        face = emb.traverse_face(u, v, mark_half_edges=seen)
        sizes.append(len(face))
    return sorted(sizes)


def xyz_elements(path):
    with open(path) as f:
        lines = f.read().splitlines()
    n = int(lines[0])
    return [line.split()[0] for line in lines[2 : 2 + n]]


def check(directory, cage_id):
    stem = cage_id.replace(":", "_", 1)
    path = os.path.join(directory, stem + ".sdf")
    mol = next(iter(Chem.SDMolSupplier(path, sanitize=False, removeHs=False)))
    fields = mol.GetPropsAsDict()
    Chem.SanitizeMol(mol)
    formula = rdMolDescriptors.CalcMolFormula(mol)
    want = fields.get("formula", "C%d" % mol.GetNumAtoms())
    cubic = all(a.GetDegree() == 3 for a in mol.GetAtoms())
    pairs = collections.Counter(
        "-".join(sorted((b.GetBeginAtom().GetSymbol(), b.GetEndAtom().GetSymbol())))
        for b in mol.GetBonds()
    )
    sizes = faces_of(mol)
    counts = collections.Counter(sizes or [])
    euler = sum(6 - s for s in sizes or [])
    conf = mol.GetConformer()
    lengths = collections.defaultdict(list)
    for b in mol.GetBonds():
        i, j = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        key = "-".join(sorted((b.GetBeginAtom().GetSymbol(), b.GetEndAtom().GetSymbol())))
        lengths[key].append((conf.GetAtomPosition(i) - conf.GetAtomPosition(j)).Length())
    ranges = ", ".join(f"{k} {min(v):.2f}-{max(v):.2f}" for k, v in sorted(lengths.items()))
    same_xyz = xyz_elements(os.path.join(directory, stem + ".xyz")) == [
        a.GetSymbol() for a in mol.GetAtoms()
    ]
    rings = " ".join(f"{s}:{counts[s]}" for s in sorted(counts))
    print(
        f"export {cage_id}: sanitised, {formula} (field {want}, "
        f"{'same' if formula == want else 'DIFFERENT'}), "
        f"{'cubic' if cubic else 'NOT CUBIC'}, bonds {dict(sorted(pairs.items()))}, "
        f"faces {rings}, sum(6 - size) {euler}, "
        f"xyz elements {'same' if same_xyz else 'DIFFERENT'}; bonds Å: {ranges}"
    )


def main():
    if not os.path.exists(BIN):
        sys.exit("build the release binary first: cargo build --release")
    with tempfile.TemporaryDirectory() as tmp:
        env = dict(os.environ, CAGERANK_CATALOGUE=os.path.join(tmp, "none"))
        subprocess.run(
            [BIN, "export", "--ids", ",".join(IDS), "--format", "sdf,xyz", "--out", tmp],
            check=True,
            capture_output=True,
            env=env,
        )
        for cage_id in IDS:
            check(tmp, cage_id)


if __name__ == "__main__":
    main()

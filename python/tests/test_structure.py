"""3D structures, ASE and RDKit hand-over, tight binding and identification."""

import numpy as np
import pytest

import cagerank

C60_SPIRAL = (1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32)


@pytest.fixture(scope="module")
def c60():
    return cagerank.isomer("C60:IPR-1")


def bond_lengths(coords, edges):
    return np.linalg.norm(coords[edges[:, 0]] - coords[edges[:, 1]], axis=1)


def test_structure_arrays(c60):
    s = c60.structure()
    assert s.coords.shape == (60, 3) and s.coords.dtype == np.float64
    assert s.edges.shape == (90, 2)
    # Every carbon of a fullerene has three bonds.
    assert np.bincount(s.edges.ravel(), minlength=60).tolist() == [3] * 60
    # One Kekulé structure: a perfect matching, 30 double bonds, one at every atom.
    assert (s.bond_orders == 2).sum() == 30
    assert np.bincount(s.edges[s.bond_orders == 2].ravel(), minlength=60).tolist() == [1] * 60


def test_ase_round_trip(c60, tmp_path):
    ase = pytest.importorskip("ase")
    import ase.io

    atoms = c60.to_ase()
    assert isinstance(atoms, ase.Atoms)
    assert atoms.get_chemical_symbols() == ["C"] * 60
    np.testing.assert_allclose(atoms.get_positions(), c60.structure().coords)
    path = tmp_path / "c60.xyz"
    ase.io.write(path, atoms)
    back = ase.io.read(path)
    np.testing.assert_allclose(back.get_positions(), atoms.get_positions(), atol=1e-6)
    # ... and the file ASE wrote is C60-Ih again, both IDs from the search.
    found = cagerank.identify(path)
    assert found.isomer.spiral == C60_SPIRAL
    assert found.isomer.ids == ["C60:all-1812", "C60:IPR-1"]
    # ASE's own neighbour list (independent of cagerank) sees three bonds per atom.
    from ase.neighborlist import neighbor_list

    i = neighbor_list("i", atoms, 1.6)
    assert np.bincount(i, minlength=60).tolist() == [3] * 60


def test_rdkit_round_trip(c60):
    pytest.importorskip("rdkit")
    from rdkit import Chem
    from rdkit.Chem import rdMolDescriptors

    mol = c60.to_rdkit()
    assert mol.GetNumAtoms() == 60
    assert mol.GetNumBonds() == 90
    kinds = [b.GetBondType() for b in mol.GetBonds()]
    # A Kekulé structure of C60: 30 double and 60 single bonds.
    assert kinds.count(Chem.BondType.DOUBLE) == 30
    assert kinds.count(Chem.BondType.SINGLE) == 60
    Chem.SanitizeMol(mol)  # sanitises as a whole too
    assert all(a.GetTotalNumHs() == 0 for a in mol.GetAtoms())
    assert rdMolDescriptors.CalcMolFormula(mol) == "C60"
    # RDKit's ring perception (independent of cagerank): a smallest set of smallest rings
    # has 90 - 60 + 1 = 31 rings, the 12 pentagons and 19 of the 20 hexagons.
    sizes = sorted(len(r) for r in Chem.GetSSSR(mol))
    assert sizes == [5] * 12 + [6] * 19
    conf = mol.GetConformer()
    np.testing.assert_allclose(conf.GetPositions(), c60.structure().coords)


def test_c60_tight_binding_bond_lengths(c60):
    tb = c60.tight_binding()
    assert tb.converged and tb.graph_kept
    s = c60.structure()
    lengths = np.sort(bond_lengths(tb.coords, s.edges))
    r66, r65 = lengths[:30].mean(), lengths[30:].mean()
    # Hedberg et al., Science 254 (1991) 410: 6:6 1.401(10) Å and 6:5 1.458(6) Å.
    assert abs(r66 - 1.401) < 0.010
    assert abs(r65 - 1.458) < 0.006


def test_tight_binding_many_is_in_input_order_and_thread_independent():
    pair = [cagerank.isomer("C70:IPR-1"), cagerank.isomer("C60:IPR-1")]
    one = cagerank.tight_binding(pair, threads=1)
    two = cagerank.tight_binding(pair, threads=2)
    assert [t.isomer for t in one] == pair
    assert [len(t.coords) for t in one] == [70, 60]
    # Each relaxation is sequential: bit-identical for any thread count.
    assert [t.energy_ev for t in one] == [t.energy_ev for t in two]


def test_identify_from_coordinates_and_symbols(c60):
    s = c60.structure()
    rng = np.random.default_rng(1)
    order = rng.permutation(60)
    # Shuffled atoms and a metal inside: the cage is the same isomer.
    coords = np.vstack([s.coords[order], [[0.0, 0.0, 0.0]]])
    found = cagerank.identify(coords=coords, symbols=["C"] * 60 + ["Sc"], ignore_elements="Sc")
    assert found.ignored == 1
    assert found.isomer.ids == ["C60:all-1812", "C60:IPR-1"]
    assert found.isomer.descriptors["kekule"] == 12500


def test_identify_the_committed_c20_file(repo):
    found = cagerank.identify(repo / "tests" / "data" / "c20.xyz")
    # C20 has one fullerene (OEIS A007894), the dodecahedron, Ih.
    assert found.isomer.ids == ["C20:all-1"]
    assert found.isomer.descriptors["point_group"] == "Ih"


def test_identify_errors_are_the_clis(repo, cli):
    import subprocess

    path = repo / "tests" / "data" / "endohedral_sc.xyz"
    run = subprocess.run([cli, "identify", str(path)], capture_output=True, text=True)
    assert run.returncode == 2
    with pytest.raises(cagerank.CagerankError) as e:
        cagerank.identify(path)
    assert run.stderr.strip() == f"cagerank: {e.value}"

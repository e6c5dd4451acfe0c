"""3D structures of one isomer as numpy arrays, and their hand-over to ASE and RDKit.

Coordinates come from the Rust library (``cagerank::geometry``: topological coordinates
relaxed with a force field; ``cagerank::energy``: the tight-binding model). ASE and RDKit are
optional and imported only by :meth:`Structure.to_ase` and :meth:`Structure.to_rdkit`.
Geometries and energies are starting points for quantum chemistry, not final answers.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Optional

import numpy as np

if TYPE_CHECKING:
    import ase
    from rdkit import Chem

    from .isomers import Isomer


@dataclass(frozen=True)
class Structure:
    """Bonds, one Kekulé structure and force-field coordinates of an isomer.

    ``coords`` is ``n × 3`` in Å; ``edges`` is ``m × 2`` (0-based atoms); ``bond_orders`` holds
    1 or 2 per edge (one Kekulé structure), or ``None`` for a cage without one.
    """

    isomer: "Isomer"
    coords: np.ndarray
    edges: np.ndarray
    bond_orders: Optional[np.ndarray]
    force_field_energy_ev: float
    converged: bool

    @classmethod
    def _from_native(cls, isomer: "Isomer", d: dict) -> "Structure":
        return cls(
            isomer=isomer,
            coords=d["coords"],
            edges=d["edges"],
            bond_orders=d["bond_orders"],
            force_field_energy_ev=d["energy_ev"],
            converged=d["converged"],
        )

    @property
    def symbols(self) -> list:
        """One ``"C"`` per atom."""
        return ["C"] * len(self.coords)

    def to_ase(self, coords: Optional[np.ndarray] = None) -> "ase.Atoms":
        """An ``ase.Atoms`` (needs ASE) at ``coords`` (default: these), with the isomer's ID,
        numbers and spiral in ``info``."""
        try:
            from ase import Atoms
        except ImportError as e:
            raise ImportError("to_ase() needs ASE: pip install ase") from e
        positions = self.coords if coords is None else coords
        iso = self.isomer
        info = {
            "id": iso.id,
            "number": iso.number,
            "ipr_number": iso.ipr_number,
            "spiral": " ".join(str(i) for i in iso.spiral),
        }
        return Atoms(self.symbols, positions=np.asarray(positions), info=info)

    def to_rdkit(self, coords: Optional[np.ndarray] = None) -> "Chem.Mol":
        """An RDKit molecule (needs RDKit) with Kekulé bond orders (single and double bonds as
        written, not aromatic flags), sanitised, with one 3D conformer at ``coords``."""
        try:
            from rdkit import Chem
            from rdkit.Geometry import Point3D
        except ImportError as e:
            raise ImportError("to_rdkit() needs RDKit: pip install rdkit") from e
        if self.bond_orders is None:
            from ._errors import CagerankError

            raise CagerankError(
                f"{self.isomer.id or 'this cage'} has no Kekulé structure, so bond orders cannot be assigned"
            )
        positions = np.asarray(self.coords if coords is None else coords)
        mol = Chem.RWMol()
        for _ in range(len(positions)):
            atom = Chem.Atom(6)
            atom.SetNoImplicit(True)
            mol.AddAtom(atom)
        kinds = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE}
        for (a, b), order in zip(self.edges.tolist(), self.bond_orders.tolist()):
            mol.AddBond(int(a), int(b), kinds[int(order)])
        conformer = Chem.Conformer(len(positions))
        for i, (x, y, z) in enumerate(positions.tolist()):
            conformer.SetAtomPosition(i, Point3D(x, y, z))
        conformer.Set3D(True)
        mol.AddConformer(conformer, assignId=True)
        out = mol.GetMol()
        # Everything but aromaticity perception, which would replace the Kekulé orders.
        Chem.SanitizeMol(
            out, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY
        )
        if iso_id := self.isomer.id:
            out.SetProp("_Name", iso_id)
        return out


@dataclass(frozen=True)
class TightBinding:
    """A cage relaxed with the orthogonal sp3 carbon tight-binding model of Xu, Wang, Chan &
    Ho (J. Phys.: Condens. Matter 4 (1992) 6047): a 0 K electronic energy of the bare cage or
    cage ion (no zero-point energy, entropy, spin polarisation or metal atoms)."""

    isomer: "Isomer"
    coords: np.ndarray
    energy_ev: float
    band_ev: float
    repulsive_ev: float
    homo_ev: float
    lumo_ev: float
    gap_ev: float
    somo_ev: Optional[float]
    max_force: float
    iterations: int
    converged: bool
    graph_kept: bool

    @classmethod
    def _from_native(cls, isomer: "Isomer", d: dict) -> "TightBinding":
        keys = [
            "coords", "energy_ev", "band_ev", "repulsive_ev", "homo_ev", "lumo_ev", "gap_ev",
            "somo_ev", "max_force", "iterations", "converged", "graph_kept",
        ]
        return cls(isomer=isomer, **{k: d[k] for k in keys})

    @property
    def rankable(self) -> bool:
        """Converged and still the same cage: the energy may be compared with others."""
        return self.converged and self.graph_kept

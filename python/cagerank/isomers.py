"""Isomers: enumerate the cages of a size, find one by ID or spiral, score them.

The search and the descriptors are the Rust library's (``cagerank::enumerate`` and
``cagerank::score``); this module gives them Python types. Long calls release the GIL and stop
on Ctrl-C. Rankings built from these descriptors are screening heuristics, not predictions of
real-world stability or safety.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Iterable, Iterator, List, Optional, Sequence, Tuple, Union

from . import _native

if TYPE_CHECKING:  # optional dependencies, imported only when used
    import ase
    import pandas
    from rdkit import Chem

    from .structure import Structure, TightBinding

Sizes = Union[int, Iterable[int]]


@dataclass(frozen=True)
class Isomer:
    """One cage isomer: its canonical spiral and its numbers in the trade's lists.

    ``spiral`` holds the 12 pentagon positions (1-based) for fullerenes, the whole face-size
    sequence for other face sets. ``number`` is the position in the complete list of its size,
    ``ipr_number`` in the IPR list (``None`` where not on that list or not looked up).
    ``descriptors`` is filled when the isomer was enumerated with ``score=True`` (for the
    charge given there); :meth:`score` computes them for any charge.
    """

    atoms: int
    spiral: Tuple[int, ...]
    number: Optional[int] = None
    ipr_number: Optional[int] = None
    ipr: bool = False
    automorphisms: int = 1
    face_set: str = "fullerene"
    descriptors: Optional[dict] = field(default=None, compare=False, repr=False)

    @classmethod
    def _from_native(cls, d: dict) -> "Isomer":
        return cls(
            atoms=d["atoms"],
            spiral=tuple(d["spiral"]),
            number=d["number"],
            ipr_number=d["ipr_number"],
            ipr=d["ipr"],
            automorphisms=d["automorphisms"],
            face_set=d["face_set"],
            descriptors=d["descriptors"],
        )

    @property
    def ids(self) -> List[str]:
        """Every ID this isomer has, complete list first: ``["C84:all-51591", "C84:IPR-23"]``."""
        out = []
        if self.number is not None:
            out.append(f"C{self.atoms}:all-{self.number}")
        if self.ipr_number is not None:
            out.append(f"C{self.atoms}:IPR-{self.ipr_number}")
        return out

    @property
    def id(self) -> Optional[str]:
        """The ID papers use: the IPR-list one when there is one (``C84:IPR-23``)."""
        ids = self.ids
        return ids[-1] if ids else None

    def _key(self) -> tuple:
        return (self.atoms, list(self.spiral), self.face_set)

    def score(self, charge: int = 0) -> dict:
        """Cheap descriptors of this cage carrying ``charge`` (pentagon adjacencies, Hückel
        levels in |beta|, Kekulé count, point group, 13C NMR pattern, ...), as a dict."""
        return _native.score_many([self._key()], charge=charge, threads=1)[0]

    def structure(self) -> "Structure":
        """Bonds, one Kekulé structure and force-field 3D coordinates (atoms numbered as the
        spiral winds them)."""
        from .structure import Structure

        return Structure._from_native(self, _native.structure(*self._key()))

    def tight_binding(self, charge: int = 0, max_force: float = 1e-3) -> "TightBinding":
        """The cage relaxed with the carbon tight-binding model of Xu et al. (1992): energy,
        frontier levels (eV) and coordinates."""
        return tight_binding([self], charge=charge, max_force=max_force, threads=1)[0]

    def to_ase(self, geometry: str = "force_field", charge: int = 0) -> "ase.Atoms":
        """An ``ase.Atoms`` of this cage (needs ASE); ``geometry="tight_binding"`` relaxes it
        with the tight-binding model first."""
        return self.structure().to_ase(self._coords(geometry, charge))

    def to_rdkit(self, geometry: str = "force_field", charge: int = 0) -> "Chem.Mol":
        """An RDKit molecule with Kekulé bond orders and a 3D conformer (needs RDKit)."""
        return self.structure().to_rdkit(self._coords(geometry, charge))

    def _coords(self, geometry: str, charge: int):
        if geometry == "force_field":
            return None
        if geometry == "tight_binding":
            return self.tight_binding(charge=charge).coords
        raise ValueError(f"unknown geometry '{geometry}'; use force_field or tight_binding")


class Isomers:
    """The isomers of one or more sizes in isomer-number order, produced while you iterate.

    Iterating runs the search on threads of its own, off the GIL; ``count()`` counts without
    building records. Leaving a loop early stops the search.
    """

    def __init__(
        self,
        sizes: Sizes,
        ipr: bool = False,
        faces: str = "fullerene",
        score: bool = False,
        charge: int = 0,
        threads: int = 0,
        all_starts: bool = False,
    ) -> None:
        given = [sizes] if isinstance(sizes, int) else [int(n) for n in sizes]
        # A range such as range(20, 72, 2) passes over C22, which has no fullerene: skip it.
        ranged = len(given) > 1 and faces == "fullerene"
        self.sizes = [n for n in given if not (ranged and n == 22)]
        self.ipr = ipr
        self.faces = faces
        self.score = score
        self.charge = charge
        self.threads = threads
        self.all_starts = all_starts
        # Bad sizes, face sets and charges fail here, not at the first next().
        for n in self.sizes:
            _native.check_size(n, ipr, faces)
            if score:
                _native.check_charge(n, charge)

    def __iter__(self) -> Iterator[Isomer]:
        for n in self.sizes:
            native = _native.Enumeration(
                n, self.ipr, self.faces, self.all_starts, self.threads, self.score, self.charge
            )
            try:
                for d in native:
                    yield Isomer._from_native(d)
            finally:
                native.close()

    def count(self) -> int:
        """Number of isomers of all the sizes (complete or IPR list)."""
        return sum(
            _native.count(n, self.ipr, self.faces, self.all_starts, self.threads)
            for n in self.sizes
        )

    def to_frame(self) -> Union["pandas.DataFrame", List[dict]]:
        """Every isomer with its descriptors (empty unless ``score=True``): a DataFrame if
        pandas is installed, else a list of dicts."""
        return _table([_row(iso, iso.descriptors or {}) for iso in self])


def isomers(
    sizes: Sizes,
    ipr: bool = False,
    faces: str = "fullerene",
    score: bool = False,
    charge: int = 0,
    threads: int = 0,
    all_starts: bool = False,
) -> Isomers:
    """The isomers of ``sizes`` (one atom count or several, e.g. ``range(60, 72, 2)``).

    ``ipr`` keeps isolated-pentagon-rule cages only; ``faces`` is ``fullerene``, ``4-6`` or
    ``4-5-6``; ``score`` computes every isomer's descriptors (for cage ``charge``) on the
    search threads; ``threads=0`` uses every core. Below 380 atoms the list is complete
    (hexagon starts are searched wherever pentagon starts alone are not known to find every
    cage; ``all_starts`` searches them everywhere, as a check).
    """
    return Isomers(sizes, ipr, faces, score, charge, threads, all_starts)


def count(
    sizes: Sizes,
    ipr: bool = False,
    faces: str = "fullerene",
    threads: int = 0,
    all_starts: bool = False,
) -> int:
    """Number of isomers of ``sizes`` (see :func:`isomers`)."""
    return Isomers(sizes, ipr, faces, False, 0, threads, all_starts).count()


def isomer(id: str, ipr: bool = False) -> Isomer:
    """The isomer an ID names: ``C84:IPR-23``, ``C84:all-51591``, or a bare ``C84:23`` (IPR
    list when ``ipr``, else the complete list). Runs the search up to that isomer."""
    return Isomer._from_native(_native.isomer_by_id(id, ipr))


def from_spiral(spiral: Sequence[int], atoms: int, faces: str = "fullerene") -> Isomer:
    """The isomer of a spiral read from any start: 12 pentagon positions for a fullerene, the
    face-size sequence otherwise. The result holds the canonical spiral; numbers are not
    looked up (use :func:`cagerank.identify` or a catalogue for those)."""
    return Isomer._from_native(_native.from_spiral(atoms, list(spiral), faces))


IsomerLike = Union[Isomer, str]


def _as_isomer(x: IsomerLike) -> Isomer:
    return x if isinstance(x, Isomer) else isomer(x)


def score(
    isomers: Union[IsomerLike, Iterable[IsomerLike]], charge: int = 0, threads: int = 0
) -> Union[dict, "pandas.DataFrame", List[dict]]:
    """Descriptors of one isomer (a dict) or of many (a DataFrame with one row per isomer if
    pandas is installed, else a list of dicts), computed in parallel off the GIL. Isomers may
    be given as :class:`Isomer` values or IDs."""
    if isinstance(isomers, (Isomer, str)):
        one = _as_isomer(isomers)
        return _native.score_many([one._key()], charge=charge, threads=1)[0]
    many = [_as_isomer(x) for x in isomers]
    scored = _native.score_many([i._key() for i in many], charge=charge, threads=threads)
    return _table([_row(i, d) for i, d in zip(many, scored)])


def tight_binding(
    isomers: Iterable[IsomerLike], charge: int = 0, max_force: float = 1e-3, threads: int = 0
) -> List["TightBinding"]:
    """Tight-binding relaxations (Xu, Wang, Chan & Ho 1992) of many isomers, in parallel and
    off the GIL; results in input order, identical for any thread count. Energies are 0 K
    electronic energies of the bare cage or cage ion: screening values."""
    from .structure import TightBinding

    many = [_as_isomer(x) for x in isomers]
    done = _native.tight_binding_many(
        [i._key() for i in many], charge=charge, max_force=max_force, threads=threads
    )
    return [TightBinding._from_native(i, d) for i, d in zip(many, done)]


def _row(iso: Isomer, descriptors: dict) -> dict:
    row: dict[str, Any] = {
        "id": iso.id,
        "atoms": iso.atoms,
        "number": iso.number,
        "ipr_number": iso.ipr_number,
        "spiral": " ".join(str(i) for i in iso.spiral),
    }
    row.update(descriptors)
    return row


def _table(rows: List[dict]) -> Union["pandas.DataFrame", List[dict]]:
    try:
        import pandas
    except ImportError:
        return rows
    return pandas.DataFrame(rows)

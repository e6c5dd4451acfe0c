"""Which isomer a structure is: from an XYZ/SDF file, or from coordinates and element symbols.

Bond perception, the cage, its canonical spiral and its numbers are the Rust library's
(``cagerank::identify``), the same as ``cagerank identify``.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from typing import List, Optional, Sequence, Union

import numpy as np

from ._errors import CagerankError
from .isomers import Isomer
from . import _native


@dataclass(frozen=True)
class Identified:
    """The isomer behind a structure (``None`` for a cage with no face spiral), and how many
    atoms were dropped as ``ignore_elements``. ``numbers_not_computed`` is true when a list
    number was beyond the search limit and no catalogue held the size."""

    isomer: Optional[Isomer]
    ignored: int
    numbers_not_computed: bool

    @classmethod
    def _from_native(cls, d: dict) -> "Identified":
        iso = Isomer._from_native(d["isomer"]) if d["isomer"] is not None else None
        return cls(iso, d["ignored"], d["numbers_not_computed"])


def _ignore(elements: Union[str, Sequence[str], None]) -> Optional[str]:
    if elements is None or isinstance(elements, str):
        return elements
    return ",".join(elements)


def identify(
    path: Union[str, "os.PathLike[str]", None] = None,
    *,
    coords: Optional[np.ndarray] = None,
    symbols: Optional[Sequence[str]] = None,
    ignore_elements: Union[str, Sequence[str], None] = None,
    tolerance: float = 0.40,
    format: Optional[str] = None,
    catalogue: Union[str, "os.PathLike[str]", None] = None,
    numbers: bool = True,
    charge: int = 0,
) -> Union[Identified, List[Union[Identified, str]]]:
    """Identify a cage from an XYZ/SDF file (``path``) or from ``coords`` (``n × 3``, Å) and
    element ``symbols``.

    A file with one structure, or coordinates, give one :class:`Identified` (failures raise
    :class:`CagerankError` with the CLI's message); a file of several structures gives a list
    with, per structure, an :class:`Identified` or the one-line reason it failed.
    ``ignore_elements`` (e.g. ``"Sc,N"``) drops endohedral or exohedral atoms; ``numbers=False``
    skips the isomer-number lookup, which may search the whole list.
    """
    cat = None if catalogue is None else os.fspath(catalogue)
    if path is not None:
        if coords is not None or symbols is not None:
            raise CagerankError("give a file path or coords and symbols, not both")
        found = _native.identify_file(
            os.fspath(path), _ignore(ignore_elements), tolerance, format, cat, numbers, charge
        )
        out = [Identified._from_native(x) if isinstance(x, dict) else x for x in found]
        return out[0] if len(out) == 1 else out
    if coords is None or symbols is None:
        raise CagerankError("give a file path, or coords (n x 3, Å) and element symbols")
    xyz = np.asarray(coords, dtype=float)
    if xyz.ndim != 2 or xyz.shape[1] != 3:
        raise CagerankError(f"coords must be an n x 3 array, not of shape {xyz.shape}")
    d = _native.identify_atoms(
        xyz.tolist(), list(symbols), _ignore(ignore_elements), tolerance, cat, numbers, charge
    )
    return Identified._from_native(d)

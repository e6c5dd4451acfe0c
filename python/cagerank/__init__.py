"""cagerank from Python: enumerate, score, rank and identify fullerene and other carbon-cage
isomers with the cagerank Rust library.

>>> import cagerank
>>> cagerank.count(84, ipr=True)
24
>>> c60 = cagerank.isomer("C60:IPR-1")
>>> c60.score()["kekule"]
12500

Everything scientific happens in the Rust library; long calls release the GIL and stop on
Ctrl-C, and failures raise :class:`CagerankError` with the command-line tool's one-line
message. pandas, ASE and RDKit are optional: without pandas, tables are lists of dicts.

Caution: rankings are screening heuristics built from published rules of thumb, not
predictions of real-world stability or of safety; geometries and tight-binding energies are
starting points to refine with proper quantum-chemical methods.
"""

from ._errors import CagerankError
from .catalogue import Catalogue
from .identify import Identified, identify
from .isomers import Isomer, Isomers, count, from_spiral, isomer, isomers, score, tight_binding
from .structure import Structure, TightBinding

__all__ = [
    "CagerankError",
    "Catalogue",
    "Identified",
    "Isomer",
    "Isomers",
    "Structure",
    "TightBinding",
    "count",
    "from_spiral",
    "identify",
    "isomer",
    "isomers",
    "score",
    "tight_binding",
]

__version__ = "0.1.0"

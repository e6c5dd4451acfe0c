"""Ranked, filtered queries over a catalogue on disk, as DataFrames.

The query is the Rust library's (``cagerank::catalogue::query::answer``), the same as
``cagerank query``: the same filters, rank keys, order, stored tight-binding energies and
one-line errors. Columns are named as in ``cagerank query --format csv``; values are typed
(missing ones are ``None``/NaN). Rankings are screening heuristics, not predictions of
real-world stability or safety.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING, List, Optional, Sequence, Union

from . import _native

if TYPE_CHECKING:
    import pandas


class Catalogue:
    """A catalogue directory written by ``cagerank enumerate --catalogue`` (default:
    ``$CAGERANK_CATALOGUE``, else ``./catalogues``)."""

    def __init__(self, path: Union[str, "os.PathLike[str]", None] = None) -> None:
        self.path = Path(path) if path is not None else Path(_native.default_catalogue())

    def __repr__(self) -> str:
        return f"Catalogue({str(self.path)!r})"

    def query(
        self,
        atoms: int,
        ipr: bool = False,
        faces: str = "fullerene",
        charge: int = 0,
        top: Optional[int] = None,
        rank_by: Union[str, Sequence[str], None] = None,
        max_pentagon_adjacencies: Optional[int] = None,
        min_gap: Optional[float] = None,
        shell: Optional[str] = None,
        point_group: Optional[str] = None,
        nmr: Optional[str] = None,
        nmr_lines: Optional[int] = None,
        nmr_merged: Optional[str] = None,
        chiral: Optional[bool] = None,
    ) -> Union["pandas.DataFrame", List[dict]]:
        """The isomers of one size, best first: a DataFrame if pandas is installed, else a
        list of dicts.

        Keywords are ``cagerank query``'s options: ``rank_by`` takes keys such as
        ``"pentagon_adjacencies,-gap"`` (or a list; ``-`` means largest first;
        ``relative_energy_kj`` ranks by the energies ``cagerank screen`` stored), ``shell`` a
        shell type (``properly-closed``, ...), ``point_group`` a Schoenflies symbol, ``nmr``
        and ``nmr_merged`` a 13C pattern written ``LINESxINTENSITY,...``, ``chiral`` True or
        False to keep chiral or achiral cages only.
        """
        if rank_by is not None and not isinstance(rank_by, str):
            rank_by = ",".join(rank_by)
        names, rows = _native.query_catalogue(
            str(self.path),
            atoms,
            ipr=ipr,
            faces=faces,
            charge=charge,
            top=top,
            rank_by=rank_by,
            max_pentagon_adjacencies=max_pentagon_adjacencies,
            min_gap=min_gap,
            shell=shell,
            point_group=point_group,
            nmr=nmr,
            nmr_lines=nmr_lines,
            nmr_merged=nmr_merged,
            chiral=chiral,
        )
        try:
            import pandas
        except ImportError:
            return [dict(zip(names, row)) for row in rows]
        return pandas.DataFrame(rows, columns=names)

"""Catalogue queries as DataFrames, against the CLI's CSV for the same catalogue.

The CSV is produced by running the cagerank binary built from this checkout (see conftest).
"""

import csv
import io
import math
import shutil
import subprocess

import pytest

import cagerank

# How `cagerank query --format csv` writes each column; the DataFrame holds the values.
DECIMALS = {"hexagon_strain": 4, "gap": 4, "somo": 4, "pi_energy": 4,
            "relative_energy_kj": 1, "tb_gap_ev": 3}


def as_cli_text(column, value):
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    if column in DECIMALS:
        return f"{value:.{DECIMALS[column]}f}"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))  # pandas widens integer columns with gaps to float
    return str(value)


def cli_csv(cli, catalogue, *args):
    run = subprocess.run([cli, "query", "--catalogue", str(catalogue), "--format", "csv", *args],
                         capture_output=True, text=True, check=True)
    rows = list(csv.reader(io.StringIO(run.stdout)))
    return rows[0], rows[1:]


def frame_rows(frame):
    if isinstance(frame, list):
        names = list(frame[0]) if frame else []
        return names, [[r[n] for n in names] for r in frame]
    return list(frame.columns), frame.astype(object).values.tolist()


CASES = [
    ({"atoms": 84, "ipr": True}, ["--atoms", "84", "--ipr"]),
    ({"atoms": 60}, ["--atoms", "60"]),
    ({"atoms": 70, "top": 25, "rank_by": ["-gap", "pentagon_adjacencies"]},
     ["--atoms", "70", "--top", "25", "--rank-by", "-gap,pentagon_adjacencies"]),
    ({"atoms": 80, "ipr": True, "chiral": True, "point_group": "D2"},
     ["--atoms", "80", "--ipr", "--chiral", "--point-group", "D2"]),
    ({"atoms": 70, "nmr": "3x10,2x20"}, ["--atoms", "70", "--nmr", "3x10,2x20"]),
    ({"atoms": 66, "max_pentagon_adjacencies": 3, "min_gap": 0.1},
     ["--atoms", "66", "--max-pentagon-adjacencies", "3", "--min-gap", "0.1"]),
]


@pytest.mark.parametrize("keywords, flags", CASES)
def test_dataframe_query_equals_the_cli_csv(cli, shipped_catalogue, keywords, flags):
    header, want = cli_csv(cli, shipped_catalogue, *flags)
    got = cagerank.Catalogue(shipped_catalogue).query(**keywords)
    names, rows = frame_rows(got)
    assert names == header
    assert len(rows) == len(want) > 0
    for got_row, want_row in zip(rows, want):
        assert [as_cli_text(c, v) for c, v in zip(names, got_row)] == want_row


def test_query_is_a_dataframe_with_typed_columns(shipped_catalogue):
    pandas = pytest.importorskip("pandas")
    frame = cagerank.Catalogue(shipped_catalogue).query(60, ipr=True)
    assert isinstance(frame, pandas.DataFrame)
    row = frame.iloc[0]
    # Klein et al., JACS 108 (1986) 1301: 12500 Kekulé structures of C60-Ih.
    assert row["kekule"] == 12500
    assert row["point_group"] == "Ih"
    assert row["ipr_number"] == 1
    # Fowler & Manolopoulos, Atlas of Fullerenes (1995): C60-Ih is C60:1812 of the complete list.
    ih = cagerank.Catalogue(shipped_catalogue).query(60, point_group="Ih")
    assert ih["number"].tolist() == [1812] and ih["ipr_number"].tolist() == [1]


def test_stored_energies_join_and_rank_like_the_cli(cli, shipped_catalogue, tmp_path):
    catalogue = tmp_path / "cat"
    catalogue.mkdir()
    shutil.copy(shipped_catalogue / "fullerene-c76-ipr.cgr", catalogue)
    subprocess.run([cli, "screen", "--atoms", "76", "--ipr", "--all", "--catalogue",
                    str(catalogue)], capture_output=True, check=True)
    flags = ["--atoms", "76", "--ipr", "--rank-by", "relative_energy_kj"]
    header, want = cli_csv(cli, catalogue, *flags)
    got = cagerank.Catalogue(catalogue).query(76, ipr=True, rank_by="relative_energy_kj")
    names, rows = frame_rows(got)
    assert names == header and "relative_energy_kj" in names
    assert [[as_cli_text(c, v) for c, v in zip(names, r)] for r in rows] == want


@pytest.mark.parametrize(
    "keywords, flags",
    [
        ({"atoms": 84, "ipr": True, "shell": "bogus"}, ["--atoms", "84", "--ipr", "--shell", "bogus"]),
        ({"atoms": 84, "ipr": True, "top": 0}, ["--atoms", "84", "--ipr", "--top", "0"]),
        # The shipped catalogue has energies for the IPR lists only, not for complete lists.
        ({"atoms": 70, "rank_by": "relative_energy_kj"},
         ["--atoms", "70", "--rank-by", "relative_energy_kj"]),
        ({"atoms": 70, "nmr": "3x10"}, ["--atoms", "70", "--nmr", "3x10"]),
        ({"atoms": 200}, ["--atoms", "200"]),
    ],
)
def test_query_errors_are_the_clis(cli, shipped_catalogue, keywords, flags):
    run = subprocess.run([cli, "query", "--catalogue", str(shipped_catalogue), *flags],
                         capture_output=True, text=True)
    assert run.returncode == 2
    with pytest.raises(cagerank.CagerankError) as e:
        cagerank.Catalogue(shipped_catalogue).query(**keywords)
    assert run.stderr.strip() == f"cagerank: {e.value}"

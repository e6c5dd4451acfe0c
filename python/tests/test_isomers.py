"""Enumeration, counts and descriptors through the Python API, against published values."""

import threading
import time

import pytest

import cagerank

# OEIS A007894: number of fullerenes with n atoms, n = 20, 22, ..., 70.
A007894 = [1, 0, 1, 1, 2, 3, 6, 6, 15, 17, 40, 45, 89, 116, 199, 271, 437, 580, 924, 1205,
           1812, 2385, 3465, 4478, 6332, 8149]

# OEIS A046880: IPR fullerenes with n atoms, n = 60, 70, 72, ..., 90 (none for 62-68).
A046880 = {60: 1, 70: 1, 72: 1, 74: 1, 76: 2, 78: 5, 80: 7, 82: 9, 84: 24, 86: 19, 88: 35,
           90: 46}


@pytest.mark.parametrize("n", [20, 24, 40, 50, 60, 66])
def test_fullerene_counts_match_oeis_a007894(n):
    # OEIS A007894
    assert cagerank.count(n) == A007894[(n - 20) // 2]


@pytest.mark.parametrize("n", sorted(A046880))
def test_ipr_counts_match_oeis_a046880(n):
    # OEIS A046880
    assert cagerank.count(n, ipr=True) == A046880[n]


def test_ipr_c100_count_matches_oeis_a046880():
    # OEIS A046880: 450 IPR isomers of C100.
    assert cagerank.isomers(100, ipr=True).count() == 450


def test_count_of_a_range_skips_c22_and_sums():
    # OEIS A007894, n = 20..30: 1 + 0 + 1 + 1 + 2 + 3.
    assert cagerank.count(range(20, 32, 2)) == 8


def test_iterating_gives_the_count_in_isomer_number_order():
    found = list(cagerank.isomers(40))
    # OEIS A007894: 40 isomers of C40.
    assert len(found) == 40
    assert [i.number for i in found] == list(range(1, 41))
    assert [i.spiral for i in found] == sorted(i.spiral for i in found)
    assert all(len(i.spiral) == 12 for i in found)


def test_ipr_ids_name_their_list():
    found = list(cagerank.isomers(84, ipr=True))
    # OEIS A046880: 24 IPR isomers of C84.
    assert [i.id for i in found] == [f"C84:IPR-{k}" for k in range(1, 25)]
    assert all(i.number is None for i in found)


def test_leaving_a_loop_early_stops_the_search():
    started = time.monotonic()
    for k, iso in enumerate(cagerank.isomers(90)):
        if k == 10:
            break
    # C90 has 99,918 isomers (OEIS A007894, from memory); ten of them come at once.
    assert iso.number == 11
    assert time.monotonic() - started < 20


def test_c60_ih_has_12500_kekule_structures():
    c60 = cagerank.isomer("C60:IPR-1")
    d = c60.score()
    # Klein, Schmalz, Hite, Seitz, JACS 108 (1986) 1301: 12500 Kekulé structures.
    assert d["kekule"] == 12500
    # Fowler & Manolopoulos, Atlas of Fullerenes (1995): C60-Ih is C60:1812, 120 symmetries.
    assert d["point_group"] == "Ih"
    assert d["automorphisms"] == 120
    assert d["nmr"] == "1x60"
    assert c60.ids == ["C60:IPR-1"]
    assert c60.spiral == (1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32)


def test_c60_in_the_complete_list_is_number_1812():
    # Fowler & Manolopoulos, Atlas of Fullerenes (1995): C60-Ih is isomer 1812 of 1812.
    c60 = cagerank.isomer("C60:all-1812")
    assert c60.spiral == (1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32)


def test_c70_d5h_nmr_pattern():
    c70 = cagerank.isomer("C70:IPR-1")
    # Taylor et al., J. Chem. Soc. Chem. Commun. (1990) 1423: five 13C lines, 10:10:20:20:10.
    d = c70.score()
    assert d["point_group"] == "D5h"
    assert d["nmr"] == "3x10,2x20"


def test_scored_enumeration_equals_scoring_afterwards():
    scored = list(cagerank.isomers(84, ipr=True, score=True))
    again = cagerank.score(scored)
    rows = again.to_dict("records") if hasattr(again, "to_dict") else again
    for iso, row in zip(scored, rows):
        assert {k: row[k] for k in iso.descriptors} == iso.descriptors


def test_score_many_is_a_dataframe_with_one_row_per_isomer():
    pandas = pytest.importorskip("pandas")
    table = cagerank.score(cagerank.isomers(84, ipr=True))
    assert isinstance(table, pandas.DataFrame)
    assert len(table) == 24
    # C84:IPR-23 is the D2d isomer (Atlas of Fullerenes 1995; Manolopoulos & Fowler 1992).
    assert table.set_index("id").loc["C84:IPR-23", "point_group"] == "D2d"


def test_descriptors_are_the_clis(cli):
    import json
    import subprocess

    out = subprocess.run([cli, "enumerate", "70", "--ipr", "--json", "--quiet"],
                         capture_output=True, text=True, check=True).stdout
    want = json.loads(out.splitlines()[0])
    got = cagerank.isomer("C70:IPR-1").score()
    for key in ["pentagon_adjacencies", "gap", "homo", "lumo", "pi_energy", "shell",
                "point_group", "automorphisms", "chiral", "hexagon_strain"]:
        assert got[key] == want[key], key
    assert got["kekule"] == int(want["kekule"])


def test_from_spiral_finds_the_canonical_spiral():
    # The C60-Ih spiral read from a start other than the canonical one would give other
    # positions; the canonical one given back is its own canonical form.
    iso = cagerank.from_spiral([1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32], atoms=60)
    assert iso.spiral == (1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32)
    assert iso.automorphisms == 120 and iso.ipr


def test_other_face_sets():
    # The cube is the only cubic polyhedron of 8 atoms with squares and hexagons only, and the
    # hexagonal prism the only one of 12 (Euler: six squares; Fowler & Manolopoulos 1995).
    assert cagerank.count(8, faces="4-6") == 1
    assert cagerank.count(12, faces="4-6") == 1


@pytest.mark.parametrize(
    "call, message",
    [
        (lambda: cagerank.count(22), "22 atoms: no fullerene has 22 atoms"),
        (lambda: cagerank.isomers(60, faces="7-8"),
         "unknown face set '7-8'; use fullerene, 4-6, 4-5-6 or 5-6-7hH (H the heptagon bound of "
         "the run, e.g. 5-6-7h1)"),
        (lambda: cagerank.isomer("C60:IPR-2"),
         "C60 has no isomer 2 in the IPR list; numbers start at 1"),
    ],
)
def test_errors_are_cagerank_errors_with_one_line(call, message):
    with pytest.raises(cagerank.CagerankError) as e:
        call()
    assert str(e.value) == message
    assert isinstance(e.value, ValueError)


def test_the_gil_is_released_during_a_count():
    ticks = 0
    done = threading.Event()

    def work():
        cagerank.count(66, threads=1)
        done.set()

    t = threading.Thread(target=work)
    t.start()
    while not done.is_set():
        ticks += 1
        time.sleep(0.001)
    t.join()
    # A call that held the GIL would let this loop run only before and after it.
    assert ticks > 20

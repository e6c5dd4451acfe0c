#!/usr/bin/env python3
"""Independent reference for cagerank's Hückel gap and Kekulé count (not run by CI).

Winds each fullerene spiral into its dual triangulation itself (Manolopoulos, May & Down,
Chem. Phys. Lett. 181 (1991) 105), reads the carbon graph off the triangles, then computes
  * the Hückel spectrum with numpy.linalg.eigvalsh (HOMO, LUMO, gap for the neutral cage), and
  * the Kekulé count with a Pfaffian orientation built from networkx's planar embedding
    (Kasteleyn 1967) and |Pf K| = sqrt(|det K|) from numpy (floating point: exact only while
    det K < 2^53, i.e. counts below ~9e7; this is a reference, not the exact method).
  * optionally (--brute) a backtracking count of perfect matchings.

Input: one spiral per line, "ATOMS: p1 p2 ... p12" (1-based pentagon positions), on stdin or
from --spirals FILE; with no input, three cages with published checks.
Output: one JSON line per cage and a timing line on stderr.

    pip install numpy networkx
    python3 scripts/reference_huckel_kekule.py --spirals spirals.txt > reference.jsonl
"""
import argparse
import json
import sys
import time

import networkx as nx
import numpy as np

DEFAULT = [
    "20: 1 2 3 4 5 6 7 8 9 10 11 12",  # dodecahedron, 36 Kekulé structures
    "60: 1 7 9 11 13 15 18 20 22 24 26 32",  # C60-Ih: 12500 (Klein et al. 1986), gap 0.7566
    "70: 1 7 9 11 13 15 27 29 31 33 35 37",  # C70-D5h: 52168
]


def windup(sizes):
    """Dual adjacency of the spiral, or None if it does not wind."""
    n = len(sizes)
    adj = [[] for _ in range(n)]

    def connect(a, b):
        adj[a].append(b)
        adj[b].append(a)

    connect(0, 1)
    boundary = [0, 1]
    for k in range(2, n - 1):
        connect(k, boundary[-1])
        connect(k, boundary[0])
        while len(adj[boundary[0]]) == sizes[boundary[0]]:
            boundary.pop(0)
            if not boundary:
                return None
            connect(k, boundary[0])
        while len(adj[boundary[-1]]) == sizes[boundary[-1]]:
            boundary.pop()
            if not boundary:
                return None
            connect(k, boundary[-1])
        if len(adj[k]) > sizes[k]:
            return None
        boundary.append(k)
    for f in boundary:
        connect(n - 1, f)
    if any(len(set(a)) != len(a) or len(a) != s for a, s in zip(adj, sizes)):
        return None
    return adj


def carbon_graph(adj):
    """Atoms are the triangles of the dual; bonds join triangles sharing a dual edge."""
    sets = [set(a) for a in adj]
    triangles = sorted(
        {tuple(sorted((a, b, c))) for a in range(len(adj)) for b in adj[a] for c in adj[b]
         if c in sets[a] and a != c}
    )
    index = {t: i for i, t in enumerate(triangles)}
    graph = nx.Graph()
    graph.add_nodes_from(range(len(triangles)))
    by_pair = {}
    for t in triangles:
        for pair in ((t[0], t[1]), (t[0], t[2]), (t[1], t[2])):
            by_pair.setdefault(pair, []).append(index[t])
    for atoms in by_pair.values():
        if len(atoms) == 2:
            graph.add_edge(*atoms)
    return graph


def huckel(graph):
    n = graph.number_of_nodes()
    x = np.sort(np.linalg.eigvalsh(nx.to_numpy_array(graph, nodelist=range(n))))[::-1]
    homo, lumo = x[n // 2 - 1], x[n // 2]
    return float(homo), float(lumo), float(homo - lumo)


def kasteleyn(graph):
    """Signed skew adjacency of a Pfaffian orientation: every face but the outer one gets an
    odd number of edges oriented along its traversal (spanning-tree method)."""
    _, emb = nx.check_planarity(graph)
    faces, seen = [], set()
    for u, v in emb.edges():
        if (u, v) not in seen:
            face = emb.traverse_face(u, v, mark_half_edges=seen)
            faces.append(face)
    edge_faces = {}
    for fi, face in enumerate(faces):
        for i, a in enumerate(face):
            b = face[(i + 1) % len(face)]
            edge_faces.setdefault(frozenset((a, b)), []).append(fi)
    dual = nx.Graph()
    for e, fs in edge_faces.items():
        dual.add_edge(fs[0], fs[1], edge=e)
    tree = nx.bfs_tree(dual, 0)
    order = list(nx.bfs_tree(dual, 0).nodes())
    parent = {child: par for par, child in tree.edges()}
    open_edges = {dual.edges[parent[f], f]["edge"] for f in parent}
    direction = {}
    for u, v in graph.edges():
        if frozenset((u, v)) not in open_edges:
            direction[frozenset((u, v))] = (min(u, v), max(u, v))
    for f in reversed(order):
        if f not in parent:
            continue
        face = faces[f]
        pending = dual.edges[parent[f], f]["edge"]
        along = 0
        for i, a in enumerate(face):
            b = face[(i + 1) % len(face)]
            e = frozenset((a, b))
            if e != pending and direction[e] == (a, b):
                along += 1
        for i, a in enumerate(face):
            b = face[(i + 1) % len(face)]
            if frozenset((a, b)) == pending:
                direction[pending] = (a, b) if along % 2 == 0 else (b, a)
    n = graph.number_of_nodes()
    k = np.zeros((n, n))
    for a, b in direction.values():
        k[a, b], k[b, a] = 1.0, -1.0
    return k


def kekule_pfaffian(graph):
    sign, logdet = np.linalg.slogdet(kasteleyn(graph))
    return int(round(np.exp(0.5 * logdet))) if sign != 0 else 0


def kekule_brute(graph):
    adj = {v: list(graph.neighbors(v)) for v in graph}
    used = [False] * graph.number_of_nodes()

    def go():
        try:
            v = used.index(False)
        except ValueError:
            return 1
        used[v] = True
        total = 0
        for u in adj[v]:
            if not used[u]:
                used[u] = True
                total += go()
                used[u] = False
        used[v] = False
        return total

    return go()


def parse(line):
    atoms, rest = line.split(":", 1)
    atoms = int(atoms)
    sizes = [6] * (atoms // 2 + 2)
    for p in rest.replace(",", " ").split():
        sizes[int(p) - 1] = 5
    return atoms, rest.split(), sizes


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--spirals", help="file of 'ATOMS: p1 ... p12' lines (default: stdin)")
    ap.add_argument("--brute", action="store_true", help="also count by backtracking (slow)")
    args = ap.parse_args()
    if args.spirals:
        lines = open(args.spirals).read().splitlines()
    elif not sys.stdin.isatty():
        lines = sys.stdin.read().splitlines()
    else:
        lines = []
    lines = [l for l in lines if l.strip() and not l.startswith("#")] or DEFAULT
    start = time.perf_counter()
    computing = 0.0  # time in the Hückel gap and Kekulé count only (the peer comparison)
    for line in lines:
        atoms, spiral, sizes = parse(line)
        adj = windup(sizes)
        if adj is None:
            print(json.dumps({"atoms": atoms, "spiral": spiral, "error": "does not wind"}))
            continue
        graph = carbon_graph(adj)
        t0 = time.perf_counter()
        homo, lumo, gap = huckel(graph)
        kekule = kekule_pfaffian(graph)
        computing += time.perf_counter() - t0
        row = {"atoms": atoms, "spiral": " ".join(spiral), "homo": homo, "lumo": lumo,
               "gap": gap, "kekule": str(kekule)}
        if args.brute:
            row["kekule_brute"] = str(kekule_brute(graph))
        print(json.dumps(row))
    elapsed = time.perf_counter() - start
    count = max(len(lines), 1)
    print(f"{len(lines)} cages in {elapsed:.3f} s with winding; Hückel gap + Kekulé count alone "
          f"{computing:.3f} s = {1000 * computing / count:.3f} ms per cage", file=sys.stderr)


if __name__ == "__main__":
    main()

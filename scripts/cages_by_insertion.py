#!/usr/bin/env python3
"""Counts cubic polyhedra with face sizes in {4,6}, {4,5,6} and {5,6,7} by a construction that
shares nothing with cagerank's spiral search, as an independent check of its counts
(tests/suite/cages.rs reads the committed output, scripts/cages_by_insertion.out).

Construction: every 3-connected cubic plane graph other than the tetrahedron arises from one
with two atoms fewer by joining two distinct edges of one face by a new edge (the dual
statement: every triangulation of the sphere other than K4 has a contractible edge; Steinitz &
Rademacher 1934, from memory). So starting from the tetrahedron and applying every such
insertion, level by level, gives every cubic polyhedron on up to N atoms; duplicates are removed
by a canonical code of the embedding (breadth-first numbering from every dart in both senses,
the smallest code kept), which is a complete invariant of a 3-connected plane graph (Whitney:
its embedding is unique up to reflection). Each kept cage of the three face sets is checked
with networkx to be planar, cubic and 3-connected.

Usage: python3 scripts/cages_by_insertion.py [N]   (default N = 18; prints one line per size)
"""
import sys

import networkx as nx


def faces_of(rot):
    """Faces as dart cycles: the face left of u->v continues with v->w, w following u at v."""
    seen = set()
    faces = []
    for u, nbrs in rot.items():
        for v in nbrs:
            if (u, v) in seen:
                continue
            face = []
            a, b = u, v
            while (a, b) not in seen:
                seen.add((a, b))
                face.append((a, b))
                r = rot[b]
                a, b = b, r[(r.index(a) + 1) % 3]
            faces.append(face)
    return faces


def insert(rot, d1, d2):
    """Joins the middles of darts d1 = a->b and d2 = c->d of one face by a new edge inside it."""
    (a, b), (c, d) = d1, d2
    new = {k: list(v) for k, v in rot.items()}
    x, y = len(rot), len(rot) + 1
    new[x] = [a, y, b]
    new[y] = [c, x, d]
    for p, q, m in ((a, b, x), (b, a, x), (c, d, y), (d, c, y)):
        new[p][new[p].index(q)] = m
    return new


def code_from(rot, u, v, sense):
    label = {u: 0}
    order = [u]
    parent = {u: v}
    out = []
    i = 0
    while i < len(order):
        w = order[i]
        r = rot[w]
        j = r.index(parent[w])
        for step in range(3):
            z = r[(j + sense * step) % 3]
            if z not in label:
                label[z] = len(order)
                order.append(z)
                parent[z] = w
            out.append(label[z])
        i += 1
    return tuple(out)


def canonical(rot):
    faces = faces_of(rot)
    size_left = {}
    for f in faces:
        for dart in f:
            size_left[dart] = len(f)
    # Only darts whose (face ahead-left, face ahead-right) sizes are smallest can start the
    # smallest code: the key is defined the same way in both senses, so this is exact.
    keys = []
    for u, nbrs in rot.items():
        for v in nbrs:
            left, right = size_left[(u, v)], size_left[(v, u)]
            keys.append(((left, right), u, v, 1))
            keys.append(((right, left), u, v, -1))
    best_key = min(k[0] for k in keys)
    return min(code_from(rot, u, v, s) for k, u, v, s in keys if k == best_key)


def classify(rot):
    faces = faces_of(rot)
    sizes = sorted(len(f) for f in faces)
    kinds = set(sizes)
    size_of = {}
    for f in faces:
        for dart in f:
            size_of[dart] = len(f)
    square_contacts = sum(1 for (u, v), s in size_of.items() if s == 4 and size_of[(v, u)] == 4) // 2
    pentagon_contacts = sum(1 for (u, v), s in size_of.items() if s == 5 and size_of[(v, u)] == 5) // 2
    out = []
    if kinds <= {4, 6}:
        out.append("4-6")
        if square_contacts == 0:
            out.append("4-6-isolated")
    if kinds <= {4, 5, 6}:
        out.append("4-5-6")
        if square_contacts == 0:
            out.append("4-5-6-isolated")
    if kinds <= {5, 6, 7} and sizes.count(7) <= 1:
        out.append("5-6-7h1")
    if kinds <= {5, 6}:
        out.append("fullerene")
        if pentagon_contacts == 0:
            out.append("fullerene-ipr")
    return out


def check_polyhedral(rot):
    g = nx.Graph()
    for u, nbrs in rot.items():
        for v in nbrs:
            g.add_edge(u, v)
    assert all(d == 3 for _, d in g.degree()), "cubic"
    assert nx.check_planarity(g)[0], "planar"
    assert nx.node_connectivity(g) == 3, "3-connected"


def main():
    top = int(sys.argv[1]) if len(sys.argv) > 1 else 18
    tetra = {0: [1, 2, 3], 1: [0, 3, 2], 2: [0, 1, 3], 3: [0, 2, 1]}
    assert len(faces_of(tetra)) == 4
    level = {canonical(tetra): tetra}
    names = ["4-6", "4-6-isolated", "4-5-6", "4-5-6-isolated", "5-6-7h1", "fullerene", "fullerene-ipr"]
    print("# atoms polyhedra " + " ".join(names))
    n = 4
    while True:
        counts = dict.fromkeys(names, 0)
        for rot in level.values():
            kinds = classify(rot)
            if kinds:
                check_polyhedral(rot)
            for k in kinds:
                counts[k] += 1
        print(n, len(level), " ".join(str(counts[k]) for k in names), flush=True)
        if n + 2 > top:
            break
        nxt = {}
        for rot in level.values():
            for face in faces_of(rot):
                for i in range(len(face)):
                    for j in range(i + 1, len(face)):
                        child = insert(rot, face[i], face[j])
                        nxt.setdefault(canonical(child), child)
        level = nxt
        n += 2


if __name__ == "__main__":
    main()

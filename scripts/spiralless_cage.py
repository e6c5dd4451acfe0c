#!/usr/bin/env python3
"""Builds the tetrahedral fullerenes of a given size, finds those without a face spiral, and
writes one of them as an XYZ file (test data for `cagerank identify`; not run by CI).

Manolopoulos & Fowler, Chem. Phys. Lett. 204 (1993) 1, showed that a fullerene need not have a
face spiral, with a 380-atom cage of T symmetry (from memory: the smallest such fullerene, later
confirmed by exhaustive generation, Brinkmann, Goedgebeur & McKay, Inform. Process. Lett. 112
(2012) 580). This script does not use their drawing; it rebuilds tetrahedral cages from scratch:

* The dual of a fullerene is a triangulation of the sphere in which the unit triangles make a
  flat surface with 12 cone points of angle 300 degrees (Thurston, Geometry & Topology
  Monographs 1 (1998) 511). A truncated tetrahedron has exactly that: 12 corners, each with one
  triangle angle (60) and two hexagon angles summing to 240. Drawing its 4 triangles and 4
  hexagons on the Eisenstein lattice, with triangle side vector u and hexagon sides alternating
  u and w (each hexagon 3-fold symmetric), gives every cage with a tetrahedral rotation group
  whose pentagons form one orbit; the lattice points are the faces of the fullerene.
* Each candidate is checked with networkx (planar, cubic, 12 pentagons) and then tested for a
  face spiral from every start by an implementation independent of cagerank's: a spiral is an
  order of the faces in which each face after the first shares an edge with its predecessor and
  each face after the second shares an edge with the earliest face that still has unlisted
  neighbours (the definition in the paper above).
* Coordinates: the three adjacency eigenvectors of the p-type level (Manolopoulos & Fowler,
  J. Chem. Phys. 96 (1992) 7603), scaled and relaxed by gradient descent on bond (1.42 Å) and
  next-neighbour (2.46 Å) springs; good enough for bond perception, not a chemical geometry.

    python3 scripts/spiralless_cage.py 380 --out tests/data/c380_no_spiral.xyz
    python3 scripts/spiralless_cage.py 100 --pentagon-starts --out tests/data/c100_no_pentagon_start.xyz
"""
import argparse
import itertools
import math
import sys
from fractions import Fraction

import networkx as nx
import numpy as np

# Oriented tetrahedron: face i (opposite vertex i) as a counter-clockwise vertex triple.
TET_FACES = [(1, 2, 3), (0, 3, 2), (0, 1, 3), (0, 2, 1)]


def rot60(p):
    """Multiply a + b*zeta (zeta = exp(i pi/3)) by zeta."""
    a, b = p
    return (-b, a + b)


def rot(p, k):
    for _ in range(k % 6):
        p = rot60(p)
    return p


def add(p, q):
    return (p[0] + q[0], p[1] + q[1])


def sub(p, q):
    return (p[0] - q[0], p[1] - q[1])


def cross(p, q):
    """Positive multiple of the Euclidean cross product (the lattice basis is right-handed)."""
    return p[0] * q[1] - p[1] * q[0]


def cart(p):
    return (p[0] + p[1] / 2.0, p[1] * math.sqrt(3) / 2.0)


def norm(p):
    a, b = p
    return a * a + a * b + b * b


def polygons(u, w):
    """The 8 polygons: vertex lists (counter-clockwise) and, per side, the glued (polygon, side).

    Polygons 0-3 are the hexagons (tetrahedron faces), 4-7 the triangles (tetrahedron vertices).
    Hexagon sides alternate: triangle side, edge side, ... starting at the face's first vertex.
    """
    hexagon = [(0, 0)]
    for k in range(3):
        hexagon.append(add(hexagon[-1], rot(u, 2 * k)))
        hexagon.append(add(hexagon[-1], rot(w, 2 * k)))
    assert hexagon[-1] == (0, 0)
    hexagon = hexagon[:-1]
    triangle = [(0, 0)]
    for k in range(2):
        triangle.append(add(triangle[-1], rot((-u[0], -u[1]), 2 * k)))
    verts = [list(hexagon) for _ in range(4)] + [list(triangle) for _ in range(4)]
    # Side labels: which polygon lies across each side.
    labels = []
    for f, (a, b, c) in enumerate(TET_FACES):
        cyc = [a, b, c]
        sides = []
        for k in range(3):
            x, y = cyc[k], cyc[(k + 1) % 3]
            sides.append(4 + x)  # truncation triangle at x
            other = next(g for g, face in enumerate(TET_FACES) if g != f and x in face and y in face)
            sides.append(other)
        labels.append(sides)
    for v in range(4):
        # Faces around v counter-clockwise: after face (v, b, c) comes the face holding v -> c.
        start = next(f for f, face in enumerate(TET_FACES) if v in face)
        order = [start]
        while len(order) < 3:
            face = TET_FACES[order[-1]]
            i = face.index(v)
            c = face[(i + 2) % 3]
            nxt = next(g for g, fc in enumerate(TET_FACES) if v in fc and c in fc and g != order[-1])
            order.append(nxt)
        labels.append(order)
    glue = []
    for p, sides in enumerate(labels):
        row = []
        for s, q in enumerate(sides):
            back = [t for t, r in enumerate(labels[q]) if r == p]
            assert len(back) == 1
            row.append((q, back[0]))
        glue.append(row)
    return verts, glue


def side_map(verts, glue, p, s):
    """The lattice isometry from polygon p's chart to the chart across its side s."""
    q, t = glue[p][s]
    a, b = verts[p][s], verts[p][(s + 1) % len(verts[p])]
    c, d = verts[q][t], verts[q][(t + 1) % len(verts[q])]
    # Side a->b of p is side d->c of q (traversed the other way).
    for k in range(6):
        if rot(sub(b, a), k) == sub(c, d):
            return q, (lambda x, k=k, a=a, d=d: add(rot(sub(x, a), k), d))
    raise ValueError("sides of different length cannot be glued")


def simple(poly):
    n = len(poly)
    for i in range(n):
        for j in range(i + 1, n):
            if j == i + 1 or (i == 0 and j == n - 1):
                continue
            if segments_cross(poly[i], poly[(i + 1) % n], poly[j], poly[(j + 1) % n]):
                return False
    area = sum(cross(poly[i], poly[(i + 1) % n]) for i in range(n))
    return area > 0


def segments_cross(p1, p2, q1, q2):
    d1, d2 = cross(sub(p2, p1), sub(q1, p1)), cross(sub(p2, p1), sub(q2, p1))
    d3, d4 = cross(sub(q2, q1), sub(p1, q1)), cross(sub(q2, q1), sub(p2, q1))
    if (d1 > 0 and d2 < 0 or d1 < 0 and d2 > 0) and (d3 > 0 and d4 < 0 or d3 < 0 and d4 > 0):
        return True
    # Touching or overlapping also makes the polygon unusable.
    def on(a, b, c):
        return cross(sub(b, a), sub(c, a)) == 0 and min(a[0], b[0]) <= c[0] <= max(a[0], b[0]) \
            and min(a[1], b[1]) <= c[1] <= max(a[1], b[1])
    return (d1 == 0 and on(p1, p2, q1)) or (d2 == 0 and on(p1, p2, q2)) or \
        (d3 == 0 and on(q1, q2, p1)) or (d4 == 0 and on(q1, q2, p2))


def locate(poly, x):
    """'in', 'out', ('side', s) or ('corner', i) for a lattice point x."""
    n = len(poly)
    for i in range(n):
        if poly[i] == x:
            return ("corner", i)
    for s in range(n):
        a, b = poly[s], poly[(s + 1) % n]
        if cross(sub(b, a), sub(x, a)) == 0 and min(a[0], b[0]) <= x[0] <= max(a[0], b[0]) \
                and min(a[1], b[1]) <= x[1] <= max(a[1], b[1]):
            return ("side", s)
    # Winding by ray casting in Cartesian coordinates (x is not on the boundary).
    px, py = cart(x)
    inside = False
    for s in range(n):
        (ax, ay), (bx, by) = cart(poly[s]), cart(poly[(s + 1) % n])
        if (ay > py) != (by > py):
            t = (py - ay) / (by - ay)
            if ax + t * (bx - ax) > px:
                inside = not inside
    return "in" if inside else "out"


def heads_inside(poly, x, d):
    """Whether the segment from x (in the closed polygon) in direction d starts inside it."""
    where = locate(poly, x)
    n = len(poly)
    if where == "in":
        return True
    if where[0] == "side":
        s = where[1]
        return cross(sub(poly[(s + 1) % n], poly[s]), d) >= 0
    i = where[1]
    e_out = sub(poly[(i + 1) % n], poly[i])
    e_back = sub(poly[(i - 1) % n], poly[i])
    ang = lambda v: math.atan2(cart(v)[1], cart(v)[0])
    span = (ang(e_back) - ang(e_out)) % (2 * math.pi)
    off = (ang(d) - ang(e_out)) % (2 * math.pi)
    if cross(e_out, d) == 0 and e_out[0] * d[0] + e_out[1] * d[1] > 0:
        return True
    return off <= span + 1e-12


def walk(verts, glue, p, x, d):
    """Follows the unit step x -> x + d from polygon p across sides; returns (polygon, point)."""
    start, end = x, add(x, d)
    for _ in range(16):
        poly = verts[p]
        n = len(poly)
        best = None
        for s in range(n):
            a, b = poly[s], poly[(s + 1) % n]
            den = cross(sub(end, start), sub(b, a))
            if den == 0:
                continue
            t = Fraction(cross(sub(a, start), sub(b, a)), den)
            r = Fraction(cross(sub(a, start), sub(end, start)), den)
            if 0 < t < 1 and 0 <= r <= 1 and (best is None or t < best[0]):
                best = (t, s)
        if best is None or locate(poly, end) != "out":
            return p, end
        t, s = best
        q, g = side_map(verts, glue, p, s)
        # Map the exit point and the end through the gluing (g is affine, exact on Fractions).
        ex = (start[0] + t * (end[0] - start[0]), start[1] + t * (end[1] - start[1]))
        start, end, p = g_frac(g, ex), g(end), q
    raise RuntimeError("step crossed too many sides")


def g_frac(g, x):
    # g is a rotation by a multiple of 60 degrees plus a translation: apply it to a rational
    # point by linearity, g(x) = g(0) + (g(e1) - g(0)) x0 + (g(e2) - g(0)) x1.
    o = g((0, 0))
    e1, e2 = sub(g((1, 0)), o), sub(g((0, 1)), o)
    return (o[0] + e1[0] * x[0] + e2[0] * x[1], o[1] + e1[1] * x[0] + e2[1] * x[1])


def lattice_points(poly):
    xs = [v[0] for v in poly]
    ys = [v[1] for v in poly]
    pts = []
    for a in range(min(xs) - max(ys) - 2, max(xs) - min(ys) + 3):
        for b in range(min(ys) - 1, max(ys) + 2):
            if locate(poly, (a, b)) != "out":
                pts.append((a, b))
    return pts


def triangulation(u, w):
    """Edges of the dual triangulation, or None if the polygons are not usable."""
    verts, glue = polygons(u, w)
    if not all(simple(p) for p in verts):
        return None
    # Canonical name of every lattice point: the copy in the lowest-numbered polygon.
    names = {}
    pts = {p: lattice_points(verts[p]) for p in range(8)}
    parent = {}

    def find(k):
        while parent[k] != k:
            parent[k] = parent[parent[k]]
            k = parent[k]
        return k

    for p in range(8):
        for x in pts[p]:
            parent[(p, x)] = (p, x)
    for p in range(8):
        n = len(verts[p])
        for x in pts[p]:
            where = locate(verts[p], x)
            sides = []
            if where != "in" and where[0] == "side":
                sides = [where[1]]
            elif where != "in":
                sides = [where[1], (where[1] - 1) % n]
            for s in sides:
                q, g = side_map(verts, glue, p, s)
                y = g(x)
                if (q, y) not in parent:
                    return None
                a, b = find((p, x)), find((q, y))
                if a != b:
                    parent[max(a, b)] = min(a, b)
    for k in parent:
        names[k] = find(k)
    edges = set()
    dirs = [rot((1, 0), k) for k in range(6)]
    for p in range(8):
        for x in pts[p]:
            for d in dirs:
                if not heads_inside(verts[p], x, d):
                    continue
                q, y = walk(verts, glue, p, x, d)
                if (q, y) not in names:
                    return None
                a, b = names[(p, x)], names[(q, y)]
                if a != b:
                    edges.add((min(a, b), max(a, b)))
    return edges


def fullerene(edges):
    """The carbon graph (dual of the triangulation) as a networkx graph, or None."""
    tri = nx.Graph(list(edges))
    degrees = sorted(d for _, d in tri.degree())
    if degrees.count(5) != 12 or any(d not in (5, 6) for d in degrees):
        return None
    triangles = sorted({tuple(sorted(c)) for c in nx.enumerate_all_cliques(tri) if len(c) == 3})
    index = {t: i for i, t in enumerate(triangles)}
    by_edge = {}
    for t in triangles:
        for e in itertools.combinations(t, 2):
            by_edge.setdefault(e, []).append(index[t])
    g = nx.Graph()
    for e, ts in by_edge.items():
        if len(ts) != 2:
            return None
        g.add_edge(*ts)
    return g


def faces_of(g):
    ok, emb = nx.check_planarity(g)
    assert ok
    seen, faces = set(), []
    for u, v in emb.edges():
        if (u, v) not in seen:
            faces.append(emb.traverse_face(u, v, mark_half_edges=seen))
    return faces


def has_spiral(g, faces, first=None):
    """True if some start gives a face spiral (definition in the module docstring); with
    `first`, only starts on a face of that size count."""
    edge_faces = {}
    for f, cyc in enumerate(faces):
        for i in range(len(cyc)):
            e = frozenset((cyc[i], cyc[(i + 1) % len(cyc)]))
            edge_faces.setdefault(e, []).append(f)
    adj = [set() for _ in faces]
    for a, b in edge_faces.values():
        adj[a].add(b)
        adj[b].add(a)
    nf = len(faces)
    for f1 in range(nf):
        if first is not None and len(faces[f1]) != first:
            continue
        for f2 in adj[f1]:
            for f3 in adj[f1] & adj[f2]:
                order, listed = [f1, f2, f3], {f1, f2, f3}
                open_ptr = 0
                while len(order) < nf:
                    while open_ptr < len(order) and adj[order[open_ptr]] <= listed:
                        open_ptr += 1
                    cand = [h for h in adj[order[-1]] & adj[order[open_ptr]] if h not in listed]
                    if len(cand) != 1:
                        break
                    order.append(cand[0])
                    listed.add(cand[0])
                if len(order) == nf:
                    return True
    return False


def coordinates(g):
    n = g.number_of_nodes()
    nodes = sorted(g.nodes())
    a = nx.to_numpy_array(g, nodelist=nodes)
    vals, vecs = np.linalg.eigh(a)
    order = np.argsort(-vals)
    # The first level with two nodal domains per vector is the p-type triple; on these
    # near-spherical cages it is levels 2-4.
    x = vecs[:, order[1:4]]
    x /= np.linalg.norm(x, axis=1).mean()
    x *= math.sqrt(n / (4 * math.pi) * 2.62)  # radius from ~2.62 Å^2 of surface per atom
    bonds = np.array(list(g.edges()))
    second = set()
    for v in nodes:
        nb = list(g.neighbors(v))
        for i, j in itertools.combinations(nb, 2):
            second.add((min(i, j), max(i, j)))
    second = np.array(sorted(second))
    pairs = np.vstack([bonds, second])
    target = np.concatenate([np.full(len(bonds), 1.42), np.full(len(second), 2.46)])
    for _ in range(20000):
        d = x[pairs[:, 0]] - x[pairs[:, 1]]
        r = np.linalg.norm(d, axis=1)
        f = ((r - target) / r)[:, None] * d
        grad = np.zeros_like(x)
        np.add.at(grad, pairs[:, 0], f)
        np.add.at(grad, pairs[:, 1], -f)
        x -= 0.1 * grad
    return x


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("atoms", type=int)
    ap.add_argument("--out", help="write the first spiral-less cage found as XYZ")
    ap.add_argument("--pentagon-starts", action="store_true",
                    help="look for cages with no spiral starting on a pentagon instead")
    args = ap.parse_args()
    quarter = args.atoms // 4
    found = []
    rng = range(-12, 13)
    for u in itertools.product(range(1, 12), range(0, 12)):
        if norm(u) >= quarter:
            continue
        for w in itertools.product(rng, rng):
            if w == (0, 0):
                continue
            hexagon = polygons(u, w)[0][0]
            area = sum(cross(hexagon[i], hexagon[(i + 1) % 6]) for i in range(6))
            if 4 * (norm(u) + area) != args.atoms:
                continue
            edges = triangulation(u, w)
            if edges is None:
                continue
            g = fullerene(edges)
            if g is None or g.number_of_nodes() != args.atoms:
                continue
            if any(d != 3 for _, d in g.degree()) or not nx.check_planarity(g)[0]:
                continue
            faces = faces_of(g)
            sizes = sorted(len(f) for f in faces)
            if sizes.count(5) != 12 or any(s not in (5, 6) for s in sizes):
                continue
            spiral = has_spiral(g, faces, 5 if args.pentagon_starts else None)
            print(f"u={u} w={w}: C{args.atoms}, spiral {'yes' if spiral else 'NO'}", file=sys.stderr)
            if not spiral:
                found.append(g)
    distinct = []
    for g in found:
        if not any(nx.is_isomorphic(g, h) for h in distinct):
            distinct.append(g)
    kind = "spiral starting on a pentagon" if args.pentagon_starts else "face spiral"
    print(f"{len(found)} parameter pairs without a {kind}, {len(distinct)} distinct cage(s)",
          file=sys.stderr)
    found = distinct
    if args.out and found:
        g = found[0]
        x = coordinates(g)
        with open(args.out, "w") as fh:
            fh.write(f"{g.number_of_nodes()}\n")
            fh.write(f"C{args.atoms} tetrahedral fullerene without a {kind}, built by "
                     "scripts/spiralless_cage.py (topological start geometry, not optimised)\n")
            for row in x:
                fh.write(f"C {row[0]:12.6f} {row[1]:12.6f} {row[2]:12.6f}\n")


if __name__ == "__main__":
    main()

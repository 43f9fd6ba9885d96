"""Small shared helpers for the tests (no project logic is re-implemented here)."""

from __future__ import annotations

import heapq
import io
import itertools
import json
import random
from pathlib import Path
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.proof.checker import check_certificate

#: the repository (instances/ and the README live here); test modules may sit in subfolders
ROOT = Path(__file__).resolve().parent.parent
INSTANCES = ROOT / "instances"
#: small input files of the tests
DATA = Path(__file__).resolve().parent / "data"


def random_perm(rng: random.Random, lines: int) -> list[int]:
    p = list(range(1 << lines))
    rng.shuffle(p)
    return p


def hwb(lines: int) -> list[int]:
    """Hidden weighted bit: rotate the word left by its Hamming weight.

    Definition as used in the benchmark literature (e.g. Golubitsky, Falconer, Maslov,
    DAC 2010); written from the definition, not from any circuit.
    """
    mask = (1 << lines) - 1
    out = []
    for x in range(1 << lines):
        w = bin(x).count("1") % lines
        out.append(((x << w) | (x >> (lines - w))) & mask)
    return out


def perm_from_bits(lines: int, fn) -> list[int]:  # type: ignore[no-untyped-def]
    """Permutation from a function on bit lists (bit l = line l)."""
    out = []
    for x in range(1 << lines):
        bits = [x >> i & 1 for i in range(lines)]
        ys = fn(*bits)
        out.append(sum(b << i for i, b in enumerate(ys)))
    return out


def optimal_words(perm, library, sizes):  # type: ignore[no-untyped-def]
    """Every minimum-length gate sequence (library indices) computing ``perm``.

    Independent of SAT: ``sizes`` is a breadth-first size table (``SizeTable.as_dict()``);
    the last gate is peeled off while the rest stays optimal.
    """
    import numpy as np

    inverses = [np.argsort(np.array(g.permutation(library.lines))) for g in library.gates]
    out: list[tuple[int, ...]] = []

    def rec(f, left, tail):  # type: ignore[no-untyped-def]
        if left == 0:
            out.append(tail)
            return
        for j, inv in enumerate(inverses):
            g = tuple(int(inv[x]) for x in f)  # f = gate j after g
            if sizes.get(g) == left - 1:
                rec(g, left - 1, (j, *tail))

    rec(tuple(perm), sizes[tuple(perm)], ())
    return out


def naive_bfs(
    library_gates: list[tuple[int, ...]], size: int, depth: int | None = None
) -> dict[tuple[int, ...], int]:
    """Plain dictionary BFS, written independently of the vectorised one (to ``depth`` steps
    when given, else to the end)."""
    start = tuple(range(size))
    dist = {start: 0}
    frontier = [start]
    for _ in itertools.count() if depth is None else range(depth):
        if not frontier:
            break
        nxt = []
        for p in frontier:
            for g in library_gates:
                q = tuple(g[v] for v in p)
                if q not in dist:
                    dist[q] = dist[p] + 1
                    nxt.append(q)
        frontier = nxt
    return dist


def bfs_upto(library, depth: int) -> dict[tuple[int, ...], int]:  # type: ignore[no-untyped-def]
    """Every function of at most ``depth`` gates of ``library`` with its gate count (plain dictionary BFS)."""
    return naive_bfs([g.permutation(library.lines) for g in library.gates], 1 << library.lines, depth)


def permutation_matrix(c):  # type: ignore[no-untyped-def]
    """Column i has its 1 in row p[i]: the unitary that maps basis state |i> to |p[i]>."""
    import numpy as np

    p = c.permutation()
    m = np.zeros((len(p), len(p)))
    for i, o in enumerate(p):
        m[o, i] = 1.0
    return m


def png_grey(data: bytes) -> Any:
    """Decode a PNG with Pillow (a test dependency), as grey levels."""
    from PIL import Image

    return Image.open(io.BytesIO(data)).convert("L")


def dijkstra(library, costs: tuple[int, ...]) -> dict[tuple[int, ...], int]:  # type: ignore[no-untyped-def]
    """Least total cost of every function reachable with the library's gates (Dijkstra, no SAT).

    ``costs[j]`` is the cost of ``library.gates[j]``.
    """
    perms = [g.permutation(library.lines) for g in library.gates]
    start = tuple(range(1 << library.lines))
    dist = {start: 0}
    heap = [(0, start)]
    while heap:
        c, f = heapq.heappop(heap)
        if dist[f] < c:
            continue
        for j, p in enumerate(perms):
            h = tuple(p[x] for x in f)
            if c + costs[j] < dist.get(h, 1 << 30):
                dist[h] = c + costs[j]
                heapq.heappush(heap, (c + costs[j], h))
    return dist


def layer_depths(library, depth: int | None = None) -> dict[tuple[int, ...], int]:  # type: ignore[no-untyped-def]
    """Least depth of every reachable function (of at most ``depth`` layers): breadth-first
    search whose steps are whole layers (every set of the library's gates on pairwise
    disjoint lines), no SAT."""
    import numpy as np

    size = 1 << library.lines
    layers = set()
    for r in range(1, library.lines + 1):
        for combo in itertools.combinations(library.gates, r):
            if all(not (a.lines & b.lines) for a, b in itertools.combinations(combo, 2)):
                f = np.arange(size)
                for g in combo:
                    f = g.apply(f)
                layers.add(tuple(int(x) for x in f))
    return naive_bfs(sorted(layers), size, depth)


def trace_normal_form(word, library) -> tuple[int, ...]:  # type: ignore[no-untyped-def]
    """Representative of a gate sequence (library indices) up to swapping adjacent commuting gates.

    The greedy lexicographic normal form of traces (Anisimov & Knuth 1979; Diekert &
    Rozenberg, "The Book of Traces", 1995): repeatedly take the least gate that commutes
    with every gate before it.  Commutation is decided on the gates' permutations.
    """
    perms = [g.permutation(library.lines) for g in library.gates]

    def commute(a: int, b: int) -> bool:
        pa, pb = perms[a], perms[b]
        return all(pa[pb[s]] == pb[pa[s]] for s in range(len(pa)))

    rest, out = list(word), []
    while rest:
        movable = [i for i, g in enumerate(rest) if all(commute(g, h) for h in rest[:i])]
        best = min(movable, key=lambda i: rest[i])
        out.append(rest.pop(best))
    return tuple(out)


def edit(d: Path, fn) -> None:  # type: ignore[no-untyped-def]
    """Tamper with a certificate: apply ``fn`` to its parsed result.json and write it back."""
    p = d / "result.json"
    data = json.loads(p.read_text())
    fn(data)
    p.write_text(json.dumps(data))


def rejected(d: Path) -> bool:
    """Does the certificate checker refuse directory ``d`` (a failed check or an error)?"""
    try:
        return not check_certificate(d).ok
    except ExactsynError:
        return True

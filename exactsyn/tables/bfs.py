"""Breadth-first enumeration of reversible functions by minimum gate count (no SAT).

The functions realisable over a gate library form the Cayley graph of the group the
gates generate; a breadth-first search from the identity labels every function with
the fewest gates that realise it.  This is the classical way the optimal 3-line
tables were first computed (Shende, Prasad, Markov, Hayes, "Synthesis of reversible
logic circuits", IEEE TCAD 22(6), 2003); on 4 lines only the first few layers fit in
memory (Golubitsky, Falconer, Maslov, "Synthesis of the optimal 4-bit reversible
circuits", DAC 2010, go much further with symmetry reductions we do not use).

Here it serves as an independent check of the SAT engine and as a precomputed table.

Representation: a permutation of ``2**n`` states is one row of a ``uint8`` matrix
(``row[i]`` is the output for input ``i``).  A whole BFS layer is one matrix, and each
row is also viewed as an opaque byte string (a numpy ``void`` scalar) so that layers can
be sorted, deduplicated and looked up with vectorised numpy calls.

Composition order: a circuit ``g1`` then ``g2`` computes ``g2∘g1``; extending a
circuit by one gate ``g`` at the end maps ``p`` to ``new_p[i] = g[p[i]]``, which for a
whole layer is the fancy-index ``g[layer]``.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library, gate_table
from exactsyn.errors import ExactsynError

#: Largest line count for which :func:`optimal_sizes` builds the full table
#: (3 lines: 8! = 40320 functions; 4 lines would be 16! ≈ 2·10^13).
MAX_TABLE_LINES = 3
#: Entries are stored as uint8, so states must fit in a byte.
MAX_BFS_LINES = 8


# --------------------------------------------------------------------------- encoding
def row_keys(rows: np.ndarray) -> np.ndarray:
    """View each row of a ``(k, 2**n)`` uint8 matrix as one opaque byte-string key."""
    rows = np.ascontiguousarray(rows, dtype=np.uint8)
    return rows.view(np.dtype((np.void, rows.shape[1]))).ravel()


def _rows(keys: np.ndarray, size: int) -> np.ndarray:
    """Inverse of :func:`row_keys`."""
    return np.ascontiguousarray(keys).view(np.uint8).reshape(-1, size)


def _check_library(library: Library) -> None:
    if not 1 <= library.lines <= MAX_BFS_LINES:
        raise ExactsynError(f"breadth-first search handles 1 to {MAX_BFS_LINES} lines, not {library.lines}")


def _perm_row(perm: Sequence[int], lines: int) -> np.ndarray:
    size = 1 << lines
    try:
        values = [int(v) for v in perm]
    except (TypeError, ValueError):
        raise ExactsynError("permutation entries must be integers") from None
    if len(values) != size or sorted(values) != list(range(size)):
        raise ExactsynError(f"expected a permutation of 0..{size - 1} ({lines} lines)")
    return np.asarray(values, dtype=np.uint8).reshape(1, size)


# --------------------------------------------------------------------------- BFS core
def _bfs(library: Library, max_depth: int | None) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Yield, layer by layer, ``(rows, keys, last_gate)`` with rows sorted by key.

    Layer ``d`` holds the functions whose minimum gate count is exactly ``d``;
    ``last_gate[k]`` is the library index of the final gate of one minimal circuit
    for row ``k`` (``-1`` for the identity).
    """
    size = 1 << library.lines
    gates = gate_table(library)
    frontier = np.arange(size, dtype=np.uint8).reshape(1, size)
    frontier_keys = row_keys(frontier)
    yield frontier, frontier_keys, np.full(1, -1, dtype=np.int16)
    visited = frontier_keys  # sorted
    depth = 0
    while len(frontier) and (max_depth is None or depth < max_depth) and len(gates):
        # every (gate, parent) pair at once: cand[g, k, i] = gates[g, frontier[k, i]]
        cand = gates[:, frontier].reshape(-1, size)
        cand_gate = np.repeat(np.arange(len(gates), dtype=np.int16), len(frontier))
        keys, first = np.unique(row_keys(cand), return_index=True)
        fresh = ~np.isin(keys, visited, assume_unique=True)
        keys, first = keys[fresh], first[fresh]
        frontier = cand[first]
        frontier_keys = keys
        depth += 1
        if len(keys) == 0:
            break
        yield frontier, frontier_keys, cand_gate[first]
        visited = np.union1d(visited, keys)


def distance_layers(library: Library, max_depth: int) -> list[np.ndarray]:
    """Functions needing exactly ``0, 1, ..., max_depth`` gates of ``library``.

    Entry ``d`` is a ``(count_d, 2**n)`` uint8 matrix whose rows are permutations
    (``row[i]`` = output for input ``i``), sorted bytewise.  The list stops early when
    a layer is empty (the whole group has been reached).  Layers grow roughly by a
    factor of the library size, so keep ``max_depth`` small on 4 or more lines.
    """
    _check_library(library)
    if max_depth < 0:
        raise ExactsynError("max depth must be 0 or more")
    return [rows for rows, _, _ in _bfs(library, max_depth)]


# --------------------------------------------------------------------------- full table
@dataclass(frozen=True, eq=False)
class SizeTable:
    """Minimum gate count of every function reachable over a library (≤ 3 lines).

    ``keys`` is sorted; ``sizes[k]`` and ``last_gate[k]`` belong to ``keys[k]``.
    """

    library: Library
    keys: np.ndarray
    sizes: np.ndarray
    last_gate: np.ndarray

    @property
    def lines(self) -> int:
        return self.library.lines

    def __len__(self) -> int:
        return len(self.keys)

    def _find(self, perm: Sequence[int]) -> int | None:
        key = row_keys(_perm_row(perm, self.lines))[0]
        k = int(np.searchsorted(self.keys, key))
        if k < len(self.keys) and self.keys[k] == key:
            return k
        return None

    def __contains__(self, perm: object) -> bool:
        if not isinstance(perm, Sequence):
            return False
        try:
            return self._find(perm) is not None
        except ExactsynError:
            return False

    def size(self, perm: Sequence[int]) -> int:
        """Minimum gate count of ``perm``."""
        k = self._find(perm)
        if k is None:
            raise ExactsynError(f"the function is not realisable over library {self.library.name}")
        return int(self.sizes[k])

    def circuit(self, perm: Sequence[int]) -> Circuit:
        """One minimal circuit for ``perm``, rebuilt from the stored last gates.

        If ``p = g∘q`` (gate ``g`` last) then ``q[i] = g⁻¹(p[i])``; we strip gates
        from the end until the identity is reached.
        """
        k = self._find(perm)
        if k is None:
            raise ExactsynError(f"the function is not realisable over library {self.library.name}")
        gates = gate_table(self.library)
        inverses = np.argsort(gates, axis=1).astype(np.uint8)
        row = _perm_row(perm, self.lines)[0]
        backwards: list[Gate] = []
        while self.last_gate[k] >= 0:
            g = int(self.last_gate[k])
            backwards.append(self.library.gates[g])
            row = inverses[g][row]
            found = self._find(row.tolist())
            if found is None:  # pragma: no cover - would mean a corrupt table
                raise ExactsynError("internal error: broken parent chain in the breadth-first table")
            k = found
        return Circuit(self.lines, tuple(reversed(backwards)))

    def distribution(self) -> list[int]:
        """``counts[d]`` = number of functions needing exactly ``d`` gates."""
        if len(self.sizes) == 0:
            return []
        return [int(c) for c in np.bincount(self.sizes)]

    def permutations(self) -> np.ndarray:
        """All reachable functions as a ``(len, 2**n)`` uint8 matrix (same order as ``sizes``)."""
        return _rows(self.keys, 1 << self.lines)

    def as_dict(self) -> dict[tuple[int, ...], int]:
        """Plain ``{permutation: size}`` mapping (slower and larger than the arrays)."""
        rows = self.permutations().tolist()
        return {tuple(r): int(s) for r, s in zip(rows, self.sizes.tolist(), strict=True)}


@memo(maxsize=8)
def optimal_sizes(library: Library) -> SizeTable:
    """Full BFS table over ``library`` (at most 3 lines).  Cached per library."""
    _check_library(library)
    if library.lines > MAX_TABLE_LINES:
        raise ExactsynError(
            f"a full table is only built for up to {MAX_TABLE_LINES} lines; "
            f"use distance_layers for bounded depth on {library.lines} lines"
        )
    all_keys, all_sizes, all_last = [], [], []
    for depth, (_, keys, last) in enumerate(_bfs(library, None)):
        all_keys.append(keys)
        all_sizes.append(np.full(len(keys), depth, dtype=np.uint8))
        all_last.append(last)
    keys = np.concatenate(all_keys)
    order = np.argsort(keys, kind="stable")
    table = SizeTable(library, keys[order], np.concatenate(all_sizes)[order], np.concatenate(all_last)[order])
    for arr in (table.keys, table.sizes, table.last_gate):
        arr.flags.writeable = False
    return table


def optimal_circuit(perm: Sequence[int], library: Library) -> Circuit:
    """A minimum-gate circuit for ``perm`` over ``library`` (at most 3 lines)."""
    return optimal_sizes(library).circuit(perm)


def distribution(library: Library) -> list[int]:
    """Number of functions needing exactly 0, 1, 2, ... gates (at most 3 lines)."""
    return optimal_sizes(library).distribution()

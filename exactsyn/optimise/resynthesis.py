"""Window resynthesis: the optimal circuit of a small permutation, with the reason it is optimal.

The optimiser asks one question of a window: *what is an optimal circuit for this
``w``-line permutation under this library and objective?*  The answer is an
:class:`Optimum` or None (the question is outside what the answerer can prove).  Anything
with that method (:class:`WindowResynthesis`) plugs in; larger tables (4 lines) or a SAT
search fit the same interface, and so does the "don't care" variant: a window some of
whose lines are known to be 0 where it starts names the input states it can be in
(:attr:`WindowProblem.honoured`); the other inputs are don't-cares
(:mod:`exactsyn.optimise.partial_windows` answers those).

:class:`TableResynthesis` answers for windows of up to 3 lines from exhaustive tables:

* every permutation reachable over the window's library gets its minimum gate count from
  breadth-first search of the whole group (:func:`exactsyn.tables.bfs.optimal_sizes`; the
  method of Shende, Prasad, Markov, Hayes, "Synthesis of reversible logic circuits",
  IEEE TCAD 22(6), 2003, whose distribution the tests reproduce);
* for ``gates-then-cost`` a dynamic programme over the same layers gives the least cost
  among minimum-gate circuits: a minimum circuit of ``d`` gates for ``p`` is a minimum
  circuit of ``d − 1`` gates for ``q = g⁻¹∘p`` followed by ``g``, so
  ``cost(p) = min over g with size(g⁻¹∘p) = d − 1 of cost(g⁻¹∘p) + cost(g)``.

Both are proofs by exhaustion: no circuit the tables do not list can be smaller.  The
costs of a gate are those it has in the whole circuit (``cost(gate, n)`` for the circuit's
``n`` lines), which the Clifford+T counts depend on.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Protocol

import numpy as np

from exactsyn.core.costs import CostModel
from exactsyn.core.gates import Gate
from exactsyn.core.library import Edge, Library, gate_table
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.tables.bfs import optimal_sizes


@dataclass(frozen=True)
class WindowProblem:
    """A window's function on its local lines ``0..lines-1`` and the coupling its lines induce.

    ``below``: only an optimum of fewer gates is of use (None: any); an answerer may then
    stop early and return None.  Answerers that find every optimum directly ignore it.
    ``honoured``: the local input states the window can be in (increasing), when it is a
    partial function; the others are don't-cares.  None: every state (a permutation).
    Answerers that do not read it give an optimum of the whole ``perm``, which is still a
    correct replacement (it agrees on every state), only perhaps not the smallest."""

    perm: tuple[int, ...]
    lines: int
    coupling: tuple[Edge, ...] = ()
    below: int | None = None
    honoured: tuple[int, ...] | None = None


def honoured_states(lines: int, zero: int) -> tuple[int, ...]:
    """The local states of ``lines`` lines whose bits in the mask ``zero`` are all 0."""
    return tuple(s for s in range(1 << lines) if not s & zero)


@dataclass(frozen=True)
class Optimum:
    """An optimal circuit (local lines), its gate count and cost, and how optimality is known."""

    gates: tuple[Gate, ...]
    gate_count: int
    cost: int
    method: str


class WindowResynthesis(Protocol):
    """Optimal circuits for windows of at most :attr:`max_lines` lines, or None."""

    @property
    def max_lines(self) -> int: ...

    def optimum(self, problem: WindowProblem) -> Optimum | None: ...


def pack(rows: np.ndarray, lines: int) -> np.ndarray:
    """One integer per permutation row: entry ``i`` in bits ``lines·i ..`` (at most 3 lines: 24 bits)."""
    acc = np.zeros(rows.shape[0], dtype=np.int64)
    for i in range(rows.shape[1]):
        acc |= rows[:, i].astype(np.int64) << (lines * i)
    return acc


def pack_one(perm: tuple[int, ...], lines: int) -> int:
    key = 0
    for i, v in enumerate(perm):
        key |= v << (lines * i)
    return key


@dataclass(frozen=True, eq=False)
class OptimumTable:
    """Every permutation reachable over ``library`` with its least (gates, cost) and a last gate."""

    library: Library
    costs: tuple[int, ...]
    keys: np.ndarray  # sorted packed permutations
    sizes: np.ndarray
    cost: np.ndarray
    last: np.ndarray  # library index of the last gate of one optimum, -1 for the identity
    inverse_gates: np.ndarray  # row j: gate j's inverse as a permutation
    _index: dict[int, int] = field(default_factory=dict, repr=False)

    def find(self, perm: tuple[int, ...]) -> int | None:
        key = pack_one(perm, self.library.lines)
        if not self._index:
            self._index.update({int(k): i for i, k in enumerate(self.keys.tolist())})
        return self._index.get(key)

    def circuit(self, index: int) -> tuple[Gate, ...]:
        """The optimum stored for entry ``index``, rebuilt by stripping last gates."""
        row = _unpack(int(self.keys[index]), self.library.lines)
        backwards: list[Gate] = []
        i = index
        while self.last[i] >= 0:
            j = int(self.last[i])
            backwards.append(self.library.gates[j])
            row = self.inverse_gates[j][row]
            found = self.find(tuple(int(v) for v in row))
            if found is None:  # pragma: no cover - a broken table
                raise RuntimeError("internal error: broken optimum table")
            i = found
        return tuple(reversed(backwards))


def _unpack(key: int, lines: int) -> np.ndarray:
    size = 1 << lines
    mask = size - 1
    return np.array([(key >> (lines * i)) & mask for i in range(size)], dtype=np.int64)


def build_table(library: Library, costs: tuple[int, ...]) -> OptimumTable:
    """The breadth-first size table of ``library`` and the cost programme of the module docstring."""
    st = optimal_sizes(library)
    lines = library.lines
    rows = st.permutations()
    keys = pack(rows, lines)
    order = np.argsort(keys)
    rows, keys, sizes = rows[order], keys[order], st.sizes[order].astype(np.int64)
    gates_t = gate_table(library).astype(np.int64)
    inverse = np.argsort(gates_t, axis=1)
    big = np.iinfo(np.int64).max // 4
    cost = np.where(sizes == 0, 0, big)
    last = np.full(len(keys), -1, dtype=np.int64)
    c = np.asarray(costs, dtype=np.int64)
    for d in range(1, int(sizes.max(initial=0)) + 1):
        layer = np.nonzero(sizes == d)[0]
        p = rows[layer].astype(np.int64)
        best = np.full(len(layer), big, dtype=np.int64)
        arg = np.full(len(layer), -1, dtype=np.int64)
        for j in range(len(library.gates)):
            q = inverse[j][p]  # p = g_j ∘ q
            qk = pack(q, lines)
            qi = np.searchsorted(keys, qk)
            qi[qi >= len(keys)] = 0
            ok = (keys[qi] == qk) & (sizes[qi] == d - 1)
            cand = np.where(ok, cost[qi] + c[j], big)
            better = cand < best
            best[better] = cand[better]
            arg[better] = j
        if np.any(arg < 0):  # pragma: no cover - every layer-d entry has a layer-(d-1) parent
            raise RuntimeError("internal error: breadth-first layer without a parent")
        cost[layer] = best
        last[layer] = arg
    return OptimumTable(library, costs, keys, sizes, cost, last, inverse)


class TableResynthesis:
    """:class:`WindowResynthesis` from exhaustive tables, for windows of at most 3 lines."""

    def __init__(self, gates: GateSet, circuit_lines: int, model: CostModel | None = None) -> None:
        self.gates = gates
        self.circuit_lines = circuit_lines
        self.model = model
        self._tables: dict[tuple[int, tuple[Edge, ...]], OptimumTable | None] = {}
        self._memo: dict[tuple[int, tuple[Edge, ...], tuple[int, ...]], Optimum | None] = {}

    @property
    def max_lines(self) -> int:
        return 3

    def method(self, table: OptimumTable) -> str:
        what = "gates" if self.model is None else f"gates, then {self.model.name}"
        return f"breadth-first table of all {len(table.keys)} functions of library {table.library.name} ({what})"

    def table(self, lines: int, coupling: tuple[Edge, ...]) -> OptimumTable | None:
        key = (lines, coupling)
        if key not in self._tables:
            library = self.gates.window_library(lines, coupling)
            if library is None:
                self._tables[key] = None
            else:
                if self.model is None:
                    costs = tuple(1 for _ in library.gates)
                else:
                    costs = tuple(self.model.cost(g, self.circuit_lines) for g in library.gates)
                self._tables[key] = build_table(library, costs)
        return self._tables[key]

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.lines > self.max_lines:
            return None
        key = (problem.lines, problem.coupling, problem.perm)
        if key in self._memo:
            return self._memo[key]
        table = self.table(problem.lines, problem.coupling)
        result = None
        if table is not None:
            index = table.find(problem.perm)
            if index is not None:
                gates = table.circuit(index)
                result = Optimum(gates, int(table.sizes[index]), int(table.cost[index]), self.method(table))
        self._memo[key] = result
        return result

"""Affine maps over GF(2): recognise them, build them from a few point images, write them as NOT/CNOT circuits.

A reversible function ``f`` on ``n`` lines is *affine* when ``f(x) = M·x ⊕ v`` for an
invertible ``n × n`` matrix ``M`` over GF(2) and a vector ``v``.  NOT and CNOT gates
generate exactly the affine functions (common practice), so such a function has a
NOT/CNOT circuit: Gaussian elimination of ``M`` gives at most ``n² `` CNOTs (each row
operation "row t ⊕= row c" is one CNOT with control c and target t), and the NOTs of
``v`` follow.  Patel, Markov & Hayes ("Optimal synthesis of linear reversible circuits",
Quantum Inf. Comput. 8, 2008) shorten this by a log factor; the plain elimination is
enough here, as the circuits are then shrunk by the window optimiser.

Matrices are lists of ``n`` row masks: bit ``c`` of ``rows[t]`` is 1 when input line ``c``
enters output line ``t``, so ``(M·x)_t`` is the parity of ``rows[t] & x``.
"""

from __future__ import annotations

from collections.abc import Sequence

from exactsyn.core.gates import Gate, x_gate

Rows = tuple[int, ...]


def apply_rows(rows: Sequence[int], x: int) -> int:
    """``M·x`` for ``M`` given by its row masks."""
    return sum(((r & x).bit_count() & 1) << t for t, r in enumerate(rows))


def affine_parts(perm: Sequence[int], lines: int) -> tuple[Rows, int] | None:
    """``(M, v)`` with ``perm[x] = M·x ⊕ v`` for every ``x``, or ``None`` when ``perm`` is not affine."""
    v = int(perm[0])
    cols = [int(perm[1 << c]) ^ v for c in range(lines)]
    rows = tuple(sum(((cols[c] >> t) & 1) << c for c in range(lines)) for t in range(lines))
    for x in range(1 << lines):
        if apply_rows(rows, x) ^ v != perm[x]:
            return None
    return rows, v


def linear_circuit(rows: Sequence[int], lines: int) -> list[Gate] | None:
    """CNOT gates (application order) computing ``x ↦ M·x``, or ``None`` when ``M`` is singular.

    Elimination finds row operations ``E_r … E_1 · M = I``; each ``E`` is its own inverse,
    so ``M = E_1 ⋯ E_r`` and the circuit applies ``E_r`` first.
    """
    ops = linear_ops(rows, lines)
    return None if ops is None else [x_gate(t, (c,)) for c, t in ops]


def linear_ops(rows: Sequence[int], lines: int) -> list[tuple[int, int]] | None:
    """The CNOTs of :func:`linear_circuit` as ``(control, target)`` pairs, application order."""
    m = list(rows)
    ops: list[tuple[int, int]] = []  # (control, target): row target ^= row control

    def add(c: int, t: int) -> None:
        m[t] ^= m[c]
        ops.append((c, t))

    for col in range(lines):
        pivot = next((r for r in range(col, lines) if m[r] >> col & 1), None)
        if pivot is None:
            return None
        if pivot != col:
            add(pivot, col)  # bring a 1 into the diagonal without swapping rows
        for r in range(lines):
            if r != col and m[r] >> col & 1:
                add(col, r)
    return ops[::-1]


def affine_circuit(rows: Sequence[int], v: int, lines: int) -> list[Gate] | None:
    """NOT/CNOT gates (application order) computing ``x ↦ M·x ⊕ v``; ``None`` when ``M`` is singular."""
    linear = linear_circuit(rows, lines)
    if linear is None:
        return None
    return linear + [x_gate(t) for t in range(lines) if v >> t & 1]


def _rank_basis(vectors: Sequence[int], lines: int) -> list[int] | None:
    """``vectors`` completed to a basis with unit vectors (lowest first); ``None`` if they are dependent."""
    basis: list[int] = []
    reduced: list[int] = []  # echelon form for the independence test

    def reduce(v: int) -> int:
        for r in reduced:
            if v ^ r < v:
                v ^= r
        return v

    def push(v: int) -> bool:
        w = reduce(v)
        if w == 0:
            return False
        reduced.append(w)
        reduced.sort(reverse=True)
        basis.append(v)
        return True

    for v in vectors:
        if not push(v):
            return None
    for unit in range(lines):
        if len(basis) == lines:
            break
        push(1 << unit)
    return basis


def _invert(rows: Sequence[int], lines: int) -> Rows | None:
    """The inverse matrix (row masks), or ``None`` when singular (Gauss–Jordan)."""
    m = list(rows)
    inv = [1 << t for t in range(lines)]
    for col in range(lines):
        pivot = next((r for r in range(col, lines) if m[r] >> col & 1), None)
        if pivot is None:
            return None
        m[col], m[pivot] = m[pivot], m[col]
        inv[col], inv[pivot] = inv[pivot], inv[col]
        for r in range(lines):
            if r != col and m[r] >> col & 1:
                m[r] ^= m[col]
                inv[r] ^= inv[col]
    return tuple(inv)


def _columns_to_rows(cols: Sequence[int], lines: int) -> Rows:
    return tuple(sum(((cols[c] >> t) & 1) << c for c in range(lines)) for t in range(lines))


def _multiply(a: Sequence[int], b: Sequence[int], lines: int) -> Rows:
    """``A·B`` for row-mask matrices."""
    b_cols = [sum(((b[r] >> c) & 1) << r for r in range(lines)) for c in range(lines)]
    return tuple(sum((((a[t] & b_cols[c]).bit_count()) & 1) << c for c in range(lines)) for t in range(lines))


def affine_mover(sources: Sequence[int], targets: Sequence[int], lines: int) -> tuple[Rows, int] | None:
    """An affine map ``x ↦ M·x ⊕ v`` sending ``sources[i]`` to ``targets[i]``.

    Exists when the differences ``sources[i] ⊕ sources[0]`` are linearly independent, and
    so are the differences of the targets (both are then completed to bases with unit
    vectors and ``M`` maps one basis onto the other).  ``None`` otherwise.
    """
    if len(sources) != len(targets) or not sources:
        return None
    us = [s ^ sources[0] for s in sources[1:]]
    ws = [t ^ targets[0] for t in targets[1:]]
    bu, bw = _rank_basis(us, lines), _rank_basis(ws, lines)
    if bu is None or bw is None:
        return None
    u_inv = _invert(_columns_to_rows(bu, lines), lines)
    if u_inv is None:  # pragma: no cover - a basis is invertible
        return None
    rows = _multiply(_columns_to_rows(bw, lines), u_inv, lines)
    v = apply_rows(rows, sources[0]) ^ targets[0]
    return rows, v

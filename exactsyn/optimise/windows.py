"""Windows on the gate dependency graph: sets of gates on at most ``w`` lines that can be made adjacent.

The dependency graph of a circuit has an edge from gate ``i`` to a later gate ``j`` when
they share a line and do not commute (:mod:`exactsyn.optimise.commute`); every
topological order of it is the same function.  A set ``S`` of gates is a *window* when it
acts on at most ``w`` lines and is **convex**: no path leaves ``S`` and comes back.  Then
there is a topological order with ``S`` contiguous — the gates of the span that depend on
``S`` after it, the others before — and ``S`` may be replaced by any circuit of the same
function on its lines (commutation-aware matching on this graph: Iten, Moyard, Metger, Sutter, Woerner,
"Exact and practical pattern matching for quantum circuit optimization", ACM TQC, 2022,
from memory; here the matched pattern is any function on ``w`` lines).

:func:`grow` builds a window greedily from a seed gate, scanning forward (or backward) in
the current order.  A scanned gate that depends on a gate already *reached* from the
window (a gate outside it that depends on it, directly or through others) is reached too;
a scanned gate that touches the window's lines, fits in ``w`` lines and depends on no
reached gate joins the window (its dependencies inside the window are allowed).  This
keeps the window convex: a path out of the window and back would end in a window gate
that depends on a reached gate.  The scan stops after ``horizon`` gates without a join.

Forward, the gates of the span are then ordered: not reached, the window, reached.  A gate
not reached has no edge from the window or a reached gate before it, so it moves in front
of the window; a reached gate has no edge into a later window gate (it would not have
joined), so the window moves in front of it.  Backward is the mirror image.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from exactsyn.core.gates import Gate
from exactsyn.optimise.commute import commute


@dataclass
class GatePool:
    """Distinct gates as small integers, with their line masks and a memo of commutation."""

    gates: list[Gate] = field(default_factory=list)
    masks: list[int] = field(default_factory=list)
    lines: list[tuple[int, ...]] = field(default_factory=list)
    _ids: dict[Gate, int] = field(default_factory=dict)
    _commute: dict[int, bool] = field(default_factory=dict)  # key: smaller id << 32 | larger id

    def intern(self, g: Gate) -> int:
        gid = self._ids.get(g)
        if gid is None:
            gid = len(self.gates)
            self._ids[g] = gid
            self.gates.append(g)
            mask = 0
            for line in g.lines:
                mask |= 1 << line
            self.masks.append(mask)
            self.lines.append(tuple(sorted(g.lines)))
        return gid

    def commute(self, a: int, b: int) -> bool:
        key = a << 32 | b if a <= b else b << 32 | a
        found = self._commute.get(key)
        if found is None:
            found = commute(self.gates[a], self.gates[b])
            self._commute[key] = found
        return found


@dataclass(frozen=True)
class Window:
    """Positions of a window in the current gate order and how its span is reordered."""

    members: tuple[int, ...]  # increasing positions of the window's gates
    mask: int  # the window's lines as a bit mask
    before: tuple[int, ...]  # span positions placed before the window (in order)
    after: tuple[int, ...]  # span positions placed after it

    @property
    def start(self) -> int:
        return self.members[0]

    @property
    def stop(self) -> int:
        return self.members[-1] + 1

    @property
    def lines(self) -> tuple[int, ...]:
        return tuple(i for i in range(self.mask.bit_length()) if self.mask >> i & 1)


def grow(
    seq: list[int],
    pool: GatePool,
    seed: int,
    width: int,
    horizon: int,
    forward: bool = True,
    partner: bool = False,
) -> Window | None:
    """The window grown from position ``seed`` (module docstring); None when it has one gate.

    With ``partner`` only a gate identical to the seed may join, and the growth stops when one
    has: a pair of identical self-inverse gates (every ``x`` and swap gate is a product of
    disjoint transpositions) that can be made adjacent is the identity, however many lines
    it has — the one replacement the optimiser makes on windows wider than ``width``."""
    return scan_window(seq, pool, seed, width, horizon, forward, partner)[0]


def scan_window(
    seq: list[int],
    pool: GatePool,
    seed: int,
    width: int,
    horizon: int,
    forward: bool = True,
    partner: bool = False,
    max_gates: int | None = None,
) -> tuple[Window | None, int]:
    """:func:`grow`, and the first position the scan did not look at (``len(seq)`` or ``-1`` at
    the end): without ``partner``, the window depends on nothing but the gates from ``seed``
    up to there, and on whether the scan reached the end.  With ``max_gates`` the scan stops
    when that many gates have joined (a window is convex at every step of its growth)."""
    masks, lines_of, memo = pool.masks, pool.lines, pool._commute
    seed_id = seq[seed]
    window_mask = masks[seed_id]
    if partner:
        width = window_mask.bit_count()
    if window_mask.bit_count() > width:
        return None, seed + (1 if forward else -1)
    members = [seed]
    reached: list[int] = []
    # gate ids of the window and of the reached gates, by line (a gate is listed on each of its lines)
    in_window: dict[int, list[int]] = {line: [seed_id] for line in lines_of[seed_id]}
    in_reached: dict[int, list[int]] = {}
    touched = window_mask
    last_join = seed
    step = 1 if forward else -1
    j = seed + step
    end = len(seq) if forward else -1

    def blocked(h: int, table: dict[int, list[int]]) -> bool:
        """Does gate ``h`` fail to commute with a gate listed in ``table`` on one of its lines?"""
        for line in lines_of[h]:
            for g in table.get(line, ()):
                key = g << 32 | h if g <= h else h << 32 | g
                ok = memo.get(key)
                if ok is None:
                    ok = pool.commute(g, h)
                if not ok:
                    return True
        return False

    while j != end and abs(j - last_join) <= horizon:
        h = seq[j]
        mh = masks[h]
        if mh & touched:
            if in_reached and blocked(h, in_reached):
                pass  # depends on a reached gate: reached too
            elif mh & window_mask and (window_mask | mh).bit_count() <= width and (not partner or h == seed_id):
                members.append(j)
                window_mask |= mh
                touched |= mh
                for line in lines_of[h]:
                    in_window.setdefault(line, []).append(h)
                last_join = j
                j += step
                if partner or (max_gates is not None and len(members) >= max_gates):
                    break
                continue
            elif not blocked(h, in_window):
                j += step
                continue  # depends on nothing in the window or reached: it may move in front
            reached.append(j)
            touched |= mh
            for line in lines_of[h]:
                in_reached.setdefault(line, []).append(h)
        j += step
    if len(members) < 2:
        return None, j
    members.sort()
    lo, hi = members[0], members[-1]
    chosen = set(members)
    late = {p for p in reached if lo <= p <= hi}
    rest = [p for p in range(lo, hi + 1) if p not in chosen]
    if forward:
        before = tuple(p for p in rest if p not in late)
        after = tuple(p for p in rest if p in late)
    else:
        before = tuple(p for p in rest if p in late)
        after = tuple(p for p in rest if p not in late)
    return Window(tuple(members), window_mask, before, after), j

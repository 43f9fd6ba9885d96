"""Permutations of ``n`` lines packed into keys, and the ``2·n!`` symmetries of the class tables.

Packing: a permutation ``p`` of ``0..2^n − 1`` (``p[i]`` = output for input ``i``; line
``l`` is bit ``l`` of a state) is the integer ``Σ p[i] · 2^(n·i)``: entry ``i`` sits at bits
``n·i .. n·i + n − 1`` (for ``n = 4``, nibble ``i`` holds ``p[i]``).  Composition ``f∘a``
means ``a`` first, then ``f``: ``(f∘a)[i] = f[a[i]]``.

A key has ``n·2^n`` bits, stored in ``words = ⌈n·2^n / 64⌉`` 64-bit words: one word for
``n ≤ 4`` (8, 24 and 64 bits), three for ``n = 5`` (160 bits).  An array of keys has the
item on its first axis: shape ``(N,)`` of ``uint64`` for one word, ``(N, words)`` with the
least significant word first otherwise.  Single keys are plain Python integers.

Symmetries.  For a relabelling ``σ`` of the lines (``σ[l]`` is the new label of line
``l``) let ``π_σ`` move bit ``l`` of a state to bit ``σ[l]``.  Renaming every gate's lines
by ``σ`` turns a circuit for ``f`` into one for ``π_σ ∘ f ∘ π_σ⁻¹`` with as many gates,
and reversing a circuit of self-inverse gates computes ``f⁻¹``.  So in a library closed
under relabelling whose gates are self-inverse (``mct``, ``nct``, ``mixed``), the optimum
is constant on the class ``{π_σ ∘ f^e ∘ π_σ⁻¹ : σ ∈ S_n, e = ±1}`` (at most ``2·n!``
functions) — the reduction of Shende, Prasad, Markov & Hayes (IEEE TCAD 22(6), 2003),
used for 4 lines by Golubitsky, Falconer & Maslov (DAC 2010).  The canonical form of a
function is the least member of its class in the layout's order (:meth:`KeyLayout.order_key`);
its class size is ``2·n! / |stabiliser|``.

The order.  Up to 4 lines it is the order of the keys: the canonical form is the least key
of the class.  From 5 lines on (:data:`PROFILE_FROM`) members are compared first by their
*line profile* and then by key.  The profile of ``m`` is the vector over the lines ``l``
of ``(flips, spread, low, high)``: ``flips`` = the inputs ``x`` whose bit ``l`` ``m``
changes, ``spread`` = ``Σ hw(m(x) ⊕ m(x ⊕ 2^l))`` over the ``x`` with bit ``l`` clear,
``low`` = ``hw(m(2^l))``, ``high`` = ``hw(m(2^n − 1 − 2^l))`` (``hw`` = number of one
bits).  Relabelling the lines by ``σ`` moves the entry of line ``l`` to line ``σ[l]``
and leaves it unchanged, so the least profile in a class is the sorted profile of
``f`` or of ``f⁻¹``, and only the relabellings that sort it need a key: nearly always
one (the compiled kernel of 5 lines computes nothing else, :mod:`exactsyn.tables.kernels5`),
where the least key needs all ``2·n!``.  Any order gives a sound canonical form (a function
of the class alone); this one is the definition the 5-line tables and their checker use.

This module is plain Python and numpy (the reference semantics, for any ``n``).  The
compiled kernels of a layout (:meth:`KeyLayout.kernels`, the interface
:class:`exactsyn.tables.kernel_api.TableKernels`) compute the same things fast and are
tested against it; :data:`KERNEL_MODULES` registers which line counts have kernels (and
:data:`DEFAULT_DEPTHS`, :data:`MAX_DEPTHS` how deep their tables are built).
"""

from __future__ import annotations

import importlib
import itertools
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from functools import cache, cached_property
from typing import TYPE_CHECKING

import numpy as np

from exactsyn.core.gates import permutation_is_odd
from exactsyn.errors import ExactsynError

if TYPE_CHECKING:  # pragma: no cover
    from exactsyn.tables.kernel_api import TableKernels

#: Registration: the module holding the compiled kernels of each line count.  A module
#: listed here defines ``kernels_for(layout) -> TableKernels``; it is imported on first use
#: (numba loads then).  ``exactsyn.tables.kernels`` serves every single-word layout.
KERNEL_MODULES: dict[int, str] = {
    2: "exactsyn.tables.kernels",
    3: "exactsyn.tables.kernels",
    4: "exactsyn.tables.kernels",
    5: "exactsyn.tables.kernels5",
}
#: Registration, continued: the depth a build makes by default per library, and the deepest
#: it accepts, for the line counts where the whole group does not fit (elsewhere a build goes
#: on until a level comes out empty: 40320 functions on 3 lines).  4 lines: ``mct`` levels
#: 0..8 (about 2.4e8 classes, 1.9 GB) settle every function, the largest optimum being
#: 15 = 8 + 7; each level is about 12 times the last (docs/tables4.md has the measurements).
#: 5 lines: levels grow about 50 times (``mct``: 3.4 M classes at 5 gates, about 1.7e8 at 6,
#: 24 bytes each); depth 7 would need about 200 GB.
DEFAULT_DEPTHS: dict[int, dict[str, int]] = {
    4: {"mct": 8, "nct": 8, "mixed": 6, "mct-layers": 6, "nct-layers": 6, "mixed-layers": 5},
    5: {"mct": 6, "nct": 6, "mixed": 4},
}
MAX_DEPTHS: dict[int, int] = {4: 9, 5: 6}
#: From this line count on, classes are ordered by line profile, then key (module docstring).
PROFILE_FROM = 5

_WORD = (1 << 64) - 1


@dataclass(frozen=True)
class KeyLayout:
    """How permutations of ``lines`` lines are packed (see the module docstring)."""

    lines: int

    def __post_init__(self) -> None:
        if not 2 <= self.lines <= 8:
            raise ExactsynError("class-table keys exist for 2 to 8 lines")

    # ------------------------------------------------------------------ sizes
    @property
    def size(self) -> int:
        """Entries of a permutation (``2^n``)."""
        return 1 << self.lines

    @property
    def bits(self) -> int:
        return self.lines * self.size

    @property
    def words(self) -> int:
        """64-bit words per key."""
        return (self.bits + 63) // 64

    @property
    def entry_mask(self) -> int:
        return self.size - 1

    @property
    def symmetries(self) -> int:
        """Transforms of a class: ``n!`` relabellings times inversion."""
        return 2 * math.factorial(self.lines)

    @property
    def format(self) -> str:
        """Name of the table format on disk (``exactsyn-tables4`` for 4 lines)."""
        return f"exactsyn-tables{self.lines}"

    def hex(self, key: int) -> str:
        """Fixed-width hexadecimal form of a key (manifests)."""
        return f"{key:0{self.bits // 4}x}"

    @cached_property
    def identity(self) -> int:
        return sum(i << (self.lines * i) for i in range(self.size))

    @cached_property
    def _shifts(self) -> tuple[int, ...]:
        """Bit position of every entry (``n·i``)."""
        return tuple(self.lines * i for i in range(self.size))

    @cached_property
    def _shift_array(self) -> np.ndarray:
        return np.array(self._shifts, dtype=np.uint64)

    @cached_property
    def relabellings(self) -> tuple[tuple[int, ...], ...]:
        """The ``n!`` relabellings of the lines, identity first."""
        return tuple(itertools.permutations(range(self.lines)))

    # ------------------------------------------------------------------ single keys
    def check_perm(self, perm: Sequence[int]) -> tuple[int, ...]:
        """``perm`` as a tuple, or :class:`ExactsynError` if it is not a permutation of ``0..2^n − 1``."""
        try:
            values = tuple(int(v) for v in perm)
        except (TypeError, ValueError):
            raise ExactsynError("permutation entries must be integers") from None
        if len(values) != self.size or sorted(values) != list(range(self.size)):
            raise ExactsynError(f"the {self.lines}-line tables need a permutation of 0..{self.size - 1}")
        return values

    def pack(self, perm: Sequence[int]) -> int:
        """Key of a permutation."""
        return sum(int(v) << (self.lines * i) for i, v in enumerate(self.check_perm(perm)))

    def unpack(self, key: int) -> tuple[int, ...]:
        """Permutation of a key."""
        k, m = int(key), self.size - 1
        return tuple((k >> s) & m for s in self._shifts)

    def _pack_values(self, values: Sequence[int]) -> int:
        out = 0
        for s, v in zip(self._shifts, values, strict=True):
            out |= v << s
        return out

    def compose(self, f: int, a: int) -> int:
        """Key of ``f∘a`` (``a`` first): entry ``i`` is ``f[a[i]]``."""
        f, a, n, m = int(f), int(a), self.lines, self.size - 1
        out = 0
        for s in self._shifts:
            out |= ((f >> (((a >> s) & m) * n)) & m) << s
        return out

    def inverse(self, key: int) -> int:
        k, n, m = int(key), self.lines, self.size - 1
        out = 0
        for i, s in enumerate(self._shifts):
            out |= i << (((k >> s) & m) * n)
        return out

    def state_map(self, sigma: Sequence[int]) -> tuple[int, ...]:
        """``π_σ`` as a permutation of the states (bit ``l`` moves to bit ``σ[l]``)."""
        lines = range(self.lines)
        return tuple(sum(((x >> line) & 1) << sigma[line] for line in lines) for x in range(self.size))

    def conjugate(self, key: int, sigma: Sequence[int]) -> int:
        """Key of ``π_σ ∘ f ∘ π_σ⁻¹``: relabel the lines of ``f`` by ``σ``."""
        pi = self.state_map(sigma)
        p = self.unpack(key)
        out = [0] * self.size
        for x in range(self.size):
            out[pi[x]] = pi[p[x]]
        return self._pack_values(out)

    def inverse_relabelling(self, sigma: Sequence[int]) -> tuple[int, ...]:
        out = [0] * self.lines
        for line, new in enumerate(sigma):
            out[new] = line
        return tuple(out)

    def class_members(self, key: int) -> dict[int, tuple[tuple[int, ...], bool]]:
        """Every member of the class of ``key``, each with one transform ``(σ, inverted)`` giving it."""
        out: dict[int, tuple[tuple[int, ...], bool]] = {}
        for inverted in (False, True):
            base = self.inverse(key) if inverted else key
            for sigma in self.relabellings:
                out.setdefault(self.conjugate(base, sigma), (sigma, inverted))
        return out

    def line_profile(self, key: int) -> tuple[tuple[int, int, int, int], ...]:
        """Per line ``l``: ``(flips, spread, low, high)`` of the permutation (module docstring)."""
        p, top = self.unpack(key), self.size - 1
        out = []
        for line in range(self.lines):
            bit = 1 << line
            flips = sum(((v ^ x) >> line) & 1 for x, v in enumerate(p))
            spread = sum((p[x] ^ p[x | bit]).bit_count() for x in range(self.size) if not x & bit)
            out.append((flips, spread, p[bit].bit_count(), p[top ^ bit].bit_count()))
        return tuple(out)

    def order_key(self, key: int) -> int | tuple[tuple[tuple[int, int, int, int], ...], int]:
        """What members of a class are compared by: the key up to 4 lines, (profile, key) from 5."""
        return (self.line_profile(key), int(key)) if self.lines >= PROFILE_FROM else int(key)

    def canonical(self, key: int) -> int:
        """The least member of the class of ``key`` in the layout's order (the plain definition; slow)."""
        return min(self.class_members(key), key=self.order_key)

    def class_size(self, key: int) -> int:
        return len(self.class_members(key))

    def is_odd(self, key: int) -> bool:
        """Is the permutation of ``key`` odd?"""
        return permutation_is_odd(self.unpack(key))

    # ------------------------------------------------------------------ arrays of keys
    def array(self, keys: Iterable[int]) -> np.ndarray:
        """A key array of Python integer keys."""
        values = [int(k) for k in keys]
        if self.words == 1:
            return np.array(values, dtype=np.uint64)
        out = np.array([[(k >> (64 * w)) & _WORD for w in range(self.words)] for k in values], dtype=np.uint64)
        return out.reshape(len(values), self.words)

    def ints(self, keys: np.ndarray) -> list[int]:
        """Python integer keys of a key array."""
        if self.words == 1:
            return [int(v) for v in np.asarray(keys, dtype=np.uint64)]
        return [sum(int(v) << (64 * w) for w, v in enumerate(row)) for row in np.asarray(keys, dtype=np.uint64)]

    def empty(self, count: int) -> np.ndarray:
        """An uninitialised key array of ``count`` items."""
        shape: tuple[int, ...] = (count,) if self.words == 1 else (count, self.words)
        return np.empty(shape, dtype=np.uint64)

    def pack_rows(self, rows: np.ndarray) -> np.ndarray:
        """Key array of an ``(N, 2^n)`` array of permutations."""
        rows = np.asarray(rows, dtype=np.uint64)
        if self.words == 1:  # every entry in one word: shift all at once, then OR along the row
            return np.bitwise_or.reduce(rows << self._shift_array, axis=1)  # type: ignore[no-any-return]
        out = np.zeros((rows.shape[0], self.words), dtype=np.uint64)
        for i in range(self.size):
            word, shift = divmod(self.lines * i, 64)
            out[:, word] |= rows[:, i] << np.uint64(shift)
            if shift + self.lines > 64:  # the entry runs into the next word
                out[:, word + 1] |= rows[:, i] >> np.uint64(64 - shift)
        return out[:, 0].copy() if self.words == 1 else out

    def unpack_keys(self, keys: np.ndarray) -> np.ndarray:
        """``(N, 2^n)`` uint8 permutations of a key array."""
        words = np.asarray(keys, dtype=np.uint64).reshape(-1, self.words)
        out = np.empty((words.shape[0], self.size), dtype=np.uint8)
        m = np.uint64(self.entry_mask)
        for i in range(self.size):
            word, shift = divmod(self.lines * i, 64)
            v = words[:, word] >> np.uint64(shift)
            if shift + self.lines > 64:
                v = v | (words[:, word + 1] << np.uint64(64 - shift))
            out[:, i] = v & m
        return out

    # ------------------------------------------------------------------ compiled kernels
    @property
    def has_kernels(self) -> bool:
        return self.lines in KERNEL_MODULES

    def kernels(self) -> TableKernels:
        """The compiled kernels of this layout (imports numba on first use)."""
        return _kernels(self.lines)


@cache
def layout(lines: int) -> KeyLayout:
    """The key layout of ``lines`` lines (one object per line count)."""
    return KeyLayout(int(lines))


def engine_lines() -> tuple[int, ...]:
    """Line counts that have compiled kernels, so tables can be built and used."""
    return tuple(sorted(KERNEL_MODULES))


def check_lines(lines: int) -> int:
    """``lines`` if the engine has kernels for it (tables can be built), else :class:`ExactsynError`."""
    if lines not in KERNEL_MODULES:
        have = ", ".join(map(str, engine_lines()))
        raise ExactsynError(f"class tables exist for {have} lines, not {lines}")
    return lines


@cache
def _kernels(lines: int) -> TableKernels:
    # numba is heavy: the kernel module is imported when a table is first used
    module = importlib.import_module(KERNEL_MODULES[check_lines(lines)])
    kernels: TableKernels = module.kernels_for(layout(lines))
    return kernels

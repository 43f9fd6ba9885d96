"""The interface between the table drivers and the compiled kernels of one key layout.

The drivers (:mod:`~exactsyn.tables.levels`, :mod:`~exactsyn.tables.engine`,
:mod:`~exactsyn.tables.hardest`) never touch a key's bits: they hold key arrays
(:mod:`exactsyn.tables.keys`: the item on the first axis, ``layout.words`` 64-bit words
per key) and call the methods below on the object ``layout.kernels()``.  A new line count
plugs in as a module defining ``kernels_for(layout) -> TableKernels`` and one entry in
:data:`exactsyn.tables.keys.KERNEL_MODULES`; :mod:`exactsyn.tables.kernels` implements it
for every single-word layout (``n ≤ 4``).

Terms.  A *key array* holds packed permutations; a *mixed array* holds ``mix(key)`` for
an invertible mixing function of the layout that makes the leading 64-bit word of a
mixed value uniformly distributed (the bucket index and the passes of a build use its top
bits).  Mixed values are ordered lexicographically, leading word first (for one word: as
``uint64``); the value 0 is never a mixed key (it marks an empty slot).  A *level* is a
sorted mixed array with its bucket index (:meth:`TableKernels.make_index`); the drivers
write and read both as raw little-endian arrays.  Classes are those of
:mod:`exactsyn.tables.keys` (``layout.symmetries`` transforms each).
"""

from __future__ import annotations

from typing import Protocol

import numpy as np

from exactsyn.tables.keys import KeyLayout


class TableKernels(Protocol):
    """Compiled kernels of one key layout (all methods work on whole arrays)."""

    @property
    def layout(self) -> KeyLayout: ...

    @property
    def mix_name(self) -> str:
        """Name of the mixing function, recorded in the manifest and its content hash."""
        ...

    # ------------------------------------------------------------------ keys and classes
    def canon_many(self, keys: np.ndarray) -> np.ndarray:
        """Canonical key (least key of the class) of every key."""
        ...

    def mix_many(self, keys: np.ndarray) -> np.ndarray:
        """Mixed array of a key array (a bijection, ``mix(0) = 0``)."""
        ...

    def unmix_many(self, mixed: np.ndarray) -> np.ndarray:
        """Key array of a mixed array (the inverse of :meth:`mix_many`)."""
        ...

    def class_size_histogram(self, mixed: np.ndarray) -> np.ndarray:
        """``int64[symmetries + 1]``: how many of the (mixed canonical) keys have each class size."""
        ...

    # ------------------------------------------------------------------ levels and lookup
    def make_index(self, mixed: np.ndarray) -> tuple[np.ndarray, int]:
        """Bucket index of a sorted mixed array and its shift: ``index[q]`` is the first
        position whose leading word has top bits ``≥ q`` (``q = word0 >> shift``); the
        index is written to disk as it is (``uint32`` below 2^32 values, else ``uint64``)."""
        ...

    def contains_many(self, vals: np.ndarray, index: np.ndarray, shift: int, mixed: np.ndarray) -> np.ndarray:
        """Boolean per mixed value: is it in the level ``vals`` with bucket ``index``?"""
        ...

    # ------------------------------------------------------------------ breadth-first step
    def expand(self, reps: np.ndarray, gates: np.ndarray, out: np.ndarray) -> None:
        """Mixed canonical keys of the neighbours of the mixed classes ``reps``: for
        ``G = len(gates)`` (a key array), ``out[i·2G + j]`` gets that of ``g_j∘r_i`` and
        ``out[i·2G + G + j]`` that of ``g_j∘r_i⁻¹`` (``out`` a mixed array of ``2G·len(reps)``)."""
        ...

    def new_set(self, regions: int, slots: int) -> np.ndarray:
        """An empty open-addressing set: ``regions`` rows of ``slots`` zeroed mixed slots."""
        ...

    def partition(self, cand: np.ndarray, lo: int, hi: int, skip: int, region_bits: int, out: np.ndarray) -> np.ndarray:
        """Copy the candidates whose leading word lies in ``lo..hi`` into ``out``, grouped by
        region (the ``region_bits`` bits after the top ``skip`` bits of the leading word);
        returns ``offsets`` (``regions + 1`` entries)."""
        ...

    def insert(
        self, slots: np.ndarray, skip: int, region_bits: int, width: int, part: np.ndarray, offsets: np.ndarray
    ) -> int:
        """Insert partitioned candidates into the set (home slots among the first ``width``
        of a row); the number of new keys, or −1 when a probe ran off a row (the caller
        enlarges the set and inserts again)."""
        ...

    def reinsert(self, old: np.ndarray, new: np.ndarray, skip: int, region_bits: int, width: int) -> bool:
        """Move every key of the set ``old`` into the larger empty set ``new``; False if it overflowed."""
        ...

    def finish_regions(
        self, slots: np.ndarray, skip: int, region_bits: int, cur: np.ndarray, prev: np.ndarray
    ) -> np.ndarray:
        """Sort every row's keys to its front, dropping those in the sorted levels ``cur`` and
        ``prev``; returns the number left per row (rows in order give a sorted level)."""
        ...

    # ------------------------------------------------------------------ meet in the middle
    def scan(
        self,
        reps: np.ndarray,
        start: int,
        stop: int,
        fconj: np.ndarray,
        vals: np.ndarray,
        index: np.ndarray,
        shift: int,
        out: np.ndarray,
        filtered: bool = False,
    ) -> None:
        """For each mixed class ``a = reps[i]`` (``start ≤ i < stop``) the first ``(c, e)`` with
        ``canon(fconj[c] ∘ a^e)`` in the level ``vals``: ``out[i − start] = 2c + (e == −1)``, or −1.

        ``filtered``: a layout that has a filter of class invariants (5 lines:
        :mod:`exactsyn.tables.filter5`) may use it to skip lanes; ``out`` is the same."""
        ...

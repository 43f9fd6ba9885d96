"""Are two reversible circuits the same function?  Bit-parallel simulation with numpy.

Each line is a vector of bits, one bit per input state, 64 states to a machine word;
a gate is a few whole-vector operations (the target vector XOR the AND of the control
vectors).  This is the bit-slicing of Biham, "A fast new DES implementation in
software", FSE 1997, applied to reversible gates.

* Up to :data:`EXHAUSTIVE_LINES` lines every input state is simulated (``2^n`` bits per
  line, 2 MiB per line at 24 lines): a proof of equivalence.
* Beyond, a seeded sample of :data:`RANDOM_INPUTS` random input states (at least 10^5):
  evidence, not a proof; the optimiser's per-window check (each replacement computes the
  same permutation of its window's lines as the gates it replaces, and each reordering
  only moves gates past gates they commute with) is the argument that makes it one.

The check runs ``a`` and then the inverse of ``b`` and compares with the input: one
state array, processed in column chunks that stay in cache.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError

EXHAUSTIVE_LINES = 24
RANDOM_INPUTS = 1 << 17  # 131072 >= 10^5
CHUNK_WORDS = 1 << 14  # 128 KiB per line and chunk (scripts/bench_optimise.py --set check: 9.7 s -> 6.6 s at 24 lines)
ALL = np.uint64(0xFFFF_FFFF_FFFF_FFFF)


@dataclass(frozen=True)
class EquivalenceCheck:
    """How two circuits were compared and what came out."""

    method: str  # "exhaustive" | "random"
    inputs: int  # input states simulated
    seed: int | None  # of the random sample
    equal: bool
    counterexample: int | None  # an input state on which they differ
    seconds: float

    def describe(self) -> str:
        if self.method == "exhaustive":
            what = f"exhaustive simulation of all {self.inputs} input states"
        else:
            what = f"random simulation of {self.inputs} input states (seed {self.seed}) plus the per-window argument"
        return what + (" — equal" if self.equal else f" — DIFFERENT on input {self.counterexample}")

    def to_dict(self) -> dict[str, object]:
        return {
            "method": self.method,
            "inputs": self.inputs,
            "seed": self.seed,
            "equal": self.equal,
            "counterexample": self.counterexample,
            "seconds": round(self.seconds, 3),
        }


def _pattern(line: int) -> np.uint64:
    """The 64-bit word whose bit ``b`` is bit ``line`` of ``b`` (line < 6)."""
    word = 0
    for b in range(64):
        if b >> line & 1:
            word |= 1 << b
    return np.uint64(word)


def exhaustive_vectors(lines: int) -> np.ndarray:
    """``(lines, words)``: bit ``i`` of row ``l`` is bit ``l`` of ``i``, for every ``i < 2^lines``."""
    words = max(1, (1 << lines) // 64)
    out = np.empty((lines, words), dtype=np.uint64)
    index = np.arange(words, dtype=np.int64)
    for line in range(lines):
        if line < 6:
            out[line] = _pattern(line)
        else:
            out[line] = np.where((index >> (line - 6)) & 1 == 1, ALL, np.uint64(0))
    return out


def random_vectors(lines: int, samples: int, seed: int) -> np.ndarray:
    words = -(-samples // 64)
    return np.random.default_rng(seed).integers(0, 1 << 64, size=(lines, words), dtype=np.uint64, endpoint=False)


Compiled = tuple[int, tuple[int, ...], tuple[int, ...], tuple[int, ...]]  # kind, targets, positive, negative
_KIND = {"x": 0, "swap": 1, "peres": 2}


def compile_gates(gates: tuple[Gate, ...]) -> list[Compiled]:
    return [(_KIND[g.family], g.targets, g.controls, g.negative_controls) for g in gates]


def simulate(state: np.ndarray, program: list[Compiled]) -> None:
    """Apply compiled gates to a ``(lines, words)`` bit-vector state, in place."""
    for kind, targets, pos, neg in program:
        if kind == 2:  # Peres: c ^= a·b, then b ^= a
            (a,), (b, c) = pos, targets
            state[c] ^= state[a] & state[b]
            state[b] ^= state[a]
            continue
        cond = None
        for c in pos:
            cond = state[c].copy() if cond is None else np.bitwise_and(cond, state[c], out=cond)
        for c in neg:
            cond = ~state[c] if cond is None else np.bitwise_and(cond, ~state[c], out=cond)
        if kind == 0:
            t = targets[0]
            if cond is None:
                np.invert(state[t], out=state[t])
            else:
                state[t] ^= cond
        else:
            a, b = targets
            d = state[a] ^ state[b]
            if cond is not None:
                d &= cond
            state[a] ^= d
            state[b] ^= d


CheckProgress = Callable[[int, int], None]


def check_equivalent(
    a: Circuit,
    b: Circuit,
    *,
    exhaustive_limit: int = EXHAUSTIVE_LINES,
    samples: int = RANDOM_INPUTS,
    seed: int = 0,
    progress: CheckProgress | None = None,
) -> EquivalenceCheck:
    """Compare ``a`` and ``b`` (same line count) by simulation; see the module docstring."""
    if a.lines != b.lines:
        raise ExactsynError(f"cannot compare circuits on {a.lines} and {b.lines} lines")
    start = time.perf_counter()
    n = a.lines
    exhaustive = n <= exhaustive_limit
    init = exhaustive_vectors(n) if exhaustive else random_vectors(n, samples, seed)
    program = compile_gates(a.gates) + compile_gates(b.inverse().gates)
    words = init.shape[1]
    chunks = list(range(0, words, CHUNK_WORDS))
    bad_word = -1
    diff_word = np.uint64(0)
    for done, lo in enumerate(chunks):
        part = init[:, lo : lo + CHUNK_WORDS].copy()
        simulate(part, program)
        diff = np.bitwise_or.reduce(part ^ init[:, lo : lo + CHUNK_WORDS], axis=0)
        if exhaustive and n < 6:
            diff &= np.uint64((1 << (1 << n)) - 1)
        nz = np.nonzero(diff)[0]
        if len(nz):
            bad_word, diff_word = lo + int(nz[0]), diff[nz[0]]
            break
        if progress is not None:
            progress(done + 1, len(chunks))
    counter = None
    if bad_word >= 0:
        bit = (int(diff_word) & -int(diff_word)).bit_length() - 1
        sample = 64 * bad_word + bit
        counter = sum(((int(init[line, bad_word]) >> bit) & 1) << line for line in range(n))
        if exhaustive:
            assert counter == sample % (1 << n)
    inputs = 1 << n if exhaustive else words * 64
    return EquivalenceCheck(
        "exhaustive" if exhaustive else "random",
        inputs,
        None if exhaustive else seed,
        bad_word < 0,
        counter,
        time.perf_counter() - start,
    )

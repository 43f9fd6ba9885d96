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

With ``zero_lines`` (lines known to be 0 where the circuit starts) only the *honoured*
inputs are compared: those lines 0, every state of the other (free) lines — all of them up
to :data:`EXHAUSTIVE_LINES` free lines, a seeded sample beyond.
:func:`dirty_zero_line` checks the claim that comes with such lines: the circuit returns
them to 0 on every honoured input (clean ancillas).  When ``a`` does and ``a`` equals
``b`` on the honoured inputs, ``b`` maps each of them to the same state, so ``b`` returns
them to 0 too.
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
    zero_lines: tuple[int, ...] = ()  # only inputs with these lines 0 were compared

    def describe(self) -> str:
        scope = ""
        if self.zero_lines:
            scope = f" with lines {', '.join(map(str, self.zero_lines))} = 0"
        if self.method == "exhaustive":
            what = f"exhaustive simulation of all {self.inputs} input states{scope}"
        else:
            what = f"random simulation of {self.inputs} input states{scope} (seed {self.seed})"
            what += " plus the per-window argument"
        return what + (" — equal" if self.equal else f" — DIFFERENT on input {self.counterexample}")

    def to_dict(self) -> dict[str, object]:
        return {
            "method": self.method,
            "inputs": self.inputs,
            "seed": self.seed,
            "equal": self.equal,
            "counterexample": self.counterexample,
            "zero_lines": list(self.zero_lines),
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


def honoured_vectors(
    lines: int, zero_lines: tuple[int, ...], exhaustive_limit: int, samples: int, seed: int
) -> tuple[np.ndarray, bool, int]:
    """The start states: ``zero_lines`` all 0, the free lines every state (up to
    ``exhaustive_limit`` of them) or a seeded random sample; also whether that is every
    honoured state, and how many states there are."""
    free = [line for line in range(lines) if line not in set(zero_lines)]
    exhaustive = len(free) <= exhaustive_limit
    part = exhaustive_vectors(len(free)) if exhaustive else random_vectors(len(free), samples, seed)
    if not zero_lines:
        init = part
    else:
        init = np.zeros((lines, part.shape[1]), dtype=np.uint64)
        init[free] = part
    count = 1 << len(free) if exhaustive else part.shape[1] * 64
    return init, exhaustive, count


def _valid(diff: np.ndarray, exhaustive: bool, free: int) -> np.ndarray:
    """``diff`` with the padding bits of a one-word exhaustive state (fewer than 6 free lines) cleared."""
    if exhaustive and free < 6:
        diff &= np.uint64((1 << (1 << free)) - 1)
    return diff


def _state_at(init: np.ndarray, word: int, bit: int) -> int:
    return sum(((int(init[line, word]) >> bit) & 1) << line for line in range(init.shape[0]))


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
    zero_lines: tuple[int, ...] = (),
) -> EquivalenceCheck:
    """Compare ``a`` and ``b`` (same line count) by simulation on the inputs with ``zero_lines``
    0 (every input when there are none); see the module docstring."""
    if a.lines != b.lines:
        raise ExactsynError(f"cannot compare circuits on {a.lines} and {b.lines} lines")
    start = time.perf_counter()
    n = a.lines
    zero_lines = tuple(sorted(set(zero_lines)))
    init, exhaustive, inputs = honoured_vectors(n, zero_lines, exhaustive_limit, samples, seed)
    program = compile_gates(a.gates) + compile_gates(b.inverse().gates)
    words = init.shape[1]
    chunks = list(range(0, words, CHUNK_WORDS))
    bad_word = -1
    diff_word = np.uint64(0)
    for done, lo in enumerate(chunks):
        part = init[:, lo : lo + CHUNK_WORDS].copy()
        simulate(part, program)
        diff = np.bitwise_or.reduce(part ^ init[:, lo : lo + CHUNK_WORDS], axis=0)
        diff = _valid(diff, exhaustive, n - len(zero_lines))
        nz = np.nonzero(diff)[0]
        if len(nz):
            bad_word, diff_word = lo + int(nz[0]), diff[nz[0]]
            break
        if progress is not None:
            progress(done + 1, len(chunks))
    counter = None
    if bad_word >= 0:
        bit = (int(diff_word) & -int(diff_word)).bit_length() - 1
        counter = _state_at(init, bad_word, bit)
    return EquivalenceCheck(
        "exhaustive" if exhaustive else "random",
        inputs,
        None if exhaustive else seed,
        bad_word < 0,
        counter,
        time.perf_counter() - start,
        zero_lines,
    )


def dirty_zero_line(
    circuit: Circuit,
    zero_lines: tuple[int, ...],
    *,
    exhaustive_limit: int = EXHAUSTIVE_LINES,
    samples: int = RANDOM_INPUTS,
    seed: int = 0,
) -> tuple[int, int] | None:
    """A zero line that ``circuit`` leaves at 1 on an honoured input, and that input (the least
    line, then the first input found); None when it returns every zero line to 0."""
    zero_lines = tuple(sorted(set(zero_lines)))
    if not zero_lines:
        return None
    init, exhaustive, _ = honoured_vectors(circuit.lines, zero_lines, exhaustive_limit, samples, seed)
    program = compile_gates(circuit.gates)
    free = circuit.lines - len(zero_lines)
    for lo in range(0, init.shape[1], CHUNK_WORDS):
        part = init[:, lo : lo + CHUNK_WORDS].copy()
        simulate(part, program)
        for line in zero_lines:
            ones = np.nonzero(_valid(part[line].copy(), exhaustive, free))[0]
            if len(ones):
                word = int(part[line, ones[0]])
                bit = (word & -word).bit_length() - 1
                return line, _state_at(init, lo + int(ones[0]), bit)
    return None

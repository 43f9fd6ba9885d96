"""The distribution of optimal gate counts over all ``n``-line functions, estimated by a seeded sample.

The tables give exact counts up to their depth ``R`` (from class sizes); the full
distribution (up to 15 gates for ``mct`` on 4 lines) is estimated from a uniform sample of functions,
each settled exactly by :meth:`exactsyn.tables.engine.Tables.synthesise`.  Sample item ``i``
of seed ``s`` is a fixed function (:func:`sample_function`), so a batch runner can split,
resume and merge samples by index.  Intervals: Wilson score intervals for the share of each
gate count (Wilson, J. Am. Stat. Assoc. 22, 1927) and a normal interval for the mean, both
at 95 %.  For ``nct`` the sample is uniform over the even permutations (odd ones are not
realisable); swapping the first two outputs of an odd permutation is a bijection between
the odd and the even ones, so the sample stays uniform.
"""

from __future__ import annotations

import math
import random
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

from exactsyn.tables.keys import layout

Z95 = 1.959963984540054
SampleProgress = Callable[[str, int, int], None]


def population(even_only: bool, lines: int = 4) -> int:
    """Number of ``lines``-line permutations (even ones only when ``even_only``)."""
    return math.factorial(1 << lines) // (2 if even_only else 1)


def sample_function(seed: int, index: int, even_only: bool = False, lines: int = 4) -> tuple[int, ...]:
    """Item ``index`` of the sample with ``seed``: a uniform random permutation of ``0..2^n − 1``."""
    rng = random.Random(f"exactsyn-tables-sample:{seed}:{index}")
    p = list(range(1 << lines))
    rng.shuffle(p)
    lay = layout(lines)
    if even_only and lay.is_odd(lay.pack(p)):
        p[0], p[1] = p[1], p[0]
    return tuple(p)


def wilson(successes: int, n: int, z: float = Z95) -> tuple[float, float]:
    """Wilson score interval of a proportion."""
    if n == 0:
        return (0.0, 1.0)
    p = successes / n
    denom = 1 + z * z / n
    centre = (p + z * z / (2 * n)) / denom
    half = z / denom * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
    return (max(0.0, centre - half), min(1.0, centre + half))


@dataclass(frozen=True)
class Distribution:
    """A sampled distribution of optima, with intervals scaled to the whole population."""

    library: str
    seed: int
    n: int
    population: int
    counts: tuple[tuple[int, int], ...]  # (gates, sampled functions), ascending
    mean: float
    mean_interval: tuple[float, float]
    share_intervals: tuple[tuple[int, float, float], ...]  # (gates, low, high) shares, 95 %
    exact: tuple[int, ...]  # exact counts for 0..R gates from the table
    unsettled: int  # sampled functions not settled (time limit)
    seconds: float

    def estimated(self, gates: int) -> tuple[float, float, float]:
        """Estimated number of functions needing ``gates`` gates: (estimate, low, high)."""
        count = dict(self.counts).get(gates, 0)
        low, high = next(((lo, hi) for g, lo, hi in self.share_intervals if g == gates), (0.0, 1.0))
        return (count / self.n * self.population, low * self.population, high * self.population)


def summarise(
    library: str,
    seed: int,
    optima: Iterable[int | None],
    even_only: bool,
    exact: tuple[int, ...],
    seconds: float,
    lines: int = 4,
) -> Distribution:
    """Counts, shares and intervals of a list of sampled optima (None = not settled)."""
    values = list(optima)
    settled = [v for v in values if v is not None]
    n = len(settled)
    hist: dict[int, int] = {}
    for v in settled:
        hist[v] = hist.get(v, 0) + 1
    mean = sum(settled) / n if n else float("nan")
    if n > 1:
        sd = math.sqrt(sum((v - mean) ** 2 for v in settled) / (n - 1))
        mean_iv = (mean - Z95 * sd / math.sqrt(n), mean + Z95 * sd / math.sqrt(n))
    else:
        mean_iv = (float("nan"), float("nan"))
    shares = tuple((g, *wilson(c, n)) for g, c in sorted(hist.items()))
    return Distribution(
        library=library,
        seed=seed,
        n=n,
        population=population(even_only, lines),
        counts=tuple(sorted(hist.items())),
        mean=mean,
        mean_interval=mean_iv,
        share_intervals=shares,
        exact=exact,
        unsettled=len(values) - n,
        seconds=seconds,
    )


def sample_distribution(
    library: str = "mct",
    n: int = 1000,
    seed: int = 0,
    cache: Path | None = None,
    progress: SampleProgress | None = None,
    time_limit: float | None = None,
    start: int = 0,
    lines: int = 4,
) -> Distribution:
    """Settle sample items ``start .. start + n − 1`` of ``seed`` and summarise them."""
    from exactsyn.tables.engine import load

    t0 = time.perf_counter()
    t = load(library, cache=cache, lines=lines)
    even = t.gates.all_even
    optima: list[int | None] = []
    for k, i in enumerate(range(start, start + n)):
        ans = t.synthesise(sample_function(seed, i, even, lines), time_limit=time_limit)
        optima.append(ans.gate_count if ans.optimal else None)
        if progress:
            progress(f"sample of {library}", k + 1, n)
    return summarise(t.library, seed, optima, even, tuple(t.distribution()), time.perf_counter() - t0, lines)

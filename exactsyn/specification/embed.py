"""Embedding irreversible (or partial) Boolean functions into reversible specifications.

A function with ``m`` inputs and ``p`` outputs, whose most frequent output pattern
occurs ``μ`` times, needs at least ``⌈log2 μ⌉`` garbage outputs to be made reversible
(Maslov & Dueck, "Reversible cascades with minimal garbage", IEEE TCAD 23(11), 2004):
the rows that share an output pattern must be told apart by the other lines.  So the
embedding uses ``n = max(m, p + ⌈log2 μ⌉)`` lines unless more are asked for.

Layout: input ``i`` on line ``i``; lines ``m..n−1`` are constant inputs (0 unless given;
``"?"`` lets the solver choose); output ``o`` on line ``o`` unless ``output_lines`` says
otherwise, or ``"auto"`` lets the solver place the outputs on distinct lines.  Every
line that carries no output is garbage (don't care), as is every row not listed.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass
from typing import Any

from exactsyn.core.words import count
from exactsyn.errors import ExactsynError
from exactsyn.specification.boolean import BooleanFunction
from exactsyn.specification.reversible import MAX_LINES, Spec


@dataclass(frozen=True)
class Embedding:
    function: BooleanFunction
    lines: int
    multiplicity: int  # μ: the most frequent specified output pattern's count
    min_garbage: int  # ⌈log2 μ⌉
    constants: tuple[tuple[int, int | None], ...]  # (line, value or None = solver's choice)
    output_lines: tuple[int, ...] | None  # None: placed by the solver

    def describe(self, spec: Spec, perm: tuple[int, ...]) -> dict[str, Any]:
        """Line roles of a circuit that meets ``spec`` (the choices it made)."""
        choice = spec.find_choice(perm)
        if choice is None:
            raise RuntimeError("internal error: the circuit does not meet the embedded spec")
        consts, placed = choice
        out_lines = self.output_lines if self.output_lines is not None else placed
        const_vals = {line: (v if v is not None else consts >> line & 1) for line, v in self.constants}
        used = set(out_lines)
        return {
            "inputs": {name: i for i, name in enumerate(self.function.inputs)},
            "constants": {str(line): val for line, val in const_vals.items()},
            "constants_chosen_by_solver": [line for line, v in self.constants if v is None],
            "outputs": {name: line for name, line in zip(self.function.outputs, out_lines, strict=True)},
            "outputs_placed_by_solver": self.output_lines is None,
            "garbage": [line for line in range(self.lines) if line not in used],
            "multiplicity": self.multiplicity,
            "min_garbage": self.min_garbage,
        }

    def labels(self) -> list[str]:
        """Input-side line names for drawings."""
        names = list(self.function.inputs)
        for _line, v in self.constants:
            names.append(f"{'?' if v is None else v}")
        return names[: self.lines]


def multiplicity(fn: BooleanFunction) -> int:
    counts = Counter(tuple(vals) for _, vals in fn.rows)
    return max(counts.values(), default=1)


def embed(fn: BooleanFunction) -> tuple[Spec, Embedding]:
    """The reversible :class:`Spec` for ``fn`` (see the module docstring)."""
    m, p = len(fn.inputs), len(fn.outputs)
    mu = multiplicity(fn)
    garbage = math.ceil(math.log2(mu)) if mu > 1 else 0
    need = max(m, p + garbage, 1)
    n = fn.lines if fn.lines is not None else need
    if n < need:
        raise ExactsynError(
            f"{fn.name or 'the function'} needs at least {need} lines: an output pattern occurs {mu} times, "
            f"so {count(garbage, 'garbage output')} are needed (Maslov & Dueck 2004) besides {count(p, 'output')}"
        )
    if n > MAX_LINES:
        raise ExactsynError(f"the embedding needs {n} lines; exactsyn handles at most {MAX_LINES}")
    given = dict(fn.constants)
    for line in given:
        if not m <= line < n:
            raise ExactsynError(f"constant input on line {line}, but constant lines are {m}..{n - 1}")
    constants = tuple((line, given.get(line, 0)) for line in range(m, n))
    fixed = sum((v or 0) << line for line, v in constants)
    open_lines = tuple(line for line, v in constants if v is None)

    auto = fn.output_lines == "auto"
    if auto:
        out_lines: tuple[int, ...] | None = None
    elif fn.output_lines is None:
        out_lines = tuple(range(p))
    else:
        assert not isinstance(fn.output_lines, str)
        out_lines = tuple(fn.output_lines)
        if len(out_lines) != p or len(set(out_lines)) != p or any(not 0 <= x < n for x in out_lines):
            raise ExactsynError(f"output_lines must give {p} distinct lines in 0..{n - 1}")

    size = 1 << n
    outputs, care = [0] * size, [0] * size
    targets = [[-1] * size for _ in range(p)] if auto else []
    for x, vals in fn.rows:
        r = x | fixed
        for o, v in enumerate(vals):
            if v is None:
                continue
            if auto:
                targets[o][r] = v
            else:
                assert out_lines is not None
                care[r] |= 1 << out_lines[o]
                outputs[r] |= v << out_lines[o]
    spec = Spec(
        n,
        tuple(outputs),
        tuple(care),
        fn.name,
        open_lines,
        tuple(tuple(t) for t in targets),
        tuple(range(n)) if auto else (),
    )
    return spec, Embedding(fn, n, mu, garbage, constants, out_lines)

"""The fallback circuit: what a search that ran out of time hands back, as short as cheaply possible.

Transformation-based synthesis (Miller, Maslov & Dueck, DAC 2003) gives a circuit at
once, but on 5 lines it is often two to four times the optimum (a function built from
14 gates came back with 22–54).  Two cheap improvements, each checked by simulation:

* synthesise the inverse as well and reverse its circuit (every ``x`` gate is its own
  inverse, so the reversed circuit of ``f⁻¹`` computes ``f``), and keep the shorter;
* run exact resynthesis of 4-line windows over it
  (:func:`exactsyn.optimise.optimise_circuit`, ``window=4``): every window of the circuit
  on at most 4 lines is replaced by an optimal circuit of its function, to a fixpoint.
"""

from __future__ import annotations

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import invert_permutation
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.optimise import optimise_circuit
from exactsyn.search.heuristic import transformation_based
from exactsyn.spec.reversible import Spec

#: Lines from which the fallback is improved by window resynthesis (below, the search is quick).
IMPROVE_FROM = 5


def _fits(circuit: Circuit, spec: Spec, library: Library) -> bool:
    return all(library.contains(g) for g in circuit.gates) and spec.accepts(circuit.permutation())


def better_fallback(circuit: Circuit, spec: Spec, library: Library) -> Circuit:
    """The shortest of ``circuit``, the reversed synthesis of the inverse, and their 4-line-window
    resynthesis — each simulated against ``spec`` and kept only if it fits ``library``."""
    best = circuit
    if not spec.is_permutation or spec.lines < IMPROVE_FROM:
        return best
    candidates = [circuit]
    inverse = transformation_based(invert_permutation(spec.permutation), spec.lines)
    candidates.append(Circuit(spec.lines, tuple(reversed(inverse.gates))))
    for cand in list(candidates):
        if not cand.gates:
            continue
        try:
            out = optimise_circuit(
                cand,
                library=library.preset,
                max_controls=library.control_cap,
                coupling=library.coupling,
                window=4,
            ).output
        except ExactsynError:  # a library the optimiser does not take: keep what we have
            continue
        candidates.append(out)
    for cand in candidates:
        if len(cand) < len(best) and _fits(cand, spec, library):
            best = cand
    return best

"""Look a function up in a finished batch, also when only its class representative was solved.

For a class batch the store holds the representative ``r``'s row; a member ``m`` is
``t(r)`` for a transform ``t = (σ, inverted)`` (:mod:`exactsyn.batch.sets`).  Its
minimal circuit is ``r``'s circuit transformed by ``t`` (reversed if inverted, lines
renamed by ``σ``), simulated against ``m`` here before it is returned, and its proof of
optimality is ``r``'s certificate together with ``t``: a circuit for ``m`` with fewer
gates would transform back into one for ``r`` with fewer gates, which ``r``'s
certificate rules out.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from exactsyn.batch.sets import Transform, canonical, transform_circuit
from exactsyn.batch.store import BatchInfo, Store
from exactsyn.batch.task import item_key
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.sat.encode import EncodingOptions
from exactsyn.specification.reversible import from_permutation


@dataclass(frozen=True)
class MemberResult:
    permutation: tuple[int, ...]
    status: str
    optimum: int | None
    circuit: Circuit | None  # for the member itself (already transformed)
    representative: tuple[int, ...]
    transform: Transform  # member = transform(representative)
    certificate: Path | None  # the representative's certificate
    key: str  # the representative's item key


def member_result(store: Store, batch: BatchInfo, perm: Sequence[int]) -> MemberResult:
    """The stored result for ``perm`` in ``batch``, transformed from its representative if need be."""
    spec = from_permutation(list(perm))
    desc = batch.description
    lib_desc = desc.get("library", {})
    library = make_library(
        str(lib_desc.get("preset") or "nct"),
        spec.lines,
        lib_desc.get("max_controls"),
        str(lib_desc.get("coupling") or ""),
    )
    enc = desc.get("encoding", {})
    encoding = EncodingOptions(str(enc.get("name", "onehot")), tuple(enc.get("symmetry", ())))
    identity = Transform(tuple(range(spec.lines)), False)
    candidates = [(spec.outputs, identity)]
    if desc.get("set") == "classes" and desc.get("reduction"):
        candidates.insert(0, canonical(spec.outputs))
    members = store.member_states(batch.id)
    for rep, t in candidates:
        key = item_key(from_permutation(list(rep)), library, encoding)
        if key not in members:
            continue
        row = store.get(key)
        if row is None:
            raise ExactsynError("the function belongs to the batch but has no result yet (resume the batch)")
        circuit = None
        if row["circuit"] is not None:
            rep_circuit = Circuit(spec.lines, tuple(gate_from_dict(g) for g in json.loads(row["circuit"])))
            circuit = _transformed(rep_circuit, t, spec.outputs)
        cert = store.certificate_path(row["certificate"]) if row["certificate"] else None
        return MemberResult(spec.outputs, row["status"], row["optimum"], circuit, tuple(rep), t, cert, key)
    raise ExactsynError(f"the function is not in batch {batch.id} ({desc.get('label', '')})")


def _transformed(circuit: Circuit, t: Transform, target: tuple[int, ...]) -> Circuit:
    out = transform_circuit(circuit, t)
    if out.permutation() != target:
        raise ExactsynError("internal error: the transformed circuit does not compute the function")
    return out

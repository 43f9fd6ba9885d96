"""Certificates (proof logs) of optimality: the format, and writing it.

Format ``exactsyn-certificate``, version 1 — a directory holding

``result.json``
    ``format``, ``format_version``, ``tool_version``; ``spec`` (``lines``, ``outputs``,
    ``care``, ``name``, and the embedding choices ``open_lines``, ``output_targets``,
    ``output_candidates``); ``library`` (``preset``, ``lines``, ``max_controls``,
    ``coupling``, ``name`` and the full ``gates`` list in library order); ``encoding``
    (``name``, ``version``, ``symmetry``); ``circuit`` (gates in application order, JSON
    as in :mod:`exactsyn.io.jsonio`), ``gate_count``, ``optimal``, ``lower_bound``;
    ``initial_bound`` (``value``, ``reason``, ``detail`` — a bound that needs no SAT
    call, re-derived by the checker); ``table_bound`` (``value``, ``exact``, ``depth`` — an
    integer, or ``"full"`` for a table of every function the library generates (earlier
    versions wrote 1000000) — ``extended``, or null); ``class_table`` (what the cached
    4-line class table established, or null/absent: ``library`` of the table, ``depth``,
    ``content_hash`` of its files, ``format``, ``value`` — the optimum when ``exact``, else a
    lower bound — ``method``, ``seconds``; re-derived by the checker with
    :func:`exactsyn.tables.verify.check_claim`); ``queries``: one entry per k-query with ``k``, ``status``
    (``unsat`` / ``sat`` / ``unknown``), ``proof`` (file name or null), ``cnf_sha256``,
    ``num_vars``, ``num_clauses``, ``solver``, ``seconds``, ``conflicts``,
    ``proof_bytes`` and ``symmetry`` (the query's rules when they differ from
    ``encoding``'s, e.g. a raced query answered without symmetry breaking); a query
    split into cubes (:mod:`exactsyn.sat.cube_split`) has ``proof`` null and a ``split``
    object: ``scheme``, ``positions``, ``engine`` (informative) and ``cubes``, one entry
    per cube with ``index``, ``label``, ``clauses`` (the clauses appended to the CNF, as
    lists of literals, one per branching from the root), ``status``, ``proof`` (the
    cube's own refutation, ``k<k>-c<index>.lrat.gz``), ``seconds``, ``cpu_seconds``,
    ``conflicts``, ``proof_bytes``.  Certificates without ``split`` read as before (same version).
``objective`` (only with an objective other than the gate count)
    ``name`` (``gates-then-cost`` / ``cost`` / ``depth``), ``cost_model``, ``costs`` (one
    integer per library gate, in library order, or null for depth), ``symmetry`` (rules of
    the cost queries), ``circuit``, ``value``, ``optimal``, ``bound``,
    ``nonaffine_extra``, and ``queries``: ``kind`` (``cost`` or ``depth``), ``k`` (gates,
    or layers for depth), ``limit`` (cost limit or null), ``status``, ``proof``,
    ``proof_format`` (``lrat``), ``cnf_sha256``, ``num_vars``, ``num_clauses``,
    ``seconds``, ``conflicts``, ``proof_bytes``; or, for a least cost among minimum-gate
    circuits found by the descent over a class table (:mod:`exactsyn.tables.descent`), no
    queries and ``class_table`` (as the gate part's, ``value`` being the cost), re-derived by
    :func:`exactsyn.tables.verify.check_cost_claim`.
``optima`` (only when the optimal circuits were counted from a class table)
    ``counted`` (what is counted: classes of optimal circuits up to reordering adjacent
    commuting gates), ``gate_count``, ``count`` (all of them, whatever ``--optima-limit``
    printed), ``least_cost`` (null, or the proven least cost when only the cheapest
    minimum-gate circuits were counted, under the objective's ``costs``) and
    ``class_table``; re-derived by :func:`exactsyn.tables.verify.check_count_claim`.
``k<k>.lrat.gz``, ``cost-k<k>-c<limit>.lrat.gz``, ``depth-k<d>.lrat.gz``, ``k<k>-c<i>.lrat.gz``
    the gzip-compressed LRAT refutation (text) of a query or of one cube, clause ids
    ``1..m`` being the clauses of the re-derived CNF in order (a cube's clauses follow)
    (Cruz-Filipe, Heule, Hunt, Kaufmann, Schneider-Kamp, "Efficient certified RAT verification", CADE 2017).

:mod:`exactsyn.proof.checker` re-checks a certificate without trusting the solver.
"""

from __future__ import annotations

import gzip
import json
import time
import zlib
from collections.abc import Iterator
from pathlib import Path
from typing import TYPE_CHECKING, Any

from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import path_problem
from exactsyn.io.jsonio import gate_from_dict, gate_to_dict
from exactsyn.sat.encode import ENCODING_VERSION, EncodingOptions
from exactsyn.specification.reversible import Spec
from exactsyn.version import __version__

if TYPE_CHECKING:  # types only: writing a certificate needs no solver module
    from exactsyn.sat.conquer import SplitRecord
    from exactsyn.sat.query import ProofSink, Query
    from exactsyn.search.all_optima import Enumeration
    from exactsyn.search.loop import GateResult
    from exactsyn.search.objectives import ObjectiveResult

FORMAT = "exactsyn-certificate"
FORMAT_VERSION = 1
RESULT_FILE = "result.json"


# ------------------------------------------------------------------ descriptions
def spec_to_dict(spec: Spec) -> dict[str, Any]:
    return {
        "lines": spec.lines,
        "outputs": list(spec.outputs),
        "care": list(spec.care),
        "name": spec.name,
        "open_lines": list(spec.open_lines),
        "output_targets": [list(t) for t in spec.output_targets],
        "output_candidates": list(spec.output_candidates),
    }


def json_int(v: Any) -> int:
    """An integer as JSON holds it: not a float (1.5 is not 1), not a boolean."""
    if isinstance(v, bool) or not isinstance(v, int):
        raise TypeError(f"not an integer: {v!r}")
    return v


def spec_from_dict(d: Any) -> Spec:
    try:
        lines = json_int(d["lines"])
        outputs, care = [json_int(v) for v in d["outputs"]], [json_int(v) for v in d["care"]]
        name = str(d.get("name", ""))
        open_lines = tuple(json_int(v) for v in d.get("open_lines", []))
        targets = tuple(tuple(json_int(v) for v in t) for t in d.get("output_targets", []))
        cands = tuple(json_int(v) for v in d.get("output_candidates", []))
    except (KeyError, TypeError, ValueError, AttributeError):
        raise ExactsynError("certificate: malformed 'spec'") from None
    if not 1 <= lines <= 6 or len(outputs) != 1 << lines or len(care) != 1 << lines:
        raise ExactsynError("certificate: 'spec' has the wrong number of rows for its lines")
    full = (1 << lines) - 1
    if any(not 0 <= v <= full for v in outputs + care):
        raise ExactsynError("certificate: 'spec' has a value outside the line range")
    if any(not 0 <= x < lines for x in open_lines + cands) or any(
        len(t) != 1 << lines or any(v not in (-1, 0, 1) for v in t) for t in targets
    ):
        raise ExactsynError("certificate: malformed embedding choices in 'spec'")
    if targets and len(cands) < len(targets):
        raise ExactsynError("certificate: fewer candidate lines than placed outputs in 'spec'")
    return Spec(lines, tuple(outputs), tuple(care), name, open_lines, targets, cands)


def library_to_dict(lib: Library) -> dict[str, Any]:
    return {
        "preset": lib.preset,
        "lines": lib.lines,
        "max_controls": lib.control_cap,
        "coupling": [list(e) for e in lib.coupling],
        "name": lib.name,
        "gates": [gate_to_dict(g) for g in lib.gates],
    }


def library_from_dict(d: Any) -> Library:
    """Rebuild the library from its preset and require the stored gate list to match."""
    try:
        coupling = tuple((json_int(a), json_int(b)) for a, b in d.get("coupling", []))
        cap = d.get("max_controls")
        lib = make_library(str(d["preset"]), json_int(d["lines"]), None if cap is None else json_int(cap), coupling)
        stored = tuple(gate_from_dict(g) for g in d["gates"])
    except (KeyError, TypeError, ValueError, AttributeError):
        raise ExactsynError("certificate: malformed 'library'") from None
    if stored != lib.gates:
        raise ExactsynError("certificate: the stored gate list is not the one its library preset defines")
    return lib


def encoding_from_dict(d: Any) -> EncodingOptions:
    try:
        if json_int(d["version"]) != ENCODING_VERSION:
            raise ExactsynError(f"certificate: encoding version {d['version']} is not this tool's")
        return EncodingOptions(str(d["name"]), tuple(str(s) for s in d["symmetry"]))
    except (KeyError, TypeError, ValueError, AttributeError):
        raise ExactsynError("certificate: malformed 'encoding'") from None


# ------------------------------------------------------------------ writing
def split_to_dict(split: SplitRecord) -> dict[str, Any]:
    """The ``split`` object of a query answered by cubes."""
    return {
        "scheme": split.scheme,
        "positions": list(split.positions),
        "engine": split.engine,
        "cubes": [
            {
                "index": c.index,
                "label": c.label,
                "clauses": [list(cl) for cl in c.clauses],
                "status": str(c.status),
                "proof": c.proof,
                "seconds": round(c.seconds, 4),
                "cpu_seconds": round(c.cpu_seconds, 4),
                "conflicts": c.conflicts,
                "proof_bytes": c.proof_bytes,
            }
            for c in split.cubes
        ],
    }


def gate_query_to_dict(q: Query, encoding: EncodingOptions) -> dict[str, Any]:
    """A gate-count query as ``queries[]`` holds it; ``symmetry`` only when it differs from ``encoding``."""
    out = {
        "k": q.k,
        "status": str(q.status),
        "proof": q.proof,
        "cnf_sha256": q.cnf_sha256 or "",
        "num_vars": q.variables,
        "num_clauses": q.clauses,
        "solver": q.solver,
        "seconds": round(q.seconds, 4),
        "conflicts": q.conflicts,
        "proof_bytes": q.proof_bytes,
        "symmetry": None if q.symmetry is None or q.symmetry == encoding.symmetry else list(q.symmetry),
    }
    if q.split is not None:
        out["split"] = split_to_dict(q.split)
    return out


def objective_query_to_dict(q: Query) -> dict[str, Any]:
    """A cost or depth query as ``objective.queries[]`` holds it."""
    return {
        "kind": q.objective,
        "k": q.k,
        "limit": q.limit,
        "status": str(q.status),
        "proof": q.proof,
        "proof_format": "lrat",
        "cnf_sha256": q.cnf_sha256,
        "num_vars": q.variables,
        "num_clauses": q.clauses,
        "seconds": round(q.seconds, 4),
        "conflicts": q.conflicts,
        "proof_bytes": q.proof_bytes,
    }


def objective_to_dict(res: ObjectiveResult) -> dict[str, Any]:
    """The ``objective`` section (format in :mod:`exactsyn.proof.checker`, which re-checks it)."""
    return {
        "name": res.objective,
        "cost_model": res.cost_model,
        "costs": None if res.costs is None else list(res.costs),
        "symmetry": list(res.symmetry),
        "circuit": [gate_to_dict(g) for g in res.circuit.gates],
        "value": res.value,
        "optimal": res.optimal,
        "bound": res.bound,
        "nonaffine_extra": res.nonaffine_extra,
        "queries": [objective_query_to_dict(q) for q in res.queries],
        "class_table": None if res.class_table is None else res.class_table.to_dict(),
    }


def optima_to_dict(optima: Enumeration, objective: ObjectiveResult | None) -> dict[str, Any] | None:
    """The ``optima`` section: the number of optimal circuits (classes up to reordering
    adjacent commuting gates) when the descent over a class table counted them; None for a
    SAT listing, which carries no proof that it is complete."""
    if optima.class_table is None:
        return None
    least = objective is not None and objective.costs is not None and objective.optimal
    return {
        "counted": "classes of optimal circuits up to reordering adjacent commuting gates",
        "gate_count": optima.k,
        "count": optima.counted,
        "least_cost": objective.value if least and objective is not None else None,
        "class_table": optima.class_table.to_dict(),
    }


def write_result(
    directory: Path, res: GateResult, objective: ObjectiveResult | None = None, optima: Enumeration | None = None
) -> Path:
    """Write ``result.json`` for a search run whose proofs went to ``directory`` (atomically).

    ``objective`` is given when the run optimised more than the gate count; ``optima`` when
    it counted the optimal circuits.
    """
    try:
        directory.mkdir(exist_ok=True)
    except OSError as e:
        raise ExactsynError(f"cannot create certificate directory {directory}: {path_problem(directory, e)}") from None
    circuit = res.circuit
    data = {
        "format": FORMAT,
        "format_version": FORMAT_VERSION,
        "tool_version": __version__,
        "created": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
        "spec": spec_to_dict(res.spec),
        "library": library_to_dict(res.library),
        "encoding": res.encoding.describe(),
        "circuit": None if circuit is None else [gate_to_dict(g) for g in circuit.gates],
        "gate_count": None if circuit is None else len(circuit),
        "optimal": res.optimal,
        "lower_bound": res.lower_bound,
        "initial_bound": {
            "value": res.initial_bound.value,
            "reason": res.initial_bound.reason,
            "detail": res.initial_bound.detail,
        },
        "table_bound": None if res.table_bound is None else res.table_bound.to_dict(),
        "class_table": None if res.class_table is None else res.class_table.to_dict(),
        "queries": [gate_query_to_dict(q, res.encoding) for q in res.steps],
    }
    if objective is not None:
        data["objective"] = objective_to_dict(objective)
    if optima is not None and (section := optima_to_dict(optima, objective)) is not None:
        data["optima"] = section
    path = directory / RESULT_FILE
    tmp = path.with_suffix(".json.tmp")
    try:
        tmp.write_text(json.dumps(data, indent=1) + "\n")
        tmp.replace(path)
    except OSError as e:
        raise ExactsynError(f"cannot write {path}: {e.strerror}") from None
    return path


def proof_writer(directory: Path) -> ProofSink:
    """A proof sink that stores each refutation as ``<stem>.lrat.gz`` in ``directory``."""
    try:
        directory.mkdir(exist_ok=True)
    except OSError as e:
        raise ExactsynError(f"cannot create certificate directory {directory}: {path_problem(directory, e)}") from None

    def sink(stem: str, proof: bytes) -> str:
        name = f"{stem}.lrat.gz"
        try:
            with gzip.open(directory / name, "wb", compresslevel=6) as fh:
                fh.write(proof)
        except OSError as e:
            raise ExactsynError(f"cannot write proof {directory / name}: {e.strerror}") from None
        return name

    return sink


#: A proof file may unpack to at most ``max(PROOF_FLOOR, PROOF_PER_CLAUSE × clauses of its CNF)``
#: bytes, and to at most ``PROOF_RATIO`` times its compressed size (plus 1 MiB).  Proofs
#: CaDiCaL writes compress about 3:1 (the certificates in tests/data: 2.9-3.1; docs/cubes.md:
#: 2.1 GB of LRAT in 0.7-0.9 GB of files) and take a few hundred bytes per CNF clause for a
#: minute of solving, so the bounds leave a margin of 5 and of about 100; a compression
#: bomb (a gigabyte of one repeated line in a megabyte) is stopped by the ratio.
PROOF_FLOOR = 64 << 20
PROOF_PER_CLAUSE = 64 << 10
PROOF_RATIO = 16
#: The longest line a proof may have (a clause and its hints; real lines are a few KB).
PROOF_LINE = 16 << 20


def proof_limit(clauses: int) -> int:
    """The most bytes a proof of a CNF with ``clauses`` clauses may unpack to."""
    return max(PROOF_FLOOR, PROOF_PER_CLAUSE * clauses)


class ProofStream:
    """The lines of a ``.lrat.gz`` file, read as they are checked; raises :class:`ExactsynError`
    as soon as the file unpacks past its bounds (:func:`proof_limit`, :data:`PROOF_RATIO`,
    :data:`PROOF_LINE`) or is not valid gzip.  ``size`` counts the bytes unpacked so far."""

    def __init__(self, path: Path, limit: int) -> None:
        self.path = path
        self.size = 0
        try:
            packed = path.stat().st_size
        except OSError as e:
            raise ExactsynError(f"cannot read proof {path}: {e.strerror}") from None
        self.limit = min(limit, PROOF_RATIO * packed + (1 << 20))

    def __iter__(self) -> Iterator[bytes]:
        try:
            with gzip.open(self.path, "rb") as fh:
                while line := fh.readline(PROOF_LINE + 1):
                    self.size += len(line)
                    if len(line) > PROOF_LINE:
                        raise ExactsynError(f"proof {self.path.name} has a line longer than {PROOF_LINE >> 20} MiB")
                    if self.size > self.limit:
                        raise ExactsynError(
                            f"proof {self.path.name} unpacks to more than {self.limit:,} bytes (the bound for this "
                            f"query: {PROOF_RATIO} times the file, at most {PROOF_PER_CLAUSE >> 10} KiB per CNF "
                            f"clause or {PROOF_FLOOR >> 20} MiB); not checked further"
                        )
                    yield line
        except (OSError, EOFError, zlib.error) as e:
            raise ExactsynError(f"cannot read proof {self.path}: {e}") from None


def open_proof(directory: Path, name: str, clauses: int) -> ProofStream:
    """A stored proof of a CNF with ``clauses`` clauses, as lines read while they are checked."""
    if Path(name).name != name:
        raise ExactsynError(f"certificate: proof name {name!r} must be a plain file name")
    return ProofStream(directory / name, proof_limit(clauses))

"""Certificates (proof logs) of optimality, and their independent re-check.

Format ``exactsyn-certificate``, version 1 — a directory holding

``result.json``
    ``format``, ``format_version``, ``tool_version``; ``spec`` (``lines``, ``outputs``,
    ``care``, ``name``); ``library`` (``preset``, ``lines``, ``max_controls``, ``name``
    and the full ``gates`` list in library order); ``encoding`` (``name``, ``version``,
    ``symmetry``); ``circuit`` (gates in application order, JSON as in
    :mod:`exactsyn.io.jsonio`), ``gate_count``, ``optimal``, ``lower_bound``;
    ``initial_bound`` (``value``, ``reason``, ``detail`` — a bound that needs no SAT
    call, re-derived by the checker); ``queries``: one entry per k-query with ``k``,
    ``status`` (``unsat`` / ``sat`` / ``unknown``), ``proof`` (file name or null),
    ``proof_format`` (``lrat``), ``cnf_sha256``, ``num_vars``, ``num_clauses``,
    ``solver``, ``seconds``, ``conflicts``, ``proof_bytes``.
``k<k>.lrat.gz``
    the gzip-compressed LRAT refutation (text) of the k-query, clause ids ``1..m`` being
    the clauses of the re-derived CNF in order (Cruz-Filipe, Heule, Hunt, Kaufmann,
    Schneider-Kamp, "Efficient certified RAT verification", CADE 2017).

The checker trusts nothing in the directory but the claims it checks: it rebuilds the
spec and the library from their descriptions, **re-derives each CNF from the spec with
the encoder**, compares its hash with the stored one (a mismatch is reported, since it
means the spec, library or encoding was changed after the fact), checks each LRAT
refutation by unit propagation over its hints (:mod:`exactsyn.proof.lrat`), re-derives the
initial bound, requires a refutation for every k from that bound to ``gate_count − 1``,
and simulates the circuit against the spec on every input.
"""

from __future__ import annotations

import gzip
import json
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn import __version__
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.io.jsonio import gate_from_dict, gate_to_dict
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import ENCODING_VERSION, EncodingOptions, encode
from exactsyn.search.bounds import lower_bound
from exactsyn.search.distance import FULL
from exactsyn.search.loop import Result
from exactsyn.spec.reversible import Spec

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


def spec_from_dict(d: Any) -> Spec:
    try:
        lines, outputs, care = int(d["lines"]), [int(v) for v in d["outputs"]], [int(v) for v in d["care"]]
        name = str(d.get("name", ""))
        open_lines = tuple(int(v) for v in d.get("open_lines", []))
        targets = tuple(tuple(int(v) for v in t) for t in d.get("output_targets", []))
        cands = tuple(int(v) for v in d.get("output_candidates", []))
    except (KeyError, TypeError, ValueError):
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
        coupling = tuple((int(a), int(b)) for a, b in d.get("coupling", []))
        lib = make_library(str(d["preset"]), int(d["lines"]), d.get("max_controls"), coupling)
        stored = tuple(gate_from_dict(g) for g in d["gates"])
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'library'") from None
    if stored != lib.gates:
        raise ExactsynError("certificate: the stored gate list is not the one its library preset defines")
    return lib


# ------------------------------------------------------------------ writing
@dataclass(frozen=True)
class QueryRecord:
    k: int
    status: str
    proof: str | None
    cnf_sha256: str
    num_vars: int
    num_clauses: int
    solver: str
    seconds: float
    conflicts: int | None
    proof_bytes: int
    symmetry: list[str] | None  # the CNF's symmetry rules when they differ from "encoding"


def write_proof(directory: Path, k: int, proof: bytes) -> str:
    directory.mkdir(parents=True, exist_ok=True)
    name = f"k{k:02d}.lrat.gz"
    with gzip.open(directory / name, "wb", compresslevel=6) as fh:
        fh.write(proof)
    return name


def write_result(directory: Path, res: Result, objective: Any = None) -> Path:
    """Write ``result.json`` for a search run whose proofs went to ``directory``.

    ``objective`` is an :class:`exactsyn.search.objectives.ObjectiveResult` when the run
    optimised more than the gate count (section documented in :mod:`exactsyn.proof.objective`).
    """
    directory.mkdir(parents=True, exist_ok=True)
    queries = [
        QueryRecord(
            k=s.k,
            status=s.status,
            proof=s.proof,
            cnf_sha256=s.cnf_sha256 or "",
            num_vars=s.variables,
            num_clauses=s.clauses,
            solver=s.solver,
            seconds=round(s.seconds, 4),
            conflicts=s.conflicts,
            proof_bytes=s.proof_bytes,
            symmetry=None if s.symmetry is None or s.symmetry == res.encoding.symmetry else list(s.symmetry),
        )
        for s in res.steps
    ]
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
        "table_bound": None if res.table_bound is None else res.table_bound.__dict__,
        "queries": [q.__dict__ for q in queries],
    }
    if objective is not None:
        from exactsyn.proof.objective import objective_to_dict

        data["objective"] = objective_to_dict(objective)
    path = directory / RESULT_FILE
    tmp = path.with_suffix(".json.tmp")
    tmp.write_text(json.dumps(data, indent=1) + "\n")
    tmp.replace(path)
    return path


def proof_writer(directory: Path) -> Callable[[int, bytes], str]:
    """A ``proof_sink`` for :func:`exactsyn.search.loop.synthesise` that stores into ``directory``."""
    directory.mkdir(parents=True, exist_ok=True)
    return lambda k, proof: write_proof(directory, k, proof)


# ------------------------------------------------------------------ checking
@dataclass(frozen=True)
class CheckLine:
    what: str  # "bound", "k=5", "circuit", ...
    ok: bool
    detail: str


@dataclass(frozen=True)
class CheckReport:
    ok: bool
    lines: tuple[CheckLine, ...]
    optimal_claim: bool
    gate_count: int | None
    seconds: float


def _load(path: Path) -> tuple[Path, dict[str, Any]]:
    directory = path if path.is_dir() else path.parent
    file = directory / RESULT_FILE if path.is_dir() else path
    try:
        data = json.loads(file.read_text())
    except OSError as e:
        raise ExactsynError(f"cannot read certificate {file}: {e.strerror}") from None
    except (json.JSONDecodeError, UnicodeDecodeError) as e:
        raise ExactsynError(f"certificate {file} is not valid JSON: {e}") from None
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise ExactsynError(f"{file} is not an exactsyn certificate (no format {FORMAT!r})")
    if data.get("format_version") != FORMAT_VERSION:
        raise ExactsynError(f"certificate format version {data.get('format_version')!r} is not supported")
    return directory, data


def _encoding_from(d: Any) -> EncodingOptions:
    try:
        if int(d["version"]) != ENCODING_VERSION:
            raise ExactsynError(f"certificate: encoding version {d['version']} is not this tool's")
        return EncodingOptions(str(d["name"]), tuple(str(s) for s in d["symmetry"]))
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'encoding'") from None


def read_proof(directory: Path, name: str) -> bytes:
    p = directory / name
    if Path(name).name != name:
        raise ExactsynError(f"certificate: proof name {name!r} must be a plain file name")
    try:
        with gzip.open(p, "rb") as fh:
            return fh.read()
    except (OSError, EOFError) as e:
        raise ExactsynError(f"cannot read proof {p}: {e}") from None


def check_certificate(path: str | Path, progress: Any = None) -> CheckReport:
    """Re-check a certificate; see the module docstring for what is checked."""
    from exactsyn.proof.lrat import check_lrat

    start = time.perf_counter()
    directory, data = _load(Path(path))
    spec = spec_from_dict(data.get("spec"))
    library = library_from_dict(data.get("library"))
    options = _encoding_from(data.get("encoding"))
    out: list[CheckLine] = []

    def note(what: str, ok: bool, detail: str) -> None:
        line = CheckLine(what, ok, detail)
        out.append(line)
        if progress:
            progress(line)

    # The circuit, simulated on every input.
    circuit: Circuit | None = None
    raw = data.get("circuit")
    if raw is not None:
        try:
            circuit = Circuit(spec.lines, tuple(gate_from_dict(g) for g in raw))
        except ExactsynError as e:
            note("circuit", False, e.message)
        else:
            if not all(library.contains(g) for g in circuit.gates):
                note("circuit", False, "uses a gate outside the library")
            elif not spec.accepts(circuit.permutation()):
                note("circuit", False, "simulation: the circuit does not meet the spec")
            elif data.get("gate_count") != len(circuit):
                note("circuit", False, f"gate_count {data.get('gate_count')} but the circuit has {len(circuit)}")
            else:
                note("circuit", True, f"{len(circuit)} gates, meets the spec on all {spec.size} inputs")

    # The bound that needs no SAT call.
    bound = lower_bound(spec, library)
    claimed = data.get("initial_bound", {}).get("value")
    if not isinstance(claimed, int) or claimed > bound.value:
        note("bound", False, f"initial bound {claimed!r} is not re-derived (got {bound.value}: {bound.detail})")
        first = None
    else:
        note("bound", True, f"k >= {claimed}: {bound.detail}")
        first = claimed

    # A bound from the distance tables: re-derived by rebuilding the table at the
    # recorded depth and repeating the meet-in-the-middle test.
    table_value = 0
    tb = data.get("table_bound")
    if tb is not None:
        try:
            depth, extended, value, exact = int(tb["depth"]), bool(tb["extended"]), int(tb["value"]), bool(tb["exact"])
        except (KeyError, TypeError, ValueError):
            raise ExactsynError("certificate: malformed 'table_bound'") from None
        if not spec.is_permutation or not library.involutive or spec.lines > 4 or not 0 <= depth <= FULL:
            note("table", False, "a table bound needs a full permutation on at most 4 lines")
        else:
            from exactsyn.search.distance import extended_meet, meet_in_the_middle

            t0 = time.perf_counter()
            mr = (extended_meet if extended else meet_in_the_middle)(spec.permutation, library, depth)
            dt = time.perf_counter() - t0
            got = mr.exact if mr.exact is not None else mr.lower
            if value > got or (exact and mr.exact != value):
                note("table", False, f"table bound {value} not re-derived (depth {depth} gives {got})")
            else:
                table_value = value
                note("table", True, f"k >= {value}: meet in the middle over the depth-{depth} table ({dt:.2f} s)")

    # Every refuted k.
    refuted: set[int] = set()
    queries = data.get("queries") or []
    for q in queries:
        if not isinstance(q, dict) or q.get("status") != "unsat":
            continue
        k = q.get("k")
        if not isinstance(k, int) or k < 0:
            note("query", False, f"bad k {k!r}")
            continue
        q_opts = options
        if q.get("symmetry") is not None:
            try:
                q_opts = EncodingOptions(options.name, tuple(str(x) for x in q["symmetry"]))
            except (TypeError, ExactsynError):
                note(f"k={k}", False, "malformed per-query symmetry rules")
                continue
        enc = encode(spec, library, k, q_opts)
        digest = cnf_sha256(enc.num_vars, enc.clauses)
        if digest != q.get("cnf_sha256"):
            note(f"k={k}", False, "re-derived CNF differs from the one proved (spec, library or encoding changed)")
            continue
        if not q.get("proof"):
            note(f"k={k}", False, "no proof file")
            continue
        try:
            proof = read_proof(directory, str(q["proof"]))
        except ExactsynError as e:
            note(f"k={k}", False, e.message)
            continue
        t0 = time.perf_counter()
        rep = check_lrat(enc.num_vars, enc.clauses, proof)
        dt = time.perf_counter() - t0
        if rep.ok:
            refuted.add(k)
            note(f"k={k}", True, f"LRAT refutation checked: {rep.steps} steps, {len(proof)} bytes, {dt:.2f} s")
        else:
            note(f"k={k}", False, f"LRAT step {rep.failed_step} failed: {rep.reason}")

    gate_count = None if circuit is None else len(circuit)
    optimal_claim = bool(data.get("optimal"))
    proven_k: int | None = None
    if optimal_claim:
        if circuit is None or first is None:
            note("optimal", False, "optimality claimed without a checked circuit and bound")
        else:
            missing = [k for k in range(first, len(circuit)) if k not in refuted and k >= table_value]
            if missing:
                note("optimal", False, f"no checked refutation for k = {', '.join(map(str, missing))}")
            else:
                proven_k = len(circuit)
                note("optimal", True, f"every k in [{first}, {len(circuit) - 1}] refuted: {len(circuit)} is optimal")
    if data.get("objective") is not None:
        from exactsyn.proof.objective import check_objective

        check_objective(directory, data["objective"], spec, library, proven_k, note)
    lb = data.get("lower_bound")
    if isinstance(lb, int) and first is not None:
        support = first
        while support in refuted or support < table_value:
            support += 1
        if lb > support:
            note("lower_bound", False, f"claims lower bound {lb}, checked only {support}")
    ok = all(line.ok for line in out)
    return CheckReport(ok, tuple(out), optimal_claim, gate_count, time.perf_counter() - start)

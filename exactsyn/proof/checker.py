"""Re-check a certificate (:mod:`exactsyn.proof.certificate`) without trusting the solver.

The checker trusts nothing in the directory but the claims it checks: it rebuilds the
spec and the library from their descriptions, **re-derives each CNF from the spec with
the encoder**, compares its hash with the stored one (a mismatch is reported, since it
means the spec, library or encoding was changed after the fact), checks each LRAT
refutation by unit propagation over its hints (:mod:`exactsyn.proof.lrat`), re-derives the
initial bound and any distance-table bound (by rebuilding the table and repeating the
meet-in-the-middle test), checks a query split into cubes cube by cube together with the
cubes' coverage (:mod:`exactsyn.proof.cube_check`), requires a refutation for every k from the bound to
``gate_count − 1``, and simulates the circuit against the spec on every input.

The ``objective`` section: each refuted cost or depth CNF is re-derived
(:func:`exactsyn.sat.encode.encode` with a :class:`~exactsyn.sat.encode.CostLimit`, or
:func:`exactsyn.sat.encode_depth.encode_depth`) and its LRAT proof checked; the costs of a
built-in cost model are recomputed (a user table's costs are part of the question, like
the spec); the circuit is simulated and its value recomputed; then the claim:

* ``depth`` D: a refutation of depth ≤ D − 1 (none needed for D ≤ 1 on a non-identity spec);
* ``gates-then-cost`` C: the gate part proves k* and the circuit has k* gates; a
  refutation of (k*, cost ≤ C') with C' ≥ C − 1;
* ``cost`` C: for every k from k* to ⌊(C − 1 − e)/c_min⌋ a refutation of (k, cost ≤ C')
  with C' ≥ C − 1 (fewer than k* gates is refuted by the gate part; more gates than that
  cost at least C).  ``e`` (``nonaffine_extra``) is re-derived: the function must be a
  non-affine permutation and ``e`` at most the least extra cost of a non-affine gate.

This module imports no SAT solver: checking needs only the encoder, the LRAT checker
and simulation (a test imports it alone and looks at the loaded modules).
"""

from __future__ import annotations

import json
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS, library_costs, objective_value
from exactsyn.core.library import Library, make_library
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.proof.certificate import (
    FORMAT,
    FORMAT_VERSION,
    RESULT_FILE,
    encoding_from_dict,
    json_int,
    library_from_dict,
    open_proof,
    spec_from_dict,
)
from exactsyn.proof.cube_check import check_split
from exactsyn.proof.lrat import check_lrat
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import CostLimit, EncodingOptions, encode
from exactsyn.sat.encode_depth import encode_depth
from exactsyn.sat.status import Status
from exactsyn.search.bounds import lower_bound, nonaffine_extra
from exactsyn.specification.reversible import Spec
from exactsyn.tables.distance import WHOLE_GROUP_DEPTH
from exactsyn.tables.oracle import TableBound, recorded_distance_oracle


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
    if path.is_dir() and not file.is_file():
        raise ExactsynError(f"{path} (at {path.resolve()}) holds no {RESULT_FILE}: it is not a certificate directory")
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


Note = Callable[[str, bool, str], None]
"""``note(what, ok, detail)``: one line of the report."""


def check_certificate(path: str | Path, progress: Any = None) -> CheckReport:
    """Re-check a certificate; see the module docstring for what is checked."""
    start = time.perf_counter()
    directory, data = _load(Path(path))
    spec = spec_from_dict(data.get("spec"))
    library = library_from_dict(data.get("library"))
    options = encoding_from_dict(data.get("encoding"))
    out: list[CheckLine] = []

    def note(what: str, ok: bool, detail: str) -> None:
        line = CheckLine(what, ok, detail)
        out.append(line)
        if progress:
            progress(line)

    circuit = _check_circuit(data, spec, library, note)
    first = _check_initial_bound(data, spec, library, note)
    table_value = _check_table_bound(data.get("table_bound"), spec, library, note)
    cv = _check_class_table(data.get("class_table"), spec, library, circuit, note)
    table_name = f"{spec.lines}-line class table" if cv > table_value else "distance table"
    table_value = max(table_value, cv)
    refuted = _check_gate_queries(directory, data.get("queries") or [], spec, library, options, note)

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
                note("optimal", True, _covered(first, len(circuit), refuted, table_value, table_name))
    if data.get("objective") is not None:
        _check_objective(directory, data["objective"], spec, library, proven_k, note)
    if data.get("optima") is not None:
        _check_optima(data["optima"], data.get("objective"), spec, library, proven_k, note)
    lb = data.get("lower_bound")
    if isinstance(lb, int) and first is not None:
        support = first
        while support in refuted or support < table_value:
            support += 1
        if lb > support:
            note("lower_bound", False, f"claims lower bound {lb}, checked only {support}")
    ok = all(line.ok for line in out)
    gate_count = None if circuit is None else len(circuit)
    return CheckReport(ok, tuple(out), optimal_claim, gate_count, time.perf_counter() - start)


def _check_circuit(data: dict[str, Any], spec: Spec, library: Library, note: Note) -> Circuit | None:
    """The circuit, simulated on every input (None when there is none or it is malformed)."""
    raw = data.get("circuit")
    if raw is None:
        return None
    if not isinstance(raw, list):
        note("circuit", False, "malformed 'circuit' (not a list of gates)")
        return None
    try:
        circuit = Circuit(spec.lines, tuple(gate_from_dict(g) for g in raw))
    except ExactsynError as e:
        note("circuit", False, e.message)
        return None
    if not all(library.contains(g) for g in circuit.gates):
        note("circuit", False, "uses a gate outside the library")
    elif not spec.accepts(circuit.permutation()):
        note("circuit", False, "simulation: the circuit does not meet the spec")
    elif data.get("gate_count") != len(circuit):
        note("circuit", False, f"gate_count {data.get('gate_count')} but the circuit has {len(circuit)}")
    else:
        note("circuit", True, f"{count(len(circuit), 'gate')}, meets the spec on all {spec.size} inputs")
    return circuit


def _check_initial_bound(data: dict[str, Any], spec: Spec, library: Library, note: Note) -> int | None:
    """The bound that needs no SAT call, re-derived; the claimed value when it holds."""
    bound = lower_bound(spec, library)
    initial = data.get("initial_bound")
    claimed = initial.get("value") if isinstance(initial, dict) else None
    if not isinstance(claimed, int) or claimed > bound.value:
        note("bound", False, f"initial bound {claimed!r} is not re-derived (got {bound.value}: {bound.detail})")
        return None
    note("bound", True, f"k >= {claimed}: {bound.detail}")
    return claimed


def _check_table_bound(tb: Any, spec: Spec, library: Library, note: Note) -> int:
    """A bound from the distance tables, re-derived by rebuilding the table at the recorded depth
    and repeating the meet-in-the-middle test; the bound it supports (0 when none)."""
    if tb is None:
        return 0
    try:
        raw_depth = WHOLE_GROUP_DEPTH if tb["depth"] == "full" else tb["depth"]
        claimed = TableBound(json_int(tb["value"]), bool(tb["exact"]), json_int(raw_depth), bool(tb["extended"]))
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'table_bound'") from None
    table = recorded_distance_oracle(library, claimed) if spec.is_permutation else None
    if table is None:
        note("table", False, "a table bound needs a full permutation on at most 4 lines (5 with hashed tables)")
        return 0
    t0 = time.perf_counter()
    try:
        verdict = table.optimum(spec.permutation)
    except NoCircuitError as e:
        note("table", False, e.message)
        return 0
    dt = time.perf_counter() - t0
    value, depth = claimed.value, claimed.depth
    if verdict is None or value > verdict.lower or (claimed.exact and (not verdict.exact or verdict.lower != value)):
        got = "nothing" if verdict is None else verdict.lower
        note("table", False, f"table bound {value} not re-derived (depth {depth} gives {got})")
        return 0
    which = "full" if depth >= WHOLE_GROUP_DEPTH else f"depth-{depth}"
    note("table", True, f"k >= {value}: meet in the middle over the {which} table ({dt:.2f} s)")
    return value


def _check_gate_queries(
    directory: Path, queries: Any, spec: Spec, library: Library, options: EncodingOptions, note: Note
) -> set[int]:
    """Every refuted k: its CNF re-derived and hashed, its LRAT proof (or its cubes) checked."""
    refuted: set[int] = set()
    if not isinstance(queries, list):
        raise ExactsynError("certificate: malformed 'queries' (not a list)")
    for q in queries:
        if not isinstance(q, dict) or q.get("status") not in tuple(Status):
            note("query", False, f"malformed query entry {str(q)[:40]!r}")
            continue
        if q.get("status") != Status.UNSAT:
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
        if q.get("split") is not None:  # refuted cube by cube (proof/cube_check.py)
            if check_split(directory, q["split"], enc.num_vars, enc.clauses, f"k={k}", note):
                refuted.add(k)
            continue
        if _check_refutation(directory, q.get("proof"), enc.num_vars, enc.clauses, f"k={k}", note):
            refuted.add(k)
    return refuted


def _check_refutation(
    directory: Path, name: Any, num_vars: int, clauses: list[list[int]], label: str, note: Note, size: bool = True
) -> bool:
    """Check one stored LRAT refutation of ``clauses``; one report line either way."""
    if not name:
        note(label, False, "no proof file")
        return False
    t0 = time.perf_counter()
    try:
        proof = open_proof(directory, str(name), len(clauses))
        rep = check_lrat(num_vars, clauses, proof)
    except ExactsynError as e:
        note(label, False, e.message)
        return False
    dt = time.perf_counter() - t0
    if not rep.ok:
        note(label, False, f"LRAT step {rep.failed_step} failed: {rep.reason}")
        return False
    bytes_part = f", {proof.size} bytes" if size else ""
    note(label, True, f"LRAT refutation checked: {rep.steps} steps{bytes_part}, {dt:.2f} s")
    return True


def _span(ks: list[int]) -> str:
    return str(ks[0]) if len(ks) == 1 else f"{ks[0]}..{ks[-1]}"


def _covered(first: int, count: int, refuted: set[int], table_value: int, table_name: str = "distance table") -> str:
    """How every k below ``count`` is ruled out: the table bound, refutations, or nothing to rule out."""
    ks = list(range(first, count))
    by_table = [k for k in ks if k < table_value]
    by_proof = [k for k in ks if k >= table_value]
    parts = []
    if by_table:
        parts.append(f"k = {_span(by_table)} excluded by the {table_name}")
    if by_proof:
        parts.append(f"k = {_span(by_proof)} refuted by checked LRAT proofs")
    if not parts:
        return f"the circuit meets the bound: {count} is optimal"
    return "; ".join(parts) + f": {count} is optimal"


def _check_objective(
    directory: Path,
    d: Any,
    spec: Spec,
    library: Library,
    k_star: int | None,
    note: Note,
) -> None:
    """Re-check the ``objective`` section; ``k_star`` is the gate count the gate part proved (or None)."""
    try:
        name = str(d["name"])
        costs = None if d.get("costs") is None else tuple(json_int(c) for c in d["costs"])
        options = EncodingOptions("onehot", tuple(str(s) for s in d.get("symmetry") or ()))
        circuit = Circuit(spec.lines, tuple(gate_from_dict(g) for g in d["circuit"]))
        value, optimal, queries = json_int(d["value"]), bool(d["optimal"]), list(d.get("queries") or [])
    except (KeyError, TypeError, ValueError, AttributeError):
        raise ExactsynError("certificate: malformed 'objective'") from None
    if name not in ("gates-then-cost", "cost", "depth") or (name != "depth") == (costs is None):
        raise ExactsynError(f"certificate: objective {name!r} is not known or lacks its costs")
    if not _objective_circuit(d.get("cost_model"), costs, circuit, value, name, spec, library, note):
        return
    order = "gates" if name == "gates-then-cost" else "cost"
    refuted = _objective_queries(directory, queries, spec, library, options, costs, order, note)
    if not optimal:
        return
    if name == "depth" and d.get("class_table") is not None:
        _objective_depth_claim(d["class_table"], circuit, value, spec, library, note)
        return
    if name == "depth":
        trivial = value == 0 or (value == 1 and not spec.is_identity())
        ok = trivial or ("depth", value - 1) in refuted
        note(
            "objective optimal", ok, f"depth {value} " + ("is optimal" if ok else f"lacks a refutation of {value - 1}")
        )
        return
    assert costs is not None
    if d.get("class_table") is not None:
        _objective_table_claim(d["class_table"], name, costs, circuit, value, k_star, spec, library, note)
        return
    _objective_cost_claim(d, name, costs, circuit, value, k_star, refuted, spec, library, note)


def _objective_depth_claim(raw: Any, circuit: Circuit, value: int, spec: Spec, library: Library, note: Note) -> None:
    """A minimum depth proven by a layer table (steps: layers of gates on disjoint lines),
    re-derived by the separate checker like a gate count: no circuit of fewer layers."""
    try:
        table, content_hash, lines = str(raw["library"]), str(raw["content_hash"]), _claim_lines(raw)
        claimed = json_int(raw["value"])
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'class_table' of the objective") from None
    base = table.removesuffix("-layers")
    if not table.endswith("-layers") or claimed != value or not spec.is_permutation or lines != spec.lines:
        note("objective optimal", False, "a minimum depth needs a layer table of a full permutation")
        return
    if set(library.gates) != set(make_library(base, lines).gates):
        note("objective optimal", False, f"the {table} table does not answer for library {library.name}")
        return
    from exactsyn.tables import verify

    _note_table_check(
        note, "objective optimal", table, lines,
        lambda: verify.check_claim(table, spec.permutation, value, circuit.gates, content_hash=content_hash,
                                   lines=lines),
        f"depth {value} is optimal: no circuit of fewer layers over the {lines}-line {table} table",
    )  # fmt: skip


def _objective_table_claim(
    raw: Any,
    name: str,
    costs: tuple[int, ...],
    circuit: Circuit,
    value: int,
    k_star: int | None,
    spec: Spec,
    library: Library,
    note: Note,
) -> None:
    """A least cost among minimum-gate circuits proven by the descent over a class table,
    re-run by the separate checker (:func:`exactsyn.tables.verify.check_cost_claim`)."""
    try:
        table, content_hash, lines = str(raw["library"]), str(raw["content_hash"]), _claim_lines(raw)
        claimed = json_int(raw["value"])
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'class_table' of the objective") from None
    if name != "gates-then-cost" or claimed != value or not spec.is_permutation or lines != spec.lines:
        note("objective optimal", False, "a class-table descent proves gates-then-cost of a full permutation only")
        return
    if set(library.gates) != set(make_library(table, lines).gates):
        note("objective optimal", False, f"the {table} table does not answer for library {library.name}")
        return
    if k_star is None or len(circuit) != k_star:
        note("objective optimal", False, "the gate part does not prove the circuit's gate count minimal")
        return
    from exactsyn.tables import verify

    table_costs = _in_table_order(costs, library, table, lines)
    _note_table_check(
        note, "objective optimal", table, lines,
        lambda: verify.check_cost_claim(table, spec.permutation, k_star, table_costs, value,
                                        content_hash=content_hash, lines=lines),
        f"cost {value} is the least among {k_star}-gate circuits: the descent over the {lines}-line {table} "
        "table re-run",
    )  # fmt: skip


def _objective_circuit(
    model: Any,
    costs: tuple[int, ...] | None,
    circuit: Circuit,
    value: int,
    name: str,
    spec: Spec,
    library: Library,
    note: Note,
) -> bool:
    """The objective's costs (re-derived for a built-in model) and circuit (simulated, value recomputed)."""
    if costs is not None:
        if len(costs) != len(library.gates):
            note("objective", False, "one cost per library gate is needed")
            return False
        if model in COST_MODELS and library_costs(library, COST_MODELS[model]) != costs:
            note("objective", False, f"stored costs are not those of cost model {model}")
            return False
    if not all(library.contains(g) for g in circuit.gates) or not spec.accepts(circuit.permutation()):
        note("objective", False, "the objective's circuit does not meet the spec in this library")
        return False
    got = objective_value(circuit, library, costs)
    if got != value:
        note("objective", False, f"claims value {value}, the circuit has {got}")
        return False
    size = count(len(circuit), "gate")
    note("objective", True, f"{name}: circuit of {size} with value {value}, simulated on every input")
    return True


def _objective_queries(
    directory: Path,
    queries: list[Any],
    spec: Spec,
    library: Library,
    options: EncodingOptions,
    costs: tuple[int, ...] | None,
    order: str,
    note: Note,
) -> dict[tuple[str, int], int]:
    """Every refuted cost or depth query, re-derived and checked: (kind, k) -> largest refuted limit."""
    refuted: dict[tuple[str, int], int] = {}  # (kind, k) -> largest refuted limit (depth: k itself)
    for q in queries:
        if not isinstance(q, dict) or q.get("status") not in tuple(Status):
            note("objective query", False, f"malformed query entry {str(q)[:40]!r}")
            continue
        if q.get("status") != Status.UNSAT:
            continue
        kind, k, limit = q.get("kind"), q.get("k"), q.get("limit")
        label = f"{kind} k={k}" + ("" if limit is None else f" cost<={limit}")
        if kind == "depth" and isinstance(k, int) and k >= 0:
            enc = encode_depth(spec, library, k)
        elif kind == "cost" and costs is not None and isinstance(k, int) and isinstance(limit, int) and k >= 0:
            enc = encode(spec, library, k, options, cost_limit=CostLimit(costs, limit, order))
        else:
            note(label, False, "malformed query")
            continue
        if cnf_sha256(enc.num_vars, enc.clauses) != q.get("cnf_sha256"):
            note(label, False, "re-derived CNF differs from the one proved")
            continue
        if not _check_refutation(directory, q.get("proof"), enc.num_vars, enc.clauses, label, note, size=False):
            continue
        key = (str(kind), k)
        refuted[key] = max(refuted.get(key, -1), limit if isinstance(limit, int) else k)
    return refuted


def _objective_cost_claim(
    d: Any,
    name: str,
    costs: tuple[int, ...],
    circuit: Circuit,
    value: int,
    k_star: int | None,
    refuted: dict[tuple[str, int], int],
    spec: Spec,
    library: Library,
    note: Note,
) -> None:
    """An optimal cost: a refutation below it for every gate count that could cost less."""
    if k_star is None:
        note("objective optimal", False, "the gate part does not prove the minimum gate count")
        return
    if name == "gates-then-cost":
        ks = [k_star] if len(circuit) == k_star else []
        if not ks:
            note("objective optimal", False, f"the circuit has {count(len(circuit), 'gate')}, not the proven {k_star}")
            return
    elif min(costs) < 1:
        note("objective optimal", False, "objective 'cost' needs every gate to cost at least 1")
        return
    else:
        extra = int(d.get("nonaffine_extra") or 0)
        if extra:
            derived = nonaffine_extra(spec, library, costs)
            if extra > derived:
                note("objective optimal", False, f"claims non-affine extra cost {extra}, re-derived {derived}")
                return
            note("non-affine", True, f"the function is not affine: every circuit has a gate costing {extra} more")
        ks = list(range(k_star, (value - 1 - extra) // min(costs) + 1))
    missing = [k for k in ks if refuted.get(("cost", k), -1) < value - 1]
    if missing:
        note("objective optimal", False, f"no refutation of cost <= {value - 1} for k = {', '.join(map(str, missing))}")
    else:
        note("objective optimal", True, f"cost {value} is optimal: every k in {ks[:1] + ks[-1:]} refuted below it")


def _claim_lines(raw: dict[str, Any]) -> int:
    """The line count of a class-table claim: ``lines``, else from ``format``
    (``exactsyn-tables<n>/1``; certificates written before the n-line tables carry only
    ``exactsyn-tables4/1``), else 4.  Both given must agree."""
    fmt = raw.get("format", "exactsyn-tables4/1")
    if not isinstance(fmt, str) or not fmt.startswith("exactsyn-tables") or not fmt.endswith("/1"):
        raise ValueError(fmt)
    from_format = int(fmt[len("exactsyn-tables") : -len("/1")])
    lines = json_int(raw["lines"]) if "lines" in raw else from_format
    if lines != from_format:
        raise ValueError(fmt)
    return lines


def _check_class_table(raw: Any, spec: Spec, library: Library, circuit: Circuit | None, note: Note) -> int:
    """Re-derive a class-table claim (the optimum or a lower bound); the bound it supports, else 0.

    Trusted (said in the report line): the cached table whose files hash to the recorded
    content hash is exact — :func:`exactsyn.tables.verify.verify_table` proves that from
    the files (``exactsyn tables verify``, which leaves a stamp the line reports), and a
    rebuild gives the same hash (the build is deterministic).  Re-derived here: the files'
    SHA-256 against the manifest, the content hash, and the claim itself by a separate
    numpy implementation (:func:`~exactsyn.tables.verify.check_claim`).
    """
    if raw is None:
        return 0
    try:
        name, depth = str(raw["library"]), json_int(raw["depth"])
        value, exact, content_hash = json_int(raw["value"]), bool(raw["exact"]), str(raw["content_hash"])
        lines = _claim_lines(raw)
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'class_table'") from None
    from exactsyn.tables import verify

    if name not in ("nct", "mct", "mixed") or spec.lines != lines or not spec.is_permutation:
        note("class table", False, f"a class-table claim needs a full {lines}-line permutation and a table library")
        return 0
    table_gates = make_library(name, lines).gates
    option = "" if lines == 4 else f" --lines {lines}"  # how the table commands name these tables
    if not set(library.gates) <= set(table_gates) or (exact and set(library.gates) != set(table_gates)):
        note("class table", False, f"the {name} table does not apply to library {library.name}")
        return 0
    gates = None
    if exact:
        if circuit is None or len(circuit) != value:
            note("class table", False, f"an exact claim of {value} gates without a checked circuit of that size")
            return 0
        gates = circuit.gates
    try:
        res = verify.check_claim(name, spec.permutation, value, gates, content_hash=content_hash, lines=lines)
    except (ExactsynError, OSError) as e:
        msg = e.message if isinstance(e, ExactsynError) else str(e)
        rebuild = f"exactsyn tables build --library {name}{option} --depth {depth}"
        note("class table", False, f"{msg}; rebuild it with `{rebuild}`")
        return 0
    if not res.ok:
        note("class table", False, "; ".join(res.problems))
        return 0
    trust = (
        "table verified by `exactsyn tables verify`"
        if res.table_verified
        else f"trusted, not yet verified here: `exactsyn tables verify --library {name}{option}`"
    )
    what = f"k = {value} is the optimum" if exact else f"k >= {value}"
    note(
        "class table",
        True,
        f"{what}: no shorter split over the {lines}-line {name} depth-{depth} table {content_hash[:12]} "
        f"({res.tests} classes looked up, files re-hashed, {res.seconds:.1f} s; {trust})",
    )
    return value


def _check_optima(raw: Any, objective: Any, spec: Spec, library: Library, k_star: int | None, note: Note) -> None:
    """The number of optimal circuits (classes up to commuting gates) counted by the descent
    over a class table, re-counted by the separate checker
    (:func:`exactsyn.tables.verify.check_count_claim`)."""
    try:
        k, count = json_int(raw["gate_count"]), json_int(raw["count"])
        least = None if raw.get("least_cost") is None else json_int(raw["least_cost"])
        claim = raw["class_table"]
        table, content_hash, lines = str(claim["library"]), str(claim["content_hash"]), _claim_lines(claim)
        costs = None if least is None else [json_int(c) for c in objective["costs"]]
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'optima'") from None
    if k_star is None or k != k_star:
        note("optima", False, "the count needs the proven minimum gate count it counts circuits of")
        return
    if not spec.is_permutation or lines != spec.lines or set(library.gates) != set(make_library(table, lines).gates):
        note("optima", False, f"the {table} table does not count the circuits of this spec over {library.name}")
        return
    if least is not None and (costs is None or len(costs) != len(library) or least != objective.get("value")):
        note("optima", False, "the least cost the count is restricted to is not the objective's")
        return
    from exactsyn.tables import verify

    table_costs = None if costs is None else _in_table_order(costs, library, table, lines)
    what = f"{k}-gate circuits" if least is None else f"{k}-gate circuits of cost {least}"
    _note_table_check(
        note, "optima", table, lines,
        lambda: verify.check_count_claim(table, spec.permutation, k, count, table_costs, least,
                                         content_hash=content_hash, lines=lines),
        f"{count} classes of {what} up to commuting gates: the descent over the {lines}-line {table} table "
        "re-counted",
    )  # fmt: skip


def _in_table_order(costs: Sequence[int], library: Library, table: str, lines: int) -> list[int]:
    """``costs`` (one per gate of ``library``, in its order) in the order of the table's own library."""
    return [costs[library.gates.index(g)] for g in make_library(table, lines).gates]


def _note_table_check(
    note: Note, what: str, table: str, lines: int, run: Callable[[], Any], claim: str
) -> None:
    """Run one re-derivation by the separate table checker (``run`` returns its
    :class:`~exactsyn.tables.verify.ClaimCheck`) and note the outcome: ``claim`` with the time
    and what it trusts, or the problems found."""
    try:
        rep = run()
    except ExactsynError as e:
        note(what, False, e.message)
        return
    if not rep.ok:
        note(what, False, "; ".join(rep.problems))
        return
    option = "" if lines == 4 else f" --lines {lines}"
    verify_it = f"exactsyn tables verify --library {table}{option}"
    trust = "table verified" if rep.table_verified else f"table trusted: `{verify_it}`"
    note(what, True, f"{claim} ({rep.seconds:.2f} s; {trust})")

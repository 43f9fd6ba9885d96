"""5-line class tables: keys, canonical form, level counts, the checker, tampering, commands.

References: plain breadth-first search over functions (exactsyn.tables.bfs, no classes, no
kernels, no SAT), the definition of the canonical form written out below, and the
numbers of the issue that asked for these tables (5-line MCT functions needing exactly k
gates, k = 0..5, counted there by plain breadth-first search: 1, 80, 5080, 290440,
15572750, 798332421).  Small depths in CI; depth 4 and 5 under ``-m slow``.
"""

from __future__ import annotations

import itertools
import json
import random
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from helpers import random_perm

from exactsyn import tables
from exactsyn.cli.main import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.tables import storage, verify
from exactsyn.tables.bfs import distance_layers
from exactsyn.tables.gate_keys import gate_set
from exactsyn.tables.keys import layout
from exactsyn.tables.verify_keys import check_keys

L5 = layout(5)
# The breadth-first counts quoted in the issue (two independent searches for k ≤ 4, one for 5).
MCT5_COUNTS = [1, 80, 5080, 290440, 15572750, 798332421]


def _hw(v: int) -> int:
    return bin(v).count("1")


def _plain_canonical(p: list[int]) -> int:
    """The definition written out: over g = π_σ∘f∘π_σ⁻¹ for every relabelling σ and f ∈ {p, p⁻¹},
    the least (line profile, key), where line l's profile is (inputs whose bit l changes,
    Σ hw(g(x) ⊕ g(x ⊕ 2^l)) over x with bit l clear, hw(g(2^l)), hw(g(31 ⊕ 2^l)))."""
    inverse = [0] * 32
    for i, v in enumerate(p):
        inverse[v] = i
    best = None
    for f in (p, inverse):
        for sigma in itertools.permutations(range(5)):
            pi = [sum(((x >> line) & 1) << sigma[line] for line in range(5)) for x in range(32)]
            g = [0] * 32
            for x in range(32):
                g[pi[x]] = pi[f[x]]
            prof = tuple(
                (
                    sum(((g[x] ^ x) >> line) & 1 for x in range(32)),
                    sum(_hw(g[x] ^ g[x ^ (1 << line)]) for x in range(32) if not (x >> line) & 1),
                    _hw(g[1 << line]),
                    _hw(g[31 ^ (1 << line)]),
                )
                for line in range(5)
            )
            cand = (prof, sum(v << (5 * i) for i, v in enumerate(g)))
            best = cand if best is None or cand < best else best
    assert best is not None
    return best[1]


@pytest.fixture(scope="module")
def five_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-5")
    tables.build("mct", depth=3, cache=cache, lines=5)
    tables.build("nct", depth=3, cache=cache, lines=5)
    return cache


def test_the_5_line_layout() -> None:
    assert (L5.words, L5.symmetries, L5.format, L5.bits) == (3, 240, "exactsyn-tables5", 160)
    assert L5.has_kernels and check_keys(5).words == 3


def test_canonical_form_is_invariant_under_all_240_transforms() -> None:
    K, C = L5.kernels(), check_keys(5)
    rng = random.Random(55)
    for _ in range(12):
        p = random_perm(rng, 5)
        k = L5.pack(p)
        members = L5.class_members(k)
        assert 240 % len(members) == 0
        plain = _plain_canonical(list(p))
        assert L5.canonical(k) == plain
        arr = L5.array(members)
        assert set(L5.ints(K.canon_many(arr))) == {plain}
        assert set(C.ints(C.canonical(arr))) == {plain}


def test_canonical_form_and_class_sizes_of_structured_functions() -> None:
    # products of few gates have large stabilisers and tied profiles: the hard cases
    gs = gate_set("mct", 5)
    K, C = L5.kernels(), check_keys(5)
    keys = [L5.identity, *gs.keys]
    keys += [L5.compose(a, b) for a in gs.keys[:3] for b in gs.keys]
    rng = random.Random(3)
    for _ in range(40):  # 3- to 6-gate products
        k = L5.identity
        for _ in range(rng.randint(3, 6)):
            k = L5.compose(rng.choice(gs.keys), k)
        keys.append(k)
    arr = L5.array(keys)
    ref = [L5.canonical(k) for k in keys]
    assert L5.ints(K.canon_many(arr)) == ref
    assert C.ints(C.canonical(arr)) == ref
    assert _plain_canonical(list(L5.unpack(keys[-1]))) == ref[-1]
    classes = sorted(set(ref))
    sizes = K.class_size_histogram(K.mix_many(L5.array(classes)))
    expected = np.bincount([L5.class_size(k) for k in classes], minlength=241)
    assert sizes.tolist() == expected.tolist()
    _, check_sizes = C.canonical_and_size(L5.array(classes))
    assert check_sizes.tolist() == [L5.class_size(k) for k in classes]


def test_relabelling_permutes_the_line_profile() -> None:
    # What the kernel and the checker rely on to skip members (verify_keys5 docstring).
    rng = random.Random(8)
    for _ in range(10):
        k = L5.pack(random_perm(rng, 5))
        prof = L5.line_profile(k)
        for sigma in rng.sample(L5.relabellings, 12):
            moved = L5.line_profile(L5.conjugate(k, sigma))
            assert all(moved[sigma[line]] == prof[line] for line in range(5))


def test_mix_lookup_and_sets_of_three_word_keys() -> None:
    K, C = L5.kernels(), check_keys(5)
    rng = random.Random(4)
    keys = L5.array([L5.pack(random_perm(rng, 5)) for _ in range(3000)])
    mixed = K.mix_many(keys)
    assert np.array_equal(mixed, C.mix(keys)) and np.array_equal(K.unmix_many(mixed), keys)
    assert np.array_equal(C.unmix(mixed), keys)
    assert int(K.mix_many(np.zeros((1, 3), dtype=np.uint64)).sum()) == 0
    assert np.all(keys[:, 2] != 0)  # the third word of a permutation's key is never 0 (empty-slot marker)
    stored = mixed[np.lexsort(mixed.T[::-1])][:2000]
    index, shift = K.make_index(stored)
    assert K.contains_many(stored, index, shift, stored).all()
    others = K.mix_many(L5.array([L5.pack(random_perm(rng, 5)) for _ in range(2000)]))
    assert not K.contains_many(stored, index, shift, others).any()


@pytest.mark.parametrize("library", ["mct", "nct"])
def test_level_counts_equal_plain_breadth_first_search(five_cache: Path, library: str) -> None:
    t = tables.load(library, cache=five_cache, lines=5)
    layers = distance_layers(make_library(library, 5), 3)
    assert t.distribution() == [len(layer) for layer in layers]
    if library == "mct":
        assert t.distribution() == MCT5_COUNTS[:4]
    # every function of the layers is in the right level
    rows = np.concatenate(layers)
    got = t.levels_of(L5.pack_rows(rows))
    assert got.tolist() == [d for d, layer in enumerate(layers) for _ in range(len(layer))]


@pytest.mark.slow
def test_level_counts_to_five_gates_equal_the_breadth_first_counts(tmp_path: Path) -> None:
    info = tables.build("mct", depth=5, cache=tmp_path, lines=5)
    assert list(info.functions) == MCT5_COUNTS
    layers = distance_layers(make_library("mct", 5), 4)
    assert [len(layer) for layer in layers] == MCT5_COUNTS[:5]
    report = verify.verify_table("mct", cache=tmp_path, workers=2, stamp=False, lines=5)
    assert report.ok, report.problems
    assert list(report.functions) == MCT5_COUNTS


def test_table_circuits_are_optimal_and_simulated(five_cache: Path) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    lib = make_library("mct", 5)
    rng = random.Random(12)
    layers = distance_layers(lib, 3)
    for d in (1, 2, 3):
        for i in rng.sample(range(len(layers[d])), 5):
            p = tuple(int(v) for v in layers[d][i])
            ans = t.synthesise(p)
            assert ans.optimal and ans.gate_count == d and ans.method == "table lookup"
            assert ans.gates is not None and all(lib.contains(g) for g in ans.gates)
            assert t.gates.circuit_key(ans.gates) == L5.pack(p)  # simulated


def test_the_checker_accepts_the_table_and_catches_a_moved_class(five_cache: Path, tmp_path: Path) -> None:
    report = verify.verify_table("mct", cache=five_cache, workers=1, stamp=False, lines=5)
    assert report.ok, report.problems
    assert list(report.functions) == MCT5_COUNTS[:4]
    d = storage.table_dir("mct", tmp_path, 5)
    shutil.copytree(storage.table_dir("mct", five_cache, 5), d)
    manifest = json.loads((d / storage.MANIFEST).read_text())
    K = L5.kernels()
    levels = [np.fromfile(d / lv["file"], dtype="<u8").reshape(-1, 3) for lv in manifest["levels"]]
    levels[2], levels[3] = np.vstack([levels[2], levels[3][7:8]]), np.delete(levels[3], 7, axis=0)  # 3 gates under 2
    for j in (2, 3):
        vals = levels[j][np.lexsort(levels[j].T[::-1])]
        vals.tofile(d / manifest["levels"][j]["file"])
        index, _ = K.make_index(vals)
        index.tofile(d / manifest["levels"][j]["index_file"])
        hist = K.class_size_histogram(vals)
        lv = manifest["levels"][j]
        lv["classes"], lv["functions"] = len(vals), int((hist * np.arange(len(hist))).sum())
        for name, size, digest in storage.FILE_KEYS:
            lv[size], lv[digest] = (d / lv[name]).stat().st_size, storage.sha256_file(d / lv[name])
    storage.write_manifest(d, manifest)
    assert storage.check_directory(d, True, 5).ok  # consistent hashes: only the checker can tell
    bad = verify.verify_table("mct", cache=tmp_path, workers=1, stamp=False, lines=5)
    assert not bad.ok and any("closure" in p or "descent" in p for p in bad.problems)


def test_a_non_canonical_key_is_caught(five_cache: Path, tmp_path: Path) -> None:
    d = storage.table_dir("mct", tmp_path, 5)
    shutil.copytree(storage.table_dir("mct", five_cache, 5), d)
    manifest = json.loads((d / storage.MANIFEST).read_text())
    K = L5.kernels()
    lv = manifest["levels"][2]
    vals = np.fromfile(d / lv["file"], dtype="<u8").reshape(-1, 3)
    key = L5.ints(K.unmix_many(vals[:1]))[0]
    other = next(m for m in L5.class_members(key) if m != key)  # same class, not its canonical key
    vals[0] = K.mix_many(L5.array([other]))[0]
    vals = vals[np.lexsort(vals.T[::-1])]
    vals.tofile(d / lv["file"])
    index, _ = K.make_index(vals)
    index.tofile(d / lv["index_file"])
    for name, size, digest in storage.FILE_KEYS:
        lv[size], lv[digest] = (d / lv[name]).stat().st_size, storage.sha256_file(d / lv[name])
    storage.write_manifest(d, manifest)
    bad = verify.verify_table("mct", cache=tmp_path, workers=1, stamp=False, lines=5)
    assert not bad.ok and any("not canonical" in p for p in bad.problems)


def test_claims_are_rechecked_directly(five_cache: Path) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    lib = make_library("mct", 5)
    layers = distance_layers(lib, 3)
    p = tuple(int(v) for v in layers[3][1234])
    ans = t.synthesise(p)
    assert ans.gates is not None
    ok = verify.check_claim("mct", p, 3, ans.gates, cache=five_cache, workers=1, lines=5)
    assert ok.ok and ok.tests == 1, ok.problems
    assert not verify.check_claim("mct", p, 4, None, cache=five_cache, workers=1, lines=5).ok
    # functions of five gates beyond the depth-3 table: the split test over levels 0 and 1
    rng = random.Random(21)
    deeper = []
    while len(deeper) < 2:
        q = np.arange(32)
        for _ in range(5):
            q = rng.choice(lib.gates).apply(q)
        q5 = tuple(int(v) for v in q)
        if t.level_of(q5) is None:
            deeper.append(q5)
    for q5 in deeper:
        m = t.synthesise(q5)  # a depth-3 table settles every optimum up to 6
        assert m.optimal and m.gate_count in (4, 5) and m.method == "meet in the middle"
        res = verify.check_claim("mct", q5, m.gate_count, m.gates, cache=five_cache, workers=1, lines=5)
        assert res.ok and res.tests > 1, res.problems
        low = verify.check_claim("mct", q5, m.gate_count + 1, None, cache=five_cache, workers=1, lines=5)
        assert not low.ok  # there is a circuit of gate_count gates


def test_tables_commands_take_five_lines(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(tmp_path))
    runner = CliRunner()
    built = runner.invoke(main, ["tables", "build", "--lines", "5", "--library", "mct", "--depth", "3", "-q"])
    assert built.exit_code == 0 and "5 lines, depth 3" in built.output
    assert (tmp_path / "tables5-v1" / "mct" / "manifest.json").is_file()
    assert (tmp_path / "tables5-v1" / "mct" / "level-03.u64x3").is_file()
    info = runner.invoke(main, ["tables", "info", "--lines", "5", "--library", "mct"])
    assert info.exit_code == 0 and "exact answers up to 6 gates" in info.output
    counts = runner.invoke(main, ["tables", "counts", "--lines", "5", "--library", "mct"])
    assert counts.exit_code == 0
    rows = [line.split() for line in counts.output.splitlines()[2:]]
    assert [int(r[2].replace(",", "")) for r in rows] == MCT5_COUNTS[:4]
    checked = runner.invoke(main, ["tables", "verify", "--lines", "5", "--library", "mct", "-j", "1", "-q"])
    assert checked.exit_code == 0 and "mct: OK, depth 3" in checked.output
    deep = runner.invoke(main, ["tables", "build", "--lines", "5", "--library", "mct", "--depth", "7"])
    assert deep.exit_code == 2 and deep.stderr.count("\n") == 1 and "deeper than 6" in deep.stderr


# ----------------------------------------------------------------------------- scans, peel, search
def _function_of(lib_name: str, gates: int, seed: int) -> tuple[int, ...]:
    from exactsyn.specification.samples import random_library_function

    return random_library_function(make_library(lib_name, 5), gates, random.Random(seed))


def test_optima_equal_the_sat_path(five_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # A depth-3 table settles up to 6 gates by splits and 7 by peeling one gate off;
    # the reference is the SAT search without tables (cheap bounds only).
    from exactsyn import synthesise
    from exactsyn.sat.options import SearchOptions
    from exactsyn.search.loop import minimise_gates
    from exactsyn.specification.reversible import from_permutation

    monkeypatch.setenv("EXACTSYN_CACHE", str(five_cache))
    lib = make_library("mct", 5)
    methods = set()
    for seed, gates in [(1, 4), (2, 5), (3, 6), (4, 6), (5, 7), (6, 7)]:
        p = _function_of("mct", gates, seed)
        syn = synthesise(p, library="mct")
        ref = minimise_gates(from_permutation(p), lib, SearchOptions(bounds="cheap"))
        assert ref.optimal and ref.circuit is not None
        claim = syn.gate_result.class_table
        assert claim is not None and claim.lines == 5
        if syn.gate_result.source == "class-table":
            assert syn.optimal and syn.gate_count == len(ref.circuit)
            methods.add(claim.method)
        else:  # beyond the table's reach: its bound, then SAT
            assert claim.value <= len(ref.circuit) and syn.gate_count == len(ref.circuit)
    assert "meet in the middle" in methods


def test_the_peel_finds_circuits_one_gate_past_twice_the_depth(five_cache: Path, tmp_path: Path) -> None:
    from exactsyn.tables.deep import ScanSettings

    t = tables.load("mct", cache=five_cache, lines=5)
    beyond = t.synthesise(_function_of("mct", 8, 101))  # seeds picked once: one needs 8 or more,
    assert not beyond.optimal and beyond.lower_bound == 8  # every split and every peel failed
    p = _function_of("mct", 8, 107)  # one needs 7, found by peeling a gate off
    ans = t.synthesise(p)
    assert ans.optimal and ans.gate_count == 7
    assert ans.method == "meet in the middle, one gate peeled" and ans.gates is not None
    assert t.gates.circuit_key(ans.gates) == L5.pack(p)
    res = verify.check_claim("mct", p, 7, ans.gates, cache=five_cache, workers=1, lines=5)
    assert res.ok, res.problems
    # in chunks, on two worker processes, recorded; then resumed from the record alone
    state = tmp_path / "state"
    pooled = t.synthesise(p, scan=ScanSettings(jobs=2, state=state, chunk=128))
    assert pooled.gate_count == 7 and pooled.gates is not None and t.gates.circuit_key(pooled.gates) == L5.pack(p)
    again = t.synthesise(p, scan=ScanSettings(jobs=1, state=state, chunk=128))
    assert again.gate_count == 7 and all(lv.get("resumed_chunks") for lv in again.detail["levels"])
    assert again.detail["peel"]["seconds"] == 0.0


def test_a_state_file_of_another_scan_is_refused(five_cache: Path, tmp_path: Path) -> None:
    from exactsyn.errors import ExactsynError
    from exactsyn.tables.deep import ScanSettings

    t = tables.load("mct", cache=five_cache, lines=5)
    p = _function_of("mct", 6, 7)
    t.synthesise(p, scan=ScanSettings(state=tmp_path, chunk=16))
    files = sorted(tmp_path.glob("scan-*.jsonl"))
    assert files
    first = json.loads(files[0].read_text().splitlines()[0])
    first["scan"]["table"] = "0" * 64
    files[0].write_text(json.dumps(first) + "\n")
    with pytest.raises(ExactsynError, match="another scan"):
        t.synthesise(p, scan=ScanSettings(state=tmp_path, chunk=16))


def test_a_five_line_certificate_is_rechecked_by_check_and_tampering_rejected(
    five_cache: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # The claim is re-derived by the checker's own three-word keys (verify_keys5), not by
    # the kernels that built the table; the reference optimum is the peel test's (7 gates).
    from exactsyn import synthesise
    from exactsyn.proof.checker import check_certificate

    monkeypatch.setenv("EXACTSYN_CACHE", str(five_cache))
    p = _function_of("mct", 8, 107)
    cert = tmp_path / "cert"
    syn = synthesise(p, library="mct", certificate=cert)
    assert syn.optimal and syn.gate_count == 7 and syn.gate_result.source == "class-table"
    data = json.loads((cert / "result.json").read_text())
    claim = data["class_table"]
    assert (claim["lines"], claim["format"], claim["depth"], claim["value"]) == (5, "exactsyn-tables5/1", 3, 7)
    out = CliRunner().invoke(main, ["check", str(cert)])
    assert out.exit_code == 0, out.output
    assert "5-line mct depth-3 table" in out.output

    def tampered(name: str, change: dict[str, object], extra: list[dict[str, object]] | None = None) -> Path:
        d = tmp_path / name
        shutil.copytree(cert, d)
        new = json.loads((d / "result.json").read_text())
        new["class_table"].update(change)
        if extra:
            new["circuit"] += extra
            new["gate_count"] = new["lower_bound"] = len(new["circuit"])
        (d / "result.json").write_text(json.dumps(new))
        return d

    assert not check_certificate(tampered("hash", {"content_hash": "0" * 64})).ok
    assert not check_certificate(tampered("bound", {"exact": False, "value": 8})).ok  # a 7-gate split exists
    # an optimum claimed for a longer circuit (two more gates that cancel): the split test finds
    # the shorter one (a function of at most 5 gates, so the claim stays within what depth 3 checks)
    short = tmp_path / "short"
    five = synthesise(_function_of("mct", 5, 2), library="mct", certificate=short)
    assert five.optimal and five.gate_count <= 5
    cert = short
    x0 = {"type": "x", "target": 0, "controls": [], "negative_controls": []}
    longer = check_certificate(tampered("longer", {"value": five.gate_count + 2}, [x0, x0]))
    assert not longer.ok
    assert any(line.what == "class table" and "fewer than" in line.detail for line in longer.lines), longer.lines
    # a damaged table file: the recorded hashes no longer match
    cert = tmp_path / "cert"
    copy = tmp_path / "copy"
    shutil.copytree(storage.table_dir("mct", five_cache, 5), storage.table_dir("mct", copy, 5))
    path = storage.table_dir("mct", copy, 5) / storage.level_file(3, L5.words)
    raw = bytearray(path.read_bytes())
    raw[240] ^= 0x10
    path.write_bytes(bytes(raw))
    monkeypatch.setenv("EXACTSYN_CACHE", str(copy))
    rep = check_certificate(cert)
    assert not rep.ok and any(line.what == "class table" and not line.ok for line in rep.lines)


def _chi_row(v: int) -> int:
    """FIPS 202, section 3.2.3 (from memory): a[x] ^= ¬a[x+1] ∧ a[x+2], x mod 5; bit x is a[x]."""
    a = [(v >> x) & 1 for x in range(5)]
    return sum((a[x] ^ ((1 - a[(x + 1) % 5]) & a[(x + 2) % 5])) << x for x in range(5))


def _ascon_sbox(v: int) -> int:
    """The bit-sliced S-box of ASCON (NIST SP 800-232; from memory), x0 the most significant bit."""
    x = [(v >> (4 - i)) & 1 for i in range(5)]
    x[0] ^= x[4]
    x[4] ^= x[3]
    x[2] ^= x[1]
    t = [(1 - x[i]) & x[(i + 1) % 5] for i in range(5)]
    x = [x[i] ^ t[(i + 1) % 5] for i in range(5)]
    x[1] ^= x[0]
    x[0] ^= x[4]
    x[3] ^= x[2]
    x[2] ^= 1
    return sum(x[i] << (4 - i) for i in range(5))


def test_the_cipher_instances_are_the_standards_maps() -> None:
    from exactsyn.specification.loader import load_any

    root = Path(__file__).resolve().parents[2] / "instances"
    for name, reference in (("keccak-chi5.toml", _chi_row), ("ascon-sbox5.toml", _ascon_sbox)):
        spec, _ = load_any(root / name)
        assert spec.lines == 5 and spec.permutation == tuple(reference(v) for v in range(32)), name
    # the 13-gate instance: χ, then a Toffoli with 4 controls on line 0 (outputs 30 and 31 exchanged)
    spec, _ = load_any(root / "keccak-chi5-then-c4x.qasm")
    exchange = {30: 31, 31: 30}
    assert spec.permutation == tuple(exchange.get(_chi_row(v), _chi_row(v)) for v in range(32))


def test_five_line_descents_count_and_cost_as_sat_does_and_are_rechecked(
    five_cache: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # The descent over the 5-line table (every optimal circuit, up to commuting gates) against
    # the SAT enumeration and the SAT cost search without tables; the checker re-runs it.
    from exactsyn import synthesise
    from exactsyn.proof.checker import check_certificate

    monkeypatch.setenv("EXACTSYN_CACHE", str(five_cache))
    for seed in (9,):  # a 5-gate function with 6 classes of optimal circuits
        p = _function_of("mct", 5, seed)
        counted = synthesise(p, library="mct", optima="count", certificate=tmp_path / f"count{seed}")
        sat_count = synthesise(p, library="mct", optima="count", bounds="cheap")
        ours, theirs = counted.optima, sat_count.optima
        assert ours is not None and theirs is not None
        assert ours.class_table is not None and theirs.class_table is None  # descent, then SAT listing
        assert ours.complete and theirs.complete and ours.count == theirs.count
        cheapest = synthesise(p, library="mct", objective="gates-then-cost", cost="t-count",
                              certificate=tmp_path / f"cost{seed}")  # fmt: skip
        sat_cheapest = synthesise(p, library="mct", objective="gates-then-cost", cost="t-count", bounds="cheap")
        mine, ref = cheapest.objective_result, sat_cheapest.objective_result
        assert mine is not None and ref is not None
        assert mine.class_table is not None and ref.class_table is None and mine.optimal and ref.optimal
        assert mine.value == ref.value
        for name in (f"count{seed}", f"cost{seed}"):
            report = check_certificate(tmp_path / name)
            assert report.ok, report.lines
            assert any("descent over the 5-line mct table re" in line.detail for line in report.lines), report.lines


def test_targets_sharing_conjugates_are_scanned_once(five_cache: Path) -> None:
    # f is fixed by swapping lines 0 and 1 (its gates come in commuting mirrored pairs), so the
    # peel's targets g∘f come in pairs with the same conjugates
    from exactsyn.core.gates import x_gate

    gates = [x_gate(2, [0]), x_gate(2, [1]), x_gate(3, [0, 1]), x_gate(4, [2, 3]), x_gate(0, [4]), x_gate(1, [4])]
    lib = make_library("mct", 5)
    f = L5.pack(Circuit(5, tuple(gates)).permutation())
    assert L5.conjugate(f, (1, 0, 2, 3, 4)) == f
    t = tables.load("mct", cache=five_cache, lines=5)
    targets = sorted({L5.compose(L5.pack(g.permutation(5)), f) for g in lib.gates})
    keys, whose = t._conjugates(targets)
    each = [len({L5.conjugate(x, s) for s in L5.relabellings}) for x in targets]
    assert len(keys) < sum(each)  # shared conjugates are kept once
    assert set(L5.ints(keys)) == {L5.conjugate(x, s) for x in targets for s in L5.relabellings}
    for key, (j, sigma) in zip(L5.ints(keys), whose, strict=True):
        assert L5.conjugate(targets[j], sigma) == key

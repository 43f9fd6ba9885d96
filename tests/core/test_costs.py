"""Cost models: published gate costs, Clifford+T counts read back by qiskit, user tables."""

from __future__ import annotations

import json
import random
from pathlib import Path

import pytest
from optional import need

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import decompose
from exactsyn.core.costs import COST_MODELS, circuit_cost, cost_model, gate_name, load_cost_table
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.qasm import clifford_t_to_qasm2 as to_qasm2

NCV = COST_MODELS["ncv"]


def test_builtin_models_are_registered() -> None:
    assert {"gates", "ncv", "t-count", "cnot-count"} <= set(COST_MODELS)
    for name, model in COST_MODELS.items():
        assert model.name == name and model.description
        assert cost_model(name.upper()) is model


def test_gate_count_model() -> None:
    c = Circuit(4, (x_gate(0), x_gate(1, (0,)), x_gate(3, (0, 1, 2)), swap_gate(0, 1), peres_gate(0, 1, 2)))
    assert circuit_cost(c, COST_MODELS["gates"]) == len(c.gates)


def test_ncv_published_costs() -> None:
    # NOT and CNOT cost 1 each, Toffoli 5 (Barenco et al., Phys. Rev. A 52, 1995).
    assert NCV.cost(x_gate(0), 3) == 1
    assert NCV.cost(x_gate(0, (1,)), 3) == 1
    assert NCV.cost(x_gate(2, (0, 1)), 3) == 5
    # C3X 13, C4X 29: the usual NCV table built on Barenco et al. 1995 (from memory).
    assert NCV.cost(x_gate(3, (0, 1, 2)), 4) == 13
    assert NCV.cost(x_gate(4, (0, 1, 2, 3)), 5) == 29
    # SWAP = 3 CNOTs (common practice).
    assert NCV.cost(swap_gate(0, 1), 2) == 3
    # Fredkin 5 (Smolin & DiVincenzo, Phys. Rev. A 53, 1996).
    assert NCV.cost(swap_gate(0, 1, (2,)), 3) == 5
    # Peres 4 (Hung, Song, Yang, Perkowski, IEEE TCAD 25(9), 2006; from memory).
    assert NCV.cost(peres_gate(0, 1, 2), 3) == 4


def test_ncv_derived_costs() -> None:
    # A swap with c >= 2 controls is C^{c+1}X between two CNOTs (common practice): 13 + 2.
    assert NCV.cost(swap_gate(0, 1, (2, 3)), 4) == NCV.cost(x_gate(1, (0, 2, 3)), 4) + 2 == 15
    # A negative control is a NOT before and after (common practice): +2 each.
    assert NCV.cost(x_gate(2, (0,), (1,)), 3) == 5 + 2
    assert NCV.cost(x_gate(3, (), (0, 1, 2)), 4) == 13 + 6
    assert NCV.cost(swap_gate(0, 1, (), (2,)), 3) == 5 + 2


def _random_circuit(rng: random.Random, n: int) -> Circuit:
    gates: list[Gate] = []
    for _ in range(rng.randrange(1, 7)):
        lines = list(range(n))
        rng.shuffle(lines)
        kind = rng.choice(["x", "swap", "peres"])
        if kind == "peres":
            gates.append(peres_gate(*lines[:3]))
            continue
        k = 1 if kind == "x" else 2
        rest = lines[k:]
        ctl = rest[: rng.randrange(len(rest) + 1)]
        split = rng.randrange(len(ctl) + 1)
        if kind == "x":
            gates.append(x_gate(lines[0], ctl[:split], ctl[split:]))
        else:
            gates.append(swap_gate(lines[0], lines[1], ctl[:split], ctl[split:]))
    return Circuit(n, tuple(gates))


def test_clifford_t_costs_equal_what_qiskit_reads() -> None:
    qasm2 = need("qiskit.qasm2", "qiskit is the test-only reference reader: pip install qiskit")
    rng = random.Random(11)
    for n in (3, 4, 5):
        for _ in range(8):
            c = _random_circuit(rng, n)
            ops = qasm2.loads(to_qasm2(decompose(c))).count_ops()
            assert circuit_cost(c, cost_model("t-count")) == ops.get("t", 0) + ops.get("tdg", 0)
            assert circuit_cost(c, cost_model("cnot-count")) == ops.get("cx", 0)


def test_toffoli_clifford_t_costs() -> None:
    # Nielsen & Chuang 2000, Fig. 4.9: 7 T/T-dagger and 6 CNOT.
    assert COST_MODELS["t-count"].cost(x_gate(2, (0, 1)), 3) == 7
    assert COST_MODELS["cnot-count"].cost(x_gate(2, (0, 1)), 3) == 6


def test_min_cost_reports_zero_cost_gates() -> None:
    gates = [x_gate(0), x_gate(1, (0,)), x_gate(2, (0, 1))]
    assert COST_MODELS["t-count"].min_cost(gates, 3) == 0
    assert NCV.min_cost(gates, 3) == 1


# ---------------------------------------------------------------------------- user tables
def _write(tmp_path: Path, name: str, text: str) -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_toml_table(tmp_path: Path) -> None:
    p = _write(tmp_path, "mine.toml", "NOT = 1\nCNOT = 2\nToffoli = 9\nnegative_control = 3\n")
    model = load_cost_table(p)
    c = Circuit(3, (x_gate(0), x_gate(1, (0,)), x_gate(2, (0,), (1,))))
    assert circuit_cost(c, model) == 1 + 2 + 9 + 3
    assert cost_model(str(p)).rule == model.rule
    model.check(c.gates)


def test_json_table(tmp_path: Path) -> None:
    table = {"NOT": 2, "CNOT": 3, "Toffoli": 4, "C3X": 6, "SWAP": 7, "Fredkin": 8, "C2SWAP": 9, "Peres": 5}
    model = load_cost_table(_write(tmp_path, "t.json", json.dumps(table)))
    gates = [
        x_gate(0), x_gate(0, (1,)), x_gate(0, (1, 2)), x_gate(0, (1, 2, 3)),
        swap_gate(0, 1), swap_gate(0, 1, (2,)), swap_gate(0, 1, (2, 3)), peres_gate(0, 1, 2),
    ]  # fmt: skip
    assert [model.cost(g, 4) for g in gates] == [2, 3, 4, 6, 7, 8, 9, 5]
    assert model.cost(x_gate(0, (), (1,)), 4) == 3  # negative_control defaults to 0


def test_missing_gate_is_named(tmp_path: Path) -> None:
    model = load_cost_table(_write(tmp_path, "t.toml", "NOT = 1\nCNOT = 1\n"))
    assert model.cost(x_gate(0, (1,)), 3) == 1
    with pytest.raises(ExactsynError, match="no cost for Toffoli"):
        model.cost(x_gate(2, (0, 1)), 3)
    with pytest.raises(ExactsynError, match="no cost for Peres"):
        model.check([x_gate(0), peres_gate(0, 1, 2)])
    with pytest.raises(ExactsynError, match="no cost for C3X"):
        circuit_cost(Circuit(4, (x_gate(3, (0, 1, 2)),)), model)


@pytest.mark.parametrize(
    "text, message",
    [
        ("NOT = 1.5\n", "integer >= 1"),
        ('NOT = "1"\n', "integer >= 1"),
        ("NOT = true\n", "integer >= 1"),
        ("NOT = 0\n", "integer >= 1"),
        ("NOT = -2\n", "integer >= 1"),
        ("NOT = 1\nnegative_control = -1\n", "integer >= 0"),
        ("Tofoli = 5\n", "unknown gate name 'Tofoli'"),
        ("C2Y = 5\n", "unknown gate name"),  # C2X is Toffoli (an accepted spelling), C2Y nothing
        ("[costs]\nNOT = 1\n", "unknown gate name 'costs'"),
        ("NOT = \n", "not valid TOML"),
    ],
)
def test_bad_toml_tables(tmp_path: Path, text: str, message: str) -> None:
    with pytest.raises(ExactsynError, match=message) as info:
        load_cost_table(_write(tmp_path, "bad.toml", text))
    assert "\n" not in str(info.value)


@pytest.mark.parametrize(
    "text, message",
    [
        ('{"NOT": 5.0}', "integer >= 1"),
        ('{"NOT": 0}', "integer >= 1"),
        ("[1, 2]", "expected an object"),
        ("{NOT: 1}", "not valid JSON"),
    ],
)
def test_bad_json_tables(tmp_path: Path, text: str, message: str) -> None:
    with pytest.raises(ExactsynError, match=message):
        load_cost_table(_write(tmp_path, "bad.json", text))


def test_bad_model_names_and_paths(tmp_path: Path) -> None:
    with pytest.raises(ExactsynError, match="unknown cost model 'qcost'"):
        cost_model("qcost")
    with pytest.raises(ExactsynError, match="cannot read cost table"):
        cost_model(str(tmp_path / "absent.toml"))
    with pytest.raises(ExactsynError, match=r"\.toml or \.json"):
        load_cost_table(_write(tmp_path, "costs.txt", "NOT = 1\n"))


def test_cost_tables_accept_the_qasm_names_exactsyn_writes_and_cost_models_the_json_spelling(
    tmp_path: Path,
) -> None:
    lines = 5
    gates = [x_gate(0), x_gate(1, [0]), x_gate(2, [0, 1]), x_gate(4, [0, 1, 2]), swap_gate(0, 1), swap_gate(0, 1, [2]),
             swap_gate(0, 1, [2, 3]), peres_gate(0, 1, 2)]
    trade = {"NOT": 1, "CNOT": 2, "Toffoli": 3, "C3X": 4, "SWAP": 5, "Fredkin": 6, "C2SWAP": 7, "Peres": 8}
    qasm = {"x": 1, "cx": 2, "ccx": 3, "xc3": 4, "swap": 5, "cswap": 6, "swapc2": 7, "peres": 8}
    counted = {"C0X": 1, "C1X": 2, "C2X": 3, "c3x": 4, "C0SWAP": 5, "C1SWAP": 6, "c2swap": 7, "PERES": 8}
    models = []
    for i, table in enumerate((trade, qasm, counted)):
        f = tmp_path / f"t{i}.json"
        f.write_text(json.dumps(table))
        models.append(load_cost_table(f))
    for g in gates:
        # the name the OpenQASM writer gives the gate (its last statement) is read as the gate's name
        statement = _plain_qasm(Circuit(lines, (g,))).strip().splitlines()[-1]
        assert gate_name(statement.split()[0]) == g.name(), statement
        assert len({m.cost(g, lines) for m in models}) == 1, g.name()
    assert [models[1].cost(g, lines) for g in gates] == [1, 2, 3, 4, 5, 6, 7, 8]
    twice = tmp_path / "twice.json"
    twice.write_text(json.dumps({"Toffoli": 3, "ccx": 4}))
    with pytest.raises(ExactsynError, match="costed twice"):
        load_cost_table(twice)
    assert cost_model("t_count") is cost_model("t-count") is COST_MODELS["t-count"]
    assert cost_model("CNOT_count") is COST_MODELS["cnot-count"]


def _plain_qasm(circuit: Circuit) -> str:
    from exactsyn.io.qasm import to_qasm2 as plain

    return plain(circuit)

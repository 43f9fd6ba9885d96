"""The public API at the package root: one entry point, a result object, re-exports, no cycles."""

from __future__ import annotations

import importlib
import json
import pkgutil
import subprocess
import sys
from pathlib import Path

import pytest
from helpers import perm_from_bits

import exactsyn as ex
from exactsyn.io.formats import format_for

ROOT = Path(__file__).resolve().parent.parent


def test_the_readme_example_runs(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # The Python example of the README, taken from the README and run as written (in a temporary directory).
    readme = (ROOT / "README.md").read_text()
    block = readme.split("```python\n", 1)[1].split("```", 1)[0]
    assert "import exactsyn as ex" in block and "write_qasm3" in block
    monkeypatch.chdir(tmp_path)
    scope: dict[str, object] = {}
    exec(compile(block, "README.md", "exec"), scope)
    res = scope["res"]
    assert isinstance(res, ex.Synthesis)
    # (3 7) on 3 lines is a Toffoli gate onto line 2: 1 gate, T-count 7 (Nielsen & Chuang 2000).
    assert res.circuit is not None and len(res.circuit) == 1 and res.optimal and res.lower_bound == 1
    assert res.objective_result is not None and res.objective_result.value == 7
    written = [p for p in tmp_path.iterdir() if p.suffix.startswith(".qasm")]
    assert len(written) == 1
    # the file name the example picks makes the command line read it as the version written
    assert format_for(str(written[0]), None) == "qasm3"
    assert ex.read_circuit(written[0]).permutation() == res.spec.outputs
    assert ex.check_certificate(tmp_path / "cert").ok


def test_the_readme_says_where_the_comment_lines_of_a_qasm_file_are(tmp_path: Path) -> None:
    from click.testing import CliRunner

    from exactsyn.cli import main

    readme = " ".join((ROOT / "README.md").read_text().split())
    assert "comment lines after the version and include lines" in readme
    for version, name in (("2.0", "c.qasm"), ("3.0", "c.qasm3")):
        run = CliRunner().invoke(main, ["synth", "--cycles", "(3 7)", "-q", "-o", str(tmp_path / name)])
        assert run.exit_code == 0, run.output
        lines = (tmp_path / name).read_text().splitlines()
        assert lines[0] == f"OPENQASM {version};" and lines[1].startswith("include ")
        assert lines[2].startswith("// exactsyn ") and lines[3].startswith("// 1 gate, proven optimal")


def test_synthesise_accepts_a_list_a_spec_or_a_spec_file() -> None:
    swap = perm_from_bits(2, lambda a, b: (b, a))  # SWAP = 3 CNOTs (common practice)
    by_list = ex.synthesise(swap, library="nct")
    by_spec = ex.synthesise(ex.from_permutation(swap), library=ex.make_library("nct", 2))
    by_file = ex.synthesise(ROOT / "instances" / "hwb4.toml", library="mct", time_limit=600)
    assert by_list.gate_count == by_spec.gate_count == 3 and by_list.optimal
    # hwb4 needs 11 MCT gates (Golubitsky, Falconer, Maslov, DAC 2010; from memory — also in test_search).
    assert by_file.gate_count == 11 and by_file.optimal
    assert [q.k for q in by_list.steps] == [q.k for q in by_list.gate_result.steps]


def test_bad_options_raise_one_error_type() -> None:
    for kwargs in (
        {"objective": "area"},
        {"time_limit": 0},
        {"jobs": 0},
        {"optima": "every"},
        {"optima": "all", "objective": "depth"},
        {"library": "nct", "max_controls": -1},
    ):
        with pytest.raises(ex.ExactsynError):
            ex.synthesise([1, 0, 3, 2], **kwargs)  # type: ignore[arg-type]
    with pytest.raises(ex.ExactsynError):
        ex.synthesise("no-such-file.toml")


def test_parity_obstruction_is_no_circuit_error() -> None:
    # NCT on 4 lines realises only even permutations (Shende et al., IEEE TCAD 2003).
    odd = list(range(16))
    odd[0], odd[1] = 1, 0
    with pytest.raises(ex.NoCircuitError):
        ex.synthesise(odd, library="nct")


def test_optima_and_notes() -> None:
    res = ex.synthesise(ex.parse_cycles("(5 6)"), optima="count")
    assert res.optima is not None and res.optima.count >= 1 and res.optima.circuits == ()
    listed = ex.synthesise(ex.parse_cycles("(5 6)"), optima="all")
    assert listed.optima is not None and len(listed.optima.circuits) == res.optima.count
    assert all(c.permutation() == listed.spec.outputs for c in listed.optima.circuits)


def test_root_exports_every_name_of_all() -> None:
    for name in ex.__all__:
        assert getattr(ex, name) is not None, name
    with pytest.raises(AttributeError):
        ex.no_such_name  # noqa: B018


def _modules() -> list[str]:
    pkg = importlib.import_module("exactsyn")
    found = (m.name for m in pkgutil.walk_packages(pkg.__path__, "exactsyn."))
    return sorted(name for name in found if name != "exactsyn.__main__")  # that one runs the command line


@pytest.mark.parametrize("module", _modules())
def test_every_module_imports_on_its_own(module: str) -> None:
    # A fresh interpreter per module: an import cycle fails here whichever module comes first.
    r = subprocess.run([sys.executable, "-c", f"import {module}"], capture_output=True, text=True, cwd=ROOT)
    assert r.returncode == 0, r.stderr


def test_the_checker_imports_no_sat_solver() -> None:
    code = (
        "import sys, exactsyn.proof.checker; "
        "print(sorted(m for m in sys.modules if m.startswith(('pysat.solvers', 'pysolvers'))))"
    )
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert r.returncode == 0 and json.loads(r.stdout.replace("'", '"')) == []


def test_clear_caches_empties_every_registered_cache() -> None:
    from exactsyn import caches

    ex.synthesise(ex.parse_cycles("(1 2)"), library="nct")
    assert any(size for size, _ in caches.info().values())
    ex.clear_caches()
    assert all(size == 0 for size, _ in caches.info().values())

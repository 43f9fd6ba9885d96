"""What synth, check, table and batch print: one summary, honest counts, no sentinels, live progress.

References: the SWAP of two lines needs 3 CNOTs and a Toffoli is 1 gate (common practice);
everything else is compared with the structure of the output itself.
"""

from __future__ import annotations

import io
import json
import re
import time
from pathlib import Path

from click.testing import CliRunner
from rich.console import Console

import exactsyn as ex
from exactsyn.cli import main
from exactsyn.cli.synth_display import SynthDisplay, event_line, query_line
from exactsyn.sat.query import Query
from exactsyn.sat.status import Status
from exactsyn.search.events import SearchEvent

TOFFOLI = "0,1,2,3,4,5,7,6"


def invoke(*args: str) -> tuple[int, str, str]:
    r = CliRunner().invoke(main, list(args))
    return r.exit_code, r.stdout, r.stderr


def test_summary_is_printed_once() -> None:
    code, out, err = invoke("synth", "--perm", TOFFOLI)  # text on stdout: the header carries it
    assert code == 0 and out.startswith("# 1 gate, proven optimal") and err == ""
    code, out, err = invoke("synth", "--perm", TOFFOLI, "--format", "json")  # no header: stderr has it
    assert code == 0 and err.count("proven optimal") == 1 and "proven optimal" not in out


def test_no_plural_for_one_and_no_sentinel_depth(tmp_path: Path) -> None:
    code, out, err = invoke("synth", "--perm", TOFFOLI, "--format", "json", "-q")
    data = json.loads(out)
    assert data["table_bound"]["depth"] == "full"  # a table of every 3-line function
    code, out, _ = invoke("synth", "--perm", TOFFOLI)
    assert "1 gates" not in out and "at least 1 gate)" in out
    d = tmp_path / "cert"
    assert invoke("synth", "--perm", TOFFOLI, "--certificate", str(d), "-q")[0] == 0
    assert json.loads((d / "result.json").read_text())["table_bound"]["depth"] == "full"
    code, out, _ = invoke("check", str(d))
    assert code == 0 and "1 gate," in out and "1 gates" not in out
    for text in (out, json.dumps(data)):
        assert "1000000" not in text and "(s)" not in text


def test_check_says_the_table_covered_k_without_proof_files(tmp_path: Path) -> None:
    d = tmp_path / "cert"
    # SWAP of lines 0 and 1: 3 CNOTs; the full 3-line table covers k = 1..2, no LRAT file is written
    assert invoke("synth", "--cycles", "(1 2)", "--certificate", str(d), "-q")[0] == 0
    assert not list(d.glob("*.lrat.gz"))
    code, out, _ = invoke("check", str(d))
    assert code == 0 and "excluded by the distance table" in out and "refuted by checked LRAT" not in out
    cheap = tmp_path / "cheap"
    assert invoke("synth", "--cycles", "(1 2)", "--certificate", str(cheap), "--bounds", "cheap", "-q")[0] == 0
    code, out, _ = invoke("check", str(cheap))
    assert code == 0 and "refuted by checked LRAT proofs" in out and "distance table" not in out


def test_optima_count_prints_only_the_count() -> None:
    code, out, err = invoke("synth", "--cycles", "(5 6)", "--optima", "count")
    listed = ex.synthesise(ex.parse_cycles("(5 6)"), optima="all")
    assert listed.optima is not None
    assert code == 0 and out == f"{listed.optima.count}\n"
    assert "gates (application order)" not in out and "optimal circuit" in err


def test_qasm_header_names_count_proof_bound_library_and_version(tmp_path: Path) -> None:
    for fmt in ("qasm2", "qasm3"):
        for extra in ([], ["--clifford-t"]):
            code, out, _ = invoke("synth", "--perm", TOFFOLI, "--format", fmt, "-q", *extra)
            head = [line for line in out.splitlines()[:6] if line.startswith("//")]
            assert code == 0 and head[0] == f"// exactsyn {ex.__version__}"
            assert head[1] == "// 1 gate, proven optimal (lower bound 1)" and head[2] == "// library: nct"


def test_batch_names_unfinished_generated_items_by_index_and_permutation(tmp_path: Path) -> None:
    store = tmp_path / "b.sqlite"
    code, out, _ = invoke(
        "batch", "--random", "4", "--sample", "2", "--seed", "3", "--library", "mct", "--time-limit", "0.001",
        "--store", str(store), "-q",
    )
    assert code == 1
    listed = [line for line in out.splitlines() if line.strip().startswith("timeout")]
    assert listed and all(re.search(r"random:4 #\d+ \((\d+,){15}\d+\)", line) for line in listed), out


def test_table_counts_in_words(tmp_path: Path) -> None:
    store = tmp_path / "one.sqlite"
    assert invoke("batch", "--every", "1", "--store", str(store), "-q", "--no-certificates")[0] == 0
    code, out, _ = invoke("table", "--store", str(store))
    assert code == 0 and "2 functions from 2 stored items" in out
    assert not re.search(r"\b1 (functions|items|entries|gates)\b", out)


def _progress_text(events: list[object]) -> str:
    buf = io.StringIO()
    console = Console(file=buf, force_terminal=True, width=120)
    with SynthDisplay("live", console) as p:
        for e in events:
            p(e)
    return buf.getvalue()


def test_live_progress_shows_the_table_the_excluded_k_and_each_answer() -> None:
    q = Query("gates", 12, None, Status.UNKNOWN, 3.5, None, 1412, 27056, "Kissat 4.0.4")
    text = _progress_text(
        [
            SearchEvent("fallback", value=23, detail="transformation-based synthesis"),
            SearchEvent("table-start", k=8, detail="distance table of nct"),
            SearchEvent("table-done", k=8, value=12, seconds=8.1, detail="distance table of nct"),
            SearchEvent("table-bound", low=8, high=11, detail="distance table of nct"),
            SearchEvent("query-start", k=12, seconds=40.0),
            q,
        ]
    )
    assert "k = 8..11 excluded by the table" in text
    assert "upper bound: 23 gates" in text and "distance table of nct: done in 8.1 s" in text
    assert "k=12" in text and "conflicts not reported" in text and "0 conflicts" not in text
    assert event_line(SearchEvent("table-bound", low=9, high=9)) == "k = 9 excluded by the table"
    assert "7 conflicts" in query_line(Query("gates", 3, None, Status.UNSAT, 0.1, 7, 10, 20, "cadical195"))


def test_progress_is_off_on_a_pipe_unless_asked_and_quiet_contradicts_it() -> None:
    code, _, err = invoke("synth", "--cycles", "(1 2)", "--bounds", "cheap", "--format", "json")
    assert code == 0 and "k=2" not in err
    code, _, err = invoke("synth", "--cycles", "(1 2)", "--bounds", "cheap", "--format", "json", "--progress")
    assert code == 0 and "k=2" in err and "UNSAT" in err
    code, _, err = invoke("synth", "--cycles", "(1 2)", "--bounds", "cheap", "--format", "json", "--progress", "-q")
    assert code == 2 and err.count("\n") == 1 and "-q and --progress" in err  # a contradiction, not a silent -q


def test_quiet_and_progress_together_are_refused_by_every_command_that_has_both(tmp_path: Path) -> None:
    circuit = tmp_path / "c.qasm"
    circuit.write_text('OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[2];\ncx q[0],q[1];\n')
    for args in (["synth", "--cycles", "(1 2)"], ["optimise", str(circuit)], ["tables", "build", "--lines", "2"]):
        code, out, err = invoke(*args, "-q", "--progress")
        assert code == 2 and out == "" and err.count("\n") == 1 and "contradict" in err, (args, err)


def test_a_cost_model_without_a_cost_objective_is_refused_not_ignored(tmp_path: Path) -> None:
    code, out, err = invoke("synth", "--cycles", "(6 7)", "--cost", "t-count")
    assert code == 2 and out == "" and "--objective" in err and err.count("\n") == 1
    code, out, err = invoke("synth", "--cycles", "(6 7)", "--cost", "t-count", "--objective", "gates-then-cost")
    assert code == 0, err
    table = tmp_path / "costs.toml"  # a cost file adds its own column to the printed costs: not ignored
    table.write_text("NOT = 1\nCNOT = 2\nToffoli = 9\n")
    code, out, err = invoke("synth", "--cycles", "(6 7)", "--cost", str(table), "--library", "nct")
    assert code == 0 and "table:costs.toml 9" in out, err


def test_with_an_objective_the_header_tells_the_gate_optimum_from_the_printed_circuit() -> None:
    code, out, err = invoke("synth", "--cycles", "(1 2)(5 6)", "--objective", "depth")
    assert code == 0, err
    header = [line for line in out.splitlines() if line.startswith("# ")]
    assert header[0].startswith("# gate optimum: ")
    gates = re.search(r"gates \(application order\): (.*)", out).group(1)  # type: ignore[union-attr]
    printed = len(gates.split("  "))
    assert f"the circuit has {printed} gate" in header[1]


def test_a_class_table_is_looked_up_not_built() -> None:
    text = _progress_text([SearchEvent("table-lookup", k=9, detail="4-line class table of mct")])
    assert "looking the function up in the 4-line class table of mct" in text and "building" not in text


def test_plain_progress_says_every_few_seconds_what_still_runs() -> None:
    buf = io.StringIO()
    with SynthDisplay("plain", Console(file=buf, width=120)) as p:
        p.every = 0.2
        p(SearchEvent("objective-start", detail="depth"))
        time.sleep(1.0)
    lines = buf.getvalue().splitlines()
    assert lines[0] == "gate count settled; optimising the depth …"
    assert len([x for x in lines if x.startswith("gate count settled; optimising the depth … 0:0")]) >= 2, lines


def test_a_long_table_scan_is_timed_from_its_start_not_from_its_last_chunk() -> None:
    buf = io.StringIO()
    step = "5-line class table of mct: split after 6 gates"
    with SynthDisplay("plain", Console(file=buf, width=120)) as p:
        p.every = 0.2
        p(SearchEvent("table-scan", low=0, high=100, detail=step))
        start = p.now.since
        for done in (10, 20, 30):
            time.sleep(0.4)
            p(SearchEvent("table-scan", low=done, high=100, detail=step))
        assert p.now.since == start  # the same scan: the timer runs on
        p(SearchEvent("table-scan", low=0, high=100, detail="one gate and a split after 6"))
        assert p.now.since > start  # a new scan: a new timer
    # chunks came every 0.4 s; the heartbeat counts the scan's time (a second after 1.2 s)
    assert any(x.endswith("classes … 0:01 elapsed") for x in buf.getvalue().splitlines()), buf.getvalue()

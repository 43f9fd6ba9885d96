"""The batch item key (exactsyn.batch.task.item_key): one key per problem, never one for two.

A resumed batch skips every item whose key is already in the store, and a plan merges
spec files whose keys are equal, so two different problems with one key lose a result.
The reference for "different problems" is the optimum: a NAND onto a line held at 1 is one
Toffoli, onto a line held at 0 it needs two gates (common practice: the Toffoli flips the
constant), and a constant the solver may choose (``"?"``) takes the better of the two.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from exactsyn.batch.plan import plan_files
from exactsyn.batch.task import LibraryChoice, item_key
from exactsyn.core.library import make_library
from exactsyn.sat.encode import EncodingOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.loader import load_any

NAND = """{name}inputs = ["a", "b"]
outputs = ["y"]
lines = 3
output_lines = [2]
[expressions]
y = "~(a & b)"
[constants]
2 = {constant}
"""


def _nand_files(directory: Path, named: bool = True) -> tuple[Path, Path]:
    """Two spec files that differ only in the constant of line 2: ``0`` versus ``"?"``."""
    directory.mkdir(exist_ok=True)
    fixed, chosen = directory / "nand-zero.toml", directory / "nand-chosen.toml"
    fixed.write_text(NAND.format(name='name = "nand-zero"\n' if named else "", constant="0"))
    chosen.write_text(NAND.format(name='name = "nand-chosen"\n' if named else "", constant='"?"'))
    return fixed, chosen


def test_a_chosen_constant_and_a_fixed_zero_get_different_keys(tmp_path: Path) -> None:
    fixed, chosen = (load_any(f)[0] for f in _nand_files(tmp_path))
    # the rows alone do not tell the two apart: only the solver's freedom differs
    assert (fixed.lines, fixed.outputs, fixed.care) == (chosen.lines, chosen.outputs, chosen.care)
    assert fixed.open_lines == () and chosen.open_lines == (2,)
    lib = make_library("nct", 3)
    # ... and they are different problems (see the module docstring)
    assert len(minimise_gates(fixed, lib).circuit or ()) == 2
    assert len(minimise_gates(chosen, lib).circuit or ()) == 1
    assert item_key(fixed, lib, EncodingOptions()) != item_key(chosen, lib, EncodingOptions())


def test_solver_placed_outputs_are_part_of_the_key(tmp_path: Path) -> None:
    fixed, _ = (load_any(f)[0] for f in _nand_files(tmp_path))
    lib, enc = make_library("nct", 3), EncodingOptions()
    # the same rows plus one output whose line the solver picks among lines 0..2, or 0..1
    anywhere = replace(fixed, output_targets=((1, 0, 1, 0, -1, -1, -1, -1),), output_candidates=(0, 1, 2))
    low = replace(anywhere, output_candidates=(0, 1))
    keys = {item_key(s, lib, enc) for s in (fixed, anywhere, low)}
    assert len(keys) == 3
    # the name labels a problem but does not change it
    assert item_key(replace(fixed, name="another name"), lib, enc) == item_key(fixed, lib, enc)


def test_a_plan_keeps_both_files(tmp_path: Path) -> None:
    plan = plan_files(list(_nand_files(tmp_path)), LibraryChoice("nct"), EncodingOptions())
    assert len(plan.items) == 2 and not plan.notes
    assert sorted(item.spec.open_lines for item in plan.items) == [(), (2,)]


def test_a_plan_keeps_the_embedding_of_files_without_a_name(tmp_path: Path) -> None:
    plan = plan_files(list(_nand_files(tmp_path, named=False)), LibraryChoice("nct"), EncodingOptions())
    assert sorted(item.spec.open_lines for item in plan.items) == [(), (2,)]


def test_keys_of_specs_without_choices_are_those_older_stores_hold() -> None:
    # Keys written by exactsyn before the embedding choices entered the key (computed then,
    # kept here): a store started by that version must still resume without redoing them.
    from exactsyn.specification.reversible import Spec, from_permutation

    lib, enc = make_library("nct", 3), EncodingOptions()
    full = from_permutation([1, 0, 3, 2, 5, 7, 4, 6])
    partial = Spec(3, (1, 0, 3, 2, 0, 0, 0, 0), (7, 7, 7, 7, 0, 0, 0, 0))
    assert item_key(full, lib, enc) == "d5056020bf730b1d2a8325008145eb35eeefefe8c4e9b5ea36692c9974414437"
    assert item_key(partial, lib, enc) == "1fa7da73e46a4f280105f2f479c4b6e1ab65cd05bfad36724024ba26dcbdc6f3"

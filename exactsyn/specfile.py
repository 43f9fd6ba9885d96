"""Read a function from a file of any supported kind.

* ``.qasm`` (OpenQASM 2.0 or 3.0, the gate set of :mod:`exactsyn.io.qasm`): the
  circuit's function, as a full permutation, to be resynthesised optimally;
* ``.json``: a saved circuit (as written by ``--format json``), likewise;
* TOML: a permutation spec (``permutation`` / ``cycles``, :mod:`exactsyn.spec`) or a
  Boolean function (``inputs`` / ``outputs``, :mod:`exactsyn.boolspec`), embedded into
  a reversible spec by :mod:`exactsyn.embed`.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from exactsyn.boolspec import function_from_mapping, is_function_mapping
from exactsyn.embed import Embedding, embed
from exactsyn.errors import ExactsynError
from exactsyn.spec import Spec, from_permutation, spec_from_mapping


def load_any(path: str | Path) -> tuple[Spec, Embedding | None]:
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as e:
        raise ExactsynError(f"cannot read spec file {p}: {e.strerror}") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ExactsynError(f"spec file {p} is not UTF-8 text") from None
    stripped = text.lstrip()
    if p.suffix.lower() in (".qasm", ".qasm2", ".qasm3") or stripped.startswith("OPENQASM"):
        from exactsyn.io.qasm import read_qasm

        circ = read_qasm(text)
        return from_permutation(list(circ.permutation()), p.stem), None
    if p.suffix.lower() == ".json" or stripped.startswith("{"):
        from exactsyn.io.jsonio import load_json_circuit

        circ = load_json_circuit(text)
        return from_permutation(list(circ.permutation()), p.stem), None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise ExactsynError(f"malformed spec file {p}: {e}") from None
    if is_function_mapping(data):
        fn = function_from_mapping(data, str(p))
        return embed(fn)
    return spec_from_mapping(data, str(p)), None

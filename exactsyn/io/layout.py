"""Register layout: the names under which a file declared its qubits.

OpenQASM files often declare several quantum registers (``qreg cin[1]; qreg a[4]; ...``).
The reader numbers lines in declaration order (register after register, index after
index) and returns a :class:`Layout` beside the circuit; the circuit itself stays a plain
line count.  :func:`apply_layout` writes OpenQASM produced by the writers of
:mod:`exactsyn.io.qasm` (one register ``q``) back under the file's own registers, and the
JSON form keeps the layout in an optional ``registers`` key (readers that do not know it
ignore it).

The writers are left untouched: the rewrite replaces the one declaration of ``q`` and
each operand ``q[i]``, which are the only places the writers use that name.  The result is
read back and compared by the callers before anything is stored.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from exactsyn.errors import ExactsynError

_IDENT = re.compile(r"[A-Za-z_]\w*")
# Names of gates the writers call or define, and words the language reserves (definition
# arguments are local to their definition, so they may equal a register name).
_RESERVED = frozenset(
    "anc x cx ccx swap cswap peres h t tdg gate qreg creg qubit bit include barrier measure reset opaque if "
    "OPENQASM U CX u1 ctrl negctrl inv pow pi".split()
)


@dataclass(frozen=True)
class Layout:
    """Registers in declaration order: ``(name, size)`` pairs; line numbers follow that order."""

    registers: tuple[tuple[str, int], ...]

    @classmethod
    def single(cls, lines: int) -> Layout:
        """The writers' own layout: one register ``q`` of ``lines`` qubits."""
        return cls((("q", lines),))

    @property
    def lines(self) -> int:
        return sum(size for _, size in self.registers)

    @property
    def is_single(self) -> bool:
        return len(self.registers) == 1 and self.registers[0][0] == "q"

    def operand(self, line: int) -> str:
        """``name[index]`` of a line."""
        at = line
        for name, size in self.registers:
            if at < size:
                return f"{name}[{at}]"
            at -= size
        raise ExactsynError(f"line {line} is outside the {self.lines} qubits of the registers")

    def labels(self) -> list[str]:
        """One label per line, ``name[index]`` (for drawings and reports)."""
        return [self.operand(i) for i in range(self.lines)]

    def to_dict(self) -> list[dict[str, Any]]:
        return [{"name": name, "size": size} for name, size in self.registers]


def layout_from_dict(data: object, lines: int) -> Layout:
    """The ``registers`` value of a JSON circuit (a list of ``{"name", "size"}``), checked against ``lines``."""
    if not isinstance(data, list) or not data:
        raise ExactsynError('circuit: \'registers\' must be a non-empty list of {"name", "size"} objects')
    regs = []
    for item in data:
        if not isinstance(item, dict) or set(item) != {"name", "size"}:
            raise ExactsynError("circuit: each register must be an object with exactly 'name' and 'size'")
        name, size = item["name"], item["size"]
        if not isinstance(name, str) or not _IDENT.fullmatch(name):
            raise ExactsynError(f"circuit: register name {name!r} is not an identifier")
        if isinstance(size, bool) or not isinstance(size, int) or size < 1:
            raise ExactsynError(f"circuit: register '{name}' needs a positive integer size")
        regs.append((name, size))
    layout = Layout(tuple(regs))
    check_layout(layout, lines)
    return layout


def check_layout(layout: Layout, lines: int) -> None:
    """Refuse a layout that does not cover exactly ``lines`` lines or repeats a name."""
    names = [name for name, _ in layout.registers]
    if len(set(names)) != len(names):
        raise ExactsynError(f"register names repeat: {', '.join(names)}")
    if layout.lines != lines:
        raise ExactsynError(f"the registers hold {layout.lines} qubits but the circuit has {lines} lines")


def apply_layout(text: str, layout: Layout) -> str:
    """OpenQASM text written for register ``q`` rewritten for ``layout`` (declarations and operands)."""
    if layout.is_single:
        return text
    for name, _ in layout.registers:
        if not _IDENT.fullmatch(name) or name in _RESERVED or re.fullmatch(r"(xc|swapc)\d+", name):
            raise ExactsynError(f"register name '{name}' clashes with a name the OpenQASM writer uses")
    v3 = text.lstrip().startswith("OPENQASM 3")
    pattern = re.compile(r"^qubit\[(\d+)\] q;$" if v3 else r"^qreg q\[(\d+)\];$", re.M)
    found = pattern.findall(text)
    if len(found) != 1 or int(found[0]) != layout.lines:
        raise ExactsynError("internal error: the OpenQASM text does not declare the expected register q")
    decl = "\n".join(f"qubit[{size}] {name};" if v3 else f"qreg {name}[{size}];" for name, size in layout.registers)
    text = pattern.sub(lambda _: decl, text)
    names = [layout.operand(i) for i in range(layout.lines)]
    return re.sub(r"\bq\[(\d+)\]", lambda m: names[int(m.group(1))], text)

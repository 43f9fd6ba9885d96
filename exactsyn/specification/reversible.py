"""Specifications: what a circuit must compute.

A :class:`Spec` on ``n`` lines lists, for every input ``i`` in ``range(2**n)``, the
required output ``outputs[i]`` and a mask ``care[i]`` of the output bits that are
specified (a bit outside the mask is a don't-care).  A reversible function given in
full is the case where every mask is all ones.

Parsers here read permutations as a list (``1,0,3,2``), in cycle notation
(``(0 1)(2 3)``) or from a TOML mapping of our own format (documented in the README; files are read by
:mod:`exactsyn.specification.loader`).
Line ``l`` is bit ``l`` of the integer (line 0 = least significant bit).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from exactsyn.core.gates import invert_permutation
from exactsyn.errors import ExactsynError, did_you_mean

MAX_LINES = 6


@dataclass(frozen=True)
class Spec:
    """What a circuit on ``lines`` lines must do.

    For every input ``i``: the output bits in ``care[i]`` must equal those of
    ``outputs[i]``.  Two optional freedoms come from embedding irreversible functions
    (:mod:`exactsyn.specification.embed`):

    * ``open_lines`` — constant input lines whose value (the same for every row) the
      solver chooses; specified rows have 0 on those bits and stand for "whatever the
      constant is";
    * ``output_targets`` / ``output_candidates`` — outputs whose line the solver chooses:
      ``output_targets[o][i]`` is 0, 1 or -1 (don't care) for input ``i``, and the
      outputs go to distinct lines among ``output_candidates``.
    """

    lines: int
    outputs: tuple[int, ...]
    care: tuple[int, ...]
    name: str = ""
    open_lines: tuple[int, ...] = ()
    output_targets: tuple[tuple[int, ...], ...] = ()
    output_candidates: tuple[int, ...] = ()

    @property
    def size(self) -> int:
        return 1 << self.lines

    @property
    def full_mask(self) -> int:
        return (1 << self.lines) - 1

    @property
    def has_choices(self) -> bool:
        return bool(self.open_lines or self.output_targets)

    @property
    def is_permutation(self) -> bool:
        """True when every output bit of every row is specified (and nothing is chosen)."""
        return not self.has_choices and all(c == self.full_mask for c in self.care)

    @property
    def permutation(self) -> tuple[int, ...]:
        if not self.is_permutation:
            raise ExactsynError("the specification has don't-cares; it is not a full permutation")
        return self.outputs

    def specified_rows(self) -> list[int]:
        """Inputs with at least one specified output bit (the rows the encoder keeps)."""
        return [r for r in range(self.size) if self.care[r] or any(t[r] >= 0 for t in self.output_targets)]

    def choices(self) -> list[tuple[int, tuple[int, ...]]]:
        """Every (constant bits, output lines) the solver may pick; one entry when none."""
        from itertools import permutations, product

        consts = [
            sum(v << line for v, line in zip(vals, self.open_lines, strict=True))
            for vals in product((0, 1), repeat=len(self.open_lines))
        ]
        placements = list(permutations(self.output_candidates, len(self.output_targets)))
        return [(c, pl) for c in consts for pl in placements]

    def meets(self, perm: tuple[int, ...] | list[int], constants: int = 0, output_lines: tuple[int, ...] = ()) -> bool:
        """Does ``perm`` meet the spec with these choices?"""
        if len(perm) != self.size:
            return False
        for r in self.specified_rows():
            y = int(perm[r | constants])
            if (y ^ self.outputs[r]) & self.care[r]:
                return False
            for t, line in zip(self.output_targets, output_lines, strict=True):
                if t[r] >= 0 and (y >> line & 1) != t[r]:
                    return False
        return True

    def find_choice(self, perm: tuple[int, ...] | list[int]) -> tuple[int, tuple[int, ...]] | None:
        """The first choice under which ``perm`` meets the spec, or ``None``."""
        for c, pl in self.choices():
            if self.meets(perm, c, pl):
                return c, pl
        return None

    def accepts(self, perm: tuple[int, ...] | list[int]) -> bool:
        """Does the permutation ``perm`` meet the specification (under some choice)?"""
        return self.find_choice(perm) is not None

    def is_identity(self) -> bool:
        """Is the spec met by the empty circuit?"""
        return self.accepts(tuple(range(self.size)))

    def changed_lines(self) -> frozenset[int]:
        """Lines whose output must differ from their input on some specified row.

        Open constant lines and chosen output lines are left out (their values are
        not known in advance), so the set stays a sound basis for lower bounds.
        """
        diff = 0
        for i, (o, c) in enumerate(zip(self.outputs, self.care, strict=True)):
            diff |= (i ^ o) & c
        return frozenset(line for line in range(self.lines) if diff >> line & 1 and line not in self.open_lines)

    def inverse(self) -> Spec:
        """The inverse function (full permutations only)."""
        return Spec(self.lines, invert_permutation(self.permutation), self.care, self.name + "^-1" if self.name else "")


def lines_for_length(length: int, what: str = "permutation") -> int:
    if length < 2 or length & (length - 1):
        raise ExactsynError(f"{what} has {length} entries; it must have 2^n entries for n ≥ 1 lines")
    n = length.bit_length() - 1
    if n > MAX_LINES:
        raise ExactsynError(f"{what} is on {n} lines; exactsyn handles at most {MAX_LINES} lines")
    return n


def from_permutation(perm: list[int] | tuple[int, ...], name: str = "") -> Spec:
    """A full reversible function; checks that ``perm`` is a permutation of 0..2^n−1."""
    values = list(perm)
    for v in values:
        if not isinstance(v, int) or isinstance(v, bool):
            raise ExactsynError(f"permutation entry {v!r} is not an integer")
    n = lines_for_length(len(values))
    size = 1 << n
    seen: dict[int, int] = {}
    for i, v in enumerate(values):
        if not 0 <= v < size:
            raise ExactsynError(f"permutation entry {v} at position {i} is outside 0..{size - 1}")
        if v in seen:
            raise ExactsynError(f"not a permutation: {v} appears at positions {seen[v]} and {i}")
        seen[v] = i
    return Spec(n, tuple(values), (size - 1,) * size, name)


def parse_perm(text: str, name: str = "") -> Spec:
    """Parse ``"1,0,3,2"`` (commas and/or spaces, optional brackets)."""
    body = text.strip()
    if body.startswith("[") != body.endswith("]"):
        raise ExactsynError(f"permutation {text!r}: unbalanced brackets")
    body = body.removeprefix("[").removesuffix("]").strip()
    if re.search(r",\s*,", body) or body.startswith(",") or body.endswith(","):
        raise ExactsynError(f"permutation {text!r} has an empty entry (two commas in a row, or one at an end)")
    items = [t for t in re.split(r"[,\s]+", body) if t]
    if not items:
        raise ExactsynError("empty permutation")
    values = []
    for t in items:
        try:
            values.append(int(t, 0))
        except ValueError:
            raise ExactsynError(f"permutation entry {t!r} is not an integer") from None
    return from_permutation(values, name)


_CYCLE_TEXT = re.compile(r"^\s*(\(\s*[^()]*\)\s*)*$")


def parse_cycles(text: str, lines: int | None = None, name: str = "") -> Spec:
    """Parse cycle notation such as ``(0 1)(2 3 5)``; ``()`` is the identity.

    Without ``lines`` the smallest line count (at least 1) that holds every entry is used.
    """
    if not _CYCLE_TEXT.match(text) or "(" not in text:
        raise ExactsynError(f"malformed cycle text {text!r}: expected groups like (0 1)(2 3)")
    cycles: list[list[int]] = []
    for group in re.findall(r"\(([^()]*)\)", text):
        items = [t for t in re.split(r"[,\s]+", group.strip()) if t]
        try:
            cyc = [int(t, 0) for t in items]
        except ValueError:
            raise ExactsynError(f"malformed cycle text {text!r}: entries must be integers") from None
        if any(v < 0 for v in cyc):
            raise ExactsynError(f"malformed cycle text {text!r}: entries must be non-negative")
        if len(set(cyc)) != len(cyc):
            raise ExactsynError(f"malformed cycle text {text!r}: an entry repeats inside a cycle")
        cycles.append(cyc)
    top = max((v for c in cycles for v in c), default=0)
    if lines is None:
        lines = max(1, top.bit_length())
    if not 1 <= lines <= MAX_LINES:
        raise ExactsynError(f"{lines} lines requested; exactsyn handles 1 to {MAX_LINES} lines")
    size = 1 << lines
    if top >= size:
        raise ExactsynError(f"cycle entry {top} does not fit on {lines} lines (0..{size - 1})")
    perm = list(range(size))
    used: set[int] = set()
    for cyc in cycles:
        if used & set(cyc):
            raise ExactsynError(f"malformed cycle text {text!r}: cycles must be disjoint")
        used |= set(cyc)
        for a, b in zip(cyc, cyc[1:] + cyc[:1], strict=True):
            perm[a] = b
    return Spec(lines, tuple(perm), (size - 1,) * size, name)


def spec_from_mapping(data: dict[str, Any], where: str = "spec") -> Spec:
    known = {"name", "description", "lines", "permutation", "cycles"}
    unknown = sorted(set(data) - known)
    if unknown:
        raise ExactsynError(
            f"malformed spec file {where}: unknown key {unknown[0]!r}{did_you_mean(unknown[0], sorted(known))}"
        )
    name = data.get("name", "")
    if not isinstance(name, str):
        raise ExactsynError(f"malformed spec file {where}: 'name' must be a string")
    lines = data.get("lines")
    if lines is not None and (not isinstance(lines, int) or isinstance(lines, bool)):
        raise ExactsynError(f"malformed spec file {where}: 'lines' must be an integer")
    has_perm, has_cyc = "permutation" in data, "cycles" in data
    if has_perm == has_cyc:
        raise ExactsynError(f"malformed spec file {where}: give exactly one of 'permutation' or 'cycles'")
    if has_perm:
        perm = data["permutation"]
        if not isinstance(perm, list):
            raise ExactsynError(f"malformed spec file {where}: 'permutation' must be a list of integers")
        spec = from_permutation(perm, name)
        if lines is not None and lines != spec.lines:
            raise ExactsynError(
                f"malformed spec file {where}: 'lines' = {lines} but the permutation is on {spec.lines} lines"
            )
        return spec
    cyc = data["cycles"]
    if not isinstance(cyc, str):
        raise ExactsynError(f"malformed spec file {where}: 'cycles' must be a string such as \"(0 1)(2 3)\"")
    return parse_cycles(cyc, lines, name)

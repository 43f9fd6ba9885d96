"""An optimisation result as a JSON log and as a short summary for the terminal."""

from __future__ import annotations

from typing import Any

from exactsyn.core.words import count
from exactsyn.optimise.driver import OptimiseResult
from exactsyn.optimise.metrics import FIELDS, LABELS
from exactsyn.version import __version__


def result_to_dict(result: OptimiseResult, **extra: Any) -> dict[str, Any]:
    """The JSON log: settings, measures before and after, replacements per window size,
    the equivalence check and the time (``extra`` keys, e.g. file names, are added first)."""
    return {
        "tool": "exactsyn",
        "version": __version__,
        "command": "optimise",
        **extra,
        "lines": result.input.lines,
        "library": result.library,
        "objective": result.objective,
        "cost_model": result.cost_model,
        "window": result.window,
        "zero_lines": list(result.zero_lines),
        "before": result.before.to_dict(),
        "after": result.after.to_dict(),
        "windows_replaced": [
            {"lines": w.lines, "windows": w.windows, "gates_removed": w.gates_removed, "cost_removed": w.cost_removed}
            for w in result.replaced
        ],
        "rounds": result.rounds,
        "windows_tried": result.windows_tried,
        "windows_settled_lines": _settled(result),
        "resynthesis": result.resynthesis,
        "equivalence": result.check.to_dict() | {"description": result.check.describe()},
        "seconds": round(result.seconds, 3),
    }


def qasm_header(result: OptimiseResult) -> list[str]:
    """The comment lines at the top of an optimised OpenQASM file (the style of ``synth``'s)."""
    return [
        f"exactsyn {__version__}",
        f"{count(result.output.gate_count, 'gate')} (input: {result.input.gate_count}), NOT proven optimal "
        f"(no lower bound: every window of up to {_settled(result)} lines is optimal)",
        f"library: {result.library}",
    ] + ([_scope(result)] if result.zero_lines else [])


def _scope(result: OptimiseResult) -> str:
    lines = ", ".join(map(str, result.zero_lines))
    return f"equal to the input on the inputs with lines {lines} = 0 (clean ancillas: returned to 0)"


def _settled(result: OptimiseResult) -> int:
    """Windows of up to this many lines are proven optimal (5-line windows by bounded SAT may not be)."""
    return result.window if result.settled_lines is None else min(result.window, result.settled_lines)


def _change(before: int, after: int) -> str:
    diff = after - before
    pct = f" ({100.0 * diff / before:+.1f}%)" if before else ""
    return f"{diff:+d}{pct}"


def summary_text(result: OptimiseResult) -> str:
    """A few lines: the settings, a before/after table, the windows replaced, the check."""
    cost = f", cost {result.cost_model}" if result.cost_model else ""
    out = [
        f"optimised {result.input.lines} lines in {result.seconds:.2f} s: library {result.library}, "
        f"objective {result.objective}{cost}, windows of up to {result.window} lines, {count(result.rounds, 'round')}",
        f"{'':<12}{'before':>10}{'after':>10}  change",
    ]
    for name in FIELDS:
        b, a = getattr(result.before, name), getattr(result.after, name)
        out.append(f"{LABELS[name]:<12}{b:>10}{a:>10}  {_change(b, a)}")
    if result.replaced:
        parts = [
            f"{w.windows} window{'s' if w.windows != 1 else ''} of {w.lines} line{'s' if w.lines != 1 else ''} "
            f"(-{count(w.gates_removed, 'gate')})"
            for w in result.replaced
        ]
        out.append("windows replaced: " + ", ".join(parts) + f"; {result.windows_tried} windows tried")
    else:
        settled = "every window was already optimal"
        if _settled(result) < result.window:
            settled = f"windows of up to {_settled(result)} lines were already optimal, not every wider one was settled"
        out.append(f"windows replaced: none ({result.windows_tried} windows tried; {settled})")
    if result.zero_lines:
        out.append("ancilla context: " + _scope(result))
    out.append("equivalence: " + result.check.describe())
    return "\n".join(out) + "\n"

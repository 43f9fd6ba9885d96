"""The package's shape: every import points down the layer order, and functions stay short.

The layer order (DEVELOPERS.md, "Layers") is read from the imports themselves: every
``import`` and ``from … import`` statement of the package, those inside functions included
and those under ``if TYPE_CHECKING:`` left out (they never run).  A module may import its
own subpackage and any subpackage of a lower layer; the graph of subpackages must have no
cycle.
"""

from __future__ import annotations

import ast
from collections import defaultdict
from pathlib import Path

import exactsyn

PACKAGE = Path(exactsyn.__file__).parent

#: Lowest first.  The base layer holds the root modules every layer may use.
LAYERS: tuple[tuple[str, ...], ...] = (
    ("errors", "caches", "version", "cluster"),
    ("core",),
    ("io",),
    ("specification",),
    ("tables",),
    ("sat",),
    ("optimise",),
    ("search",),
    ("proof",),
    ("api",),
    ("batch", "transpiler"),
    ("cli",),
    ("__init__", "__main__"),
)
RANK = {name: rank for rank, names in enumerate(LAYERS) for name in names}
MAX_FUNCTION_LINES = 100


def _unit(module: str) -> str:
    """The subpackage (or root module) a dotted module name belongs to."""
    parts = module.split(".")
    return "__init__" if len(parts) == 1 else parts[1]


def _type_checking_nodes(tree: ast.AST) -> set[int]:
    skip: set[int] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and "TYPE_CHECKING" in ast.unparse(node.test):
            skip.update(id(n) for stmt in node.body for n in ast.walk(stmt))
    return skip


def _imports(path: Path) -> list[tuple[str, int]]:
    """(imported exactsyn module, line) for every import statement that can run."""
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    module = ".".join(rel.parts[:-1] if rel.name == "__init__" else rel.parts)
    package = module if rel.name == "__init__" else module.rpartition(".")[0]
    tree = ast.parse(path.read_text())
    skip = _type_checking_nodes(tree)
    out: list[tuple[str, int]] = []
    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.Import):
            out += [(a.name, node.lineno) for a in node.names if a.name.split(".")[0] == "exactsyn"]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "exactsyn":
                continue
            subs = [f"{target}.{a.name}" for a in node.names]  # `from exactsyn import tables` names a subpackage
            out += [(s if target == "exactsyn" else target, node.lineno) for s in subs]
    return out


def _graph() -> dict[str, dict[str, list[str]]]:
    """unit -> imported unit -> the places (file:line) that import it."""
    graph: dict[str, dict[str, list[str]]] = defaultdict(lambda: defaultdict(list))
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE.parent)
        here = _unit(".".join(rel.with_suffix("").parts))
        for target, line in _imports(path):
            there = _unit(target)
            if there != here:
                graph[here][there].append(f"{rel}:{line}")
    return graph


def test_every_unit_of_the_package_has_a_layer() -> None:
    units = {p.stem for p in PACKAGE.glob("*.py")} | {p.parent.name for p in PACKAGE.glob("*/__init__.py")}
    assert units <= set(RANK), f"give these a layer in LAYERS and DEVELOPERS.md: {sorted(units - set(RANK))}"


def test_every_import_points_down() -> None:
    upward = [
        f"{place}: {here} imports {there}"
        for here, targets in _graph().items()
        for there, places in targets.items()
        for place in places
        if RANK[there] >= RANK[here] and not (RANK[here] == 0 and RANK[there] == 0)
    ]
    assert not upward, "imports that do not point down:\n" + "\n".join(upward)


def test_the_import_graph_has_no_cycle() -> None:
    graph = {here: set(targets) for here, targets in _graph().items()}
    state: dict[str, int] = {}  # 1 on the stack, 2 done

    def visit(node: str, stack: list[str]) -> list[str] | None:
        state[node] = 1
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == 1:
                return stack + [node, nxt]
            if nxt not in state:
                found = visit(nxt, stack + [node])
                if found:
                    return found
        state[node] = 2
        return None

    for start in sorted(graph):
        if start not in state:
            cycle = visit(start, [])
            assert cycle is None, "import cycle: " + " -> ".join(cycle or [])


def test_the_check_itself_sees_imports_inside_functions() -> None:
    # search/fallback imports the optimiser inside a function; the graph must hold that edge
    assert "optimise" in _graph()["search"]


def test_no_function_is_longer_than_a_screenful() -> None:
    long = []
    for path in sorted(PACKAGE.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                size = (node.end_lineno or node.lineno) - node.lineno + 1
                if size > MAX_FUNCTION_LINES:
                    long.append(f"{path.relative_to(PACKAGE.parent)}:{node.lineno} {node.name}: {size} lines")
    assert not long, f"functions over {MAX_FUNCTION_LINES} lines (from def to end):\n" + "\n".join(long)

"""The package's stages import only stages below them (DEVELOPERS.md, architecture map).

Every import in every module is read from its syntax tree, including imports inside functions,
so a lazy import cannot hide a layer broken the other way.
"""

from __future__ import annotations

import ast
from pathlib import Path

import meterfix

ROOT = Path(meterfix.__file__).resolve().parent

#: stage of each top-level module or subpackage; a module may import its own stage's modules
#: only within its own subpackage, and any stage with a lower number
STAGE = {
    "__version__": 0, "errors": 0, "constants": 0, "vocabulary": 0,
    "units": 1, "resources": 1,
    "atmosphere": 2, "gas": 2,
    "readers": 3, "z": 3,          # the bottom stages of the job
    "energy": 4,                   # ISO 6976 sums, with Z at the metering reference
    "meters": 4,                   # primary equations of the meter kinds (orifice, Coriolis, error curves)
    "engine": 5,                   # the month run
    "uncertainty": 6, "checks": 6,
    "month": 7,                    # the month job: engine + uncertainty + checks
    "writers": 8,
    "fleet": 9, "store": 9, "balance": 9,
    "cli": 10, "__main__": 11,
}


def _unit(module: str) -> str:
    """'meterfix.engine.run' -> 'engine'."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def _imports(path: Path):
    rel = path.relative_to(ROOT.parent).with_suffix("")
    module = ".".join(rel.parts)
    if module.endswith(".__init__"):
        module = module[: -len(".__init__")]
        package = module
    else:
        package = module.rsplit(".", 1)[0]
    tree = ast.parse(path.read_text(encoding="utf-8"))
    # names imported only for type annotations (`if TYPE_CHECKING:`) are not imports at run time: the
    # result object of a lower stage may name the types a higher stage fills it with
    typing_only = {id(n) for b in ast.walk(tree) if isinstance(b, ast.If) and getattr(b.test, "id", "") == "TYPE_CHECKING"
                   for s in b.body for n in ast.walk(s)}
    for node in ast.walk(tree):
        if id(node) in typing_only:
            continue
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
                names = [target] if node.module else [f"{target}.{a.name}" for a in node.names]
            else:
                names = [node.module or ""]
            for name in names:
                if name.startswith("meterfix."):
                    yield module, name, node.lineno
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.startswith("meterfix."):
                    yield module, a.name, node.lineno


def _all_imports():
    for path in sorted(ROOT.rglob("*.py")):
        if path.parent.name == "__pycache__":
            continue
        yield from _imports(path)


def test_every_module_has_a_stage():
    units = {_unit(m) for m, _, _ in _all_imports()} | {_unit(t) for _, t, _ in _all_imports()}
    units.discard("")
    assert units <= set(STAGE), f"modules without a stage in this test: {sorted(units - set(STAGE))}"


def test_stages_import_only_stages_below():
    wrong = []
    for module, target, line in _all_imports():
        if module == "meterfix":
            continue  # the package's front door re-exports the public functions
        a, b = _unit(module), _unit(target)
        if a == b:
            continue
        if STAGE[b] >= STAGE[a]:
            wrong.append(f"{module}:{line} imports {target} ({a} stage {STAGE[a]} -> {b} stage {STAGE[b]})")
    assert not wrong, "\n".join(wrong)


def test_no_import_circles_between_modules():
    graph: dict[str, set[str]] = {}
    for module, target, _ in _all_imports():
        graph.setdefault(module, set()).add(target)
    modules = set(graph)

    def resolve(t):  # 'meterfix.uncertainty.budget.build_model' -> the module it names
        while t and t not in modules and not (ROOT.parent / (t.replace(".", "/") + ".py")).exists() \
                and not (ROOT.parent / t.replace(".", "/") / "__init__.py").exists():
            t = t.rsplit(".", 1)[0] if "." in t else ""
        return t

    edges = {m: {resolve(t) for t in ts} - {m, ""} for m, ts in graph.items()}
    # a package's __init__ importing its own submodule to register them is the one allowed loop
    # direction; a submodule importing its package back is the other half of a circle
    seen, stack, circles = set(), [], []

    def visit(m):
        if m in stack:
            circles.append(stack[stack.index(m):] + [m])
            return
        if m in seen:
            return
        seen.add(m)
        stack.append(m)
        for t in sorted(edges.get(m, ())):
            if m.startswith(t + ".") or t.startswith(m + "."):
                continue  # package ↔ own submodule (namespace access), not a logic circle
            visit(t)
        stack.pop()

    for m in sorted(edges):
        visit(m)
    assert not circles, "import circles: " + "; ".join(" -> ".join(c) for c in circles)

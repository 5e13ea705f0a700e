"""The rules of the house, checked on the source: imports run one way, no cycle,
no private name crosses a module, every module declares ``__all__``.

Layers, top to bottom (a module may import only from its own layer's lower
modules or from layers below it): see DEVELOPERS.md.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "synth"

LAYERS = (
    ("cli",),
    ("files",),
    ("report",),
    ("templates",),
    ("bom",),
    ("sweep", "sweep_keys"),
    ("least_cost", "checking", "synthesis", "front"),
    ("binding", "tighten"),
    ("results", "cautions", "linearity"),
    ("search",),
    ("spread",),
    ("circuit",),
    ("design",),
    ("rating",),
    ("sensors",),
    ("catalog",),
    ("units", "inputs", "digest", "cluster", "parallel"),
    ("errors", "schemas", "deadline"),
)
"""Each module's layer is named by its first dotted part below ``synth``."""


def _modules() -> dict[str, ast.Module]:
    found = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        name = ".".join(path.relative_to(PACKAGE.parent).with_suffix("").parts)
        found[name.removesuffix(".__init__")] = ast.parse(path.read_text(encoding="utf-8"))
    return found


MODULES = _modules()


def _layer(module: str) -> int:
    head = module.split(".")[1] if "." in module else ""
    for rank, names in enumerate(LAYERS):
        if head in names:
            return rank
    raise AssertionError(f"{module} belongs to no layer; add it to LAYERS and DEVELOPERS.md")


def _imports(tree: ast.Module) -> list[tuple[str, list[str], bool]]:
    """(module, names, at top level) for every ``from synth... import``."""
    out = []
    top = set(map(id, tree.body))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("synth"):
            out.append((node.module, [a.name for a in node.names], id(node) in top))
        elif isinstance(node, ast.Import):
            out.extend((a.name, [], id(node) in top) for a in node.names
                       if a.name.startswith("synth"))
    return out


@pytest.mark.parametrize("module", sorted(m for m in MODULES if m != "synth"))
def test_imports_run_one_way(module):
    mine = _layer(module)
    for target, _, _ in _imports(MODULES[module]):
        if target == "synth":
            continue
        assert _layer(target) >= mine, f"{module} (layer {mine}) imports {target} from above"


def test_no_import_cycle():
    graph = {m: {t for t, _, top in _imports(tree) if top and t in MODULES}
             for m, tree in MODULES.items()}
    state: dict[str, int] = {}

    def visit(node: str, path: list[str]) -> None:
        state[node] = 1
        for nxt in graph[node]:
            if state.get(nxt) == 1:
                raise AssertionError("import cycle: " + " -> ".join([*path, node, nxt]))
            if nxt not in state:
                visit(nxt, [*path, node])
        state[node] = 2

    for node in graph:
        if node not in state:
            visit(node, [])


@pytest.mark.parametrize("module", sorted(MODULES))
def test_no_private_name_crosses_a_module(module):
    for target, names, _ in _imports(MODULES[module]):
        private = [n for n in names if n.startswith("_") and n != "__version__"]
        assert not private, f"{module} imports private {private} from {target}"


@pytest.mark.parametrize("module", sorted(m for m in MODULES if not m.endswith("__main__")))
def test_every_module_declares_all_and_exports_what_others_use(module):
    tree = MODULES[module]
    declared = None
    for node in tree.body:
        target = (node.targets[0] if isinstance(node, ast.Assign)
                  else node.target if isinstance(node, ast.AnnAssign) else None)
        if isinstance(target, ast.Name) and target.id == "__all__" and node.value is not None:
            declared = set(ast.literal_eval(node.value))
    assert declared is not None, f"{module} has no __all__"
    for other, other_tree in MODULES.items():
        for target, names, _ in _imports(other_tree):
            if target == module:
                missing = set(names) - declared - {"__version__"}
                assert not missing, f"{other} imports {missing} from {module}, not in __all__"


def test_search_does_not_import_the_spread():
    for module, tree in MODULES.items():
        if module.startswith("synth.search"):
            assert not any(t.startswith("synth.spread") for t, _, _ in _imports(tree)), module


def test_cli_imports_no_heavy_library_at_module_level():
    tree = MODULES["synth.cli"]
    heavy = {"numpy", "scipy", "ortools", "matplotlib"}
    for node in tree.body:
        if isinstance(node, ast.Import):
            assert not {a.name.split(".")[0] for a in node.names} & heavy
        if isinstance(node, ast.ImportFrom) and node.module:
            assert node.module.split(".")[0] not in heavy

"""The package's layers import downward only, and no modules import each other in a
circle (DEVELOPERS.md, "Architecture"). Read from the source with ``ast``, so imports
inside functions count too."""

from __future__ import annotations

import ast
from pathlib import Path

import networkx as nx

PKG = Path(__file__).resolve().parents[1] / "steamnet"

#: Layers from the bottom up; a module may import from its own layer or below.
LAYERS = [
    {"steamnet._version", "steamnet.errors", "steamnet.status", "steamnet.units",
     "steamnet._gc", "steamnet._if97fast", "steamnet.properties",
     # the file-level helpers of steamnet.io: safe reading, atomic writing, signals
     "steamnet.io.readfile", "steamnet.io.textsafe", "steamnet.io.atomic",
     "steamnet.io.atomicdir", "steamnet.io.signals"},
    {"steamnet.calc", "steamnet.graph"},
    {"steamnet.model"},
    {"steamnet.solver"},
    {"steamnet.stations"},
    {"steamnet.evaluate"},
    {"steamnet.solve"},
    {"steamnet.sweep"},
    {"steamnet.io", "steamnet.testing"},
    {"steamnet.studies"},
    {"steamnet.workbook"},
    {"steamnet.cli", "steamnet.__main__", "steamnet"},
]


def _modules() -> dict[str, Path]:
    out = {}
    for f in PKG.rglob("*.py"):
        parts = list(f.relative_to(PKG.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = f
    return out


def _graph() -> nx.DiGraph:
    mods = _modules()
    g = nx.DiGraph()
    for m, f in mods.items():
        pkg = m if f.name == "__init__.py" else m.rsplit(".", 1)[0]
        for node in ast.walk(ast.parse(f.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                if node.level:
                    base = pkg.split(".")
                    base = base[:len(base) - node.level + 1]
                    target = ".".join(base + ([node.module] if node.module else []))
                else:
                    target = node.module or ""
                # "from .. import properties" names the module, not the package
                names = ([target] if node.module else []) + \
                    [f"{target}.{a.name}" for a in node.names]
            elif isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            else:
                continue
            for n in names:
                if n in mods and n != m:
                    g.add_edge(m, n)
    return g


def _layer(module: str) -> int:
    best = None
    for i, layer in enumerate(LAYERS):
        for prefix in layer:
            if module == prefix or module.startswith(prefix + "."):
                if best is None or len(prefix) > best[1]:
                    best = (i, len(prefix))
    assert best is not None, f"{module} is in no layer: add it to LAYERS"
    return best[0]


def test_every_module_is_in_a_layer():
    for m in _modules():
        _layer(m)


def test_layers_import_downward_only():
    g = _graph()
    upward = [f"{a} -> {b}" for a, b in g.edges
              if _layer(a) < _layer(b) and not b.startswith(a + ".")]
    assert not upward, "imports from a lower layer up:\n" + "\n".join(sorted(upward))


def test_no_import_circles():
    g = _graph()
    # a package's __init__ re-exporting its own modules is no circle
    g.remove_edges_from([(a, b) for a, b in list(g.edges) if b.startswith(a + ".")
                         or a.startswith(b + ".")])
    cycles = [c for c in nx.simple_cycles(g) if len(c) > 1]
    assert not cycles, "import circles:\n" + "\n".join(
        " -> ".join(c + [c[0]]) for c in cycles[:20])


def test_the_check_sees_a_circle():
    """The circle detector itself: two modules importing each other are found."""
    g = nx.DiGraph([("a", "b"), ("b", "a")])
    assert [c for c in nx.simple_cycles(g) if len(c) > 1]

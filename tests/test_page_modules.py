"""The field page's JavaScript modules import each other without a circle.

A circle (app -> technician -> app) makes a module run before the ones it needs have finished
evaluating; the page then depends on evaluation order. The router, the shell (who is signed in,
toast, banner) and the sending of readings are modules of their own so that the screens can use
them without importing the entry module back.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

JS = Path(__file__).resolve().parents[1] / "static" / "js"

# static `import ... from "./x.js"`, bare `import "./x.js"`, `export ... from "./x.js"` and dynamic `import("./x.js")`
IMPORT = re.compile(
    r"""^\s*(?:import|export)\b[^;'"]*?\bfrom\s*["'](\./[\w.-]+\.js)["']"""
    r"""|^\s*import\s*["'](\./[\w.-]+\.js)["']"""
    r"""|\bimport\s*\(\s*["'](\./[\w.-]+\.js)["']\s*\)""",
    re.M,
)


def module_graph(folder: Path = JS) -> dict[str, set[str]]:
    """Each module's name -> the names of the sibling modules it imports."""
    graph = {}
    for path in sorted(folder.glob("*.js")):
        text = path.read_text(encoding="utf-8")
        graph[path.name] = {Path(next(g for g in m.groups() if g)).name for m in IMPORT.finditer(text)}
    return graph


def find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    """One circle of imports as a list of names (first == last), or None (depth-first search)."""
    state: dict[str, int] = {}  # 1: on the current path, 2: done
    path: list[str] = []

    def visit(name: str) -> list[str] | None:
        state[name] = 1
        path.append(name)
        for dep in sorted(graph.get(name, ())):
            if state.get(dep) == 1:
                return path[path.index(dep):] + [dep]
            if dep not in state and (found := visit(dep)):
                return found
        path.pop()
        state[name] = 2
        return None

    for name in sorted(graph):
        if name not in state and (found := visit(name)):
            return found
    return None


def test_the_parser_reads_every_import_form(tmp_path):
    (tmp_path / "a.js").write_text(
        'import { x, y } from "./b.js";\nimport * as c from \'./c.js\';\nimport "./d.js";\n'
        'export { z } from "./e.js";\nconst f = await import("./f.js");\n'
        'import {\n  g,\n  h,\n} from "./g.js";\n// a comment mentioning from "./nothing" is no import\n',
        encoding="utf-8")
    assert module_graph(tmp_path) == {"a.js": {"b.js", "c.js", "d.js", "e.js", "f.js", "g.js"}}


@pytest.mark.parametrize("graph, cycle", [
    ({"a.js": {"b.js"}, "b.js": {"c.js"}, "c.js": set()}, None),
    ({"a.js": {"b.js", "c.js"}, "b.js": {"c.js"}, "c.js": set()}, None),  # a diamond is no circle
    ({"a.js": {"b.js"}, "b.js": {"a.js"}}, ["a.js", "b.js", "a.js"]),
    ({"a.js": {"b.js"}, "b.js": {"c.js"}, "c.js": {"b.js"}}, ["b.js", "c.js", "b.js"]),
    ({"a.js": {"a.js"}}, ["a.js", "a.js"]),
])
def test_find_cycle(graph, cycle):
    assert find_cycle(graph) == cycle


def test_every_import_names_a_module_that_exists():
    graph = module_graph()
    for name, deps in graph.items():
        assert deps <= graph.keys(), (name, deps - graph.keys())


def test_no_module_imports_another_in_a_circle():
    graph = module_graph()
    assert "router.js" in graph and graph["app.js"]  # the graph was read, not empty
    assert find_cycle(graph) is None, " -> ".join(find_cycle(graph))


def test_nothing_imports_the_entry_module():
    importers = [name for name, deps in module_graph().items() if "app.js" in deps]
    assert importers == []

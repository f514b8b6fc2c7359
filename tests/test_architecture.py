"""The package's structure: what a family can do is asked of its class, never read from its name.

An antenna family declares its capabilities on its class (snrgain.antennas.base: placeable, long_wire,
integrates_near_sources, fixed_ground, phased, composite, buildable, uses_sky, sky_order, resonant_tx); code
outside snrgain/antennas/ reads them.  The scan below fails, naming file:line, wherever a module outside the
antennas compares a value with a registered family's name or keeps a list of family names.
"""

import ast
import subprocess
import sys

import pytest

import snrgain.antennas  # noqa: F401 - registers every family
from snrgain.antennas.base import FAMILIES
from tests.conftest import REPO

PACKAGE = REPO / "snrgain"

LEAD_REWRITE: set[str] = set()
"""Modules skipped by name while a rewrite is under way (none now)."""


def family_name_uses(source: str, names: set[str]) -> list[tuple[int, str]]:
    """(line, why) for each use of a family name as logic in ``source``.

    Logic: a string equal to a family name compared with something (``x == "bog"``, ``x != "bog"``), tested for
    membership (``x in ("beverage", "bog")``), matched in a ``case``, or collected with other family names in a
    tuple, list, set or dict keys (a family list kept for later membership tests).  Data is allowed: a spec dict's
    ``"family": "bog"`` value, a default argument, a TOML template or an example string (which is longer than a
    name, so it never equals one).
    """
    tree = ast.parse(source)
    out = []

    def is_name(node):
        return isinstance(node, ast.Constant) and isinstance(node.value, str) and node.value in names

    def members(node):
        if isinstance(node, (ast.Tuple, ast.List, ast.Set)):
            return node.elts
        if isinstance(node, ast.Dict):
            return [k for k in node.keys if k is not None]
        return []

    for node in ast.walk(tree):
        if isinstance(node, ast.Compare):
            for operand in (node.left, *node.comparators):
                hits = [operand] if is_name(operand) else [e for e in members(operand) if is_name(e)]
                out += [(h.lineno, f"compares with family name {h.value!r}") for h in hits]
        elif isinstance(node, ast.MatchValue) and is_name(node.value):
            out.append((node.lineno, f"matches family name {node.value.value!r}"))
        elif isinstance(node, (ast.Tuple, ast.List, ast.Set, ast.Dict)):
            hits = [e for e in members(node) if is_name(e)]
            if len(hits) >= 2:
                out.append((node.lineno, f"lists family names {[h.value for h in hits]}"))
    return sorted(set(out))


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE)
        if rel.parts[0] == "antennas" or (len(rel.parts) == 1 and rel.name in LEAD_REWRITE):
            continue
        yield path


def test_the_scan_finds_what_it_should_and_only_that():
    names = {"beverage", "bog", "vertical"}
    logic = (
        'if a.family == "bog":\n    pass\n'
        'ok = b["family"] != "vertical"\n'
        'inside = fam in ("beverage", "bog")\n'
        'WIRES = ("beverage", "bog")\n'
        'match fam:\n    case "beverage":\n        pass\n'
        'PER = {"beverage": 1, "bog": 2}\n'
    )
    assert sorted({line for line, _ in family_name_uses(logic, names)}) == [1, 3, 4, 5, 7, 9]
    data = (
        'spec = {"family": "bog", "length": "100 m"}\n'
        'def f(family="beverage"):\n    return family\n'
        'TEMPLATE = """\n[reference]\nfamily = "vertical"\n"""\n'
        'pol: Literal["vertical", "horizontal", "both"] = "vertical"\n'
        'x = spec.get("family", "bog")\n'
    )
    assert family_name_uses(data, names) == []


def test_no_family_name_logic_outside_the_antennas():
    names = set(FAMILIES)
    found = []
    for path in _modules():
        for line, why in family_name_uses(path.read_text(encoding="utf-8"), names):
            found.append(f"{path.relative_to(REPO)}:{line}: {why}")
    assert not found, "ask the antenna's class for its capability instead:\n" + "\n".join(found)


def test_the_skipped_modules_exist():
    # A skip that names a module no longer there is stale: drop it from LEAD_REWRITE.
    assert all((PACKAGE / name).exists() for name in LEAD_REWRITE)


def test_family_lists_come_from_the_capabilities():
    from snrgain.constants import WIRE_FAMILIES, placeable_families, wire_families

    assert WIRE_FAMILIES == wire_families() == tuple(n for n, f in FAMILIES.items() if f.build.long_wire)
    assert {"beverage", "bog", "unterminated", "two-wire"} == set(wire_families())
    assert set(placeable_families()) == {n for n, f in FAMILIES.items() if f.build.placeable}
    assert set(wire_families()) <= set(placeable_families())


def test_notice_has_its_own_module():
    from snrgain.model import notices, results

    assert results.Notice is notices.Notice  # the documented path still works
    imported = {
        n.module
        for n in ast.walk(ast.parse((PACKAGE / "outputs" / "messages.py").read_text(encoding="utf-8")))
        if isinstance(n, ast.ImportFrom)
    }
    assert "snrgain.model.results" not in imported  # no results <-> messages circle
    assert "snrgain.model.notices" in imported


@pytest.mark.parametrize("module", ["snrgain.cli.main", "snrgain.constants"])
def test_start_of_the_command_line_loads_no_antennas(module):
    code = f"import sys, {module}; print('snrgain.antennas' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, check=True).stdout
    assert out.strip() == "False"


def test_the_old_flat_paths_are_the_moved_modules():
    # The package was regrouped into folders (physics, sky, model, decide, tools, outputs); the documented flat
    # paths (snrgain.plan, snrgain.noise, ...) still import, and are the same module objects, so a patch through
    # either name reaches the code.
    import importlib

    stubs = [p for p in PACKAGE.glob("*.py") if "sys.modules[__name__] = " in p.read_text(encoding="utf-8")]
    assert len(stubs) >= 25
    for p in stubs:
        old = importlib.import_module(f"snrgain.{p.stem}")
        groups = ("physics", "sky", "model", "decide", "tools", "outputs")
        (new,) = [f"snrgain.{g}.{p.stem}" for g in groups if (PACKAGE / g / f"{p.stem}.py").exists()]
        assert old is importlib.import_module(new), p.stem


def _snrgain_imports(path) -> list[tuple[int, str]]:
    """(line, module) of every snrgain import in a file, at any depth (function-level imports included)."""
    out = []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("snrgain"):
            out.append((node.lineno, node.module))
        elif isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names if a.name.startswith("snrgain")]
    return out


def test_the_physics_layer_reaches_no_higher_layer():
    # physics holds the published models (ground, lines, chain, the vertical as a scatterer, the reciprocity
    # integral); the model, decide, tools and outputs layers build on it, never the other way round.
    higher = ("snrgain.model", "snrgain.decide", "snrgain.tools", "snrgain.outputs", "snrgain.cli")
    found = [
        f"{path.relative_to(REPO)}:{line}: {mod}"
        for path in sorted((PACKAGE / "physics").glob("*.py"))
        for line, mod in _snrgain_imports(path)
        if mod.startswith(higher)
    ]
    assert not found, found


def test_every_csv_is_written_through_the_one_safe_writer():
    # Names that begin like a formula (=, +, -, @) are written as text by snrgain.outputs.csvcells; a CSV written by
    # csv.writer directly anywhere else would write them as they are.
    found = [
        f"{path.relative_to(REPO)}"
        for path in sorted(PACKAGE.rglob("*.py"))
        if path.name != "csvcells.py" and ("csv.writer(" in path.read_text() or "DictWriter(" in path.read_text())
    ]
    assert not found, found

"""The package's import rule (DEVELOPERS.md, "Layers"): imports run one way, no cycles,
no private names across modules.

errors/constants/units <- physics, uncertainty <- study <- similitude <- decisions <- pipeline
<- report <- cli.  ``physics`` and ``uncertainty`` share a rank and import nothing of each other.
The checks read the source with :mod:`ast` (function-level imports included), so a lazy import
that breaks the rule fails too.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "simunc"

#: Rank of each layer: a module may import modules of a lower rank, or of its own layer.
RANKS = {
    "errors": 0, "constants": 0, "units": 0,
    "physics": 1, "uncertainty": 1,
    "study": 2,
    "similitude": 3,
    "decisions": 4,
    "matrix": 5,
    "pipeline": 6,
    "report": 7,
    "cli": 8, "__main__": 8,
}


def _modules() -> dict[str, Path]:
    out = {}
    for f in PACKAGE.rglob("*.py"):
        parts = list(f.relative_to(PACKAGE.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = f
    return out


MODULES = _modules()


def _imports(module: str, path: Path) -> list[tuple[str, str, int]]:
    """(imported module, imported name or '', line) for every simunc import of a module."""
    tree = ast.parse(path.read_text())
    is_pkg = path.name == "__init__.py"
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(a.name, "", node.lineno) for a in node.names if a.name.startswith("simunc")]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = module.split(".") if is_pkg else module.split(".")[:-1]
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target == "simunc" or target.startswith("simunc."):
                for a in node.names:
                    sub = f"{target}.{a.name}"
                    out.append((sub, "", node.lineno) if sub in MODULES else
                               (target, a.name, node.lineno))
    return out


def _layer(module: str) -> str | None:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else None


def test_every_module_has_a_layer():
    unknown = sorted(m for m in MODULES if m != "simunc" and _layer(m) not in RANKS)
    assert not unknown, f"modules outside every layer (add them to RANKS and DEVELOPERS.md): {unknown}"


def test_imports_run_one_way():
    wrong = []
    for module, path in MODULES.items():
        if module == "simunc":  # the lazy top-level API names stages; it imports on first use
            continue
        here = _layer(module)
        for target, _, line in _imports(module, path):
            there = _layer(target)
            if there is None or there == here:
                continue
            if RANKS[there] > RANKS[here] or {here, there} == {"physics", "uncertainty"}:
                wrong.append(f"{path.relative_to(PACKAGE.parent)}:{line} {here} imports {there}")
    assert not wrong, "imports against the layer direction:\n" + "\n".join(wrong)


def test_no_import_cycles():
    graph = {m: {t if t in MODULES else t.rpartition(".")[0] if t.rpartition(".")[0] in MODULES
                 else t for t, _, _ in _imports(m, p)} - {m} for m, p in MODULES.items()
             if m != "simunc"}
    seen: dict[str, int] = {}
    stack: list[str] = []
    cycles = []

    def visit(m: str) -> None:
        seen[m] = 1
        stack.append(m)
        for n in sorted(graph.get(m, ())):
            if n not in graph:
                continue
            if seen.get(n) == 1:
                cycles.append(" -> ".join(stack[stack.index(n):] + [n]))
            elif n not in seen:
                visit(n)
        stack.pop()
        seen[m] = 2

    for m in sorted(graph):
        if m not in seen:
            visit(m)
    assert not cycles, "import cycles:\n" + "\n".join(cycles)


def test_no_private_names_across_modules():
    private = [f"{p.relative_to(PACKAGE.parent)}:{line} imports {target}.{name}"
               for m, p in MODULES.items() for target, name, line in _imports(m, p)
               if name.startswith("_") and name != "__version__"]
    assert not private, "private names imported across modules:\n" + "\n".join(private)


@pytest.mark.parametrize("bad", [
    ("simunc.physics.flow", "from simunc.study import schema\n"),
    ("simunc.study.readers", "def f():\n    from simunc.pipeline import run\n"),
    ("simunc.uncertainty.lpu", "from simunc.physics import flow\n"),
])
def test_the_rule_catches_a_wrong_import(bad, tmp_path, monkeypatch):
    """The checker itself: a wrong import in a copy of a module is reported."""
    module, extra = bad
    path = tmp_path / "m.py"
    path.write_text(MODULES[module].read_text() + "\n" + extra)
    here = _layer(module)
    found = [t for t, _, _ in _imports(module, path)
             if _layer(t) and _layer(t) != here and (RANKS[_layer(t)] > RANKS[here]
                                                      or {here, _layer(t)} == {"physics", "uncertainty"})]
    assert found


# ---------------------------------------------------------------------------------------------
# One list of the outputs a study forms: the catalogue's list is what the model returns.
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("study_file", sorted((PACKAGE.parent / "studies").glob("*.toml")))
def test_the_model_forms_exactly_the_catalogued_outputs(study_file):
    from simunc.pipeline import prepare
    from simunc.study.catalogue import formed_outputs
    from simunc.study.readers import load_study

    study = load_study(study_file)
    prep = prepare(study)
    fs = study.full_scale
    m = study.measurement
    listed = formed_outputs(prep.model.fluid, fs.fluid,
                            model_frequency=prep.setpoint.nominal.get("frequency") is not None,
                            full_scale_frequency=fs.frequency is not None,
                            custom=[c.name for c in study.custom_groups],
                            measured=() if m is None else m.output_keys(study.kind))
    assert set(prep.setpoint.outputs) == set(listed)

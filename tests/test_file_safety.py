"""Design files are data only: nothing in a file can make the loader run code.

Static half: the loading chain (engine/designfile.py and the engine modules it imports) is
scanned with ``ast`` for every way Python can turn data into code or objects — pickle,
marshal, shelve, yaml, eval, exec, compile, importlib, __import__, getattr/setattr with a
computed name, subprocess, os.system — and must contain none; the only parser it may use
is the standard ``json`` module. Dynamic half: files that try to smuggle code (pickle bytes,
Python expressions, dunder names as kinds or keys) are refused as bad designs, and the size
and nesting limits are enforced before any of it is used, each with a clear message.

Common practice, no source (the rule "never deserialise untrusted data with pickle or eval"
is the standard advice of the Python documentation for the pickle module).
"""

from __future__ import annotations

import ast
import json
import pickle
from pathlib import Path

import pytest

import bandsketch.engine.design.designfile as designfile
from bandsketch.engine.design import schema
from bandsketch.engine.design.designfile import MAX_FILE_BYTES, load_design
from bandsketch.engine.core.errors import DesignFileError

ROOT = Path(__file__).resolve().parents[1]
LOADER = ROOT / "engine" / "design" / "designfile.py"

FORBIDDEN_MODULES = {"pickle", "cPickle", "_pickle", "marshal", "shelve", "yaml", "dill", "cloudpickle",
                     "importlib", "imp", "runpy", "subprocess", "ctypes", "code", "codeop", "jsonpickle"}
FORBIDDEN_CALLS = {"eval", "exec", "compile", "__import__", "execfile", "input", "breakpoint"}
FORBIDDEN_ATTRIBUTES = {"system", "popen", "spawnl", "spawnv", "execv", "execl", "import_module",
                        "loads_pickle", "load_module", "literal_eval"}
REVIEWED = {("document.py", "setattr")}
"""Sites read and found safe: Document.set_meta checks the attribute name against a fixed tuple
before its setattr, and the loader never calls it."""
ALLOWED_IMPORTS = {"__future__", "json", "math", "os", "stat", "tempfile", "unicodedata", "pathlib", "re", "dataclasses",
                   "enum",  # the Band enum (engine/core/band.py): a class definition, no code from data
                   "types", "typing", "collections", "functools"}


def loading_chain() -> list[Path]:
    """engine/design/designfile.py and every engine module it imports, transitively."""
    seen, todo = [], [LOADER]
    while todo:
        path = todo.pop()
        if path in seen:
            continue
        seen.append(path)
        for node in ast.walk(ast.parse(path.read_text("utf-8"))):
            if isinstance(node, ast.ImportFrom) and node.level >= 1 and node.module:
                base = path.parents[node.level - 1]
                todo.append(base / f"{node.module.replace('.', '/')}.py")
            elif isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("bandsketch.engine."):
                todo.append(ROOT / f"{node.module.removeprefix('bandsketch.').replace('.', '/')}.py")
    return seen


def findings(path: Path) -> list[str]:
    """Every forbidden construct in one module, as 'file:line what'."""
    out = []
    tree = ast.parse(path.read_text("utf-8"))
    for node in ast.walk(tree):
        where = f"{path.name}:{getattr(node, 'lineno', '?')}"
        if isinstance(node, ast.Import):
            for alias in node.names:
                top = alias.name.split(".")[0]
                if top in FORBIDDEN_MODULES:
                    out.append(f"{where} imports {alias.name}")
                elif top not in ALLOWED_IMPORTS:
                    out.append(f"{where} imports {alias.name}, which the loading chain has no need of")
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            top = node.module.split(".")[0]
            if top in FORBIDDEN_MODULES:
                out.append(f"{where} imports from {node.module}")
            elif top not in ALLOWED_IMPORTS | {"engine"}:
                out.append(f"{where} imports from {node.module}, which the loading chain has no need of")
        elif isinstance(node, ast.Call):
            func = node.func
            if isinstance(func, ast.Name) and func.id in FORBIDDEN_CALLS:
                out.append(f"{where} calls {func.id}()")
            if isinstance(func, ast.Name) and func.id in ("getattr", "setattr", "delattr") and len(node.args) >= 2 \
                    and not isinstance(node.args[1], ast.Constant) and (path.name, func.id) not in REVIEWED:
                out.append(f"{where} calls {func.id}() with a computed name")
            if isinstance(func, ast.Attribute) and func.attr in FORBIDDEN_ATTRIBUTES:
                out.append(f"{where} calls .{func.attr}()")
        elif isinstance(node, ast.Name) and node.id in ("__builtins__", "globals", "locals", "vars"):
            out.append(f"{where} touches {node.id}")
    return out


def test_the_loading_chain_is_what_we_think():
    names = {p.name for p in loading_chain()}
    assert {"designfile.py", "document.py", "errors.py", "parts.py"} <= names, names


@pytest.mark.parametrize("path", loading_chain(), ids=lambda p: p.name)
def test_no_code_from_data_in_the_loading_chain(path):
    assert findings(path) == []


def test_the_scan_would_catch_what_it_looks_for(tmp_path):
    bad = tmp_path / "bad.py"
    bad.write_text("import pickle\nfrom importlib import import_module\nx = eval('1')\nexec('y=1')\n"
                   "z = __import__('os')\nz.system('true')\ngetattr(z, name)\nimport yaml\n")
    found = "\n".join(findings(bad))
    for what in ("imports pickle", "imports from importlib", "calls eval()", "calls exec()", "calls __import__()",
                 "calls .system()", "getattr() with a computed name", "imports yaml"):
        assert what in found, found


def test_the_loader_parses_with_json_only():
    tree = ast.parse(LOADER.read_text("utf-8"))
    parsers = {f"{n.func.value.id}.{n.func.attr}" for n in ast.walk(tree)
               if isinstance(n, ast.Call) and isinstance(n.func, ast.Attribute)
               and isinstance(n.func.value, ast.Name) and n.func.attr in ("load", "loads")}
    assert parsers == {"json.loads"}, parsers


def header(**extra):
    return {"format": "bandsketch-design", "version": 1, "parts": [], **extra}


SMUGGLED = {
    "pickle bytes": pickle.dumps({"format": "bandsketch-design", "version": 1, "parts": []}),
    "a python expression": b"__import__('os').system('touch /tmp/bandsketch-pwned')",
    "a python dict literal": b"{'format': 'bandsketch-design', 'version': 1, 'parts': []}",
    "a dunder kind": json.dumps(header(parts=[{"kind": "__class__", "name": "R1", "x": 0, "y": 0}])).encode(),
    "a dunder key": json.dumps(header(__class__="os.system")).encode(),
    "a dunder field": json.dumps(header(parts=[{"kind": "resistor", "name": "R1", "x": 0, "y": 0,
                                               "params": {"__init__": "x"}}])).encode(),
    "a dunder name": json.dumps(header(parts=[{"kind": "resistor", "name": "__import__", "x": 0,
                                              "y": 0}])).encode(),
    "code as a kind": json.dumps(header(parts=[{"kind": "__import__('os').system('true')", "name": "R1",
                                               "x": 0, "y": 0}])).encode(),
    "a class hint": json.dumps(header(__reduce__=["os.system", ["true"]])).encode(),
}


@pytest.mark.parametrize("what", sorted(SMUGGLED))
def test_files_that_smuggle_code_are_refused(tmp_path, what):
    path = tmp_path / "design.json"
    path.write_bytes(SMUGGLED[what])
    with pytest.raises(DesignFileError) as info:
        load_design(path)
    assert str(info.value).startswith("design.json: ")
    assert not Path("/tmp/bandsketch-pwned").exists()


def test_size_limit_is_checked_before_reading(tmp_path, monkeypatch):
    path = tmp_path / "huge.json"
    with open(path, "wb") as fh:
        fh.truncate(MAX_FILE_BYTES + 1)  # sparse: no disk used
    read = []
    monkeypatch.setattr(Path, "read_bytes", lambda self: read.append(self) or b"")
    with pytest.raises(DesignFileError, match=r"huge\.json: 8\.4 MB is larger than a design file can be \(8 MiB\)"):
        load_design(path)
    assert read == [], "the file was read before its size was checked"


def test_a_file_at_the_size_limit_is_still_read(tmp_path):
    path = tmp_path / "edge.json"
    text = json.dumps(header(description=""))
    path.write_bytes(text.encode() + b" " * (MAX_FILE_BYTES - len(text)))
    assert path.stat().st_size == MAX_FILE_BYTES
    assert load_design(path).parts == {}


@pytest.mark.parametrize("depth", [10_000, 1_000_000])
def test_depth_limit_has_a_clear_message(tmp_path, depth):
    path = tmp_path / "deep.json"
    path.write_text('{"format": "bandsketch-design", "version": 1, "parts": ' + "[" * depth + "]" * depth + "}")
    with pytest.raises(DesignFileError, match="deep.json: is nested too deeply to be a design"):
        load_design(path)


def test_moderate_nesting_is_refused_by_shape_not_by_crash(tmp_path):
    # Nesting json can parse (here 500 levels) still cannot hide in a design: every level is typed.
    path = tmp_path / "nested.json"
    path.write_text(json.dumps(header(targets={"f_high_min": json.loads("[" * 500 + "]" * 500)})))
    with pytest.raises(DesignFileError, match="target f_high_min: expected text, found list"):
        load_design(path)


def test_the_loader_has_named_limits():
    assert designfile.MAX_FILE_BYTES == 8 * 1024 * 1024
    assert designfile.MAX_PARTS >= 1000
    assert schema.MAX_TEXT >= 100

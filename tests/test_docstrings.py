"""Every public engine function documents its parameters, and a physical quantity its unit.

In the manner of python-control's docstring test (control/tests/docstrings_test.py): each
public function is found by introspection, and its numpydoc ``Parameters`` section must name
every parameter of its signature. The public engine is every function of ``bandsketch.engine``
and its modules whose name has no leading underscore, and the public methods of the classes
``bandsketch.engine`` exports. Dataclass constructors are left out: their fields are
documented as ``Attributes``. Common practice, no source: numpydoc's format (numpydoc
docstring guide) and SI unit symbols (BIPM, The International System of Units, 9th ed., 2019).
"""

from __future__ import annotations

import dataclasses
import importlib
import inspect
import pkgutil
import re

import pytest

import bandsketch.engine as engine

_HEADER = re.compile(r"^(\w[\w ]*)\n-{3,}$", re.M)
_PARAM = re.compile(r"^(\*{0,2}[A-Za-z_][\w, *]*?)\s*(?::\s*(.*))?$")

# A parameter carrying a physical quantity must say its unit: one whose type is a number
# (float, an array), or one of the names below that the engine gives such quantities and
# whose type is not given.
_PHYSICAL = {"f", "freqs", "freq_hz", "f_mid", "f_test", "span", "t", "t_stop", "t_max", "width", "b1", "b2",
             "temperature", "vbe", "vbc", "vgs", "vds", "vbs", "vth", "vth0", "va", "vt", "vcrit", "vnew", "vold",
             "isat", "kp", "lam", "gamma", "phi", "value", "level", "scale", "target", "estimate", "exact",
             "midband_gain", "omega_low", "gain", "gm", "r", "dc", "ac", "a0", "fu", "rout", "rin"}
_UNIT = re.compile(r"Hz|rad/s|Ω|\bs\b|s²|\bF\b|\bH\b|\bV\b|\bA\b|\bS\b|\bK\b|A/V|V/V|A/A|V/A|1/V|√V|dB|%"
                   r"|\bSI\b|scene units|gain unit|per cent|fraction|dimensionless|kelvin|the figure's unit|its unit")


def _public_functions():
    modules = [engine] + [importlib.import_module(m.name)
                          for m in pkgutil.walk_packages(engine.__path__, "bandsketch.engine.")]
    for module in modules:
        for name, obj in vars(module).items():
            if not name.startswith("_") and inspect.isfunction(obj) and obj.__module__ == module.__name__:
                yield f"{module.__name__}.{name}", (obj, inspect.getdoc(obj))
    for name in engine.__all__:
        cls = getattr(engine, name)
        if not inspect.isclass(cls) or issubclass(cls, BaseException):
            continue
        for attr, obj in vars(cls).items():
            if not attr.startswith("_") and inspect.isfunction(obj):
                yield f"{cls.__module__}.{cls.__name__}.{attr}", (obj, inspect.getdoc(obj))
            elif attr == "__init__" and inspect.isfunction(obj) and not dataclasses.is_dataclass(cls):
                # numpydoc documents a constructor's parameters in the class docstring.
                yield f"{cls.__module__}.{cls.__name__}", (obj, inspect.getdoc(cls))


FUNCTIONS = dict(_public_functions())


def documented(doc: str) -> dict[str, tuple[str, str]]:
    """Parameter name -> (its type, its description), from a numpydoc Parameters section."""
    sections = list(_HEADER.finditer(doc))
    where = next((i for i, m in enumerate(sections) if m.group(1) == "Parameters"), None)
    if where is None:
        return {}
    end = sections[where + 1].start() if where + 1 < len(sections) else len(doc)
    out: dict[str, tuple[str, str]] = {}
    names: list[str] = []
    for line in doc[sections[where].end():end].splitlines():
        if line and not line[0].isspace():
            match = _PARAM.match(line)
            names = [n.strip().lstrip("*") for n in match.group(1).split(",")] if match else []
            for n in names:
                out[n] = (match.group(2) or "", "")
        elif line.strip():
            for n in names:
                out[n] = (out[n][0], f"{out[n][1]} {line.strip()}".strip())
    return out


def _is_physical(name: str, kind: str) -> bool:
    return bool(re.search(r"\bfloat\b|array|ndarray", kind)) or (name in _PHYSICAL and not kind)


def _parameters(func):
    return [p for p in inspect.signature(func).parameters.values()
            if p.name not in ("self", "cls") and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)]


def test_the_public_engine_is_found():
    # The checker sees the scripting API itself (a found nothing would pass everything).
    for name in ("bandsketch.engine.solve.analysis.analyze", "bandsketch.engine.network.circuit.Circuit.resistor",
                 "bandsketch.engine.design.designfile.load_design", "bandsketch.engine.core.values.parse_value"):
        assert name in FUNCTIONS, name
    assert len(FUNCTIONS) > 150


def test_the_reader_of_a_parameters_section():
    doc = ("Summary.\n\nParameters\n----------\nx, y : int\n    Scene units.\nf : float\n    Hz.\n"
           "**values\n    Texts.\n\nReturns\n-------\nfloat\n    Not a parameter.\n")
    assert documented(doc) == {"x": ("int", "Scene units."), "y": ("int", "Scene units."), "f": ("float", "Hz."),
                               "values": ("", "Texts.")}
    assert documented("One line.") == {}


@pytest.mark.parametrize("name", sorted(FUNCTIONS))
def test_every_parameter_is_documented(name):
    func, doc = FUNCTIONS[name]
    found = documented(doc or "")
    missing = [p.name for p in _parameters(func) if p.name not in found]
    assert not missing, f"{name}: the Parameters section does not name {missing}"


@pytest.mark.parametrize("name", sorted(FUNCTIONS))
def test_physical_quantities_give_units(name):
    func, doc = FUNCTIONS[name]
    found = documented(doc or "")
    lacking = [p.name for p in _parameters(func) if p.name in found and _is_physical(p.name, found[p.name][0])
               and not _UNIT.search(" ".join(found[p.name]))]
    assert not lacking, f"{name}: say the unit of {lacking}"

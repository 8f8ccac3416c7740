"""Bandsketch engine: circuits, exact AC analysis and time-constant estimates. No Qt here.

The public names below are imported on first use (PEP 562), so importing one engine module
(the command line's errors, say) does not bring in the solvers and scipy with it.
"""

from importlib import import_module as _import_module

_HOMES = {
    "BadValueError": ".core.errors", "BiasError": ".core.errors", "CircuitError": ".core.errors",
    "DesignFileError": ".core.errors",
    "Change": ".design.document", "Document": ".design.document", "Part": ".design.document",
    "Wire": ".design.document",
    "load_design": ".design.designfile", "save_design": ".design.designfile",
    "list_samples": ".design.samples", "load_sample": ".design.samples",
    "design_to_circuit": ".design.netlist",
    "Circuit": ".network.circuit",
    "Analysis": ".solve.analysis", "analyze": ".solve.analysis",
    "OperatingPoint": ".solve.dcop", "operating_point": ".solve.dcop",
    "plot_bode": ".present.mplbode",
}

__all__ = [
    "Analysis", "Circuit", "analyze", "BadValueError", "BiasError", "OperatingPoint", "operating_point", "Change", "CircuitError", "DesignFileError", "Document", "Part", "Wire",
    "load_design", "save_design", "list_samples", "load_sample", "design_to_circuit", "plot_bode",
]


def __getattr__(name: str):
    if name not in _HOMES:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(_import_module(_HOMES[name], __name__), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))

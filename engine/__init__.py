"""Bandsketch engine: circuits, exact AC analysis and time-constant estimates. No Qt here."""

from .core.errors import BadValueError, BiasError, CircuitError, DesignFileError
from .design.document import Change, Document, Part, Wire
from .design.designfile import load_design, save_design
from .network.circuit import Circuit
from .solve.analysis import Analysis, analyze
from .solve.dcop import OperatingPoint, operating_point
from .present.mplbode import plot_bode

__all__ = [
    "Analysis", "Circuit", "analyze", "BadValueError", "BiasError", "OperatingPoint", "operating_point", "Change", "CircuitError", "DesignFileError", "Document", "Part", "Wire",
    "load_design", "save_design", "plot_bode",
]

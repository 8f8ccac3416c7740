"""Bandsketch engine: circuits, exact AC analysis and time-constant estimates. No Qt here."""

from .errors import BadValueError, CircuitError, DesignFileError
from .document import Change, Document, Part, Wire
from .designfile import load_design, save_design
from .circuit import Circuit
from .analysis import Analysis, analyze

__all__ = [
    "Analysis", "Circuit", "analyze", "BadValueError", "Change", "CircuitError", "DesignFileError", "Document", "Part", "Wire",
    "load_design", "save_design",
]

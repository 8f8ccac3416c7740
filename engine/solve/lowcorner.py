"""The lower-corner estimate: every low-band port as a first-order section of its own.

With the other low-band elements at infinite value (capacitors shorted, inductors open),
port j alone gives H(s) = A_m·(s + ω_zj)/(s + ω_pj) exactly: its pole ω_pj = 1/τ_j is its
short-circuit time constant and its zero ω_zj = |H^j/H^0|·ω_pj comes from its open/short
gain ratio (:attr:`bandsketch.engine.solve.timeconstants.ShortCircuit.open_short_ratios`).
A coupling element cuts the signal off (ω_z = 0); a partly bypassed emitter resistor R_E2
gives ω_z = 1/(R_E2·C).

Taken together as independent sections,

    |H(jω)/A_m|² = Π_j (ω² + ω_zj²)/(ω² + ω_pj²),

and the lower corner is where that product is 1/2. To first order in 1/ω² this is
ω_L² ≈ Σω_p² − 2Σω_z² (Sedra & Smith, Microelectronic Circuits, low-frequency response;
from memory), which is also computed, but the estimate solves the product itself: the
expansion goes too low, or below zero, when a pair that cannot fall 3 dB on its own
(|H^j/H^0| > 1/√2) sits near another pole, while the product counts such a pair for the
fraction of the 3 dB it really costs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..core.roots import brent_root

PAIR_RATIO = 1 / math.sqrt(2)
"""A section whose open/short gain ratio stays above this never falls 3 dB: a pole–zero pair."""
_SCAN_STEP = 0.5
"""Natural-log steps in ω² when scanning down from above every pole and zero for the corner."""
_SCAN_DECADES = 40
"""How far below the lowest pole or zero the scan for a corner goes, in decades of ω²."""


@dataclass(frozen=True)
class LowSections:
    """The low band's ports as first-order sections, and the corner they give.

    Attributes
    ----------
    poles : numpy.ndarray
        rad/s, ω_pj = 1/τ_j of each port (its short-circuit time constant).
    zeros : numpy.ndarray
        rad/s, ω_zj = |H^j/H^0|·ω_pj of each port (0 for a coupling element).
    ratios : numpy.ndarray
        H^j/H^0 of each port, signed (its open/short gain ratio).
    omega : float or None
        rad/s, where Π (ω² + ω_z²)/(ω² + ω_p²) = 1/2 (the highest such ω); None where the
        product never falls to 1/2 (only pole–zero pairs).
    omega_squares : float or None
        rad/s, √(Σω_p² − 2Σω_z²); None where that is not positive.
    omega_sum : float
        rad/s, Σ ω_p = Σ 1/τ_j, the sum of the low band's pole magnitudes.
    shares : numpy.ndarray
        Each port's part of the 3 dB fall at ``omega``: ln((ω² + ω_p²)/(ω² + ω_z²))/ln 2,
        which add up to 1 (negative for a port whose opening raises the gain). Without a
        corner, each port's fall at d.c. in the same units.
    """

    poles: np.ndarray
    zeros: np.ndarray
    ratios: np.ndarray
    omega: float | None
    omega_squares: float | None
    omega_sum: float
    shares: np.ndarray

    def is_pair(self, port: int) -> bool:
        """Port ``port`` alone never falls 3 dB: it makes a pole–zero pair, not a corner."""
        return bool(abs(self.ratios[port]) > PAIR_RATIO)


def _log_fall(x: float, wp: np.ndarray, wz: np.ndarray) -> np.ndarray:
    """ln((x + ω_p²)/(x + ω_z²)) of each section at ω² = x (the fall of |H|², in nepers ×2)."""
    return np.log(x + wp * wp) - np.log(x + wz * wz) if x > 0 else 2 * (np.log(wp) - np.log(wz))


def section_corner(poles, zeros) -> float | None:
    """rad/s: the highest ω where Π (ω² + ω_z²)/(ω² + ω_p²) = 1/2, or None.

    Parameters
    ----------
    poles, zeros : array_like
        rad/s, each section's pole and zero magnitude.
    """
    wp, wz = np.abs(np.asarray(poles, float)), np.abs(np.asarray(zeros, float))
    if wp.size == 0:
        return None
    target = math.log(2)

    def excess(lx):
        return float(np.sum(np.log1p(wp * wp / math.exp(lx)) - np.log1p(wz * wz / math.exp(lx)))) - target

    top = 2 * math.log(max(wp.max(), wz.max())) + math.log(4 * wp.size)
    bottom = 2 * math.log(min(v for v in (*wp, *wz) if v > 0)) - _SCAN_DECADES * math.log(10)
    hi, f_hi = top, excess(top)
    while hi > bottom:
        lo = hi - _SCAN_STEP
        f_lo = excess(lo)
        if f_lo >= 0 > f_hi:
            return math.exp(brent_root(excess, lo, hi, xtol=1e-14, rtol=1e-14) / 2)
        hi, f_hi = lo, f_lo
    return None


def squares_corner(poles, zeros) -> float | None:
    """rad/s: √(Σω_p² − 2Σω_z²), or None where it is not positive.

    Parameters
    ----------
    poles, zeros : array_like
        rad/s, each section's pole and zero magnitude.
    """
    wp, wz = np.asarray(poles, float), np.asarray(zeros, float)
    square = float(np.sum(wp * wp) - 2 * np.sum(wz * wz))
    return math.sqrt(square) if square > 0 else None


def low_sections(time_constants, ratios) -> LowSections:
    """The sections of the low-band ports and their corner.

    Parameters
    ----------
    time_constants : array_like
        s, each port's short-circuit time constant.
    ratios : array_like
        Each port's open/short gain ratio H^j/H^0.
    """
    tau = np.asarray(time_constants, float)
    ratios = np.asarray(ratios, float)
    wp = np.abs(1 / tau) if tau.size else np.zeros(0)
    wz = np.abs(ratios) * wp
    omega = section_corner(wp, wz)
    at = omega * omega if omega else 0.0
    with np.errstate(divide="ignore"):
        shares = _log_fall(at, wp, wz) / math.log(2) if wp.size else np.zeros(0)
    return LowSections(wp, wz, ratios, omega, squares_corner(wp, wz), float(np.sum(1 / tau)) if tau.size else 0.0,
                       shares)

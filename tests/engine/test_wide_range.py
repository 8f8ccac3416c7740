"""A stage whose values span what the schema allows a designer: 1 µΩ to 1 TΩ, 1 aF to 1 F.

An invented scenario (no real product): a 1 V source behind 1 µΩ, a 1 F coupling capacitor
into a gate biased by 1 TΩ, a 10 mS transconductance with 1 aF gate-source and gate-drain
capacitances, a 1 kΩ source resistor bypassed by 1 F, a 10 kΩ drain load with 1 aF. It used
to be refused: opening the 1 F coupling capacitor was judged by the Sherman–Morrison update,
whose denominator 1 − t·z (here ~1e-18) double precision cannot hold, so the capacitor looked
neutral, was left open and the output "did not respond". The engine now solves the opened
network directly where that denominator cancels.

Checked against the 40-digit mpmath nodal reference of test_extreme_values.py (nodal
equations after Ho, Ruehli and Brennan, IEEE Trans. CAS-22(6), 1975; the time constants after
Thornton, Searle, Pederson et al., SEEC vol. 5, Wiley, 1965).
"""

from __future__ import annotations

import mpmath as mp
import pytest

from bandsketch.engine import analyze
from bandsketch.engine.network.circuit import Circuit
from bandsketch.engine.network.elements import Capacitor
from test_extreme_values import DIGITS, Reference, close, exact_corner, front_end


def wide_stage() -> Circuit:
    return front_end("wide-range front end (invented)", rs="1u", c_gate="1e-18", c_load="1e-18")


@pytest.fixture(scope="module")
def case():
    saved, mp.mp.dps = mp.mp.dps, DIGITS
    c = wide_stage()
    yield c, analyze(c)
    mp.mp.dps = saved


def test_the_wide_range_stage_is_analysed_with_the_designers_bands(case):
    _, a = case
    assert {n: r.band for n, r in a.capacitors.items()} == {
        "Cin": "low", "Cs": "low", "Cgs": "high", "Cgd": "high", "Cl": "high"}


def test_its_gain_resistances_and_corners_match_the_reference(case):
    c, a = case
    caps = {el.name: el for el in c.elements.values() if isinstance(el, Capacitor)}
    high, low = [caps[n] for n in ("Cgs", "Cgd", "Cl")], [caps[n] for n in ("Cin", "Cs")]
    mid = Reference(c, shorted={el.name for el in low}, removed={el.name for el in high})
    am = mid.H(0).real
    assert close(a.midband_gain, am)
    Z = Reference(c, shorted={el.name for el in low}, removed={el.name for el in high}, drive=False).port_matrix(high)
    for j, el in enumerate(high):
        assert close(a.capacitors[el.name].resistance, Z[j, j]), el.name
    full = Reference(c)
    level = abs(am) / mp.sqrt(2)
    assert close(a.f_high_exact, exact_corner(full, level, a.f_high_estimate))
    assert close(a.f_low_exact, exact_corner(full, level, a.f_low_estimate))

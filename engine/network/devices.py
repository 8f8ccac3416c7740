"""Transistor and op-amp blocks: from the user's values to small-signal primitives.

A block is given either small-signal values or an operating point; :func:`bjt_values`,
:func:`mosfet_values` and :func:`opamp_values` resolve either into the full set of
small-signal values (SI units), and :func:`expand` turns a resolved block into primitive
elements wired as the usual hybrid-π and square-law small-signal models are drawn.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Callable

import numpy as np

from .elements import VCCS, VCVS, Capacitor, Resistor
from .largesignal import BjtParams, MosParams, bjt_currents, bjt_forward_active, mos_current, mos_saturated
from ..core.errors import BadValueError
from ..core.values import format_value, parse_value

BOLTZMANN = 1.380649e-23
"""Boltzmann constant k, J/K (exact in the SI since 2019; CODATA 2018)."""
ELEMENTARY_CHARGE = 1.602176634e-19
"""Elementary charge q, C (exact in the SI since 2019; CODATA 2018)."""


def thermal_voltage(temperature: float) -> float:
    """Thermal voltage V_T = kT/q in volts at ``temperature`` in kelvin.

    Parameters
    ----------
    temperature : float
        K.
    """
    return BOLTZMANN * temperature / ELEMENTARY_CHARGE


@dataclass(frozen=True)
class Block:
    """A resolved transistor or op-amp block.

    Parameters
    ----------
    kind : str
        ``"bjt"``, ``"mosfet"`` or ``"opamp"``.
    name : str
        The block's name (``Q1``).
    pins : Mapping[str, str]
        Pin name -> node (``{"collector": "c", "base": "b", ...}``).
    values : Mapping[str, float]
        Every small-signal value in SI units (``gm`` in S, ``rpi`` in Ω, ``cpi`` in F ...);
        absent elements are 0 (capacitances, r_b, g_mb) or ``math.inf`` (r_o, r_in).
    """

    kind: str
    name: str
    pins: MappingProxyType
    values: MappingProxyType


def _get(block, given, key, unit, *, required=False, zero=False, negative=False):
    text = given.get(key)
    if text is None or (isinstance(text, str) and not text.strip()):
        if required:
            raise BadValueError(f"{block} {key}: a value is needed", part=block, field=key, text="")
        return None
    return parse_value(text, unit=unit, part=block, field=key, allow_zero=zero, allow_negative=negative)


def _need_positive_result(block, key, value, why):
    if not (value > 0 and math.isfinite(value)):
        raise BadValueError(f"{block} {key}: {why}", part=block, field=key, text="")
    return value


def bjt_values(name: str, given: dict) -> dict:
    """Resolve a bipolar transistor's small-signal values.

    Parameters
    ----------
    name : str
        Block name, used in error messages.
    given : dict
        Field texts or numbers. Small-signal: ``gm`` (S), ``rpi`` (Ω), optional ``ro``,
        ``cpi``. Operating point (used when ``ic`` is given): ``ic`` (A), ``beta``, optional
        ``va`` (V), ``ft`` (Hz), ``temp`` (K, default 300). Either way optional ``rb`` (Ω),
        ``cmu``, ``ccs`` (F).

    Returns
    -------
    dict
        ``gm`` (S), ``rpi``, ``ro``, ``rb`` (Ω), ``cpi``, ``cmu``, ``ccs`` (F), and for an
        operating point also ``vt`` (V).
    """
    out = {"rb": _get(name, given, "rb", "Ω", zero=True) or 0.0,
           "cmu": _get(name, given, "cmu", "F", zero=True) or 0.0,
           "ccs": _get(name, given, "ccs", "F", zero=True) or 0.0}
    if block_mode("bjt", given) == "operating_point":
        ic = _get(name, given, "ic", "A", required=True)
        beta = _get(name, given, "beta", "", required=True)
        temp = _get(name, given, "temp", "K") or 300.0
        out["vt"] = thermal_voltage(temp)
        out["gm"] = ic / out["vt"]
        out["rpi"] = beta / out["gm"]
        va = _get(name, given, "va", "V")
        out["ro"] = va / ic if va else math.inf
        ft = _get(name, given, "ft", "Hz")
        if ft:
            cpi = out["gm"] / (2 * math.pi * ft) - out["cmu"]
            out["cpi"] = _need_positive_result(
                name, "ft", cpi, f"f_T = {ft:g} Hz is too high for C_μ = {out['cmu']:g} F at "
                                  f"I_C = {ic:g} A (C_π would be negative); lower f_T or C_μ")
        else:
            out["cpi"] = 0.0
    else:
        out["gm"] = _get(name, given, "gm", "S", required=True, zero=True, negative=True)
        out["rpi"] = _get(name, given, "rpi", "Ω", required=True)
        out["ro"] = _get(name, given, "ro", "Ω", ) or math.inf
        out["cpi"] = _get(name, given, "cpi", "F", zero=True) or 0.0
    return out


def mosfet_values(name: str, given: dict) -> dict:
    """Resolve a MOS transistor's small-signal values.

    Parameters
    ----------
    name : str
        Block name, used in error messages.
    given : dict
        Small-signal: ``gm`` (S), optional ``ro`` (Ω). Operating point (used when ``id`` is
        given): ``id`` (A), ``vov`` (V), optional ``lam`` (1/V) or ``va`` (V). Either way
        optional ``gmb`` (S), ``cgs``, ``cgd``, ``cdb``, ``csb`` (F).

    Returns
    -------
    dict
        ``gm``, ``gmb`` (S), ``ro`` (Ω), ``cgs``, ``cgd``, ``cdb``, ``csb`` (F).
    """
    out = {"gmb": _get(name, given, "gmb", "S", zero=True, negative=True) or 0.0}
    for cap in ("cgs", "cgd", "cdb", "csb"):
        out[cap] = _get(name, given, cap, "F", zero=True) or 0.0
    if block_mode("mosfet", given) == "operating_point":
        i_d = _get(name, given, "id", "A", required=True)
        vov = _get(name, given, "vov", "V", required=True)
        out["gm"] = 2 * i_d / vov
        lam = _get(name, given, "lam", "1/V")
        va = _get(name, given, "va", "V")
        if lam and va:
            raise BadValueError(f"{name}: give λ or V_A, not both", part=name, field="lam", text="")
        out["ro"] = 1 / (lam * i_d) if lam else (va / i_d if va else math.inf)
    else:
        out["gm"] = _get(name, given, "gm", "S", required=True, zero=True, negative=True)
        out["ro"] = _get(name, given, "ro", "Ω") or math.inf
    return out


_OPERATING_POINT_KEY = {"bjt": "ic", "mosfet": "id"}


def block_mode(kind: str, given: dict) -> str:
    """The model mode a transistor's values ask for: ``"small_signal"``, ``"operating_point"``
    or ``"bias"`` (from the circuit); as ``given["mode"]`` names it, else read from what is given.

    Parameters
    ----------
    kind : str
        ``"bjt"`` or ``"mosfet"``.
    given : dict
        The block's field texts or numbers (SI units).
    """
    mode = given.get("mode")
    if mode:
        return mode
    if given.get(_OPERATING_POINT_KEY[kind]) not in (None, ""):
        return "operating_point"
    return "small_signal" if given.get("gm") not in (None, "") else "bias"


def _sign(name, given, negative):
    polarity = str(given.get("polarity") or "").strip().lower()
    if polarity in ("", "npn", "n"):
        return 1.0
    if polarity == negative:
        return -1.0
    raise BadValueError(f"{name} polarity: '{polarity}' is not a polarity; use npn/pnp (BJT) or n/p (MOS)",
                        part=name, field="polarity", text=polarity)


@dataclass(frozen=True)
class LargeBjt:
    """A bipolar transistor biased from its circuit: its large-signal model and capacitances.

    Attributes
    ----------
    params : BjtParams
        The transport-model parameters.
    ft, tf : float or None
        Transition frequency f_T (Hz) or forward transit time τ_F (s) for C_π.
    cjc0, vjc, mjc : float or None
        Zero-bias collector-junction capacitance (F), built-in potential (V) and grading.
    cmu, ccs, rb : float
        Fixed C_μ (used without C_jc0), C_cs (F) and r_b (Ω).
    """

    params: BjtParams
    ft: float | None
    tf: float | None
    cjc0: float | None
    vjc: float
    mjc: float
    cmu: float
    ccs: float
    rb: float

    def nominal(self) -> dict:
        """Junction voltages of a forward-active guess (1 mA, V_CE = 2 V), device polarity."""
        vbe = self.params.vt * math.log(1e-3 / self.params.isat)
        return {"vbe": vbe, "vbc": vbe - 2.0}

    def small_signal(self, name: str, volts: dict) -> dict:
        """Hybrid-π values at junction voltages ``volts`` (``vbe``, ``vbc`` in V, device polarity).

        g_m = ∂I_C/∂V_BE and 1/r_o = ∂I_C/∂V_CE at constant V_CE and V_BE, 1/r_π = ∂I_B/∂V_BE;
        C_π = g_m/(2π f_T) − C_μ or τ_F·g_m; C_μ = C_jc0/(1 + V_CB/φ_C)^m (held at its value
        at V_CB = −φ_C/2 on a forward-biased collector junction, where the law has no meaning).
        Values in S, Ω, F and V; arrays of voltages give arrays of values (one per sample).

        Raises
        ------
        BadValueError
            f_T is too high for C_μ at a single operating point (C_π would be negative); an
            array of points gets NaN there instead.
        """
        p = self.params
        vbe, vbc = np.asarray(volts["vbe"], dtype=float), np.asarray(volts["vbc"], dtype=float)
        ic, _, dc_be, dc_bc, db_be, db_bc = bjt_currents(vbe, vbc, p.isat, p.beta, p.beta_r, p.va, p.vt)
        gm = dc_be + dc_bc
        go = -dc_bc
        with np.errstate(divide="ignore"):
            ro = np.where(go > 1e-12 * np.abs(gm), 1.0 / np.where(go > 0, go, 1.0), math.inf)
        out = {"gm": gm, "rpi": 1.0 / (db_be + db_bc), "ro": ro,
               "rb": np.full(gm.shape, self.rb), "ccs": np.full(gm.shape, self.ccs), "vt": np.full(gm.shape, p.vt)}
        if self.cjc0:
            out["cmu"] = self.cjc0 / (1.0 + np.maximum(-vbc, -0.5 * self.vjc) / self.vjc) ** self.mjc
        else:
            out["cmu"] = np.full(gm.shape, self.cmu)
        if self.ft:
            # f_T describes the active region; out of it the diffusion charge C_π stands for is
            # g_m·τ_F with τ_F = 1/(2π f_T) (the region warning says the values are not an amplifier's).
            active = bjt_forward_active(vbe, vbc)
            cpi = gm / (2 * math.pi * self.ft) - np.where(active, out["cmu"], 0.0)
            out["cpi"] = np.where(cpi > 0, cpi, math.nan)
        else:
            out["cpi"] = (self.tf or 0.0) * gm
        if gm.ndim:
            return out
        values = {key: float(v) for key, v in out.items()}
        if self.ft:
            _need_positive_result(
                name, "ft", values["cpi"],
                    f"f_T = {self.ft:g} Hz is too high for C_μ = {values['cmu']:g} F at I_C = {float(ic):g} A "
                "(C_π would be negative); lower f_T or C_μ")
        return values


def _bjt_large(name: str, given: dict) -> LargeBjt:
    """Read a BJT's large-signal parameters: ``isat`` (A), ``beta``, optional ``beta_r``
    (default 1), ``va`` (V), ``temp`` (K, default 300), ``ft`` (Hz) or ``tf`` (s), ``cjc0``
    (F) with ``vjc`` (V, default 0.75) and ``mjc`` (default 0.33), ``cmu``, ``ccs`` (F),
    ``rb`` (Ω), ``polarity`` (npn or pnp)."""
    ft, tf = _get(name, given, "ft", "Hz"), _get(name, given, "tf", "s")
    if ft and tf:
        raise BadValueError(f"{name}: give f_T or τ_F, not both", part=name, field="tf", text="")
    params = BjtParams(_sign(name, given, "pnp"), _get(name, given, "isat", "A", required=True),
                       _get(name, given, "beta", "", required=True), _get(name, given, "beta_r", "") or 1.0,
                       _get(name, given, "va", "V") or math.inf,
                       thermal_voltage(_get(name, given, "temp", "K") or 300.0))
    return LargeBjt(params, ft, tf, _get(name, given, "cjc0", "F", zero=True),
                    _get(name, given, "vjc", "V") or 0.75, _get(name, given, "mjc", "") or 0.33,
                    _get(name, given, "cmu", "F", zero=True) or 0.0, _get(name, given, "ccs", "F", zero=True) or 0.0,
                    _get(name, given, "rb", "Ω", zero=True) or 0.0)


@dataclass(frozen=True)
class LargeMos:
    """A MOS transistor biased from its circuit: its square-law model and its capacitances (F):
    fixed, or C_gs and C_gd from the gate area by region (``gate``, see :func:`meyer_gate_caps`)."""

    params: MosParams
    caps: MappingProxyType
    gate: tuple | None = None
    """(W·L·C_ox, W·C_ov) in F when the gate's size and oxide are given; None for typed C_gs, C_gd."""

    def nominal(self) -> dict:
        """Terminal voltages of a saturated guess (V_ov = 0.2 V, V_DS = 1 V), device polarity."""
        return {"vgs": self.params.vth + 0.2, "vds": 1.0, "vbs": 0.0}

    def small_signal(self, name: str, volts: dict) -> dict:
        """g_m, g_mb (S), r_o = 1/(∂I_D/∂V_DS) (Ω) at ``volts`` (``vgs``, ``vds``, ``vbs`` in V)
        and the capacitances (F); arrays of voltages give arrays of values (one per sample)."""
        p = self.params
        _, gm, gds, gmb, vth = mos_current(volts["vgs"], volts["vds"], volts["vbs"], p.vth, p.kp, p.lam, p.gamma,
                                           p.phi)
        with np.errstate(divide="ignore"):
            ro = np.where(gds > 0, 1.0 / np.where(gds > 0, gds, 1.0), math.inf)
        out = {"gm": gm, "gmb": gmb, "ro": ro, **{k: np.full(gm.shape, c) for k, c in self.caps.items()}}
        if self.gate is not None:
            out["cgs"], out["cgd"] = meyer_gate_caps(volts["vgs"], volts["vds"], vth, *self.gate)
        return out if gm.ndim else {key: float(v) for key, v in out.items()}


def meyer_gate_caps(vgs, vds, vth, channel: float, overlap: float):
    """C_gs and C_gd (F) of the Meyer model by region, the bulk tied to the source.

    Saturation: C_gs = ⅔·W·L·C_ox + W·C_ov, C_gd = W·C_ov; triode: each ½·W·L·C_ox + W·C_ov;
    cut-off: the gate's charge faces the bulk, so C_gs = W·L·C_ox + W·C_ov, C_gd = W·C_ov
    (J. E. Meyer, "MOS models and circuit simulation", RCA Review 32, 1971).

    Parameters
    ----------
    vgs, vds : float or numpy.ndarray
        Gate-source and drain-source voltages, V, in the device's polarity.
    vth : float or numpy.ndarray
        Threshold at this body bias, V.
    channel : float
        W·L·C_ox, F.
    overlap : float
        W·C_ov, F (0 when no overlap is given).

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        C_gs and C_gd, F.
    """
    vgs, vds, vth = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (vgs, vds, vth)))
    on = vgs > vth
    saturated = mos_saturated(vgs, vds, vth)
    share_s = np.where(~on, 1.0, np.where(saturated, 2.0 / 3.0, 0.5))
    share_d = np.where(on & ~saturated, 0.5, 0.0)
    return share_s * channel + overlap, share_d * channel + overlap


def _mosfet_large(name: str, given: dict) -> LargeMos:
    """Read a MOSFET's large-signal parameters: ``vth`` (V), ``kp`` (A/V²) or ``kprime`` (k′ =
    μC_ox, A/V²) with ``w`` and ``l`` (m), optional ``lam`` (1/V), ``gamma`` (√V) with ``phi``
    (2φ_F, V, default 0.7), ``polarity`` (n or p); the capacitances ``cdb``, ``csb`` (F), and
    ``cgs``, ``cgd`` (F) typed, or, when ``w``, ``l`` and ``cox`` (F/m²) are given, from the
    gate by region with the optional overlap ``cov`` (F/m) (:func:`meyer_gate_caps`)."""
    w, length = _get(name, given, "w", "m"), _get(name, given, "l", "m")
    kprime, kp = _get(name, given, "kprime", "A/V²"), _get(name, given, "kp", "A/V²")
    if kprime is not None:
        if w is None or length is None:
            raise BadValueError(f"{name}: k′ sets K_P = k′·W/L; give W and L too, or K_P instead of k′",
                                part=name, field="w" if w is None else "l", text="")
        if kp is not None:
            raise BadValueError(f"{name}: K_P is given as well as k′, W and L; clear K_P (k′·W/L gives "
                                f"{format_value(kprime * w / length, 'A/V²')})", part=name, field="kp", text="")
        kp = kprime * w / length
    if kp is None:
        raise BadValueError(f"{name} kp: a value is needed (K_P, or k′ with W and L)", part=name, field="kp", text="")
    params = MosParams(_sign(name, given, "p"), _get(name, given, "vth", "V", required=True, zero=True,
                                                    negative=True),
                       kp, _get(name, given, "lam", "1/V") or 0.0,
                       _get(name, given, "gamma", "√V", zero=True) or 0.0, _get(name, given, "phi", "V") or 0.7)
    caps = {cap: _get(name, given, cap, "F", zero=True) or 0.0 for cap in ("cgs", "cgd", "cdb", "csb")}
    cox = _get(name, given, "cox", "F/m²")
    gate = None
    if cox is not None:
        if w is None or length is None:
            raise BadValueError(f"{name}: C_ox gives the gate capacitances with W and L; give W and L too",
                                part=name, field="w" if w is None else "l", text="")
        gate = (w * length * cox, w * (_get(name, given, "cov", "F/m", zero=True) or 0.0))
    return LargeMos(params, MappingProxyType(caps), gate)


def opamp_values(name: str, given: dict) -> dict:
    """Resolve a single-pole op-amp: ``a0`` (V/V), ``fu`` (Hz), optional ``rout``, ``rin`` (Ω).

    Parameters
    ----------
    name : str
        Block name, used in error messages.
    given : dict
        Field texts or numbers, units as above.

    Returns
    -------
    dict
        ``a0``, ``fu`` (Hz), ``fp`` (Hz, the open-loop pole fu/a0), ``rout`` (Ω, 0 if
        absent), ``rin`` (Ω, inf if absent).
    """
    a0 = _get(name, given, "a0", "V/V", required=True)
    fu = _get(name, given, "fu", "Hz", required=True)
    return {"a0": a0, "fu": fu, "fp": fu / a0,
            "rout": _get(name, given, "rout", "Ω", zero=True) or 0.0,
            "rin": _get(name, given, "rin", "Ω") or math.inf}


def _pieces(block: Block):
    """The helpers that add a block's resistors and capacitors, leaving out absent ones."""
    n, v = block.name, block.values
    els: list = []

    def r(key, a, b):
        if math.isfinite(v[key]) and v[key] > 0:
            els.append(Resistor(f"{n}.{key}", a, b, v[key], n))

    def c(key, a, b):
        if v[key] > 0 and a != b:
            els.append(Capacitor(f"{n}.{key}", a, b, v[key], n))

    return els, r, c


def _expand_bjt(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, c = _pieces(block)
    col, base, emi, sub = p["collector"], p["base"], p["emitter"], p["substrate"]
    bi = f"{n}.bi" if v["rb"] > 0 else base
    r("rb", base, bi)
    r("rpi", bi, emi)
    c("cpi", bi, emi)
    c("cmu", bi, col)
    els.append(VCCS(f"{n}.gm", col, emi, bi, emi, v["gm"], n))
    r("ro", col, emi)
    c("ccs", col, sub)
    return els


def _expand_mosfet(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, c = _pieces(block)
    d, g, s, bulk = p["drain"], p["gate"], p["source"], p["bulk"]
    els.append(VCCS(f"{n}.gm", d, s, g, s, v["gm"], n))
    if v["gmb"] and bulk != s:
        els.append(VCCS(f"{n}.gmb", d, s, bulk, s, v["gmb"], n))
    r("ro", d, s)
    c("cgs", g, s)
    c("cgd", g, d)
    c("cdb", d, bulk)
    c("csb", s, bulk)
    return els


def _expand_opamp(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, _ = _pieces(block)
    plus, minus, out = p["plus"], p["minus"], p["out"]
    x = f"{n}.x"
    r("rin", plus, minus)
    els.append(VCCS(f"{n}.gin", "0", x, plus, minus, 1.0, n))
    els.append(Resistor(f"{n}.rp", x, "0", 1.0, n))
    els.append(Capacitor(f"{n}.cp", x, "0", 1 / (2 * math.pi * v["fp"]), n))
    y = f"{n}.y" if v["rout"] > 0 else out
    els.append(VCVS(f"{n}.a0", y, "0", x, "0", v["a0"], n))
    r("rout", y, out)
    return els


@dataclass(frozen=True)
class BlockModel:
    """How one kind of block is resolved and expanded.

    Attributes
    ----------
    resolve : callable
        ``resolve(name, given)`` -> dict of small-signal values in SI units.
    expand : callable
        ``expand(block)`` -> list of primitive elements.
    large : callable or None
        ``large(name, given)`` -> the large-signal model of a block biased from its circuit.
    """

    resolve: Callable
    expand: Callable
    large: Callable | None = None


MODELS = MappingProxyType({
    "bjt": BlockModel(bjt_values, _expand_bjt, _bjt_large),
    "mosfet": BlockModel(mosfet_values, _expand_mosfet, _mosfet_large),
    "opamp": BlockModel(opamp_values, _expand_opamp),
})
"""Every block kind's model, by kind."""


def expand(block: Block) -> list:
    """Primitive elements of a resolved block, named ``<block>.<param>``.

    BJT: r_b from the base pin to the internal base b′ (node ``<block>.bi``; no node when
    r_b = 0), r_π and C_π from b′ to the emitter, C_μ from b′ to the collector, g_m·v_b′e
    from collector to emitter, r_o collector–emitter, C_cs collector–substrate. MOSFET:
    g_m·v_gs + g_mb·v_bs from drain to source, r_o drain–source, C_gs, C_gd, C_db
    (drain–bulk), C_sb (source–bulk). Op-amp: r_in between the inputs; a unit-resistance
    pole node ``<block>.x`` driven by 1 S·(v₊ − v₋) with ``<block>.cp`` = 1/(2π f_p) F; an
    ideal A₀·v_x stage; r_out to the output. Zero capacitances and infinite resistances
    are left out.

    Parameters
    ----------
    block : Block
        A resolved block (SI values).
    """
    return MODELS[block.kind].expand(block)

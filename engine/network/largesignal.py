"""Large-signal transistor models for the DC operating point, with their exact derivatives.

BJT: the Ebers–Moll transport model (J. J. Ebers, J. L. Moll, "Large-Signal Behavior of
Junction Transistors", Proc. IRE 42(12), 1954) with the Early effect on the transport
current. MOSFET: the square law of H. Shichman and D. A. Hodges ("Modeling and Simulation
of Insulated-Gate Field-Effect Transistor Switching Circuits", IEEE JSSC 3(3), 1968) with
channel-length modulation λ and the body effect. Every function works on numpy arrays (one
entry per device, or per device and sample) in the device's own polarity: a pnp or p-MOS
device is evaluated on sign-flipped voltages, so forward active reads positive for both.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from types import MappingProxyType

import numpy as np

EXP_LIMIT = 80.0
"""Above this exponent (in units of V_T) the junction exponential continues as its tangent,
so a wild Newton iterate cannot overflow; the limiter keeps real iterates far below it."""

JUNCTION_ON = 0.4
"""A junction forward-biased by more than this (V) conducts, for naming regions (the usual
0.4 V rule of hand analysis; from memory, A. S. Sedra, K. C. Smith, Microelectronic Circuits)."""


def _exp(x):
    """e^x and its derivative, continued linearly above :data:`EXP_LIMIT`."""
    big = x > EXP_LIMIT
    e = np.exp(np.where(big, EXP_LIMIT, x))
    return np.where(big, e * (1.0 + x - EXP_LIMIT), e), e


@dataclass(frozen=True)
class BjtParams:
    """Large-signal parameters of a bipolar transistor (SI units).

    Attributes
    ----------
    sign : float
        +1 for npn, −1 for pnp.
    isat : float
        Transport saturation current I_S, A.
    beta : float
        Forward current gain β_F.
    beta_r : float
        Reverse current gain β_R.
    va : float
        Early voltage V_A, V (``math.inf`` when absent).
    vt : float
        Thermal voltage kT/q, V.
    """

    sign: float
    isat: float
    beta: float
    beta_r: float
    va: float
    vt: float

    @property
    def vcrit(self) -> float:
        """The junction's critical voltage V_T·ln(V_T/(√2·I_S)), V, above which steps are limited."""
        return self.vt * math.log(self.vt / (math.sqrt(2.0) * self.isat))


def bjt_currents(vbe, vbc, isat, beta, beta_r, va, vt):
    """Collector and base currents of the transport model and their partial derivatives.

    Parameters
    ----------
    vbe, vbc : array_like
        Junction voltages in the device's own polarity, V.
    isat, beta, beta_r, va, vt : array_like
        I_S (A), β_F, β_R, V_A (V, inf when absent), V_T (V).

    Returns
    -------
    tuple of numpy.ndarray
        ``ic``, ``ib`` (A, into the collector and the base) and ``dic_dvbe``, ``dic_dvbc``,
        ``dib_dvbe``, ``dib_dvbc`` (S).

    Notes
    -----
    I_F = I_S(e^{V_BE/V_T} − 1), I_R = I_S(e^{V_BC/V_T} − 1); the transport current is
    (I_F − I_R)(1 + V_CE/V_A); I_C = I_CT − I_R/β_R, I_B = I_F/β_F + I_R/β_R.
    """
    ef, def_ = _exp(np.asarray(vbe) / vt)
    er, der = _exp(np.asarray(vbc) / vt)
    i_f, i_r = isat * (ef - 1.0), isat * (er - 1.0)
    g_f, g_r = isat * def_ / vt, isat * der / vt
    early = 1.0 + (vbe - vbc) / va
    ict = (i_f - i_r) * early
    dict_dvbe = g_f * early + (i_f - i_r) / va
    dict_dvbc = -g_r * early - (i_f - i_r) / va
    ic = ict - i_r / beta_r
    ib = i_f / beta + i_r / beta_r
    return ic, ib, dict_dvbe, dict_dvbc - g_r / beta_r, g_f / beta, g_r / beta_r


AMPLIFYING_REGION = MappingProxyType({"bjt": "forward active", "mosfet": "saturation"})
"""The region in which each kind amplifies as its small-signal values assume (common
practice, no source)."""


def bjt_forward_active(vbe, vbc):
    """Whether a BJT is forward active (the rule of :func:`bjt_region`), for arrays too.

    Parameters
    ----------
    vbe, vbc : array_like
        Junction voltages, V (device polarity).

    Returns
    -------
    numpy.ndarray of bool
    """
    return (np.asarray(vbe) > JUNCTION_ON) & ~(np.asarray(vbc) > JUNCTION_ON)


def mos_saturated(vgs, vds, vth):
    """Whether a MOSFET is in saturation (the rule of :func:`mos_region`), for arrays too.

    Parameters
    ----------
    vgs, vds, vth : array_like
        Gate–source and drain–source voltages and the threshold, V (device polarity).

    Returns
    -------
    numpy.ndarray of bool
    """
    vov = np.asarray(vgs) - vth
    return (vov > 0) & (np.abs(vds) >= vov)


def bjt_region(vbe, vbc) -> str:
    """The region a BJT is in, from its junction voltages (device polarity, V).

    Parameters
    ----------
    vbe, vbc : float
        Junction voltages, V (device polarity).
    """
    be, bc = vbe > JUNCTION_ON, vbc > JUNCTION_ON
    if be and bc:
        return "saturated"
    if be:
        return "forward active"
    if bc:
        return "reverse active"
    return "cut off"


@dataclass(frozen=True)
class MosParams:
    """Large-signal parameters of a MOS transistor (SI units).

    Attributes
    ----------
    sign : float
        +1 for n-channel, −1 for p-channel.
    vth : float
        Zero-bias threshold voltage V_th0, V (positive for an enhancement device).
    kp : float
        K_P = μC_ox·W/L, A/V².
    lam : float
        Channel-length modulation λ, 1/V (0 when absent).
    gamma : float
        Body-effect coefficient γ, √V (0 when absent).
    phi : float
        Surface potential 2φ_F, V.
    """

    sign: float
    vth: float
    kp: float
    lam: float
    gamma: float
    phi: float


def _mos_forward(vgs, vds, vbs, vth0, kp, lam, gamma, phi):
    """Square-law drain current for V_DS ≥ 0, with ∂/∂V_GS, ∂/∂V_DS, ∂/∂V_BS and V_th."""
    root = np.sqrt(np.maximum(phi - vbs, 1e-6 * phi))
    vth = vth0 + gamma * (root - np.sqrt(phi))
    dvth_dvbs = -gamma / (2.0 * root)
    vov = vgs - vth
    on = vov > 0
    sat = vds >= vov
    clm = 1.0 + lam * vds
    core = np.where(sat, 0.5 * kp * vov ** 2, kp * (vov * vds - 0.5 * vds ** 2))
    dcore_dvov = np.where(sat, kp * vov, kp * vds)
    dcore_dvds = np.where(sat, 0.0, kp * (vov - vds))
    i_d = np.where(on, core * clm, 0.0)
    gm = np.where(on, dcore_dvov * clm, 0.0)
    gds = np.where(on, dcore_dvds * clm + core * lam, 0.0)
    gmb = -gm * dvth_dvbs
    return i_d, gm, gds, gmb, vth


def mos_current(vgs, vds, vbs, vth0, kp, lam, gamma, phi):
    """Drain current of the Shichman–Hodges model and its partial derivatives.

    Parameters
    ----------
    vgs, vds, vbs : array_like
        Terminal voltages in the device's own polarity, V.
    vth0, kp, lam, gamma, phi : array_like
        V_th0 (V), K_P (A/V²), λ (1/V), γ (√V), 2φ_F (V).

    Returns
    -------
    tuple of numpy.ndarray
        ``id`` (A, into the drain), ``gm``, ``gds``, ``gmb`` (S: ∂I_D/∂V_GS, ∂/∂V_DS,
        ∂/∂V_BS) and the threshold ``vth`` (V) at this body bias.

    Notes
    -----
    Cut-off (V_GS ≤ V_th): I_D = 0; triode (V_DS < V_GS − V_th):
    I_D = K_P[(V_GS − V_th)V_DS − V_DS²/2](1 + λV_DS); saturation:
    I_D = ½K_P(V_GS − V_th)²(1 + λV_DS); V_th = V_th0 + γ(√(2φ_F − V_BS) − √(2φ_F)).
    With V_DS < 0 the device is used with drain and source exchanged (it is symmetric).
    """
    vgs, vds, vbs = (np.asarray(v, dtype=float) for v in (vgs, vds, vbs))
    fwd = _mos_forward(vgs, vds, vbs, vth0, kp, lam, gamma, phi)
    # Exchanged: the drain terminal acts as the source, I_D(v) = −I(v_GD, −v_DS, v_BD).
    i_r, gm_r, gds_r, gmb_r, vth_r = _mos_forward(vgs - vds, -vds, vbs - vds, vth0, kp, lam, gamma, phi)
    rev = vds < 0
    i_d = np.where(rev, -i_r, fwd[0])
    gm = np.where(rev, -gm_r, fwd[1])
    gds = np.where(rev, gm_r + gds_r + gmb_r, fwd[2])
    gmb = np.where(rev, -gmb_r, fwd[3])
    return i_d, gm, gds, gmb, np.where(rev, vth_r, fwd[4])


def mos_region(vgs, vds, vth) -> str:
    """The region a MOSFET is in (device polarity, V): cut off, triode or saturation.

    Parameters
    ----------
    vgs, vds : float
        Terminal voltages, V (device polarity).
    vth : float
        Threshold voltage, V.
    """
    vov = vgs - vth
    if vov <= 0:
        return "cut off"
    return "triode" if abs(vds) < vov else "saturation"


def limit_junction(vnew, vold, vt, vcrit):
    """Limit a junction voltage's Newton step (the critical-voltage limiter).

    Above the critical voltage a step of more than 2·V_T is replaced by the step that
    changes the junction current by the same amount on a logarithmic scale (L. W. Nagel,
    SPICE2, ERL Memo M520, UC Berkeley, 1975), so exponentials cannot overflow.

    Parameters
    ----------
    vnew, vold : numpy.ndarray
        Proposed and previous junction voltages, V.
    vt, vcrit : numpy.ndarray
        Thermal and critical voltages, V.

    Returns
    -------
    numpy.ndarray
        The junction voltages to evaluate the devices at, V.
    """
    limit = (vnew > vcrit) & (np.abs(vnew - vold) > 2.0 * vt)
    arg = 1.0 + (vnew - vold) / vt
    from_old = np.where(arg > 0, vold + vt * np.log(np.maximum(arg, 1e-300)), vcrit)
    from_zero = vt * np.log(np.maximum(vnew / vt, 1e-300))
    return np.where(limit, np.where(vold > 0, from_old, from_zero), vnew)

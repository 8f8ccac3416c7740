"""What the sheet and the tables show of the operating point: node voltages, device bias, rows.

Texts are decided here so that the sheet's note items and the table only draw them.
"""

from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

from ..network.largesignal import AMPLIFYING_REGION
from ..core.values import format_value
from ..design.parts import KINDS

QUIET_RAIL_A = 1e-9
"""A rail supplying less than this (A) gets no current note on the sheet."""


@dataclass(frozen=True)
class DeviceNote:
    """The bias written beside one part on the sheet.

    Attributes
    ----------
    lines : tuple of str
        Short lines (I_C, V_CE, region for a transistor; the current a rail supplies).
    warning : str or None
        The plain-words warning about this device, when it is out of its region.
    above : bool
        Written above the part rather than below it: a rail, whose lead runs down from it
        and whose label (and often a neighbouring rail) sits beside it.
    """

    lines: tuple
    warning: str | None = None
    above: bool = False


@dataclass(frozen=True)
class BiasMarks:
    """Everything the sheet's bias notes draw.

    Attributes
    ----------
    nodes : tuple of (x, y, str)
        Sheet point (scene units) and text of each net's DC voltage.
    devices : Mapping[str, DeviceNote]
        Part name -> its note.
    """

    nodes: tuple
    devices: Mapping


def _device_lines(bias) -> tuple:
    """The bias of one transistor in a few short lines (its own polarity)."""
    if bias.kind == "bjt":
        return (f"IC {format_value(bias.ic, 'A')}", f"VCE {format_value(bias.vce, 'V')}", bias.region)
    return (f"ID {format_value(bias.id, 'A')}", f"VDS {format_value(bias.vds, 'V')}", bias.region)


def bias_marks(doc, netlist, point) -> BiasMarks:
    """The bias notes of a drawn design at its solved operating point.

    Parameters
    ----------
    doc : Document
        The design.
    netlist : Netlist
        Its nets (:func:`bandsketch.engine.design.netlist.build_netlist`).
    point : OperatingPoint
        The solved point (:func:`bandsketch.engine.solve.dcop.operating_point`).
    """
    fixed = {KINDS[p.kind].joins(p.params) for p in doc.parts.values() if KINDS[p.kind].joins}
    nodes = []
    for net, volts in point.node_voltages.items():
        points = netlist.net_points.get(net)
        if not points or net in fixed:
            continue
        x, y = min(points, key=lambda pt: (pt[1], pt[0]))
        nodes.append((x, y, format_value(volts, "V")))
    devices = {}
    for name, bias in point.devices.items():
        wrong = bias.region != AMPLIFYING_REGION[bias.kind]
        said = next((w for w in point.warnings if w.startswith(f"{name} ")), None)
        devices[name] = DeviceNote(_device_lines(bias), said if wrong else None)
    for part in doc.parts.values():
        # A rail's current is written once, beside the first of its symbols.
        net = KINDS[part.kind].joins(part.params) if part.kind == "rail" else None
        # A rail that supplies no current (a gate bias rail) has nothing to say on the sheet.
        if net in point.branch_currents and abs(point.branch_currents[net]) >= QUIET_RAIL_A \
                and not any(n.lines[0].endswith(f"({net})") for n in devices.values()):
            supplied = format_value(-point.branch_currents[net], "A")
            devices[part.name] = DeviceNote((f"supplies {supplied} ({net})",), above=True)
    return BiasMarks(tuple(nodes), MappingProxyType(devices))


def bias_rows(point) -> tuple:
    """Rows of the bias table: (device, region, current, V_BE/V_GS, V_CE/V_DS, g_m, r_o) as texts.

    Parameters
    ----------
    point : bandsketch.engine.solve.dcop.OperatingPoint
        Currents in A, voltages in V.
    """
    rows = []
    for name, b in point.devices.items():
        current, control, output = (b.ic, b.vbe, b.vce) if b.kind == "bjt" else (b.id, b.vgs, b.vds)
        ss = b.small_signal
        rows.append((name, b.region, format_value(current, "A"), format_value(control, "V"),
                     format_value(output, "V"), format_value(ss["gm"], "S"),
                     "∞" if ss["ro"] == float("inf") else format_value(ss["ro"], "Ω")))
    return tuple(rows)


BIAS_HEADINGS = ("Device", "Region", "I_C / I_D", "V_BE / V_GS", "V_CE / V_DS", "g_m", "r_o")
"""Column headings of :func:`bias_rows`."""

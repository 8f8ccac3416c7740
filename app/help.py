"""The help panel: every key and gesture, read from the actions themselves so it never drifts."""

from __future__ import annotations

from html import escape

from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import QTextBrowser

GESTURES = (
    ("Click a part in Parts, then click the sheet", "place it (Shift+click places another)"),
    ("Drag a part from Parts onto the sheet", "place it there"),
    ("Press on a pin", "start a wire from it"),
    ("In Wire: click", "start, or bend the wire"),
    ("In Wire: click a pin or wire, or double-click", "finish the wire"),
    ("Drag a part or wire", "move the selection (wires stay attached)"),
    ("Drag on empty sheet", "select everything the rectangle touches"),
    ("Shift+click, Shift+drag", "add to or take from the selection"),
    ("Double-click a part", "edit its value in place"),
    ("Wheel", "zoom about the cursor"),
    ("Ctrl+wheel over the selected part, or in a value in Properties",
     "step the value through its E series (Shift: a decade); one undo step"),
    ("Drag ⇕ beside a value in Properties", "step the value up or down as far as you drag"),
    ("Middle-drag, or Space+drag", "pan"),
    ("Right-click", "stop the wire or placement under way"),
    ("Esc", "stop what is under way, then back to Select"),
)


class HelpPanel(QTextBrowser):
    """Lists gestures and the shortcuts of the given actions."""

    def __init__(self, sections: list[tuple[str, list[QAction]]]):
        super().__init__()
        self.setOpenLinks(False)
        rows = ["<h3>Mouse</h3><table cellspacing=4>"]
        rows += [f"<tr><td><b>{escape(a)}</b></td><td>{escape(b)}</td></tr>" for a, b in GESTURES]
        rows.append("</table>")
        for title, actions in sections:
            rows.append(f"<h3>{escape(title)}</h3><table cellspacing=4>")
            for action in actions:
                keys = ", ".join(k.toString(QKeySequence.SequenceFormat.NativeText) for k in action.shortcuts())
                if keys:
                    rows.append(f"<tr><td><b>{escape(keys)}</b></td>"
                                f"<td>{escape(action.text().replace('&', ''))}</td></tr>")
            rows.append("</table>")
        self.setHtml("".join(rows))

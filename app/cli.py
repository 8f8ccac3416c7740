"""The ``bandsketch`` command: open the window, or analyse a design without Qt.

``bandsketch [DESIGN] [--screenshot FILE.png] [--size WxH] [--select NAME]`` opens the window;
``bandsketch analyze DESIGN [--json] [--csv FILE]`` prints the analysis. Qt is imported
only for the window, so the analysis runs where no Qt is installed or wanted.
"""

from __future__ import annotations

import argparse
import json
import sys

SUBCOMMANDS = ("analyze",)


def _size(text: str) -> tuple[int, int]:
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a size like 1400x900") from None
    if not (200 <= w <= 10000 and 200 <= h <= 10000):
        raise argparse.ArgumentTypeError(f"{text!r}: width and height must be 200 to 10000 pixels")
    return w, h


def _gui_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="bandsketch",
        description="Sketch an amplifier stage and see where its -3 dB corners fall. "
                    f"Subcommands: {', '.join(SUBCOMMANDS)} (bandsketch analyze -h).")
    p.add_argument("design", nargs="?", help="design file to open (.json)")
    p.add_argument("--screenshot", metavar="FILE.png", help="save a picture of the window and exit")
    p.add_argument("--size", type=_size, metavar="WxH", help="window size, e.g. 1400x900")
    p.add_argument("--select", metavar="NAME", help="with --screenshot: show this element's test picture")
    return p


def _analyze_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="bandsketch analyze",
                                description="Print the time-constant analysis of a design.")
    p.add_argument("design", help="design file (.json)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.add_argument("--csv", metavar="FILE", help="also write the exact sweep to FILE")
    return p


def _analyze(args) -> int:
    from engine import analyze
    from engine.designfile import load_design
    from engine.netlist import design_to_circuit
    from engine.summary import analysis_to_dict, format_table, write_sweep_csv

    doc = load_design(args.design)
    analysis = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    if args.json:
        print(json.dumps(analysis_to_dict(analysis), indent=1, ensure_ascii=False))
    else:
        print(format_table(analysis, title=doc.title))
    if args.csv:
        write_sweep_csv(analysis, args.csv)
    return 0


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``bandsketch`` console script; returns the exit status."""
    from engine.errors import CircuitError, DesignFileError

    argv = sys.argv[1:] if argv is None else list(argv)
    try:
        if argv and argv[0] == "analyze":
            return _analyze(_analyze_parser().parse_args(argv[1:]))
        args = _gui_parser().parse_args(argv)
        from app.gui import run_gui

        return run_gui(args.design, screenshot=args.screenshot, size=args.size, select=args.select)
    except (CircuitError, DesignFileError) as exc:
        print(f"bandsketch: {exc}", file=sys.stderr)
        return 2
    except OSError as exc:
        print(f"bandsketch: {exc.filename or ''}: {exc.strerror or exc}", file=sys.stderr)
        return 2

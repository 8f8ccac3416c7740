"""The ``bandsketch`` command: open the window, or analyse a design without Qt.

``bandsketch [DESIGN] [--screenshot FILE.png] [--size WxH] [--select NAME]`` opens the window;
``bandsketch analyze DESIGN [--json] [--csv FILE]`` prints the analysis and the step figures;
``bandsketch step DESIGN [--csv FILE] [--t-stop S] [--points N] [--json]`` the step response;
``bandsketch report DESIGN -o FILE.html`` writes the design report;
``bandsketch spread DESIGN --samples N --seed S [--json]`` runs the tolerance spread;
``bandsketch advise DESIGN [--knobs R1,RC] [--json]`` prints the advisor's suggestions. Qt is imported
only for the window, so the analysis runs where no Qt is installed or wanted.
"""

from __future__ import annotations

import argparse
from dataclasses import replace
import json
import os
import sys

SUBCOMMANDS = ("analyze", "step", "report", "spread", "advise")


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
    from bandsketch.engine import analyze
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.design.netlist import design_to_circuit, shorted_parts
    from bandsketch.engine.present.summary import analysis_to_dict, format_table, write_sweep_csv
    from bandsketch.engine.core.errors import CircuitError
    from bandsketch.engine.present.stepdata import time_responses
    from bandsketch.engine.present.timesummary import format_time_table, time_domain_dict

    doc = load_design(args.design)
    analysis = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    notices = tuple(p.message for p in shorted_parts(doc))
    for notice in notices:
        print(f"bandsketch: {args.design}: {notice}", file=sys.stderr)
    # The sheet's notices lead the analysis's own warnings, in the table and the JSON alike.
    analysis = replace(analysis, _warnings=notices + tuple(analysis.warnings))
    try:
        step, pulse = time_responses(analysis)
        no_step = None
    except CircuitError as exc:
        step = pulse = None
        no_step = exc.message
    if args.json:
        data = analysis_to_dict(analysis)
        data["time_domain"] = time_domain_dict(step, pulse) if step else {"problem": no_step}
        print(json.dumps(data, indent=1, ensure_ascii=False))
    else:
        print(format_table(analysis, title=doc.title))
        print(format_time_table(step, pulse) if step else f"Step response: none ({no_step})")
    if args.csv:
        write_sweep_csv(analysis, args.csv)
    return 0


def _positive_time(text: str) -> float:
    from bandsketch.engine.core.values import parse_value

    try:
        value = parse_value(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a time like 2u or 1.5e-6") from None
    if not value > 0:
        raise argparse.ArgumentTypeError(f"{text!r}: the window must be longer than 0 s")
    return value


def _whole_number(what: str, lo: int, hi: int):
    """An argparse type: a whole number of ``what`` from ``lo`` to ``hi``."""
    def parse(text: str) -> int:
        try:
            n = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not a whole number of {what}") from None
        if not lo <= n <= hi:
            raise argparse.ArgumentTypeError(f"{n} {what}: give {lo} to {hi}")
        return n
    return parse


_points = _whole_number("points", 3, 1_000_000)


def _step_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="bandsketch step",
                                description="The exact step response of a design, its figures and their estimates.")
    p.add_argument("design", help="design file (.json)")
    p.add_argument("--csv", metavar="FILE", help="write the waveform (time, exact, estimates) to FILE")
    p.add_argument("--t-stop", type=_positive_time, metavar="S",
                   help="end of the window in s, e.g. 2u (default: from the time constants)")
    p.add_argument("--points", type=_points, default=2000, help="samples in the window (default 2000)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    return p


def _step(args) -> int:
    from bandsketch.engine import analyze
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.design.netlist import design_to_circuit
    from bandsketch.engine.present.timesummary import format_time_table, time_domain_dict, write_step_csv

    doc = load_design(args.design)
    step = analyze(design_to_circuit(doc), bands=dict(doc.band_pins)).step_response(args.t_stop, args.points)
    if args.json:
        print(json.dumps(time_domain_dict(step), indent=1, ensure_ascii=False))
    else:
        print(format_time_table(step), end="")
    if args.csv:
        write_step_csv(step, args.csv)
        print(f"bandsketch: wrote {args.csv}", file=sys.stderr)
    return 0


def _report_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="bandsketch report",
                                description="Write the design report: one self-contained HTML file.")
    p.add_argument("design", help="design file (.json)")
    p.add_argument("-o", "--output", required=True, metavar="FILE.html", help="where to write the report")
    p.add_argument("--samples", type=_samples, default=10_000, help="Monte Carlo samples (default 10000)")
    p.add_argument("--seed", type=int, default=1, help="Monte Carlo seed (default 1)")
    return p


def _spread_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="bandsketch spread",
                                description="Tolerance spread of the corners and the gain, with the yield.")
    p.add_argument("design", help="design file (.json)")
    p.add_argument("--samples", type=_samples, default=10_000, help="Monte Carlo samples (default 10000)")
    p.add_argument("--seed", type=int, default=1, help="seed; the same seed gives the same numbers (default 1)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a summary")
    return p


def _advise_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="bandsketch advise",
        description="Suggest values that meet the design's targets: one knob at a time, each row with "
                    "its whole effect (f_H, f_L, gain, every target), and with two or three --knobs "
                    "also the best combination of them.")
    p.add_argument("design", help="design file (.json) with targets set")
    p.add_argument("--knobs", metavar="R1,RC", help="only these parts (comma-separated); with two or "
                                                    "three, also search their combinations")
    p.add_argument("--samples", type=_samples, default=1000,
                   help="Monte Carlo samples behind each yield (default 1000)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    return p


def _advise(args) -> int:
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.present.advice import advice_table, advise_design, advice_to_dict

    doc = load_design(args.design)
    only = [k.strip() for k in args.knobs.split(",") if k.strip()] if args.knobs else None
    try:
        advice, found = advise_design(doc, only, samples=args.samples)
    except ValueError as exc:
        print(f"bandsketch: {args.design}: {getattr(exc, 'message', exc)}", file=sys.stderr)
        return 2
    if args.json:
        print(json.dumps(advice_to_dict(advice, found), indent=1, ensure_ascii=False))
    else:
        print(advice_table(advice, found, title=doc.title))
    return 0


_samples = _whole_number("samples", 1, 10_000_000)


def _report(args) -> int:
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.present.report import write_report

    write_report(load_design(args.design), args.output, samples=args.samples, seed=args.seed)
    print(f"bandsketch: wrote {args.output}")
    return 0


def _spread(args) -> int:
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.advise.tolerance import spread_summary

    summary = spread_summary(load_design(args.design), args.samples, args.seed)
    if args.json:
        print(json.dumps(summary, indent=1, ensure_ascii=False))
        return 0
    from bandsketch.engine.core.values import format_value

    print(f"{summary['samples']} samples, seed {summary['seed']}, {summary['seconds']:.2f} s")
    for key, title, unit in (("f_high_hz", "f_H", "Hz"), ("f_low_hz", "f_L", "Hz"), ("gain_magnitude", "|A_m|", summary["gain_unit"])):
        st = summary[key]
        if st and "median" in st:
            print(f"  {title:6s} median {format_value(st['median'], unit):>10s}   "
                  f"0.135 %..99.865 %: {format_value(st['p0.135'], unit)} .. {format_value(st['p99.865'], unit)}")
    for key, value in summary["yield"].items():
        print(f"  yield {key:10s} {100 * value:5.1f} %")
    return 0


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``bandsketch`` console script; returns the exit status."""
    from bandsketch.engine.core.errors import CircuitError, DesignFileError

    argv = sys.argv[1:] if argv is None else list(argv)
    try:
        if argv and argv[0] == "analyze":
            return _analyze(_analyze_parser().parse_args(argv[1:]))
        if argv and argv[0] == "step":
            return _step(_step_parser().parse_args(argv[1:]))
        if argv and argv[0] == "report":
            return _report(_report_parser().parse_args(argv[1:]))
        if argv and argv[0] == "spread":
            return _spread(_spread_parser().parse_args(argv[1:]))
        if argv and argv[0] == "advise":
            return _advise(_advise_parser().parse_args(argv[1:]))
        args = _gui_parser().parse_args(argv)
        from bandsketch.app.gui import run_gui

        return run_gui(args.design, screenshot=args.screenshot, size=args.size, select=args.select)
    except BrokenPipeError:
        # The reader (e.g. `| head`) stopped early; that is not an error worth a message.
        # Point stdout at devnull so the flush at exit cannot fail again (Python docs, signal).
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except (CircuitError, DesignFileError) as exc:
        print(f"bandsketch: {exc}", file=sys.stderr)
        return 2
    except OSError as exc:
        print(f"bandsketch: {exc.filename or ''}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    except Exception as exc:  # the last guard: no traceback reaches the user
        from .guard import REPORT_HINT, unexpected

        print(f"bandsketch: unexpected failure ({unexpected(exc)}). {REPORT_HINT}", file=sys.stderr)
        return 1

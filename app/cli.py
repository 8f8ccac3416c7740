"""The ``bandsketch`` command: open the window, or analyse a design without Qt.

``bandsketch [DESIGN | --sample NAME] [--screenshot FILE.png] [--size WxH] [--select NAME]`` opens
the window; ``bandsketch samples`` lists the shipped samples;
``bandsketch analyze DESIGN [--json] [--csv FILE]`` prints the analysis and the step figures;
``bandsketch step DESIGN [--csv FILE] [--t-stop S] [--points N] [--json]`` the step response;
``bandsketch report DESIGN -o FILE.html|FILE.pdf`` writes the design report;
``bandsketch figure DESIGN --what bode|bars|step|sheet -o FILE.svg|FILE.png [--dpi N | --width PX]`` one picture;
``bandsketch spread DESIGN --samples N --seed S [--json]`` runs the tolerance spread;
``bandsketch advise DESIGN [--knobs R1,RC] [--json]`` prints the advisor's suggestions. Every DESIGN
may be ``--sample NAME`` instead. Qt is imported only for the window and for pictures (a report's
schematic, a figure as PNG, drawn offscreen), so the analysis runs where no Qt is installed or wanted.

Exit status (:data:`EXIT_CODES`): 0 done, 1 the work failed (an output could not be written),
2 bad input (arguments, or a design that cannot be read or analysed).
"""

from __future__ import annotations

import argparse
from dataclasses import replace
import json
import os
import sys

FIGURES = ("bode", "bars", "step", "sheet")
"""What ``bandsketch figure --what`` draws (:func:`bandsketch.app.figures.figure_svg`)."""
SUBCOMMANDS = ("samples", "analyze", "step", "report", "figure", "spread", "advise")
EXIT_OK, EXIT_FAILED, EXIT_BAD_INPUT = 0, 1, 2
EXIT_CODES = {EXIT_OK: "done", EXIT_FAILED: "the work failed (an output could not be written)",
              EXIT_BAD_INPUT: "bad input: arguments, or a design that cannot be read or analysed"}
_EPILOG = "exit status: " + "; ".join(f"{k} {v}" for k, v in EXIT_CODES.items())


JSON_VERSION = 1
"""The ``version`` of the step, spread and advice JSON (the analysis JSON carries its own)."""


def _versioned(format_name: str, data: dict) -> dict:
    """``data`` led by its ``format`` and ``version``, as every ``--json`` output is."""
    return {"format": format_name, "version": JSON_VERSION, **data}


def _size(text: str) -> tuple[int, int]:
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a size like 1400x900") from None
    if not (200 <= w <= 10000 and 200 <= h <= 10000):
        raise argparse.ArgumentTypeError(f"{text!r}: width and height must be 200 to 10000 pixels")
    return w, h


class _Version(argparse.Action):
    # argparse's own version action wraps the line at the terminal width.
    def __init__(self, option_strings, dest, **kw):
        super().__init__(option_strings, dest, nargs=0, default=argparse.SUPPRESS, **kw)

    def __call__(self, parser, namespace, values, option_string=None):
        from bandsketch.engine.core.versions import version_line

        print(version_line())
        parser.exit(EXIT_OK)


def _gui_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(allow_abbrev=False,
        prog="bandsketch", epilog=_EPILOG,
        description="Sketch an amplifier stage and see where its -3 dB corners fall. "
                    f"Subcommands: {', '.join(SUBCOMMANDS)} (bandsketch analyze -h).")
    p.add_argument("--version", action=_Version, help="print the version of Bandsketch and its libraries, and exit")
    _design_argument(p, required=False)
    p.add_argument("--screenshot", metavar="FILE.png", help="save a picture of the window and exit")
    p.add_argument("--size", type=_size, metavar="WxH", help="window size, e.g. 1400x900")
    p.add_argument("--select", metavar="NAME", help="with --screenshot: show this element's test picture")
    return p


def _design_argument(p: argparse.ArgumentParser, required: bool = True) -> None:
    g = p.add_mutually_exclusive_group(required=required)
    g.add_argument("design", nargs="?", help="design file (.json)")
    g.add_argument("--sample", metavar="NAME", help="a sample that ships with Bandsketch instead of a file "
                                                   "(bandsketch samples lists them)")


def _load(args):
    """The design the arguments name: a file, or a shipped sample."""
    from bandsketch.engine.design.samples import load_named

    return load_named(args.design, args.sample)


def _samples_parser() -> argparse.ArgumentParser:
    return argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch samples", epilog=_EPILOG,
                                   description="List the sample designs that ship with Bandsketch.")


def _list_samples(args) -> int:
    from bandsketch.engine.design.samples import list_samples

    samples = list_samples()
    width = max(len(s.name) for s in samples)
    for s in samples:
        print(f"{s.name.ljust(width)}  {s.title}: {s.summary}")
    print(f"\nOpen one with: bandsketch --sample {samples[0].name}")
    return EXIT_OK


def _analyze_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch analyze", epilog=_EPILOG,
                                description="Print the time-constant analysis of a design.")
    _design_argument(p)
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.add_argument("--csv", metavar="FILE", help="also write the response (frequency, magnitude in dB and "
                                                 "linear, phase, the estimates) to FILE, as the window exports it")
    return p


def _analyze(args) -> int:
    from bandsketch.engine import analyze
    from bandsketch.engine.design.netlist import design_to_circuit, shorted_parts
    from bandsketch.engine.present.plotdata import bode_data, write_response_csv
    from bandsketch.engine.present.summary import format_table
    from bandsketch.engine.core.errors import CircuitError
    from bandsketch.engine.present.stepdata import time_responses
    from bandsketch.engine.present.timesummary import format_time_table, time_domain_dict

    doc = _load(args)
    analysis = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    notices = tuple(p.message for p in shorted_parts(doc))
    for notice in notices:
        print(f"bandsketch: {args.design or args.sample}: {notice}", file=sys.stderr)
    # The sheet's notices lead the analysis's own warnings, in the table and the JSON alike.
    analysis = replace(analysis, _warnings=notices + tuple(analysis.warnings))
    try:
        step, pulse = time_responses(analysis)
        no_step = None
    except CircuitError as exc:
        step = pulse = None
        no_step = exc.message
    if args.json:
        data = analysis.to_dict()
        data["time_domain"] = time_domain_dict(step, pulse) if step else {"problem": no_step}
        print(json.dumps(data, indent=1, ensure_ascii=False))
    else:
        print(format_table(analysis, title=doc.title))
        print(format_time_table(step, pulse) if step else f"Step response: none ({no_step})")
    if args.csv:
        write_response_csv(bode_data(analysis), args.csv)
    return EXIT_OK


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
    p = argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch step", epilog=_EPILOG,
                                description="The exact step response of a design, its figures and their estimates.")
    _design_argument(p)
    p.add_argument("--csv", metavar="FILE", help="write the waveform (time, exact, estimates) to FILE")
    p.add_argument("--t-stop", type=_positive_time, metavar="S",
                   help="end of the window in s, e.g. 2u (default: from the time constants)")
    p.add_argument("--points", type=_points, default=2000, help="samples in the window (default 2000)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    return p


def _step(args) -> int:
    from bandsketch.engine import analyze
    from bandsketch.engine.design.netlist import design_to_circuit
    from bandsketch.engine.present.timesummary import format_time_table, time_domain_dict, write_step_csv

    doc = _load(args)
    step = analyze(design_to_circuit(doc), bands=dict(doc.band_pins)).step_response(args.t_stop, args.points)
    if args.json:
        print(json.dumps(_versioned("bandsketch-step", time_domain_dict(step)), indent=1, ensure_ascii=False))
    else:
        print(format_time_table(step), end="")
    if args.csv:
        write_step_csv(step, args.csv)
        print(f"bandsketch: wrote {args.csv}", file=sys.stderr)
    return EXIT_OK


def _report_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch report", epilog=_EPILOG,
                                description="Write the design report: one self-contained HTML file, or a PDF.")
    _design_argument(p)
    p.add_argument("-o", "--output", required=True, type=_report_path, metavar="FILE.html|FILE.pdf",
                   help="where to write the report; .html or .htm writes HTML, .pdf writes PDF")
    p.add_argument("--samples", type=_samples, default=10_000, help="Monte Carlo samples (default 10000)")
    p.add_argument("--seed", type=int, default=1, help="Monte Carlo seed (default 1)")
    return p


def _figure_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch figure", epilog=_EPILOG,
                                description="Save one picture of a design: the Bode plot, the time-constant bars, the "
                                            "step response or the sheet, as SVG (browsers and librsvg draw it) or PNG.")
    _design_argument(p)
    p.add_argument("--what", required=True, choices=FIGURES, help="which picture")
    p.add_argument("-o", "--output", required=True, type=_figure_path, metavar="FILE.svg|FILE.png",
                   help="where to write it; .svg writes SVG, .png a PNG")
    size = p.add_mutually_exclusive_group()
    size.add_argument("--dpi", type=_whole_number("dpi", 24, 2400), default=192,
                      help="PNG resolution, dots per inch (default 192; the SVG's pixel is 1/96 inch)")
    size.add_argument("--width", type=_whole_number("pixels", 16, 20000), metavar="PX",
                      help="PNG width in pixels, the height in proportion")
    return p


def _figure_path(text: str) -> str:
    if not text.lower().endswith((".svg", ".png")):
        raise argparse.ArgumentTypeError(f"{text!r}: name the picture FILE.svg (SVG) or FILE.png (PNG)")
    return text


def _figure(args) -> int:
    doc = _load(args)
    from .gui import offscreen_application

    # The sheet is drawn by the scene code, and a PNG by Qt's SVG renderer: Qt starts, offscreen.
    offscreen_application()
    from .figures import figure_svg, write_picture

    write_picture(figure_svg(doc, args.what), args.output, dpi=args.dpi, width_px=args.width)
    print(f"bandsketch: wrote {args.output}", file=sys.stderr)
    return EXIT_OK


def _spread_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(allow_abbrev=False, prog="bandsketch spread", epilog=_EPILOG,
                                description="Tolerance spread of the corners and the gain, with the yield.")
    _design_argument(p)
    p.add_argument("--samples", type=_samples, default=10_000, help="Monte Carlo samples (default 10000)")
    p.add_argument("--seed", type=int, default=1, help="seed; the same seed gives the same numbers (default 1)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a summary")
    return p


def _advise_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        allow_abbrev=False, prog="bandsketch advise", epilog=_EPILOG,
        description="Suggest values that meet the design's targets: one knob at a time, each row with "
                    "its whole effect (f_H, f_L, gain, every target), and with two or three --knobs "
                    "also the best combination of them.")
    _design_argument(p)
    p.add_argument("--knobs", metavar="R1,RC", help="only these parts (comma-separated); with two or "
                                                    "three, also search their combinations")
    p.add_argument("--samples", type=_samples, default=1000,
                   help="Monte Carlo samples behind each yield (default 1000)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    return p


def _advise(args) -> int:
    from bandsketch.engine.present.advice import advice_table, advise_design, advice_to_dict

    doc = _load(args)
    only = [k.strip() for k in args.knobs.split(",") if k.strip()] if args.knobs else None
    try:
        advice, found = advise_design(doc, only, samples=args.samples)
    except ValueError as exc:
        print(f"bandsketch: {args.design or args.sample}: {getattr(exc, 'message', exc)}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if args.json:
        print(json.dumps(_versioned("bandsketch-advice", advice_to_dict(advice, found)), indent=1, ensure_ascii=False))
    else:
        print(advice_table(advice, found, title=doc.title))
    return 0


_samples = _whole_number("samples", 1, 10_000_000)


def _report_path(text: str) -> str:
    if not text.lower().endswith((".html", ".htm", ".pdf")):
        raise argparse.ArgumentTypeError(f"{text!r}: name the report FILE.html (HTML) or FILE.pdf (PDF)")
    return text


def _source(args):
    """The name and SHA-256 of the design file the arguments name, for the report."""
    from pathlib import Path

    from bandsketch.engine.design.samples import sample_bytes
    from bandsketch.engine.present.report import design_source

    if args.sample:
        return design_source(f"{args.sample}.json (a sample shipped with Bandsketch)", sample_bytes(args.sample))
    return design_source(Path(args.design).name, Path(args.design).read_bytes())


def _report(args) -> int:
    doc = _load(args)
    source = _source(args)
    # The schematic is drawn by the window's scene code, so Qt starts, offscreen, for any report.
    from .gui import offscreen_application
    from .advisor.export import export_report

    offscreen_application()
    from .console import Progress

    export_report(doc, args.output, source=source, samples=args.samples, seed=args.seed,
                  progress=Progress("report").stage)
    print(f"bandsketch: wrote {args.output}")
    return EXIT_OK


def _spread(args) -> int:
    from bandsketch.engine.advise.tolerance import spread_of_design, spread_to_dict

    from .console import Progress

    summary = spread_to_dict(spread_of_design(_load(args), args.samples, args.seed,
                                              progress=Progress("spread")))
    if args.json:
        print(json.dumps(_versioned("bandsketch-spread", summary), indent=1, ensure_ascii=False))
        return EXIT_OK
    from bandsketch.engine.core.values import format_gain, format_value

    print(f"{summary['samples']} samples, seed {summary['seed']}, {summary['seconds']:.2f} s")
    gain_unit = summary["gain_unit"]
    for key, title, write in (("f_high_hz", "f_H", lambda x: format_value(x, "Hz")),
                              ("f_low_hz", "f_L", lambda x: format_value(x, "Hz")),
                              ("gain_magnitude", "|A_m|", lambda x: format_gain(x, gain_unit))):
        st = summary[key]
        if st and "median" in st:
            print(f"  {title:6s} median {write(st['median']):>10s}   "
                  f"0.135 %..99.865 %: {write(st['p0.135'])} .. {write(st['p99.865'])}")
    for key, value in summary["yield"].items():
        print(f"  yield {key:10s} {100 * value:5.1f} %")
    return EXIT_OK


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``bandsketch`` console script; returns the exit status."""
    from bandsketch.engine.core.errors import CircuitError, DesignFileError

    from .console import fall_back_to_ascii

    fall_back_to_ascii()
    argv = sys.argv[1:] if argv is None else list(argv)
    try:
        if argv and argv[0] == "samples":
            return _list_samples(_samples_parser().parse_args(argv[1:]))
        if argv and argv[0] == "analyze":
            return _analyze(_analyze_parser().parse_args(argv[1:]))
        if argv and argv[0] == "step":
            return _step(_step_parser().parse_args(argv[1:]))
        if argv and argv[0] == "report":
            return _report(_report_parser().parse_args(argv[1:]))
        if argv and argv[0] == "figure":
            return _figure(_figure_parser().parse_args(argv[1:]))
        if argv and argv[0] == "spread":
            return _spread(_spread_parser().parse_args(argv[1:]))
        if argv and argv[0] == "advise":
            return _advise(_advise_parser().parse_args(argv[1:]))
        args = _gui_parser().parse_args(argv)
        from bandsketch.app.gui import run_gui

        return run_gui(args.design, screenshot=args.screenshot, size=args.size, select=args.select,
                       sample=args.sample)
    except BrokenPipeError:
        # The reader (e.g. `| head`) stopped early; that is not an error worth a message.
        # Point stdout at devnull so the flush at exit cannot fail again (Python docs, signal).
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return EXIT_OK
    except (CircuitError, DesignFileError) as exc:
        print(f"bandsketch: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except OSError as exc:
        # Designs are read through load_design (DesignFileError), so this is an output.
        print(f"bandsketch: {exc.filename or 'output'}: could not be written ({exc.strerror or exc})",
              file=sys.stderr)
        return EXIT_FAILED
    except Exception as exc:  # the last guard: no traceback reaches the user
        from .guard import REPORT_HINT, unexpected

        print(f"bandsketch: unexpected failure ({unexpected(exc)}). {REPORT_HINT}", file=sys.stderr)
        return EXIT_FAILED

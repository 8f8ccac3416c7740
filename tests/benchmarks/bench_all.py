"""Every cost in one table: analysis, sweeps, edit-to-view, start-up, and the peak memory of each.

Run as a script from the repository root (pytest does not collect it)::

    python tests/benchmarks/bench_all.py            # the full table (several minutes)
    python tests/benchmarks/bench_all.py --quick    # small sizes, for the CI smoke run (< 60 s)
    python tests/benchmarks/bench_all.py --previous docs/benchmarks.md   # with the last run beside

Each measurement runs in a fresh interpreter of its own, so its peak memory (the child's
maximum resident set size, which includes the interpreter and numpy/scipy, about the
"baseline" row) is its own. Rows:

- ``analyze`` vs ``naive``: analyze() on RC meshes and ladders of 10 … 5,000 capacitors against
  rebuilding and solving the network once per capacitor (the naive way, from
  tests/benchmarks/bench_timeconstants.py; ~ marks a time measured on 40 capacitors and scaled).
- ``sweep``: exact-response points per second against network size (200 points, 1 Hz to
  1 THz), for the engine's own choice (a batched dense solve up to bandsketch.engine.solve.response.DENSE_LIMIT
  unknowns, a sparse LU per point above), each path forced, and a modal sum (written here,
  not in the engine: the capacitance-free unknowns eliminated, one eigen-decomposition, then
  O(n) per point) with its error against the direct solve.
- ``edit→view``: median time from a value edit to the bars, Bode plot and verdict showing the
  new analysis, on each sample and a generated 305-part design (tests/benchmarks/bench_views.py).
- ``start-up``: ``python -m bandsketch SAMPLE --screenshot`` end to end (it waits 300 ms to settle
  before grabbing), and the time from launching the interpreter to the window's first paint:
  in the environment as it is, and with the compiled byte code of every module cached, as an
  installed program starts (an environment with PYTHONDONTWRITEBYTECODE set compiles the
  project's sources at every launch).
"""

from __future__ import annotations

import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
HERE = Path(__file__).resolve().parent
SAMPLES = sorted((ROOT / "sample_designs").glob("*.json"))

FULL = {
    "analyze": [("mesh", n) for n in (10, 100, 400, 1000, 5000, 10000)]
    + [("ladder", n) for n in (10, 100, 400, 1000, 5000, 10000)],
    "json": [2000, 5000],
    "sweep": [10, 60, 100, 400, 1000, 5000],
    "floor_repeat": 30,
    "edits": 15,
    "scrub": 30,
    "samples": None,
}
QUICK = {
    "analyze": [("mesh", 10), ("mesh", 100), ("ladder", 100)],
    "json": [700],
    "sweep": [10, 100, 400],
    "floor_repeat": 3,
    "edits": 5,
    "scrub": 6,
    "samples": 2,
}
DENSE_MAX = 1000
"""Above this many capacitors the forced dense solve and the modal sum are skipped (n² memory, n³ time)."""


# -- children: one measurement each, printed as JSON ----------------------------------------

def _peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # Linux: KiB


def child_baseline():
    import numpy  # noqa: F401
    import scipy.sparse.linalg  # noqa: F401

    import bandsketch.engine  # noqa: F401
    return {}


def child_analyze(network: str, n: int):
    sys.path.insert(0, str(HERE))
    import bench_timeconstants as bt

    c = getattr(bt, network)(n)
    repeat = 5 if n <= 400 else (3 if n <= 1000 else 1)
    t_an, a = bt.best_of(lambda: bt.analyze(c), repeat)
    _, t_naive, scaled = bt.naive_seconds(c, a.midband_frequency, repeat)
    return {"analyze": t_an, "naive": t_naive, "scaled": scaled}


def child_json(n: int):
    """``bandsketch analyze --json`` on an RC mesh of ``n`` capacitors: the analysis, its poles
    and zeros (all of them, or those nearest the band edges above the root limit), the JSON."""
    sys.path.insert(0, str(HERE))
    import bench_timeconstants as bt
    from bandsketch.engine.solve.analysisjson import analysis_to_dict

    c = bt.mesh(n)
    t0 = time.perf_counter()
    a = bt.analyze(c)
    text = json.dumps(analysis_to_dict(a))
    return {"seconds": time.perf_counter() - t0, "unknowns": a._system.size, "poles": len(a.poles),
            "complete": a.roots_complete, "bytes": len(text)}


def child_floor(repeat: int):
    """analyze() on every sample beside its dense floor (tests/benchmarks/bench_small.py)."""
    sys.path.insert(0, str(HERE))
    import bench_small

    return {"samples": {path.stem: bench_small.measure(path, repeat) for path in SAMPLES}}


def _modal(system):
    """H(s) = c·(G + sC)⁻¹·b as h₀ + Σ r_k / (s + λ_k), from one eigen-decomposition.

    The unknowns without capacitance are eliminated first (a Schur complement), so the
    remaining pencil Ĝ + sC_dd has C_dd invertible and its modes are those of C_dd⁻¹·Ĝ.
    """
    import numpy as np
    import scipy.linalg as la

    G, C = system.G.toarray(), system.C.toarray()
    dyn = np.flatnonzero(np.any(C != 0, axis=0) | np.any(C != 0, axis=1))
    sta = np.setdiff1d(np.arange(G.shape[0]), dyn)
    Gss = la.lu_factor(G[np.ix_(sta, sta)])
    Gds, Gsd = G[np.ix_(dyn, sta)], G[np.ix_(sta, dyn)]
    g_hat = G[np.ix_(dyn, dyn)] - Gds @ la.lu_solve(Gss, Gsd)
    b_hat = system.b[dyn] - Gds @ la.lu_solve(Gss, system.b[sta])
    c_hat = system.c[dyn] - la.lu_solve(Gss, system.c[sta], trans=1) @ Gsd
    h0 = system.c[sta] @ la.lu_solve(Gss, system.b[sta])
    Cdd = C[np.ix_(dyn, dyn)]
    lam, V = la.eig(la.solve(Cdd, g_hat))
    residues = (c_hat @ V) * la.solve(V, la.solve(Cdd, b_hat))

    def h(freqs):
        s = 2j * np.pi * np.asarray(freqs)
        return h0 + (residues[None, :] / (s[:, None] + lam[None, :])).sum(axis=1)
    return h


def child_sweep(n: int, path: str):
    import numpy as np

    import bandsketch.engine.solve.response as response
    from bandsketch.engine.solve.mna import build_system
    sys.path.insert(0, str(HERE))
    import bench_timeconstants as bt

    system = build_system(bt.ladder(n))
    freqs = np.logspace(0, 12, 200)
    if path == "dense":
        response.DENSE_LIMIT = 10**9
    elif path == "sparse":
        response.DENSE_LIMIT = 0
    out = {"unknowns": system.size}
    if path == "modal":
        t0 = time.perf_counter()
        h = _modal(system)
        setup = time.perf_counter() - t0
        many = np.logspace(0, 12, 20000)
        t0 = time.perf_counter()
        h(many)
        per_point = (time.perf_counter() - t0) / many.size
        direct = response.frequency_response(system, freqs)
        diff = np.abs(h(freqs) - direct)
        # Relative error where |H| is within 60 dB of its peak; deeper in the stop band the
        # modal terms cancel and only the absolute error (against the peak) stays small.
        near = np.abs(direct) >= 1e-3 * np.abs(direct).max()
        out.update(rate=1 / per_point, setup=setup, error=float(np.max(diff[near] / np.abs(direct[near]))),
                   abs_error=float(diff.max() / np.abs(direct).max()))
    else:
        response.frequency_response(system, freqs[:3])  # warm up
        t0 = time.perf_counter()
        response.frequency_response(system, freqs)
        out["rate"] = freqs.size / (time.perf_counter() - t0)
    return out


def child_edits(which: str, edits_n: int, scrub_n: int):
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    sys.path.insert(0, str(HERE))
    from PySide6.QtWidgets import QApplication

    import bench_views as bv
    from bandsketch.app.main_window import MainWindow
    from bandsketch.engine.design.designfile import load_design

    app = QApplication.instance() or QApplication(sys.argv[:1])
    window = MainWindow(keep_recovery=False)
    window.resize(1400, 900)
    window.show()
    doc = bv.ladder() if which == "ladder" else load_design(which)
    times = bv.time_edits(window, doc, edits_n)
    picked = bv.time_edits(window, load_design(which) if which != "ladder" else bv.ladder(), edits_n, selected=True)
    rate = bv.scrub_rate(window, load_design(which) if which != "ladder" else bv.ladder(), scrub_n)
    parts = len(doc.parts)
    window.stack.setClean()
    window.close()
    del app
    return {"median_ms": statistics.median(times), "max_ms": max(times), "parts": parts,
            "selected_ms": statistics.median(picked), "scrub_rate": rate}


def child_first_paint(design: str, launched: float):
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import QEvent, QObject, QTimer
    from PySide6.QtWidgets import QApplication

    app = QApplication(sys.argv[:1])
    from bandsketch.app.main_window import MainWindow
    from bandsketch.engine.design.designfile import load_design

    window = MainWindow(keep_recovery=False)
    window.resize(1400, 900)
    painted = {}

    class FirstPaint(QObject):
        def eventFilter(self, obj, event):
            if event.type() == QEvent.Type.Paint and "t" not in painted:
                painted["t"] = time.time()
                QTimer.singleShot(0, app.quit)
            return False

    watcher = FirstPaint()
    window.installEventFilter(watcher)
    window.set_document(load_design(design), design)
    window.show()
    QTimer.singleShot(20000, app.quit)
    app.exec()
    window.close()
    return {"seconds": painted["t"] - launched}


def run_child(*args, pycache: str | None = None) -> dict:
    """Run one measurement in a fresh interpreter; its result plus its peak memory.

    ``pycache``: a folder the child keeps its compiled byte code in (and reads it from), as
    an installed program's interpreter does, whatever the environment says."""
    env = {**os.environ, "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""),
           "QT_QPA_PLATFORM": os.environ.get("QT_QPA_PLATFORM", "offscreen")}
    if pycache is not None:
        env.pop("PYTHONDONTWRITEBYTECODE", None)
        env["PYTHONPYCACHEPREFIX"] = pycache
    proc = subprocess.run([sys.executable, __file__, "--child", *map(str, args)], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=3600)
    if proc.returncode != 0:
        raise RuntimeError(f"{args}: {proc.stderr.strip()[-2000:]}")
    return json.loads(proc.stdout.strip().splitlines()[-1])


def child_main(kind: str, args: list) -> None:
    fn = {"baseline": child_baseline, "analyze": child_analyze, "sweep": child_sweep, "edits": child_edits,
          "paint": child_first_paint, "json": child_json, "floor": child_floor}[kind]
    typed = [int(a) if a.isdigit() else (float(a) if a.replace(".", "", 1).isdigit() else a) for a in args]
    result = fn(*typed)
    result["peak_mib"] = _peak_mib()
    print(json.dumps(result), flush=True)


# -- the table -------------------------------------------------------------------------------

def ratio(x: float) -> str:
    return f"{x:.1f}×" if x < 10 else f"{x:.0f}×"


def fmt_s(t: float) -> str:
    return f"{1e3 * t:.1f} ms" if t < 1 else f"{t:.2f} s"


def main(argv) -> int:
    plan = QUICK if "--quick" in argv else FULL
    started = time.perf_counter()
    rows, goals = [], []

    def row(what, size, time_text, compared, peak):
        rows.append((what, size, time_text, compared, f"{peak:.0f}"))
        print(f"  … {what} {size}: {time_text}  {compared}", file=sys.stderr, flush=True)

    def goal(what, target, measured, met):
        goals.append((what, target, measured, "met" if met else "NOT met"))

    base = run_child("baseline")
    row("baseline (python + numpy/scipy + engine imported)", "", "", "", base["peak_mib"])

    floor = run_child("floor", plan["floor_repeat"])
    ratios = []
    for name, r in floor["samples"].items():
        ratios.append(r["analyze"] / r["floor"])
        row(f"analyze() vs dense floor: {name}", f"{r['unknowns']} unknowns", fmt_s(r["analyze"]),
            f"floor {fmt_s(r['floor'])} ({ratio(ratios[-1])} the floor), CPU time; "
            f"{fmt_s(r['analyze_bias_kept'])} with the bias kept", floor["peak_mib"])
    goal("small-stage analyze() against its floor", "≤ 1.5×", f"{min(ratios):.1f}–{max(ratios):.1f}×",
         max(ratios) <= 1.5)

    for network, n in plan["analyze"]:
        r = run_child("analyze", network, n)
        mark = "~" if r["scaled"] else ""
        row(f"analyze() vs naive, RC {network}", f"{n} C", fmt_s(r["analyze"]),
            f"naive {mark}{fmt_s(r['naive'])} ({ratio(r['naive'] / r['analyze'])} the time)", r["peak_mib"])
        if n == 10000:
            limit = 6.0 if network == "mesh" else 2.0
            goal(f"10,000-capacitor {network}", f"≤ {limit:.0f} s", fmt_s(r["analyze"]), r["analyze"] <= limit)

    for n in plan["json"]:
        r = run_child("json", n)
        which = "all roots" if r["complete"] else f"{r['poles']} poles nearest the band edges"
        row("analyze --json (analysis, poles, zeros, JSON), RC mesh", f"{r['unknowns']} unknowns",
            fmt_s(r["seconds"]), which, r["peak_mib"])
        if n == 5000:
            goal("analyze --json on 5,000 unknowns", "≤ 10 s", fmt_s(r["seconds"]), r["seconds"] <= 10)

    for n in plan["sweep"]:
        auto = run_child("sweep", n, "auto")
        parts = [f"{auto['rate']:,.0f} pt/s"]
        compared = []
        for path in ("dense", "sparse"):
            if path == "dense" and n > DENSE_MAX:
                continue
            r = run_child("sweep", n, path)
            compared.append(f"{path} {r['rate']:,.0f} pt/s ({r['peak_mib']:.0f} MiB)")
        if n <= DENSE_MAX:
            m = run_child("sweep", n, "modal")
            compared.append(f"modal {m['rate']:,.0f} pt/s after {fmt_s(m['setup'])} set-up, "
                            f"err {m['error']:.0e} within 60 dB of the peak, {m['abs_error']:.0e} of the peak below "
                            f"({m['peak_mib']:.0f} MiB)")
        row("sweep, RC ladder (engine's choice)", f"{auto['unknowns']} unknowns", parts[0], "; ".join(compared),
            auto["peak_mib"])

    samples = SAMPLES if plan["samples"] is None else SAMPLES[: plan["samples"]]
    medians, picked, rates = [], [], []
    for path in [*samples, "ladder"]:
        r = run_child("edits", str(path), plan["edits"], plan["scrub"])
        label = "generated RC ladder" if path == "ladder" else Path(path).stem
        row(f"edit→view: {label}", f"{r['parts']} parts", f"{r['median_ms']:.1f} ms median",
            f"max {r['max_ms']:.1f} ms over {plan['edits']} edits; {r['selected_ms']:.1f} ms median with the "
            f"part selected; scrub {r['scrub_rate']:.0f} updates/s", r["peak_mib"])
        if path == "ladder":
            goal("edit→view, 305-part ladder", "≤ 50 ms", f"{r['median_ms']:.0f} ms", r["median_ms"] <= 50)
        else:
            medians.append(r["median_ms"])
            picked.append(r["selected_ms"])
            rates.append(r["scrub_rate"])
    goal("edit→view median, every sample", "≤ 20 ms", f"{min(medians):.0f}–{max(medians):.0f} ms", max(medians) <= 20)
    goal("edit→view with a part selected", "≤ 40 ms", f"{min(picked):.0f}–{max(picked):.0f} ms", max(picked) <= 40)
    goal("value scrub, every sample", "≥ 30 updates/s", f"{min(rates):.0f}–{max(rates):.0f} /s", min(rates) >= 30)

    sample = str(SAMPLES[0])
    with tempfile.TemporaryDirectory() as tmp:
        shot = Path(tmp) / "shot.png"
        env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", "PYTHONPATH": str(ROOT),
               "XDG_CONFIG_HOME": tmp, "XDG_DATA_HOME": tmp}
        best, peak = float("inf"), 0.0
        for _ in range(1 if "--quick" in argv else 3):
            t0 = time.perf_counter()
            proc = subprocess.run([sys.executable, "-c", "import resource, runpy, sys; sys.argv = ['bandsketch'] + sys.argv[1:];"
                                   "\ntry:\n    runpy.run_module('bandsketch', run_name='__main__')\nexcept SystemExit as e:\n"
                                   "    print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr);"
                                   " raise", sample, "--screenshot", str(shot)],
                                  cwd=ROOT, env=env, capture_output=True, text=True, timeout=300)
            took = time.perf_counter() - t0
            if proc.returncode != 0 or not shot.exists():
                raise RuntimeError(f"screenshot failed: {proc.stderr[-2000:]}")
            best = min(best, took)
            peak = max(peak, int(proc.stderr.strip().splitlines()[-1]) / 1024)
        row("start-up: python -m bandsketch SAMPLE --screenshot", SAMPLES[0].stem, fmt_s(best),
            "to the PNG written, incl. 300 ms settle", peak)
        runs = 1 if "--quick" in argv else 3
        firsts = [run_child("paint", sample, f"{time.time():.6f}") for _ in range(runs)]
        first = min(r["seconds"] for r in firsts)
        as_set = os.environ.get("PYTHONDONTWRITEBYTECODE")
        row("start-up: launch to first paint", SAMPLES[0].stem, fmt_s(first),
            "interpreter start, imports, window, design opened (best of runs); PYTHONDONTWRITEBYTECODE "
            + (f"= {as_set}: the project's sources compiled at every launch" if as_set else "not set"),
            max(r["peak_mib"] for r in firsts))
        # An installed program reads byte code compiled at its first launch (or at install).
        cache = str(Path(tmp) / "pycache")
        run_child("paint", sample, f"{time.time():.6f}", pycache=cache)
        cached = [run_child("paint", sample, f"{time.time():.6f}", pycache=cache) for _ in range(runs)]
        first_cached = min(r["seconds"] for r in cached)
        row("start-up: launch to first paint, byte code cached", SAMPLES[0].stem, fmt_s(first_cached),
            "as above, the compiled byte code of every module read from a cache (best of runs)",
            max(r["peak_mib"] for r in cached))
        goal("start-up to the first painted window", "≤ 0.9 s",
             f"{fmt_s(first_cached)} (byte code cached), {fmt_s(first)} (compiling)", first_cached <= 0.9)

    if "--previous" in argv:
        before = previous_times(Path(argv[argv.index("--previous") + 1]))
        rows = [(*r[:3], before.get((r[0], r[1]), "—"), *r[3:]) for r in rows]
        _table((*HEAD[:3], "previous run", *HEAD[3:]), rows)
    else:
        _table(HEAD, rows)
    print()
    _table(("target", "wanted", "measured", "verdict"), goals)
    print(f"\n({'quick' if '--quick' in argv else 'full'} run, {time.perf_counter() - started:.0f} s in all)")
    return 0


def previous_times(path: Path) -> dict:
    """(benchmark, size) -> the "time / rate" cell of the first table in a benchmarks page."""
    times = {}
    for line in path.read_text(encoding="utf-8").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if line.startswith("| ") and len(cells) >= 5 and cells[0] not in ("benchmark", "target"):
            times.setdefault((cells[0], cells[1]), cells[2])
        elif times and not line.startswith("|"):
            break
    return times


def _table(head, rows) -> None:
    widths = [max(len(str(r[i])) for r in [*rows, head]) for i in range(len(head))]
    print("| " + " | ".join(h.ljust(w) for h, w in zip(head, widths)) + " |")
    print("|" + "|".join("-" * (w + 2) for w in widths) + "|")
    for r in rows:
        print("| " + " | ".join(str(c).ljust(w) for c, w in zip(r, widths)) + " |")


HEAD = ("benchmark", "size", "time / rate", "compared with", "peak MiB")


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "--child":
        child_main(sys.argv[2], sys.argv[3:])
        sys.exit(0)
    sys.exit(main(sys.argv[1:]))

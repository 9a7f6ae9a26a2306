"""Run every benchmark in one go and write ``benchmarks/RESULTS.md`` with the machine described.

Run: ``python benchmarks/run_all.py [--only advection,trajectories] [--quick] [--out PATH]``
(a few minutes on 2 cores; ``--quick``: fewer repeats and smaller cases, for a check that
everything runs, not for the figures).  Each benchmark runs in its own Python process (a fresh numba and
numpy state, as a user meets it) importing the parcelcast of this checkout, and its output
goes both to the terminal and, verbatim, into the results file.  Every figure in the file
is a ratio or a rate measured in the same run as its baseline; nothing is compared with
numbers from another machine or another day.

Benchmarks, in order: advection against the fused floor and numpy.gradient, and its cost
against grid size (``bench_advection.py``); trajectories against the scipy baseline, one
thread and all threads, and the cost against the number of parcels
(``bench_trajectories.py``); CAPE/CIN against the scipy baseline (``bench_profile.py``);
the climate run's throughput and memory (``bench_climate.py``) and the commands' latency
(``bench_latency.py``), the briefing against ``advect --at`` (``bench_brief.py``) and the
peak memory of a one-level question (``bench_memory.py``) when those files exist.
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent

#: (name, script, arguments, what it measures); a missing optional script is reported, not run
BENCHMARKS = (
    ("advection", "bench_advection.py", [],
     "-V.grad T on 0.25-degree global: kernel vs fused single-pass floor and numpy.gradient; "
     "cost against grid size"),
    ("trajectories", "bench_trajectories.py", [],
     "10,000 parcels x 48 h on a 1-degree field, 1 and 2 threads, vs scipy solve_ivp; cost "
     "against the number of parcels"),
    ("cape", "bench_profile.py", [],
     "CAPE/CIN of three parcels, one column and 10,000 columns, vs scipy solve_ivp"),
    ("climate", "bench_climate.py", [],
     "the climate split: windows and grid points per second, peak memory"),
    ("latency", "bench_latency.py", [],
     "advect / profile / track on real files as ratios to the import floor"),
    ("brief", "bench_brief.py", [],
     "the morning briefing on the real files against one advect --at call on the same file"),
    ("memory", "bench_memory.py", [],
     "peak memory of a one-level question on a 500 MB 0.25-degree NetCDF file"),
)
OPTIONAL = {"climate", "latency", "brief", "memory"}  # written by other parts of the project; run when present
#: arguments of each benchmark for ``--quick``
QUICK = {"advection": ["--repeats", "3"], "trajectories": ["--repeats", "1"],
         "cape": ["--columns", "1000", "--baseline-columns", "5", "--no-compile-time"],
         "climate": ["--quick"], "latency": ["--repeat", "1", "--no-cold"], "brief": ["--repeat", "1"],
         "memory": []}

#: lines of a benchmark's output repeated in the summary at the top of the results
HEADLINE_WORDS = ("ratio", "goal", "parcel-steps/s", "speed-up", "per second", "peak", "brief /",
                  "x ok", "x over")


def machine_description() -> list[str]:
    """What the figures were measured on: CPU (lscpu), memory, Python and library versions."""
    lines = []
    try:
        lscpu = subprocess.run(["lscpu"], capture_output=True, text=True, check=True).stdout
    except (OSError, subprocess.CalledProcessError):
        lscpu = ""
    wanted = ("Model name", "CPU(s)", "Thread(s) per core", "Core(s) per socket", "L1d cache",
              "L2 cache", "L3 cache", "Hypervisor vendor", "Flags")
    for line in lscpu.splitlines():
        key, _, value = line.partition(":")
        if key.strip() in wanted:
            value = value.strip()
            if key.strip() == "Flags":  # only the vector units matter here
                value = " ".join(f for f in value.split() if f in ("avx2", "fma", "avx512f"))
                key = "SIMD flags"
            lines.append(f"{key.strip()}: {value}")
    try:
        mem = Path("/proc/meminfo").read_text().splitlines()[0].split()[1]
        lines.append(f"Memory: {int(mem) / 2**20:.1f} GiB")
    except (OSError, IndexError, ValueError):
        pass
    lines.append(f"OS: {platform.platform()}")
    lines.append(f"Python: {platform.python_version()} ({platform.python_implementation()})")
    versions = []
    for name in ("numpy", "numba", "llvmlite", "scipy", "xarray", "dask"):
        try:
            module = __import__(name)
            versions.append(f"{name} {module.__version__}")
        except ImportError:
            versions.append(f"{name} absent")
    lines.append("Libraries: " + ", ".join(versions))
    threads = os.environ.get("NUMBA_NUM_THREADS", "not set (numba uses every CPU)")
    lines.append(f"NUMBA_NUM_THREADS: {threads}")
    return lines


def load_text() -> str:
    one, five, fifteen = os.getloadavg()
    return f"{one:.2f} / {five:.2f} / {fifteen:.2f} (1 / 5 / 15 min)"


def run_benchmark(script: Path, args: list[str]) -> tuple[int, str, float]:
    """Run one benchmark script on this checkout; echo and return (exit status, output, seconds)."""
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        p for p in (str(ROOT), os.environ.get("PYTHONPATH", "")) if p))
    start = time.perf_counter()
    proc = subprocess.Popen([sys.executable, str(script), *args], cwd=ROOT, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    output = []
    for line in proc.stdout:
        print(line, end="", flush=True)
        output.append(line)
    status = proc.wait()
    return status, "".join(output), time.perf_counter() - start


def results_markdown(machine, runs, started, finished, load_before, load_after, quick=False) -> str:
    """The results file: machine, a summary of the headline lines, then each output verbatim."""
    text = ["# Benchmark results", "",
            f"Written by `python benchmarks/run_all.py` on {started:%Y-%m-%d %H:%M} UTC "
            f"(finished {finished:%H:%M} UTC). Every ratio is measured against a baseline run "
            "in the same process, on this machine; rerun the command to refresh this file."
            + (" QUICK RUN (--quick: fewer repeats, smaller cases): a check that everything runs, "
               "not the figures." if quick else ""), "",
            "## Machine", ""]
    text += [f"- {line}" for line in machine]
    text += [f"- Load average before: {load_before}; after: {load_after} (the machine may be "
             "shared; a busy machine slows the multi-threaded runs most)", "",
             "## Headline figures", ""]
    for name, description, status, output, seconds in runs:
        if output is None:
            continue
        heads = [" ".join(line.split()) for line in output.splitlines()
                 if any(word in line.lower() for word in HEADLINE_WORDS)]
        text.append(f"- **{name}**: " + ("; ".join(heads) if heads else "(see below)"))
    text.append("")
    for name, description, status, output, seconds in runs:
        text += [f"## {name}", "", description + ".", ""]
        if output is None:
            text += [f"Not run: {status}.", ""]
            continue
        state = "finished" if status == 0 else f"FAILED (exit status {status})"
        text += [f"{state} in {seconds:.0f} s.", "", "```text", output.rstrip(), "```", ""]
    return "\n".join(text) + "\n"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--only", help="comma-separated names: " + ", ".join(b[0] for b in BENCHMARKS))
    ap.add_argument("--out", type=Path, default=HERE / "RESULTS.md", help="results file to write")
    ap.add_argument("--quick", action="store_true", help="fewer repeats, smaller cases")
    args = ap.parse_args(argv)
    chosen = set(args.only.split(",")) if args.only else {b[0] for b in BENCHMARKS}
    unknown = chosen - {b[0] for b in BENCHMARKS}
    if unknown:
        ap.error(f"unknown benchmark(s) {', '.join(sorted(unknown))}; valid: "
                 + ", ".join(b[0] for b in BENCHMARKS))

    started = dt.datetime.now(dt.timezone.utc)
    load_before = load_text()
    machine = machine_description()
    print("\n".join(machine), flush=True)
    runs = []
    failed = False
    for name, script, extra, description in BENCHMARKS:
        if name not in chosen:
            continue
        path = HERE / script
        if not path.is_file():
            if name not in OPTIONAL:
                raise SystemExit(f"benchmark {path} is missing")
            runs.append((name, description, f"{script} is not in this checkout", None, 0.0))
            continue
        if args.quick:
            extra = QUICK[name]
        print(f"\n=== {name}: python benchmarks/{script} {' '.join(extra)}", flush=True)
        status, output, seconds = run_benchmark(path, extra)
        failed |= status != 0
        runs.append((name, description, status, output, seconds))
    finished = dt.datetime.now(dt.timezone.utc)

    sys.path.insert(0, str(ROOT))
    from parcelcast.io.atomic import write_text

    write_text(args.out, results_markdown(machine, runs, started, finished, load_before, load_text(),
                                          args.quick))
    print(f"\nresults written to {args.out}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())

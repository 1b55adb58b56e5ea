"""How much plant-audit costs beside the property calls it cannot avoid.

One run of this script, for each size of synthetic balance (:mod:`generate`), measures in a fresh
child process:

* **floor**: the bare low-level CoolProp flashes the audit really needs, replayed with one HEOS
  ``AbstractState`` per fluid: exactly the calls the audit makes (recorded in an untimed pass),
  each unique call once: the stream states, the saturation temperatures of the phase checks, the
  (P, s) flashes of the isentropic outlets of turbines, compressors and pumps, the (P, h) and
  saturation flashes of the heat exchangers' temperature profiles, the dead states and the
  per-fluid formation anchors, with the same imposed phases and the same values read back;
* **naive**: ``PropsSI`` asked one output at a time for h, s, u and ρ of the same unique states
  (and T alone for the saturation temperatures), on a random sample of the states when there are
  more than ``--naive-sample``, scaled to all of them;
* **audit**: ``audit.run`` end to end (read, parse, validate, solve, acceptances), no reports;
* **workbook**: ``audit.report.workbook.write_workbook`` of that result, on its own; and, at every
  size up to 10 000 streams, the peak of the Python allocations while writing it (``tracemalloc``,
  an untimed write), to see whether writing takes memory in proportion to the rows;
* **peak memory**: the child's maximum resident set size (``resource.getrusage``, ``ru_maxrss``)
  after its first audit, before the workbook, recording, floor and naive passes; and the resident
  size after imports and after a warm-up audit, for comparison.

Times are CPU seconds of the child process (``time.process_time``: the machines are shared, and
CPU time is what the audit costs); wall-clock seconds are printed beside them. Each timing is the
best of ``--repeat`` runs (default 5; two for sizes above 20 000 streams), the audit and the
floor timed in turns, after a warm-up audit of the sample plant (imports and first-use caches). A
separate instrumented run splits the audit into read and parse, validate and solve. Then it
prints the ratios and their goals: audit / floor ≤ 1.3,
naive / audit ≥ 5, workbook / audit at 10 000 streams ≤ 1 (stretch ≤ 0.5; and workbook / the solve
step alone), the workbook's traced memory flat in the rows (at most 1.5 times as much for ten times
the streams),
time(100 000) / time(10 000) within 10 % of the size ratio, peak memory at 100 000 streams ≤ 1 GB.
The workbook is timed at 10 000 streams only unless ``--workbook-all`` is given (a 100 000-stream
workbook takes minutes).

Usage::

    python benchmarks/run.py                       # 1 000, 10 000 and 100 000 streams (minutes)
    python benchmarks/run.py --sizes 1000,10000    # a quicker run
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import random
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

HERE = Path(__file__).resolve().parent

GOALS = {
    "audit / floor": ("<=", 1.3),
    "naive / audit": (">=", 5.0),
    "workbook / audit (10 000 streams)": ("<=", 1.0),
    "workbook / audit, stretch (10 000 streams)": ("<=", 0.5),
    "peak memory at 100 000 streams [MB]": ("<=", 1000.0),
    "cold start: check of the sample [s]": ("<=", 1.0),
    "cold start: an invalid file [s]": ("<=", 0.5),
}

SAMPLE = HERE.parent / "sample_plant" / "quillon-bay-seeded.yaml"
INVALID = HERE.parent / "tests" / "bad_inputs" / "balance_name_missing.yaml"


def cold_start(runs: int) -> dict[str, tuple[float, float]]:
    """Median wall and CPU seconds of ``plant-audit check`` in a fresh interpreter: of the
    23-stream sample (JSON written) and of an invalid file (refused before any property call);
    timed as :mod:`startup` times them (compiled-module cache allowed, one untimed first run)."""
    sys.path.insert(0, str(HERE))
    from startup import timed

    out = {}
    with tempfile.TemporaryDirectory() as folder:
        for name, path, extra in (
            ("cold start: check of the sample [s]", SAMPLE, ["--json", str(Path(folder) / "x.json")]),
            ("cold start: an invalid file [s]", INVALID, []),
        ):
            wall, _, cpu = timed(["check", str(path), "-q", *extra], runs)
            out[name] = (wall, cpu)
    return out


def count_exchanger_flashes(path: Path) -> tuple[int, int]:
    """(heat exchangers profiled, CoolProp flashes their profiles took) in one audit of ``path``:
    the bends' saturation states and the (P, h) points of :func:`approach_profile`."""
    import audit
    from audit.steps.kinds import heat_exchanger

    real = heat_exchanger.approach_profile
    counts = [0, 0]

    def counting(ctx, *args, **kwargs):
        before = ctx.engine.flash_count
        try:
            return real(ctx, *args, **kwargs)
        finally:
            counts[0] += 1
            counts[1] += ctx.engine.flash_count - before

    heat_exchanger.approach_profile = counting
    try:
        audit.run(path)
    finally:
        heat_exchanger.approach_profile = real
    return counts[0], counts[1]


# -- the child: measurements on one balance file ------------------------------------------------
def _clock() -> tuple[float, float]:
    return time.process_time(), time.perf_counter()


def _best(function, repeat: int) -> tuple[float, float, object]:
    """(best CPU seconds, wall seconds of that run, last return value) over ``repeat`` runs."""
    best = (float("inf"), float("inf"))
    value = None
    for _ in range(repeat):
        value = None
        gc.collect()
        cpu, wall = _clock()
        value = function()
        cpu, wall = time.process_time() - cpu, time.perf_counter() - wall
        best = min(best, (cpu, wall))
    return best[0], best[1], value


def _rss_mb() -> float:
    """Resident set size now [MB] (Linux /proc), or nan where it cannot be read."""
    try:
        with open("/proc/self/statm", encoding="ascii") as f:
            pages = int(f.read().split()[1])
        return pages * os.sysconf("SC_PAGE_SIZE") / 1e6
    except (OSError, ValueError, IndexError):
        return float("nan")


def _max_rss_mb() -> float:
    """Peak resident set size of this process so far [MB] (ru_maxrss is in kB on Linux)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e3


class Recorder:
    """Records the CoolProp calls the audit makes, through a stand-in for ``AbstractState``.

    Every ``update`` is logged as [fluid, imposed phase, input pair, value 1, value 2, names of the
    values read after it]; ``specify_phase`` / ``unspecify_phase`` set the imposed phase.
    """

    def __init__(self, real_class) -> None:
        self.real_class = real_class
        self.calls: list[list] = []

    def factory(self, backend: str, fluid: str):
        recorder = self
        real = self.real_class(backend, fluid)

        class Recording:
            _imposed = None
            _current: list | None = None

            def specify_phase(self, phase):
                self._imposed = phase
                return real.specify_phase(phase)

            def unspecify_phase(self):
                self._imposed = None
                return real.unspecify_phase()

            def update(self, pair, a, b):
                self._current = [backend, fluid, self._imposed, pair, a, b, []]
                recorder.calls.append(self._current)
                return real.update(pair, a, b)

            def __getattr__(self, name):
                attribute = getattr(real, name)
                if not callable(attribute):
                    return attribute

                def call(*args):
                    if not args and self._current is not None:
                        self._current[6].append(name)
                    return attribute(*args)

                return call

        return Recording()

    def unique(self) -> list[tuple]:
        """Each distinct call once, in first-seen order, with the union of the values read."""
        seen: dict[tuple, list[str]] = {}
        for backend, fluid, phase, pair, a, b, read in self.calls:
            names = seen.setdefault((backend, fluid, phase, pair, a, b), [])
            names.extend(n for n in read if n not in names)
        return [(*key, tuple(read)) for key, read in seen.items()]


def record_calls(path: Path) -> list[tuple]:
    """The unique CoolProp calls of one (untimed) audit of ``path``."""
    import CoolProp.CoolProp as CP

    import audit
    from audit.properties.library import CP as lazy

    lazy.PT_INPUTS  # noqa: B018 - loads the library into the stand-in before it is patched
    real = CP.AbstractState
    recorder = Recorder(real)
    CP.AbstractState = recorder.factory
    lazy.AbstractState = recorder.factory  # the property layer's copy of the library's names
    try:
        audit.run(path)
    finally:
        CP.AbstractState = real
        lazy.AbstractState = real
    return recorder.unique()


def floor_replay(calls: list[tuple]):
    """A function replaying ``calls`` bare: one AbstractState per (back end, fluid)."""
    import CoolProp.CoolProp as CP

    states = {(backend, fluid): CP.AbstractState(backend, fluid) for backend, fluid, *_ in calls}
    plan = [
        (
            states[(backend, fluid)],
            phase,
            pair,
            a,
            b,
            [getattr(states[(backend, fluid)], name) for name in read],
        )
        for backend, fluid, phase, pair, a, b, read in calls
    ]

    def replay() -> int:
        failed = 0
        for state, phase, pair, a, b, getters in plan:
            try:
                if phase is not None:
                    state.specify_phase(phase)
                state.update(pair, a, b)
                for getter in getters:
                    getter()
            except ValueError:
                failed += 1
            finally:
                if phase is not None:
                    state.unspecify_phase()
        return failed

    return replay


def _kind_of_call(pair: int, read: tuple[str, ...]) -> str:
    """A label for a recorded call: its input pair, or what it is for."""
    import CoolProp.CoolProp as CP

    if read == ("T",):
        return "T_sat(P)"
    names = {
        CP.PT_INPUTS: "(P, T)",
        CP.PQ_INPUTS: "(P, x)",
        CP.QT_INPUTS: "(T, x)",
        CP.HmassP_INPUTS: "(P, h)",
        CP.PSmass_INPUTS: "(P, s)",
    }
    return names.get(pair, "formation anchor")


def naive_plan(calls: list[tuple], sample: int, seed: int) -> tuple[list[tuple], int, int]:
    """PropsSI calls for the same states: (output, name 1, value 1, name 2, value 2, fluid) each;
    returns (the planned calls of the sample, the number of states in the sample, all states)."""
    import CoolProp.CoolProp as CP

    names = {
        CP.PT_INPUTS: ("P", "T"),
        CP.PQ_INPUTS: ("P", "Q"),
        CP.QT_INPUTS: ("Q", "T"),
        CP.HmassP_INPUTS: ("H", "P"),
        CP.PSmass_INPUTS: ("P", "S"),
    }
    states = []
    for backend, fluid, _, pair, a, b, read in calls:
        if pair not in names:
            continue  # the per-fluid formation anchors (density-temperature): no naive twin
        if {"hmass", "smass", "umass", "rhomass"} & set(read):
            outputs = ("H", "S", "U", "D")
        elif "T" in read:
            outputs = ("T",)  # a saturation temperature
        else:
            continue
        states.append(
            [(out, names[pair][0], a, names[pair][1], b, f"{backend}::{fluid}") for out in outputs]
        )
    total = len(states)
    if total > sample:
        states = random.Random(seed).sample(states, sample)
    return [call for state in states for call in state], len(states), total


def naive_replay(plan: list[tuple]):
    import CoolProp.CoolProp as CP

    props = CP.PropsSI

    def replay() -> int:
        failed = 0
        for out, n1, v1, n2, v2, fluid in plan:
            try:
                props(out, n1, v1, n2, v2, fluid)
            except ValueError:
                failed += 1
        return failed

    return replay


def phases(path: Path) -> dict[str, float]:
    """CPU seconds of each part of one audit (read and parse, validate, solve), run as
    :func:`audit.api.run` runs them."""
    from audit import api
    from audit.input.document import parse_document, read_text
    from audit.reading import resolve_tables, validate_document
    from audit.solve import solve

    spent: dict[str, float] = {}
    with api._cycle_collection_paused():
        started = time.process_time()
        document = parse_document(read_text(path), str(path))
        document, _ = resolve_tables(document)
        spent["read and parse"] = time.process_time() - started
        started = time.process_time()
        balance = validate_document(document)
        spent["validate"] = time.process_time() - started
        started = time.process_time()
        solve(balance, document)
        spent["solve"] = time.process_time() - started
    return spent


def child(
    path: Path, repeat: int, naive_sample: int, seed: int, workbook: bool, workbook_memory: bool
) -> dict:
    """All the measurements on one balance file, in this process (see the module docstring).

    The first audit is timed and sets the peak memory; then, after the untimed recording pass, the
    audit and the floor are timed in turns (``repeat`` runs each in all, the best kept), so that a
    busy spell on the shared machine slows both alike."""
    import audit
    from audit.report.workbook import write_workbook

    out: dict = {"rss_after_imports_MB": _rss_mb()}
    sample = HERE.parent / "sample_plant" / "quillon-bay-clean.yaml"
    if sample.exists():  # imports and first-use caches (pint, pydantic) out of the timings
        audit.run(sample)
    out["rss_before_audit_MB"] = _rss_mb()
    audit_cpu, audit_wall, result = _best(lambda: audit.run(path), 1)
    out.update(
        peak_rss_MB=_max_rss_mb(),
        streams=len(result.streams),
        steps=len(result.steps),
        findings=len(result.findings),
    )
    if workbook:
        with tempfile.TemporaryDirectory() as folder:
            target = Path(folder) / "audit.xlsx"
            times = repeat if out["streams"] <= 2_000 else 1  # a large workbook takes a while
            cpu, wall, _ = _best(lambda: write_workbook(result, target), times)
            out.update(workbook_cpu=cpu, workbook_wall=wall, workbook_MB=target.stat().st_size / 1e6)
    if workbook_memory:  # an untimed write with the allocations traced (slower)
        with tempfile.TemporaryDirectory() as folder:
            gc.collect()
            tracemalloc.start()
            write_workbook(result, Path(folder) / "audit.xlsx")
            out["workbook_traced_MB"] = tracemalloc.get_traced_memory()[1] / 1e6
            tracemalloc.stop()
    result = None  # let the result go before the next passes
    gc.collect()

    exchangers, flashes = count_exchanger_flashes(path)
    out.update(exchangers=exchangers, exchanger_flashes=flashes)
    calls = record_calls(path)
    kinds: dict[str, int] = {}
    for _, _, _, pair, _, _, read in calls:
        kind = _kind_of_call(pair, read)
        kinds[kind] = kinds.get(kind, 0) + 1
    replay = floor_replay(calls)
    floor_cpu, floor_wall, failed = _best(replay, 1)
    for _ in range(repeat - 1):
        cpu, wall, _ = _best(lambda: audit.run(path), 1)
        audit_cpu, audit_wall = min((audit_cpu, audit_wall), (cpu, wall))
        cpu, wall, failed = _best(replay, 1)
        floor_cpu, floor_wall = min((floor_cpu, floor_wall), (cpu, wall))
    out.update(
        audit_cpu=audit_cpu,
        audit_wall=audit_wall,
        floor_cpu=floor_cpu,
        floor_wall=floor_wall,
        floor_calls=len(calls),
        floor_failed=failed,
        floor_kinds=kinds,
    )
    out["phases"] = phases(path)

    plan, sampled, total = naive_plan(calls, naive_sample, seed)
    cpu, wall, failed = _best(naive_replay(plan), 1)
    scale = total / sampled if sampled else 0.0
    out.update(
        naive_cpu=cpu * scale,
        naive_wall=wall * scale,
        naive_states=total,
        naive_sampled=sampled,
        naive_calls=len(plan),
        naive_failed=failed,
    )
    return out


# -- the parent: generate, measure each size in a child, print -------------------------------------
def _measure(path: Path, args: argparse.Namespace, size: int) -> dict:
    repeat = args.repeat if size <= 20_000 else min(args.repeat, 2)
    command = [
        sys.executable,
        str(Path(__file__).resolve()),
        "--child",
        str(path),
        "--repeat",
        str(repeat),
        "--naive-sample",
        str(args.naive_sample),
        "--seed",
        str(args.seed),
    ]
    if args.workbook_all or size == 10_000:
        command.append("--workbook")
    if size <= 10_000:
        command.append("--workbook-memory")
    done = subprocess.run(command, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        sys.stderr.write(done.stderr)
        raise SystemExit(f"the measurement of {path} failed")
    return json.loads(done.stdout.strip().splitlines()[-1])


def _ratio_line(name: str, value: float) -> str:
    goal = GOALS.get(name)
    if goal is None:
        return f"  {name:42s} {value:10.3g}"
    sign, limit = goal
    met = value <= limit if sign == "<=" else value >= limit
    return f"  {name:42s} {value:10.3g}   goal {sign} {limit:g}: {'met' if met else 'NOT MET'}"


def report(results: dict[int, dict]) -> list[str]:
    lines = ["", "times: CPU seconds of the measuring process (wall seconds in brackets)", ""]
    header = (
        f"{'streams':>8} {'steps':>7} {'flashes':>8} {'floor':>15} {'audit':>15} "
        f"{'naive':>17} {'workbook':>15} {'peak RSS':>9}"
    )
    lines.append(header)
    sizes = {k: v for k, v in results.items() if isinstance(k, int)}
    for _, r in sorted(sizes.items()):
        book = (
            f"{r['workbook_cpu']:7.2f} ({r['workbook_wall']:5.1f})"
            if "workbook_cpu" in r
            else f"{'-':>15}"
        )
        naive = f"{r['naive_cpu']:8.2f} ({r['naive_wall']:6.1f})"
        lines.append(
            f"{r['streams']:8d} {r['steps']:7d} {r['floor_calls']:8d} "
            f"{r['floor_cpu']:7.2f} ({r['floor_wall']:5.1f}) "
            f"{r['audit_cpu']:7.2f} ({r['audit_wall']:5.1f}) {naive} {book} "
            f"{r['peak_rss_MB']:6.0f} MB"
        )
    lines.append("")
    for size, r in sorted(sizes.items()):
        sampled = (
            ""
            if r["naive_sampled"] == r["naive_states"]
            else f"; naive timed on a random {r['naive_sampled']} of the {r['naive_states']} "
            "states and scaled"
        )
        kinds = ", ".join(f"{n} {k}" for k, n in sorted(r["floor_kinds"].items(), key=lambda kv: -kv[1]))
        parts = ", ".join(f"{k} {v:.2f} s" for k, v in r["phases"].items())
        lines.append(f"{size} streams: {r['findings']} findings")
        lines.append(f"  floor: {r['floor_calls']} unique CoolProp calls: {kinds}{sampled}")
        if r.get("exchangers"):
            lines.append(
                f"  heat exchanger profiles: {r['exchanger_flashes'] / r['exchangers']:.1f} flashes "
                f"per exchanger ({r['exchangers']} exchangers, {r['exchanger_flashes']} flashes)"
            )
        lines.append(f"  audit, one instrumented run: {parts}")
        lines.append(
            f"  resident memory: {r['rss_after_imports_MB']:.0f} MB after imports, "
            f"{r['rss_before_audit_MB']:.0f} MB after a warm-up audit, peak "
            f"{r['peak_rss_MB']:.0f} MB (ru_maxrss)"
        )
    lines += ["", "ratios (CPU time):"]
    for size, r in sorted(sizes.items()):
        lines.append(f" {size} streams")
        lines.append(_ratio_line("audit / floor", r["audit_cpu"] / r["floor_cpu"]))
        lines.append(_ratio_line("naive / audit", r["naive_cpu"] / r["audit_cpu"]))
        if "workbook_cpu" in r:
            name = "workbook / audit (10 000 streams)" if size == 10_000 else "workbook / audit"
            lines.append(_ratio_line(name, r["workbook_cpu"] / r["audit_cpu"]))
            if size == 10_000:
                stretch = "workbook / audit, stretch (10 000 streams)"
                lines.append(_ratio_line(stretch, r["workbook_cpu"] / r["audit_cpu"]))
            lines.append(
                _ratio_line("workbook / solve step alone", r["workbook_cpu"] / r["phases"]["solve"])
            )
    if 10_000 in results and 100_000 in results:
        small, big = results[10_000], results[100_000]
        size_ratio = big["streams"] / small["streams"]
        time_ratio = big["audit_cpu"] / small["audit_cpu"]
        within = abs(time_ratio / size_ratio - 1.0) <= 0.10
        lines.append(" scaling")
        lines.append(
            f"  {'audit time(100 000) / time(10 000)':42s} {time_ratio:10.3g}   "
            f"size ratio {size_ratio:g}, goal within 10 %: "
            f"{'met' if within else 'NOT MET'}"
        )
        floor_ratio = big["floor_cpu"] / small["floor_cpu"]
        lines.append(
            f"  {'floor time(100 000) / time(10 000)':42s} {floor_ratio:10.3g}   "
            "(the same work ten times: the machine's own spread)"
        )
        overhead = (big["audit_cpu"] / big["floor_cpu"]) / (small["audit_cpu"] / small["floor_cpu"])
        within = abs(overhead - 1.0) <= 0.10
        lines.append(
            f"  {'(audit / floor) at 100 000 over at 10 000':42s} {overhead:10.3g}   "
            f"within 10 % of 1: {'met' if within else 'NOT MET'}"
        )
    traced = {size: r["workbook_traced_MB"] for size, r in sizes.items() if "workbook_traced_MB" in r}
    if traced:
        lines.append(" workbook memory (peak of the Python allocations while writing, tracemalloc)")
        for size, mb in sorted(traced.items()):
            lines.append(f"  {size:>7} streams {mb:10.1f} MB")
        if len(traced) > 1:
            small, big = min(traced), max(traced)
            growth = traced[big] / traced[small]
            lines.append(
                f"  {'growth from ' + str(small) + ' to ' + str(big) + ' streams':42s} {growth:10.3g}"
                f"   goal flat (about 1): {'met' if growth <= 1.5 else 'NOT MET'}"
            )
    if "cold" in results:
        lines.append(" start-up (median wall seconds of a fresh process; CPU seconds beside)")
        for name, (wall, cpu) in results["cold"].items():
            lines.append(_ratio_line(name, wall) + f"   (CPU {cpu:.2f} s)")
    if 100_000 in results:
        lines.append(" memory")
        lines.append(_ratio_line("peak memory at 100 000 streams [MB]", results[100_000]["peak_rss_MB"]))
    return lines


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Time plant-audit against its property floor.")
    parser.add_argument(
        "--sizes",
        default="1000,10000,100000",
        help="comma-separated stream counts (default: 1000,10000,100000)",
    )
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument(
        "--repeat",
        type=int,
        default=5,
        help="runs per timing, the best kept (at most 2 above 20 000 streams)",
    )
    parser.add_argument(
        "--naive-sample",
        type=int,
        default=20_000,
        help="most states timed with PropsSI; more are scaled from a sample",
    )
    parser.add_argument(
        "--data", help="folder for the generated balances (kept and reused); default: a temporary folder"
    )
    parser.add_argument(
        "--workbook-all",
        action="store_true",
        help="time the workbook at every size, not only at 10 000 streams",
    )
    parser.add_argument(
        "--cold-runs", type=int, default=7, help="fresh-process runs per cold-start timing (median)"
    )
    parser.add_argument("--child", help=argparse.SUPPRESS)
    parser.add_argument("--workbook", action="store_true", help=argparse.SUPPRESS)
    parser.add_argument("--workbook-memory", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.child:
        sys.path.insert(0, str(HERE))
        print(
            json.dumps(
                child(
                    Path(args.child),
                    args.repeat,
                    args.naive_sample,
                    args.seed,
                    args.workbook,
                    args.workbook_memory,
                )
            )
        )
        return 0

    sys.path.insert(0, str(HERE))
    import generate

    sizes = [int(s) for s in args.sizes.split(",") if s.strip()]
    results: dict = {}
    if args.cold_runs > 0:
        results["cold"] = cold_start(args.cold_runs)
        print("measured the cold start", flush=True)
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(args.data) if args.data else Path(scratch)
        folder.mkdir(parents=True, exist_ok=True)
        for size in sizes:
            path = folder / f"balance-{size}-seed{args.seed}.yaml"
            if not path.exists():
                started = time.perf_counter()
                generate.write(path, size, args.seed)
                print(f"generated {path.name} in {time.perf_counter() - started:.0f} s", flush=True)
            results[size] = _measure(path, args, size)
            r = results[size]
            print(
                f"measured {size} streams: audit {r['audit_cpu']:.2f} s, floor "
                f"{r['floor_cpu']:.2f} s CPU",
                flush=True,
            )
    print("\n".join(report(results)))
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Benchmark (not a test): batch throughput with one worker process against all cores.

Generates N copies of the sample plant's clean revision (default 100) with perturbed values — each
copy's turbine and compressor shaft power and process-water flow scaled by a small factor of its
own, inside the default tolerances — then audits the folder with ``--workers 1`` and with one
worker per core, and prints files per second and the ratio (goal: ≥ 1.8 on 2 cores). The audit
modules are imported before timing (as the command line does before it starts its workers), so
the numbers are the batch itself: worker start-up, audits, per-file workbooks with ``--workbooks``.

    python benchmarks/batch.py [--files 100] [--repeat 3] [--workbooks]

On a machine others are using at the same time, the ratio is lower than on an idle one: the best
of ``--repeat`` runs is shown for each worker count.
"""

from __future__ import annotations

import argparse
import os
import re
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "sample_plant" / "quillon-bay-clean.yaml"


def generate(folder: Path, count: int) -> list[Path]:
    """``count`` perturbed copies of the clean revision in ``folder``."""
    text = SOURCE.read_text(encoding="utf-8")
    paths = []
    for i in range(count):
        factor = 1.0 + 0.004 * ((i % 9) - 4) / 4  # within ±0.4 %: inside the 1 % tolerances
        copy = re.sub(
            r"(shaft_power: )([0-9.]+)( MW| kW)",
            lambda m, f=factor: f"{m.group(1)}{float(m.group(2)) * f:.6g}{m.group(3)}",
            text,
        )
        copy = copy.replace("revision: C", f"revision: C-bench-{i:03d}")
        path = folder / f"area-{i % 10}" / f"balance-{i:03d}.yaml"
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(copy, encoding="utf-8")
        paths.append(path)
    return paths


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--files", type=int, default=100)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument(
        "--workbooks", action="store_true", help="also write each file's own workbook (as batch -o does)"
    )
    args = parser.parse_args()

    sys.path.insert(0, str(ROOT))
    from audit.batch import preload, run_batch
    from audit.executors import LocalProcesses, default_workers

    preload(args.workbooks)
    cores = default_workers()
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch) / "balances"
        generate(folder, args.files)
        best: dict[int, float] = {}
        cpu: dict[int, float] = {}
        load_before = os.getloadavg()[0]
        for workers in (1, cores):
            for _ in range(args.repeat):
                out = Path(scratch) / f"out-{workers}" if args.workbooks else None
                started, before = time.perf_counter(), os.times()
                outcomes = run_batch([folder], output=out, executor=LocalProcesses(workers))
                elapsed, after = time.perf_counter() - started, os.times()
                assert len(outcomes) == args.files
                assert all(o.status == "audited" for o in outcomes), [
                    o.problems for o in outcomes if o.status != "audited"
                ]
                if elapsed < best.get(workers, float("inf")):
                    best[workers] = elapsed
                    cpu[workers] = (
                        after.children_user
                        - before.children_user
                        + after.children_system
                        - before.children_system
                    )
        load_after = os.getloadavg()[0]
    print(
        f"load average (1 min) before {load_before:.2f}, after {load_after:.2f}, on {cores} "
        "cores: a load above the core count means other work shares them"
    )
    for workers, elapsed in best.items():
        print(
            f"{workers} worker(s): {args.files} files in {elapsed:.2f} s "
            f"({args.files / elapsed:.1f} files/s, best of {args.repeat}); worker CPU "
            f"{cpu[workers]:.2f} s = {cpu[workers] / elapsed:.2f} cores busy"
        )
    ratio = best[1] / best[cores]
    print(
        f"throughput ratio, {cores} workers vs 1: {ratio:.2f} (goal >= 1.8 on 2 cores; "
        f"workbooks {'on' if args.workbooks else 'off'})"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())

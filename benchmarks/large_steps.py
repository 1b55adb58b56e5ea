"""Time per step of the largest step kinds: a mixer with 1 000, 2 000 and 4 000 inlets.

Each balance is one mixer of ``n`` water inlets at 80 °C and 5 bar whose outlet flow is written
5 % low, so the step fails its mass and energy balances and the whole review runs: the uncertainty
verdicts and the probable-cause search. The work of every part must grow at most linearly with
the number of streams of the step: the script prints the CPU time of the audit for each size, the
time per inlet, and the ratio of each time to the smallest size's, beside the ratio of the sizes.

Usage::

    python benchmarks/large_steps.py                  # 1000, 2000 and 4000 inlets
    python benchmarks/large_steps.py --sizes 500,1000,2000,4000,8000
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(ROOT))

import audit  # noqa: E402


def mixer_balance(inlets: int) -> str:
    """A balance of one mixer with ``inlets`` inlets whose outlet flow is 5 % short."""
    lines = [
        "balance:",
        f"  name: mixer with {inlets} inlets",
        "  site_pressure: 1.013 bar",
        "  uncertainty: {basis: measured, flow: 2 %, temperature: 0.5 K, pressure: 1 %}",
        "streams:",
    ]
    lines += [f"  S{i}: {{fluid: Water, T: 80 degC, P: 5 bar, flow: 1 kg/s}}" for i in range(inlets)]
    lines.append(f"  OUT: {{fluid: Water, T: 80 degC, P: 4.5 bar, flow: {0.95 * inlets:g} kg/s}}")
    lines.append("steps:")
    names = ", ".join(f"S{i}" for i in range(inlets))
    lines.append(f"  - {{id: M1, kind: mixer, inlets: [{names}], outlet: OUT}}")
    return "\n".join(lines) + "\n"


def time_audit(inlets: int, folder: Path) -> tuple[float, int]:
    """CPU seconds of one audit of the mixer balance, and its number of probable causes."""
    path = folder / f"mixer-{inlets}.yaml"
    path.write_text(mixer_balance(inlets), encoding="utf-8")
    started = time.process_time()
    result = audit.run(path)
    spent = time.process_time() - started
    causes = sum(len(f.probable_causes) for f in result.findings)
    return spent, causes


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1000,2000,4000", help="numbers of inlets, comma-separated")
    args = parser.parse_args(argv)
    sizes = [int(s) for s in args.sizes.split(",")]
    with tempfile.TemporaryDirectory() as tmp:
        time_audit(10, Path(tmp))  # warm-up: imports and first-use caches
        print(f"{'inlets':>7} {'CPU [s]':>9} {'ms/inlet':>9} {'time ratio':>11} {'size ratio':>11}")
        first: float | None = None
        for size in sizes:
            spent, _ = time_audit(size, Path(tmp))
            first = first or spent
            print(
                f"{size:>7} {spent:>9.2f} {1e3 * spent / size:>9.3f} {spent / first:>11.2f} "
                f"{size / sizes[0]:>11.2f}"
            )
    return 0


if __name__ == "__main__":
    sys.exit(main())

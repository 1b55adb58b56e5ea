"""Fuzz the balance loader, the validation and the solver for a bounded time: whatever the text, the
only exception allowed is :class:`audit.errors.InputError` (a message naming the file and line),
never a traceback.

Run it as a command (it is not collected by pytest)::

    /tmp/dev/bin/python tests/fuzz_loader.py --seconds 60
    /tmp/dev/bin/python tests/fuzz_loader.py --seconds 600 --crashes /tmp/fuzz-crashes
    /tmp/dev/bin/python tests/fuzz_loader.py --tables --seconds 60   # stream tables instead

Inputs are drawn by hypothesis, in rounds of fresh seeds until the time is up, from three sources:

* mutations of real balances (the sample plant and the bad-input corpus): lines deleted, doubled or
  swapped, indentation changed, characters replaced, and tokens that stress YAML and the units
  inserted (tabs, anchors and aliases, tags, brackets, odd numbers and units);
* edits of the valid sample balances: one to three values replaced by odd ones or removed, the
  YAML staying well formed, so that the units, the validation and the solver see them;
* generated documents: nested mappings and lists written by PyYAML, their keys taken from the
  balance file's own vocabulary and their values from numbers, quantity strings and text.

Each input is also read with the loader's fast path for one-line flow mappings and without it; the
two must give the same data and positions. Each input that raises anything but InputError, or reads
differently, is written to the crash folder with its traceback, and the command exits 1.
:func:`check_text` is also run on a small fixed sample by the default test suite
(``tests/test_bad_inputs.py``).
"""

from __future__ import annotations

import argparse
import sys
import time
import traceback
from collections import Counter
from pathlib import Path

import yaml
from hypothesis import HealthCheck, Phase, given, seed, settings
from hypothesis import strategies as st

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
if str(ROOT) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(ROOT))

from audit.api import audit_balance as solve  # noqa: E402
from audit.errors import InputError  # noqa: E402
from audit.input import document as loader  # noqa: E402
from audit.reading import parse_balance  # noqa: E402

SEEDS = [
    p.read_text(encoding="utf-8")
    for p in sorted([*(ROOT / "sample_plant").glob("*.yaml"), *(HERE / "bad_inputs").glob("*.yaml")])
    if p.name != "cases.yaml" and p.stat().st_size < 100_000
]

TOKENS = [
    "\t",
    "  ",
    "\n",
    ": ",
    "- ",
    "{",
    "}",
    "[",
    "]",
    ",",
    "'",
    '"',
    "#",
    "&a ",
    "*a",
    "<<: *a",
    "!!python/object/apply:os.system ['true']",
    "!!binary aGk=",
    "!x ",
    "? ",
    "---\n",
    "...\n",
    "~",
    "null",
    "yes",
    "no",
    ".nan",
    ".inf",
    "-.inf",
    "1e999",
    "-0",
    "0x1F",
    "1_000",
    "0o17",
    "9" * 30,
    "2024-02-30",
    "12:30:00",
    "nan degC",
    "inf bar",
    "-5 bar",
    "0 K",
    "3 barg",
    "1e-300 Pa",
    "5 kg/s/0",
    "1 degC)",
    "(((",
    "10 K**1000",
    "4 MPa(g)",
    "12 t/h",
    "1500 Nm3/h",
    "120 m3/h",
    "2.5 MW",
    "-3 kW",
    "0.5",
    "1.5",
    "°C",
    "℃",
    "kJ/(kg K)",
    "Water",
    "Unobtainium",
    "Water&Ethanol",
    "kind: teleporter",
    "kind: valve",
    "kind: vessel",
    "kind: heat_exchanger",
    "quality: 0.5",
    "composition: {CH4: 0.9}",
    "\u00a0",
    "\u2028",
    "\ufeff",
    "é",
    "\x85",
]

KEYS = [
    "balance",
    "name",
    "site_pressure",
    "dead_state",
    "tolerances",
    "streams",
    "steps",
    "T",
    "P",
    "quality",
    "h",
    "s",
    "fluid",
    "flow",
    "phase",
    "velocity",
    "elevation",
    "id",
    "kind",
    "inlet",
    "outlet",
    "inlets",
    "outlets",
    "hot",
    "cold",
    "duty",
    "shaft_power",
    "heat_loss",
    "heat",
    "added",
    "removed",
    "temperature",
    "mass",
    "initial",
    "final",
    "work_delivered",
    "work_absorbed",
    "isentropic_efficiency",
    "arrangement",
    "composition",
    "S1",
    "S2",
    "<<",
]
KINDS = [
    "turbine",
    "compressor",
    "pump",
    "valve",
    "heater",
    "cooler",
    "heat_exchanger",
    "mixer",
    "splitter",
    "vessel",
    "general",
]
UNITS = [
    "K",
    "degC",
    "°C",
    "degF",
    "bar",
    "barg",
    "bar(a)",
    "kPa",
    "MPa",
    "psig",
    "Pa",
    "kg/s",
    "t/h",
    "kmol/h",
    "Nm3/h",
    "Sm3/h",
    "m3/h",
    "kW",
    "MW",
    "W",
    "kJ",
    "MJ",
    "kJ/kg",
    "J/kg",
    "kJ/(kg K)",
    "m/s",
    "m",
    "kg",
    "zorks",
    "",
    "bar/0",
    "K*K",
    "m**3",
]


@st.composite
def mutated(draw) -> str:
    """A real balance with a few random edits."""
    text = draw(st.sampled_from(SEEDS))
    for _ in range(draw(st.integers(1, 6))):
        lines = text.split("\n")
        op = draw(
            st.sampled_from(
                ["insert", "delete line", "double line", "swap lines", "indent", "replace char", "cut"]
            )
        )
        if op == "insert" or not text:
            at = draw(st.integers(0, len(text)))
            token = draw(st.sampled_from(TOKENS) | st.text(max_size=8))
            text = text[:at] + token + text[at:]
        elif op == "delete line":
            del lines[draw(st.integers(0, len(lines) - 1))]
            text = "\n".join(lines)
        elif op == "double line":
            i = draw(st.integers(0, len(lines) - 1))
            lines.insert(i, lines[i])
            text = "\n".join(lines)
        elif op == "swap lines":
            i, j = draw(st.integers(0, len(lines) - 1)), draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
            text = "\n".join(lines)
        elif op == "indent":
            i = draw(st.integers(0, len(lines) - 1))
            lines[i] = draw(st.sampled_from(["", " ", "   ", "\t"])) + lines[i].lstrip(" ")
            text = "\n".join(lines)
        elif op == "replace char":
            at = draw(st.integers(0, len(text) - 1))
            text = text[:at] + draw(st.characters()) + text[at + 1 :]
        else:
            at = draw(st.integers(0, len(text)))
            text = text[:at]
    return text


def _quantities() -> st.SearchStrategy[str]:
    numbers = st.floats(allow_nan=True, allow_infinity=True) | st.integers(-(10**6), 10**6)
    return st.builds(lambda n, u: f"{n} {u}".strip(), numbers, st.sampled_from(UNITS))


SCALARS = (
    st.none()
    | st.booleans()
    | st.integers()
    | st.floats()
    | st.text(max_size=20)
    | _quantities()
    | st.sampled_from(KINDS)
    | st.sampled_from(["Water", "Air", "Ammonia", "Nitrogen", "Unobtainium"])
)


@st.composite
def generated(draw) -> str:
    """A document of the balance file's shape with random content, written by PyYAML."""
    values = st.recursive(
        SCALARS,
        lambda inner: (
            st.lists(inner, max_size=4)
            | st.dictionaries(st.sampled_from(KEYS) | st.text(max_size=6), inner, max_size=5)
        ),
        max_leaves=25,
    )
    stream = st.dictionaries(
        st.sampled_from(["fluid", "T", "P", "quality", "h", "s", "flow", "phase", "composition"]),
        SCALARS,
        max_size=6,
    )
    step = st.fixed_dictionaries(
        {"id": st.text(max_size=4), "kind": st.sampled_from(KINDS)},
        optional={
            k: values | st.sampled_from(["S1", "S2", "S3"]) | SCALARS
            for k in KEYS
            if k not in ("id", "kind")
        },
    )
    document = st.fixed_dictionaries(
        {
            "balance": st.fixed_dictionaries(
                {"name": st.text(max_size=10)},
                optional={"site_pressure": _quantities(), "tolerances": values, "dead_state": values},
            ),
            "streams": st.dictionaries(st.sampled_from(["S1", "S2", "S3"]), stream, max_size=3),
        },
        optional={"steps": st.lists(step, max_size=3), "extra": values},
    )
    data = draw(document | values)
    try:
        return yaml.safe_dump(
            data,
            allow_unicode=draw(st.booleans()),
            default_flow_style=draw(st.sampled_from([False, True, None])),
        )
    except (yaml.YAMLError, ValueError, UnicodeError):
        return str(data)


def _leaves(data, path=()):
    """Paths of every scalar of nested data."""
    if isinstance(data, dict):
        for key, value in data.items():
            yield from _leaves(value, (*path, key))
    elif isinstance(data, list):
        for i, value in enumerate(data):
            yield from _leaves(value, (*path, i))
    else:
        yield path


VALID = [
    yaml.safe_load(p.read_text(encoding="utf-8")) for p in sorted((ROOT / "sample_plant").glob("*.yaml"))
]


@st.composite
def edited(draw) -> str:
    """A valid balance with one to three values replaced or removed: it stays well-formed YAML,
    so the units, the validation and the solver see the odd value."""
    import copy

    data = copy.deepcopy(draw(st.sampled_from(VALID)))
    for _ in range(draw(st.integers(1, 3))):
        paths = list(_leaves(data))
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent = data
        for part in path[:-1]:
            parent = parent[part]
        if not path:
            data = draw(SCALARS)
        elif draw(st.integers(0, 4)) == 0 and isinstance(parent, dict):
            del parent[path[-1]]
        else:
            parent[path[-1]] = draw(SCALARS | st.sampled_from(TOKENS))
    return yaml.safe_dump(data, allow_unicode=True, sort_keys=False)


INPUTS = mutated() | generated() | edited()
OUTCOMES: Counter[str] = Counter()


def check_text(text: str) -> str | None:
    """Load, validate and solve ``text``; None when it passes or raises InputError, else the
    traceback of the other exception (or the difference between the loader's fast path and its
    usual path, which must read every text alike)."""
    try:
        different = _paths_differ(text)
        if different:
            return different
        balance, document = parse_balance(text, "fuzzed.yaml")
        solve(balance, document)
    except InputError as exc:
        OUTCOMES["refused with an InputError"] += 1
        if not str(exc):
            return "an InputError without a message"
        return None
    except Exception:  # RecursionError included: a crash all the same
        return traceback.format_exc()
    OUTCOMES["audited"] += 1
    return None


def _paths_differ(text: str) -> str | None:
    """Where :func:`audit.input.document.parse_document` (which reads one-line flow mappings by the fast
    path of :mod:`audit.input.flowlines` when it applies) and the usual path disagree on the data or the
    positions of ``text``; None when they agree or when the loader has no separate paths."""
    usual = getattr(loader, "_parse", None)
    if usual is None:
        return None
    depth = getattr(loader, "POSITION_DEPTH", None)  # compare every position, not the kept ones
    try:
        if depth is not None:
            loader.POSITION_DEPTH = 10**6
        first = ("ok", loader.parse_document(text, "fuzzed.yaml"))
    except InputError as exc:
        first = ("error", str(exc))
    finally:
        if depth is not None:
            loader.POSITION_DEPTH = depth
    try:
        second = ("ok", usual(text, "fuzzed.yaml", None))
    except InputError as exc:
        second = ("error", str(exc))
    if first[0] != second[0]:
        return f"the fast path gives {first!r}, the usual path {second!r}"
    if first[0] == "error":
        return None if first == second else f"errors differ: {first[1]!r} / {second[1]!r}"
    a, b = first[1], second[1]
    if repr(a.data) != repr(b.data):
        return f"the fast path reads {a.data!r}, the usual path {b.data!r}"
    if a.positions != b.positions:
        moved = sorted(
            (k for k in set(a.positions) | set(b.positions) if a.positions.get(k) != b.positions.get(k)),
            key=repr,
        )[:5]
        return f"positions differ at {moved}: " + ", ".join(
            f"{a.positions.get(k)} / {b.positions.get(k)}" for k in moved
        )
    return None


def fuzz(seconds: float, crashes: Path, round_size: int = 200, tables: bool = False) -> tuple[int, int]:
    """Run rounds of fresh seeds until ``seconds`` have passed; return (inputs, crashes). With
    ``tables``, the inputs are stream tables (CSV and .xlsx, :mod:`fuzz_tables`) instead."""
    if tables:
        from fuzz_tables import TABLES, check_table

        strategy, check, suffix = TABLES, check_table, None
    else:
        strategy, check, suffix = INPUTS, check_text, ".yaml"
    deadline = time.monotonic() + seconds
    tried = found = 0
    round_number = 0
    while time.monotonic() < deadline:
        round_number += 1

        @seed(round_number)
        @settings(
            max_examples=round_size,
            deadline=None,
            database=None,
            phases=[Phase.generate],
            suppress_health_check=list(HealthCheck),
        )
        @given(strategy)
        def one_round(drawn) -> None:  # noqa: ANN001 - text, or (suffix, bytes, options) of a table
            nonlocal tried, found
            if time.monotonic() >= deadline:
                return
            tried += 1
            problem = check(drawn)
            if problem is not None:
                found += 1
                crashes.mkdir(parents=True, exist_ok=True)
                if suffix is None:
                    (crashes / f"crash-{found:03d}{drawn[0]}").write_bytes(drawn[1])
                    problem = f"table options: {drawn[2]!r}\n{problem}"
                else:
                    (crashes / f"crash-{found:03d}.yaml").write_text(
                        drawn, encoding="utf-8", errors="surrogatepass"
                    )
                (crashes / f"crash-{found:03d}.txt").write_text(problem, encoding="utf-8")

        one_round()
    return tried, found


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--seconds", type=float, default=60.0, help="how long to fuzz")
    parser.add_argument(
        "--crashes",
        type=Path,
        default=Path("fuzz-crashes"),
        help="folder for inputs that raised anything but InputError",
    )
    parser.add_argument(
        "--tables",
        action="store_true",
        help="fuzz stream tables (CSV and .xlsx, tests/fuzz_tables.py) instead of balance text",
    )
    args = parser.parse_args(argv)
    started = time.monotonic()
    tried, found = fuzz(args.seconds, args.crashes, tables=args.tables)
    elapsed = time.monotonic() - started
    print(
        f"fuzzed {tried} inputs in {elapsed:.0f} s ({tried / max(elapsed, 1e-9):.0f}/s): "
        + (
            f"{OUTCOMES['audited']} audited, {OUTCOMES['refused with an InputError']} refused with "
            "an InputError, "
            if not args.tables
            else ""
        )
        + f"{found} raised something else"
        + ("" if args.tables else " or read differently on the fast path")
        + (f"; see {args.crashes}/" if found else "")
    )
    return 1 if found else 0


if __name__ == "__main__":
    sys.exit(main())

"""``plant-audit config``: print the effective settings of this folder and where each came from
(the project configuration, ``[tool.plant-audit]`` in pyproject.toml or a plant-audit.toml found
walking up from here; see :mod:`audit.config`)."""

from __future__ import annotations

import argparse
import json

from audit.exitcodes import EXIT_PASS

NAME = "config"
HELP = "print the effective settings and where each came from"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--json", action="store_true", help="print them as JSON")


def run(args: argparse.Namespace) -> int:
    from audit.config import DEFAULTS, load_settings

    settings = load_settings()
    if args.json:
        data = {
            "file": str(settings.file) if settings.file else None,
            "root": str(settings.root),
            "settings": {n: {"value": settings[n], "source": settings.source(n)} for n in DEFAULTS},
        }
        print(json.dumps(data, indent=2, sort_keys=True))
        return EXIT_PASS
    print(f"configuration: {settings.file or 'none found (defaults apply)'}")
    print(f"project root:  {settings.root}")
    width = max(len(n) for n in DEFAULTS)
    for name in DEFAULTS:
        value = settings[name]
        if name == "history":
            shown = f"{settings.history_path()}" if value is not None else "none (bare --history: "
            shown += "" if value is not None else f"{settings.default_history()})"
        elif name == "workers" and value is None:
            shown = "one per core"
        else:
            shown = json.dumps(value, ensure_ascii=False)
        print(f"  {name:<{width}}  {shown}  [{settings.source(name)}]")
    return EXIT_PASS

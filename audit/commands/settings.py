"""The project configuration applied to a command's options (:mod:`audit.config`): an option the
user gave wins, then the configuration, then the default."""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import TYPE_CHECKING

from audit.config import Settings, load_settings

if TYPE_CHECKING:
    from audit.outcomes import FileOutcome

DEFAULT_DATABASE = "__default__"
"""The value of a bare ``--history``: the project's default run history."""


def add_history_options(parser: argparse.ArgumentParser, help_text: str) -> None:
    """``--history [DB]`` and ``--no-history``."""
    parser.add_argument(
        "--history",
        nargs="?",
        const=DEFAULT_DATABASE,
        metavar="DB",
        help=help_text + " (a bare --history: the project's history, see 'plant-audit config')",
    )
    parser.add_argument(
        "--no-history",
        action="store_true",
        help="record nothing, even if the configuration names a history",
    )


def configured(args: argparse.Namespace) -> Settings:
    """Load the settings, apply the options given in ``args`` over them and write the effective
    values back into ``args`` (``fail_on``, ``history``, ``workers``, ``exclude``, ``include``,
    ``tolerances``, as far as the command has them). Returns the settings."""
    settings = load_settings()
    if hasattr(args, "fail_on"):
        settings.override("fail-on", args.fail_on)
        args.fail_on = settings["fail-on"]
    if hasattr(args, "workers"):
        settings.override("workers", args.workers)
        args.workers = settings["workers"]
    if hasattr(args, "exclude"):
        if args.exclude:
            settings.override("exclude", settings["exclude"] + list(args.exclude))
        args.exclude = settings["exclude"]
        args.include = settings["include"]
    if hasattr(args, "history"):
        args.history = _history(args, settings)
    args.tolerances = settings["tolerances"] or None
    args.settings = settings
    return settings


def _history(args: argparse.Namespace, settings: Settings) -> Path | None:
    if getattr(args, "no_history", False):
        settings.override("history", "(none: --no-history)")
        return None
    if args.history == DEFAULT_DATABASE:
        return settings.default_history()
    if args.history is not None:
        settings.override("history", str(args.history))
        return Path(args.history)
    return settings.history_path()


def identify(outcomes: list[FileOutcome], settings: Settings, searched: list[str] | None = None) -> None:
    """Give each outcome its history identity (:mod:`audit.identity`): its declared id, else its
    path relative to the project root, else to the folder the batch searched (``searched``)."""
    from audit.identity import balance_identity, declared_id

    project = settings.root if settings.file is not None else None
    folders = [Path(p).resolve() for p in searched or [] if Path(p).is_dir()]
    for outcome in outcomes:
        full = Path(outcome.path).resolve()
        batch_root = next((f for f in folders if full.is_relative_to(f)), None)
        if outcome.result is not None:
            declared = outcome.result.balance_id
        else:
            declared = declared_id(outcome.path)
        outcome.identity = balance_identity(outcome.path, declared, project, batch_root)

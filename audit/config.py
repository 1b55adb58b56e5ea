"""The project configuration: where a project keeps its plant-audit settings, and which apply.

The settings live in ``[tool.plant-audit]`` of a ``pyproject.toml`` or at the top level of a
``plant-audit.toml``, found by walking up from the working directory to the first folder that
holds either (``plant-audit.toml`` wins when a folder holds both). That folder is the *project
root*; without a configuration the project root is the nearest folder holding ``.git`` (the
repository root), else the working directory. Example::

    [tool.plant-audit]
    include = ["plants/**/*.yaml"]      # batch: which files of a folder are balances
    exclude = ["**/drafts/**"]          # batch: skipped files (globs, relative to the folder)
    fail-on = "warning"                 # lowest severity that fails (error | warning)
    history = ".plant-audit/history.sqlite"   # the run history, relative to the project root
    workers = 2                         # batch worker processes
    [tool.plant-audit.tolerances]       # default tolerances (a balance's own take precedence)
    energy_relative = 0.02
    energy_absolute = "2 kW"

Options on the command line override the configuration; :meth:`Settings.source` says where each
effective setting came from ("default", "command line" or the configuration file).
"""

from __future__ import annotations

import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from audit.errors import InputError
from audit.identity import repository_root

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib  # type: ignore[import-not-found,unused-ignore]

CONFIG_FILE = "plant-audit.toml"
PYPROJECT = "pyproject.toml"
DEFAULT_HISTORY = "plant-audit-history.sqlite"
"""The run history's file name in the project root when the configuration names none."""

DEFAULT = "default"
COMMAND_LINE = "command line"

DEFAULTS: dict[str, Any] = {
    "include": ["**/*.yaml", "**/*.yml"],
    "exclude": [],
    "fail-on": "error",
    "history": None,
    "workers": None,
    "tolerances": {},
}
"""Every setting and its value when nothing sets it (``history`` None: no run is recorded unless
``--history`` is given; ``workers`` None: one per core)."""

SEVERITIES = ("error", "warning")


@dataclass
class Settings:
    """The effective settings: ``values`` by name (see :data:`DEFAULTS`), ``sources`` by name,
    the configuration file (None: none found) and the project root."""

    values: dict[str, Any]
    sources: dict[str, str]
    file: Path | None
    root: Path

    def __getitem__(self, name: str) -> Any:
        return self.values[name]

    def source(self, name: str) -> str:
        return self.sources[name]

    def override(self, name: str, value: Any) -> None:
        """Set ``name`` from the command line (``value`` None: the option was not given)."""
        if value is not None:
            self.values[name] = value
            self.sources[name] = COMMAND_LINE

    def history_path(self) -> Path | None:
        """The configured run history as a path (relative paths from the project root)."""
        value = self.values["history"]
        if value is None:
            return None
        path = Path(value)
        return (
            path if path.is_absolute() or self.sources["history"] == COMMAND_LINE else self.root / path
        )

    def default_history(self) -> Path:
        """The run history every command uses when none is named: the configured one, else
        :data:`DEFAULT_HISTORY` in the project root."""
        return self.history_path() or self.root / DEFAULT_HISTORY


def find_config(start: Path) -> tuple[Path | None, dict[str, Any]]:
    """The first configuration walking up from ``start``: its file and its plant-audit table."""
    for folder in (start, *start.parents):
        own = folder / CONFIG_FILE
        if own.is_file():
            return own, _read(own)
        project = folder / PYPROJECT
        if project.is_file():
            table = _read(project).get("tool", {}).get("plant-audit")
            if isinstance(table, dict):
                return project, table
    return None, {}


def load_settings(start: str | Path | None = None) -> Settings:
    """The settings that apply in ``start`` (default: the working directory); raises
    :class:`audit.errors.InputError` for a configuration that cannot be read or holds an unknown
    or wrong setting."""
    here = Path(start or Path.cwd()).resolve()
    file, table = find_config(here)
    values = {k: _copy(v) for k, v in DEFAULTS.items()}
    sources = dict.fromkeys(DEFAULTS, DEFAULT)
    for key, value in table.items():
        name = key.replace("_", "-") if key.replace("_", "-") in DEFAULTS else key
        if name not in DEFAULTS:
            known = ", ".join(DEFAULTS)
            raise InputError(f"unknown setting '{key}' (the settings are: {known})", file=str(file))
        values[name] = _checked(name, value, file)
        sources[name] = str(file)
    root = file.parent if file else (repository_root(here) or here)
    return Settings(values, sources, file, root)


def _copy(value: Any) -> Any:
    return list(value) if isinstance(value, list) else dict(value) if isinstance(value, dict) else value


def _read(path: Path) -> dict[str, Any]:
    try:
        with open(path, "rb") as handle:
            return tomllib.load(handle)
    except (OSError, tomllib.TOMLDecodeError) as exc:
        raise InputError(f"cannot read the configuration: {exc}", file=str(path)) from None


def _checked(name: str, value: Any, file: Path | None) -> Any:
    def wrong(expected: str) -> InputError:
        return InputError(f"setting '{name}' must be {expected}, not {value!r}", file=str(file))

    if name in ("include", "exclude"):
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise wrong("a list of glob patterns")
    elif name == "fail-on" and value not in SEVERITIES:
        raise wrong("'error' or 'warning'")
    elif name == "history" and not isinstance(value, str):
        raise wrong("a file path")
    elif name == "workers" and (not isinstance(value, int) or isinstance(value, bool) or value < 1):
        raise wrong("a whole number of at least 1")
    elif name == "tolerances" and not isinstance(value, dict):
        raise wrong("a table of tolerances")
    return value

"""The house rules that are not import contracts: small modules, every kind documented.

The import contracts themselves (stages, CoolProp only in the property layer, spreadsheet libraries
only in reports and the table reader, no cycles, kinds independent) are checked by ``lint-imports``
in CI with the configuration in pyproject.toml.
"""

from __future__ import annotations

from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "audit"
MODULE_LINE_CEILING = 400
"""Lines per module the house allows (DEVELOPERS.md, "The map")."""


@pytest.mark.parametrize(
    "module", sorted(PACKAGE.rglob("*.py")), ids=lambda p: str(p.relative_to(PACKAGE.parent))
)
def test_module_is_small(module: Path):
    lines = len(module.read_text(encoding="utf-8").splitlines())
    assert lines <= MODULE_LINE_CEILING, (
        f"{module.relative_to(PACKAGE.parent)} has {lines} lines; split it by job "
        f"(ceiling {MODULE_LINE_CEILING})"
    )


def test_every_step_kind_documents_its_evaluate():
    from audit.steps import REGISTRY

    undocumented = [name for name, kind in REGISTRY.items() if not (kind.evaluate.__doc__ or "").strip()]
    assert not undocumented, f"step kinds whose evaluate has no docstring: {undocumented}"


def test_step_kinds_are_discovered_not_listed():
    """Every module in audit/steps/kinds registers exactly the kinds it defines."""
    from audit.steps import REGISTRY

    modules = {p.stem for p in (PACKAGE / "steps" / "kinds").glob("*.py") if p.stem != "__init__"}
    defining = {kind.evaluate.__module__.rsplit(".", 1)[-1] for kind in REGISTRY.values()}
    assert defining == modules

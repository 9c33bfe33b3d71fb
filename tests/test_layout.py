"""The code's layout as DEVELOPERS.md states it (issue 11's measures): small HTTP modules, a short gunicorn
configuration, and physics that never imports Flask."""

import ast
from pathlib import Path

import pytest

SERVICE = Path(__file__).resolve().parent.parent / "service"


@pytest.mark.parametrize("path", sorted((SERVICE / "api").rglob("*.py")), ids=lambda p: str(p.relative_to(SERVICE)))
def test_no_http_module_is_over_350_lines(path):
    assert len(path.read_text().splitlines()) <= 350


def test_the_gunicorn_configuration_is_under_200_lines():
    assert len((SERVICE / "gunicorn_conf.py").read_text().splitlines()) < 200


@pytest.mark.parametrize("path", sorted((SERVICE / "physics").rglob("*.py")), ids=lambda p: str(p.relative_to(SERVICE)))
def test_the_physics_imports_neither_the_web_framework_nor_the_http_layer(path):
    modules = set(_modules(path))
    assert not {m.split(".")[0] for m in modules} & {"flask", "flask_smorest", "marshmallow", "werkzeug"}
    assert not any(m.startswith("service.api") for m in modules)


def _modules(path):
    """The modules ``path`` imports."""
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.module:
            yield node.module
        elif isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)

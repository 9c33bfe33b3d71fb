"""Shared fixtures: the app, its test client and its CLI runner."""

import pytest

from service import create_app


@pytest.fixture
def app():
    """The application with test settings."""
    return create_app({"TESTING": True})


@pytest.fixture
def client(app):
    """A test client for the app."""
    return app.test_client()


@pytest.fixture
def runner(app):
    """A CLI runner for the app."""
    return app.test_cli_runner()

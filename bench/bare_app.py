"""The bare Flask app the single-point benchmark compares against: one POST that returns a constant."""

from flask import Flask

CONSTANT = {"cas": {"value": 280.0, "unit": "kt"}, "mach": 0.8, "warnings": []}


def create_app() -> Flask:
    app = Flask("bare")

    @app.post("/v1/airspeed")
    def constant():
        return CONSTANT

    return app

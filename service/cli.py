"""The `qbar` command: `qbar serve` runs the service under gunicorn, `qbar spec` writes the spec.

`qbar serve` listens where QBAR_BIND says (default 127.0.0.1:8080); --host and --port replace its
parts. Every other setting comes from the environment, as in the image (service/gunicorn_conf.py).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

from service import config

SPEC_PATH = Path("openapi") / "openapi.json"


def spec_text() -> str:
    """The OpenAPI document the code generates, as the committed file holds it."""
    from service import create_app

    app = create_app({"QBAR_API_KEYS": ()})
    return json.dumps(app.extensions["qbar.api"].spec_dict(), indent=2, ensure_ascii=False) + "\n"


def cmd_spec(args) -> int:
    path = Path(args.output)
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(spec_text(), encoding="utf-8")
    print(f"wrote {path}")
    return 0


def bind_address(environ, host: str | None = None, port: int | None = None) -> str:
    """Where `qbar serve` listens: QBAR_BIND (default 127.0.0.1:8080), its host or port replaced by a flag.

    >>> bind_address({"QBAR_BIND": "0.0.0.0:9000"})
    '0.0.0.0:9000'
    >>> bind_address({"QBAR_BIND": "0.0.0.0:9000"}, port=8081)
    '0.0.0.0:8081'
    >>> bind_address({}, host="::1")
    '[::1]:8080'
    """
    raw = environ.get("QBAR_BIND", "").strip()
    bind = config.SETTINGS["QBAR_BIND"][1]("QBAR_BIND", raw) if raw else config.DEFAULT_BIND
    bound_host, _, bound_port = bind.rpartition(":")
    if host is not None:
        bound_host = f"[{host}]" if ":" in host and not host.startswith("[") else host
    if port is not None:
        bound_port = str(port)
    return config.SETTINGS["QBAR_BIND"][1]("--host/--port", f"{bound_host}:{bound_port}")


def cmd_serve(args) -> int:
    env = dict(os.environ)
    try:
        env["QBAR_BIND"] = bind_address(env, args.host, args.port)
    except config.ConfigError as error:
        config.exit_with(error)
    if args.workers is not None:
        env["QBAR_WORKERS"] = str(args.workers)
    argv = [sys.executable, "-m", "gunicorn", "-c", "python:service.gunicorn_conf", "service:create_app()"]
    os.execvpe(argv[0], argv, env)
    return 0  # not reached


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="qbar", description="qbar: atmosphere, airspeed and lift as a service.")
    sub = parser.add_subparsers(dest="command", required=True)
    serve = sub.add_parser("serve", help="run the service under gunicorn (gevent workers)")
    serve.add_argument("--host", default=None,
                       help="address to listen on, over QBAR_BIND's host (default 127.0.0.1)")
    serve.add_argument("--port", type=int, default=None, help="port, over QBAR_BIND's port (default 8080)")
    serve.add_argument("--workers", type=int, default=None,
                       help="worker processes, over QBAR_WORKERS (default: the CPUs available)")
    serve.set_defaults(func=cmd_serve)
    spec = sub.add_parser("spec", help="write the OpenAPI spec generated from the code")
    spec.add_argument("--output", default=str(SPEC_PATH), help=f"file to write (default {SPEC_PATH})")
    spec.set_defaults(func=cmd_spec)
    args = parser.parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    raise SystemExit(main())

"""The `qbar` command: `qbar serve` runs the service under gunicorn, `qbar spec` writes the spec."""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

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


def cmd_serve(args) -> int:
    env = dict(os.environ)
    host = f"[{args.host}]" if ":" in args.host and not args.host.startswith("[") else args.host
    env["QBAR_BIND"] = f"{host}:{args.port}"
    if args.workers is not None:
        env["QBAR_WORKERS"] = str(args.workers)
    argv = [sys.executable, "-m", "gunicorn", "-c", "python:service.gunicorn_conf", "service:create_app()"]
    os.execvpe(argv[0], argv, env)
    return 0  # not reached


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="qbar", description="qbar: atmosphere, airspeed and lift as a service.")
    sub = parser.add_subparsers(dest="command", required=True)
    serve = sub.add_parser("serve", help="run the service under gunicorn")
    serve.add_argument("--host", default="127.0.0.1", help="address to listen on (default 127.0.0.1)")
    serve.add_argument("--port", type=int, default=8080, help="port (default 8080)")
    serve.add_argument("--workers", type=int, default=None, help="worker processes (default: from the CPUs granted)")
    serve.set_defaults(func=cmd_serve)
    spec = sub.add_parser("spec", help="write the OpenAPI spec generated from the code")
    spec.add_argument("--output", default=str(SPEC_PATH), help=f"file to write (default {SPEC_PATH})")
    spec.set_defaults(func=cmd_spec)
    args = parser.parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    raise SystemExit(main())

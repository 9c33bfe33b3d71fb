"""Settings from QBAR_* environment variables, validated at start-up: the app's and the server's.

Order: the defaults below, then the environment, then the ``config`` mapping given to
``create_app`` (tests). An invalid value raises :class:`ConfigError` whose message is one
line naming the variable; the entry points print it and exit without a traceback
(:func:`exit_with`). A ``QBAR_*`` variable that no part of qbar reads is an error too: a
misspelt ``QBAR_API_KEY`` would otherwise leave the service open without a word.
An empty variable counts as unset.
"""

from __future__ import annotations

import difflib
import importlib
import ipaddress
import os
import re
import sys
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import NoReturn

#: Exit status for an invalid setting: gunicorn's "App failed to load" status. A worker that
#: exits with it makes the master stop instead of starting the worker again and again.
EXIT_CONFIG = 4

#: The settings only the server reads (service/gunicorn_conf.py through :func:`load`), not the app.
SERVER_SETTINGS = ("QBAR_WORKERS", "QBAR_CONNECTIONS", "QBAR_BIND", "QBAR_HEADER_TIMEOUT", "QBAR_BODY_TIMEOUT")
MAX_WORKERS = 128
#: Where `qbar serve` listens unless told otherwise (the image sets QBAR_BIND=0.0.0.0:8080).
DEFAULT_BIND = "127.0.0.1:8080"

_ORIGIN = re.compile(r"https?://(\[[0-9A-Fa-f:.]+\]|[A-Za-z0-9.-]+)(:[0-9]{1,5})?")
_COMMIT = re.compile(r"[0-9A-Za-z._+-]{1,64}")
_BIND = re.compile(r"(?P<host>\[[^\]]*\]|[^:\[\]]+):(?P<port>[0-9]{1,5})")
_HOSTNAME = re.compile(r"(?=.{1,253}\Z)[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?"
                       r"(?:\.[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?)*")


class ConfigError(ValueError):
    """An invalid setting; the message names the variable."""


def _shown(raw) -> str:
    """A bounded, quoted rendering of a bad value for an error line."""
    raw = str(raw)
    return repr(raw if len(raw) <= 60 else raw[:60] + "...")


def _int(name: str, raw: str, minimum: int, maximum: int) -> int:
    text = str(raw).strip()
    if not (text.isascii() and text.lstrip("-").isdigit() and len(text) <= 12):
        raise ConfigError(f"{name}: {_shown(raw)} is not a whole number")
    value = int(text)
    if not minimum <= value <= maximum:
        raise ConfigError(f"{name}: {value} is outside {minimum}..{maximum}")
    return value


def _keys(name: str, raw: str) -> tuple[str, ...]:
    keys = tuple(k.strip() for k in str(raw).split(",") if k.strip())
    for key in keys:
        if len(key) < 16 or any(c.isspace() or not c.isprintable() for c in key):
            raise ConfigError(f"{name}: every key must be at least 16 printable characters without spaces")
    if not keys:
        raise ConfigError(f"{name}: no key given (unset the variable to turn keys off)")
    return keys


def _keys_file(name: str, raw: str) -> tuple[str, ...]:
    path = Path(raw)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as err:
        raise ConfigError(f"{name}: cannot read {raw!r} ({err.strerror or err})") from None
    lines = [line.strip() for line in text.replace(",", "\n").splitlines()]
    return _keys(name, ",".join(line for line in lines if line and not line.startswith("#")))


def _origins(name: str, raw: str) -> tuple[str, ...]:
    """Browser origins: scheme://host[:port] exactly as browsers send them (no path, no trailing /), or *."""
    origins = tuple(o.strip() for o in str(raw).split(",") if o.strip())
    for origin in origins:
        if origin != "*" and not _ORIGIN.fullmatch(origin):
            raise ConfigError(f"{name}: {origin!r} is not an origin like https://efb.example.com "
                              "(scheme, host and optional port; no path, no trailing slash)")
    return origins


def _commit(name: str, raw: str) -> str:
    """The build's commit or version control description: up to 64 of [0-9A-Za-z._+-]."""
    commit = str(raw).strip()
    if not _COMMIT.fullmatch(commit):
        raise ConfigError(f"{name}: expected a commit id such as 6f402b9 (up to 64 letters, digits, . _ + -)")
    return commit


def _build_commit() -> str | None:
    """The commit recorded in ``service/_build.py`` (``COMMIT = "..."``) when a build wrote one."""
    try:
        build = importlib.import_module("service._build")
    except ModuleNotFoundError as error:
        if error.name == "service._build":
            return None
        raise
    commit = getattr(build, "COMMIT", None)
    return _commit("service/_build.py COMMIT", commit) if commit else None


def _bind(name: str, raw: str) -> str:
    """HOST:PORT: an IPv4 address, a bracketed IPv6 address ([::]) or a host name; a port 1..65535."""
    bind = str(raw).strip()
    problem = ConfigError(f"{name}: expected HOST:PORT such as 127.0.0.1:8080 or [::]:8080, got {_shown(raw)}")
    match = _BIND.fullmatch(bind)
    if match is None or not 1 <= int(match["port"]) <= 65535:
        raise problem
    host = match["host"]
    try:
        if host.startswith("["):
            ipaddress.IPv6Address(host[1:-1])
        elif re.fullmatch(r"[0-9.]+", host):
            ipaddress.IPv4Address(host)
        elif not _HOSTNAME.fullmatch(host):
            raise ValueError(host)
    except ValueError:
        raise problem from None
    return bind


def available_cpus() -> int:
    """CPUs this process may run on, from the standard library (at least 1).

    ``os.process_cpu_count()`` on Python 3.13 and later, else the size of the affinity mask
    (``os.sched_getaffinity``), else ``os.cpu_count()``. A container's CPU *limit* (a CFS quota)
    is not an affinity mask: on Kubernetes the Deployment passes its limit as QBAR_WORKERS
    through the downward API (deploy/deployment.yaml), which overrides this default.
    """
    count = getattr(os, "process_cpu_count", None)
    if count is not None:
        return max(1, count() or 1)
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not Linux
        return max(1, os.cpu_count() or 1)


def _log_level(name: str, raw: str) -> str:
    level = str(raw).strip().upper()
    if level not in ("DEBUG", "INFO", "WARNING", "ERROR"):
        raise ConfigError(f"{name}: {raw!r} is not one of DEBUG, INFO, WARNING, ERROR")
    return level


#: name -> (default, parser). Parsers take (name, raw string).
SETTINGS: dict[str, tuple[object, Callable]] = {
    "QBAR_MAX_POINTS": (200_000, lambda n, r: _int(n, r, 1, 50_000_000)),
    "QBAR_MAX_BODY_BYTES": (8 * 1024 * 1024, lambda n, r: _int(n, r, 1024, 1024**3)),
    "QBAR_API_KEYS": ((), _keys),
    "QBAR_API_KEYS_FILE": ((), _keys_file),
    "QBAR_CORS_ORIGINS": ((), _origins),
    "QBAR_LOG_LEVEL": ("INFO", _log_level),
    "QBAR_COMMIT": (None, _commit),  # default: service/_build.py, see load()
    # The server's (service/gunicorn_conf.py): worker processes (default: the CPUs available, see
    # load()), open connections per worker, the address to listen on, and the seconds a request's
    # head (also the idle time of a kept-alive connection) and its body may take to arrive.
    "QBAR_WORKERS": (None, lambda n, r: _int(n, r, 1, MAX_WORKERS)),
    "QBAR_CONNECTIONS": (1000, lambda n, r: _int(n, r, 10, 100_000)),
    "QBAR_BIND": (DEFAULT_BIND, _bind),
    "QBAR_HEADER_TIMEOUT": (15, lambda n, r: _int(n, r, 1, 300)),
    "QBAR_BODY_TIMEOUT": (30, lambda n, r: _int(n, r, 1, 600)),
}


def _unknown_variables(environ: Mapping[str, str]) -> None:
    """ConfigError for a QBAR_* variable that nothing reads (a misspelt name, most likely)."""
    known = tuple(SETTINGS)
    for name in sorted(environ):
        if name.startswith("QBAR_") and name not in known:
            close = difflib.get_close_matches(name, known, n=1)
            hint = f"did you mean {close[0]}?" if close else "known: " + ", ".join(sorted(known))
            raise ConfigError(f"{name}: not a qbar setting; {hint}")


def load(environ: Mapping[str, str] | None = None, overrides: Mapping | None = None) -> dict:
    """Validated settings: defaults, then ``environ`` (default os.environ), then ``overrides``."""
    environ = os.environ if environ is None else environ
    _unknown_variables(environ)
    settings = {}
    for name, (default, parse) in SETTINGS.items():
        raw = environ.get(name)
        settings[name] = default if raw is None or not raw.strip() else parse(name, raw)
    for name, value in (overrides or {}).items():
        if name in SETTINGS and isinstance(value, str):
            value = SETTINGS[name][1](name, value)
        settings[name] = value
    if settings["QBAR_WORKERS"] is None:
        settings["QBAR_WORKERS"] = min(available_cpus(), MAX_WORKERS)
    if settings["QBAR_COMMIT"] is None:
        settings["QBAR_COMMIT"] = _build_commit()
    keys = tuple(settings["QBAR_API_KEYS"]) + tuple(settings["QBAR_API_KEYS_FILE"])
    settings["API_KEYS"] = keys
    settings["MAX_CONTENT_LENGTH"] = settings["QBAR_MAX_BODY_BYTES"]
    settings["DEBUG"] = False
    settings["TESTING"] = bool(settings.get("TESTING", False))
    return settings


def exit_with(error: ConfigError) -> NoReturn:
    """Print ``error`` as its one line on stderr and exit with :data:`EXIT_CONFIG`, no traceback."""
    print(error, file=sys.stderr, flush=True)
    sys.exit(EXIT_CONFIG)

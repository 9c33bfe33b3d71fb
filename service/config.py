"""Settings from QBAR_* environment variables, validated at start-up.

Order: the defaults below, then the environment, then the ``config`` mapping given to
``create_app`` (tests). An invalid value raises :class:`ConfigError` whose message is one
line naming the variable; the entry points print it and exit without a traceback.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping
from pathlib import Path


class ConfigError(ValueError):
    """An invalid setting; the message names the variable."""


def _int(name: str, raw: str, minimum: int, maximum: int) -> int:
    try:
        value = int(str(raw).strip())
    except ValueError:
        raise ConfigError(f"{name}: {raw!r} is not a whole number") from None
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
    origins = tuple(o.strip() for o in str(raw).split(",") if o.strip())
    for origin in origins:
        if origin != "*" and not origin.startswith(("http://", "https://")):
            raise ConfigError(f"{name}: {origin!r} is not an origin like https://efb.example.com")
    return origins


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
}


def load(environ: Mapping[str, str] | None = None, overrides: Mapping | None = None) -> dict:
    """Validated settings: defaults, then ``environ`` (default os.environ), then ``overrides``."""
    environ = os.environ if environ is None else environ
    settings = {}
    for name, (default, parse) in SETTINGS.items():
        raw = environ.get(name)
        settings[name] = default if raw is None or raw == "" else parse(name, raw)
    for name, value in (overrides or {}).items():
        if name in SETTINGS and isinstance(value, str):
            value = SETTINGS[name][1](name, value)
        settings[name] = value
    keys = tuple(settings["QBAR_API_KEYS"]) + tuple(settings["QBAR_API_KEYS_FILE"])
    settings["API_KEYS"] = keys
    settings["MAX_CONTENT_LENGTH"] = settings["QBAR_MAX_BODY_BYTES"]
    settings["DEBUG"] = False
    settings["TESTING"] = bool(settings.get("TESTING", False))
    return settings

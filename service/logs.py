"""One JSON log line per record, for the app's loggers and gunicorn's alike.

Imported by ``service/api/ops.py`` (the app's ``qbar`` and ``qbar.access`` loggers) and by the
server (``service/server.py``: gunicorn's error log), so it needs nothing from Flask or the app.

Every line is one JSON object: ``time`` (ISO 8601 UTC, milliseconds), ``level``, ``logger``,
``pid``, then either the record's ``fields`` (a dict: the access line) or its ``message``; the
``request_id`` when the record carries one (the app adds it with a logging filter); the
``exception`` text when there is one.
"""

from __future__ import annotations

import datetime
import logging
import time

import orjson


def utc_time(timestamp: float | None = None) -> str:
    """ISO 8601 UTC time with milliseconds, of ``timestamp`` (default: now).

    >>> utc_time(0.0)
    '1970-01-01T00:00:00.000+00:00'
    """
    moment = datetime.datetime.fromtimestamp(time.time() if timestamp is None else timestamp, datetime.UTC)
    return moment.isoformat(timespec="milliseconds")


class JsonFormatter(logging.Formatter):
    """A log record as one JSON object (see the module docstring)."""

    def format(self, record: logging.LogRecord) -> str:
        entry = {
            "time": utc_time(record.created),
            "level": record.levelname.lower(),
            "logger": record.name,
            "pid": record.process,
        }
        fields = getattr(record, "fields", None)
        if fields is not None:
            entry.update(fields)
        else:
            entry["message"] = record.getMessage()
            request_id = getattr(record, "request_id", None)
            if request_id is not None:
                entry["request_id"] = request_id
        if record.exc_info:
            entry["exception"] = self.formatException(record.exc_info)
        try:
            return orjson.dumps(entry, default=str).decode()
        except TypeError:  # a lone surrogate (from an undecodable header, say): written escaped, never lost
            return orjson.dumps({key: _escaped(value) for key, value in entry.items()}, default=str).decode()


def _escaped(value):
    """``value`` with any text that UTF-8 cannot encode written as backslash escapes."""
    return value.encode("utf-8", "backslashreplace").decode("utf-8") if isinstance(value, str) else value

"""The service's Prometheus metrics (prometheus-client) and GET /metrics; request_hooks counts each request.

Requests by endpoint (the URL rule, not the raw path, so that the number of series stays bounded), method
and status; latency by endpoint; points computed by endpoint. With ``PROMETHEUS_MULTIPROC_DIR`` set
(gunicorn's workers) the values live in that directory and ``/metrics`` adds up every worker's files;
otherwise (tests, a single process) each app has its own registry.
"""

from __future__ import annotations

from flask import Response, current_app
from prometheus_client import (
    CONTENT_TYPE_LATEST,
    CollectorRegistry,
    Counter,
    Histogram,
    disable_created_metrics,
    generate_latest,
)
from prometheus_client import multiprocess as prometheus_multiprocess

#: Latency buckets [s]: a single point takes about a millisecond, 200 000 points about a second.
LATENCY_BUCKETS = (0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0)
METRICS_DIR_VARIABLE = "PROMETHEUS_MULTIPROC_DIR"


class Metrics:
    """The service's Prometheus metrics.

    ``multiprocess``: the values live in PROMETHEUS_MULTIPROC_DIR (prometheus-client's
    multiprocess mode, chosen by that variable when prometheus-client is imported); the
    metrics are then registered nowhere, and each scrape collects every process's files.
    Otherwise they belong to a registry of their own, one per app.
    """

    def __init__(self, multiprocess: bool):
        # No *_created series (process-wide): the multiprocess mode has none, so both modes agree.
        disable_created_metrics()
        self.multiprocess = multiprocess
        self.registry = None if multiprocess else CollectorRegistry()
        self.requests = Counter(
            "qbar_http_requests", "HTTP requests answered, by endpoint (URL rule), method and status.",
            ("endpoint", "method", "status"), registry=self.registry)
        self.latency = Histogram(
            "qbar_http_request_duration_seconds", "Time from the request's arrival in the app to its answer [s].",
            ("endpoint",), buckets=LATENCY_BUCKETS, registry=self.registry)
        self.points = Counter(
            "qbar_points_computed", "Points computed by successful compute requests.",
            ("endpoint",), registry=self.registry)
        self._children: dict[tuple, tuple] = {}

    def observe(self, endpoint: str, method: str, status: int, seconds: float, points: int | None) -> None:
        """Count one answered request."""
        key = (endpoint, method, status)
        children = self._children.get(key)
        if children is None:
            children = (self.requests.labels(endpoint, method, str(status)),
                        self.latency.labels(endpoint), self.points.labels(endpoint))
            self._children[key] = children
        requests, latency, computed = children
        requests.inc()
        latency.observe(seconds)
        if points and status < 400:
            computed.inc(points)

    def exposition(self) -> bytes:
        """The metrics in the Prometheus text format.

        Multiprocess: every file of the directory, read afresh. The master folds a dead worker's
        files into an archive (service.server.archive_dead_worker); a file that goes between the
        directory listing and its reading is read again from a new listing.
        """
        if not self.multiprocess:
            return generate_latest(self.registry)
        for attempt in range(3):
            registry = CollectorRegistry()
            prometheus_multiprocess.MultiProcessCollector(registry)
            try:
                return generate_latest(registry)
            except FileNotFoundError:
                if attempt == 2:
                    raise
        raise AssertionError("not reached")


def metrics_view():
    """GET /metrics: the Prometheus text format."""
    body = current_app.extensions["qbar.metrics"].exposition()
    return Response(body, status=200, content_type=CONTENT_TYPE_LATEST)

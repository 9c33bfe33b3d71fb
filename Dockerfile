# syntax=docker/dockerfile:1
# qbar container image.
#   docker build -t qbar:0.1.0 --build-arg QBAR_COMMIT=$(git rev-parse HEAD) .
#   docker run --rm -p 8080:8080 --read-only --tmpfs /tmp -e QBAR_API_KEYS=... qbar:0.1.0
# Behind a TLS-intercepting proxy, hand the build your CA bundle as a secret (used by pip in the
# builder only, never stored in a layer):
#   docker build --secret id=ca-bundle,src=/etc/ssl/certs/ca-certificates.crt ...
# Without registry access, build FROM a local Python base: --build-arg PYTHON_IMAGE=<local image>
# (any image with python3 and pip on PATH; tests/test_image.py makes one from Debian packages).
# deploy/ runs it on Kubernetes; tests/test_deploy.py checks this file against the code and
# tests/test_image.py builds it and runs it as deploy/deployment.yaml does.

ARG PYTHON_IMAGE=python:3.11-slim

# --- builder: the qbar wheel and the wheels of its dependencies, at the pinned versions ----
FROM ${PYTHON_IMAGE} AS builder
ENV PIP_NO_CACHE_DIR=1 \
    PIP_DISABLE_PIP_VERSION_CHECK=1
WORKDIR /src
# The dependencies first, from pyproject.toml and constraints.txt alone, so that a change to the
# code rebuilds only the last step. The only step that downloads: the CA bundle secret, when
# given, is what pip trusts (PIP_CERT); it is mounted for this step only.
COPY pyproject.toml constraints.txt ./
RUN --mount=type=secret,id=ca-bundle,target=/run/secrets/ca-bundle,required=false \
    if [ -s /run/secrets/ca-bundle ]; then export PIP_CERT=/run/secrets/ca-bundle; fi \
 && python -c 'import tomllib; p = tomllib.load(open("pyproject.toml", "rb")); \
print(*p["project"]["dependencies"], *p["build-system"]["requires"], sep="\n")' > /tmp/requirements.txt \
 && pip wheel --wheel-dir /wheels -c constraints.txt -r /tmp/requirements.txt
# .dockerignore lets in only what the wheel is built from. No network from here on.
COPY . .
RUN pip wheel --no-index --find-links=/wheels --wheel-dir /wheels --no-deps -c constraints.txt . \
 && cp constraints.txt /wheels/

# --- runtime: the wheel and nothing else ----------------------------------------------------
FROM ${PYTHON_IMAGE} AS runtime
ENV PYTHONUNBUFFERED=1 \
    PYTHONDONTWRITEBYTECODE=1 \
    PIP_NO_CACHE_DIR=1 \
    PIP_DISABLE_PIP_VERSION_CHECK=1

# Installed from the builder's wheels only (no index), held to constraints.txt (copied beside
# them); the wheels are bind-mounted, so they never become a layer of this image.
RUN --mount=type=bind,from=builder,source=/wheels,target=/wheels \
    pip install --no-index --find-links=/wheels -c /wheels/constraints.txt /wheels/qbar-*.whl

# A numeric user: Kubernetes' runAsNonRoot can only check a number. The metrics directory is
# created for a plain `docker run`; on Kubernetes an emptyDir is mounted there.
RUN groupadd --system --gid 10001 qbar \
 && useradd --system --uid 10001 --gid 10001 --no-create-home --home-dir /nonexistent \
            --shell /usr/sbin/nologin qbar \
 && mkdir -p /tmp/qbar-metrics \
 && chown 10001:10001 /tmp/qbar-metrics

# The container listens on every interface; `qbar serve` keeps its default of 127.0.0.1.
# One BLAS/OpenMP thread per process: qbar's NumPy work is element-wise, and the workers are
# the parallelism (the thread pools would otherwise be sized to the host's CPUs).
ENV QBAR_BIND=0.0.0.0:8080 \
    PROMETHEUS_MULTIPROC_DIR=/tmp/qbar-metrics \
    OPENBLAS_NUM_THREADS=1 \
    OMP_NUM_THREADS=1

# The commit the image is built from, for GET /v1/version (empty: unknown). Last, so that a new
# commit does not rebuild the layers above. Checked here as the app checks it at start (up to 64
# letters, digits, . _ + -); the RUN that uses it also keys the layer cache on its value (podman 4's
# builder would otherwise reuse the ENV and LABEL layers of another commit).
ARG QBAR_COMMIT=""
RUN case "$QBAR_COMMIT" in *[!0-9A-Za-z._+-]*) false ;; esac && [ ${#QBAR_COMMIT} -le 64 ] \
 || { echo "QBAR_COMMIT: expected a commit id (up to 64 letters, digits, . _ + -)" >&2; exit 1; }
ENV QBAR_COMMIT=${QBAR_COMMIT}
LABEL org.opencontainers.image.title="qbar" \
      org.opencontainers.image.description="ICAO standard atmosphere, airspeed conversions and the lift equation as a REST service" \
      org.opencontainers.image.licenses="MIT" \
      org.opencontainers.image.revision="${QBAR_COMMIT}"

USER 10001:10001
WORKDIR /
EXPOSE 8080

# No curl in the slim image: Python's urllib, on the port of QBAR_BIND.
HEALTHCHECK --interval=30s --timeout=5s --start-period=20s --retries=3 \
    CMD ["python", "-c", "import os, urllib.request; port = os.environ.get('QBAR_BIND', ':8080').rsplit(':', 1)[1]; urllib.request.urlopen(f'http://127.0.0.1:{port}/v1/health', timeout=4)"]

# Exec form: gunicorn is PID 1 and receives SIGTERM itself (graceful shutdown, see
# service/gunicorn_conf.py).
CMD ["gunicorn", "-c", "python:service.gunicorn_conf", "service:create_app()"]

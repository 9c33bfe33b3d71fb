"""Running it for real: service/gunicorn_conf.py, the Dockerfile and the Kubernetes manifests in deploy/.

The manifests are validated with kubernetes-validate (strict: unknown fields are errors) against the
Kubernetes versions in KUBERNETES_VERSIONS, and all three are cross-checked against each other and
against the code: probe paths, ports, user id, settings, shutdown timing. The worker-level parts run
against a real gunicorn (tests/live_server.py).
"""

import copy
import datetime
import http.client
import json
import logging
import os
import re
import runpy
import shlex
import subprocess
import sys
import tomllib
import types
import urllib.parse
from pathlib import Path

import gunicorn.config
import kubernetes_validate
import pytest
import yaml
from prometheus_client.mmap_dict import MmapedDict
from werkzeug.exceptions import MethodNotAllowed, NotFound

from service import config as app_config
from service import create_app, gunicorn_conf, server
from service.logs import JsonFormatter
from tests.live_server import REPO, running_gunicorn

DEPLOY = REPO / "deploy"
DOCKERFILE = REPO / "Dockerfile"
CONF_PATH = REPO / "service" / "gunicorn_conf.py"
CONF_MODULE = "service.gunicorn_conf"
APP_SPEC = "service:create_app()"
IMAGE_CMD = ["gunicorn", "-c", f"python:{CONF_MODULE}", APP_SPEC]

# Schemas shipped with kubernetes-validate 1.37: the oldest release the manifests must still run
# on (1.31, where PodDisruptionBudget's unhealthyPodEvictionPolicy is GA - from memory; the 1.31
# schema has the field) and the newest one it ships.
KUBERNETES_VERSIONS = ("1.31.0", "1.37.0")
EXPECTED_KINDS = {
    "ConfigMap", "Deployment", "Service", "HorizontalPodAutoscaler", "PodDisruptionBudget", "NetworkPolicy",
}
EXAMPLE_SECRET = "secret.example.yaml"
NAME_LABEL = ("app.kubernetes.io/name", "qbar")


# --- reading the files ------------------------------------------------------------------------


def load_yaml_documents(path):
    """The non-empty YAML documents of ``path``."""
    return [doc for doc in yaml.safe_load_all(path.read_text(encoding="utf-8")) if doc]


def manifest_files():
    """Every Kubernetes manifest in deploy/ (all YAML files but kustomization.yaml)."""
    return sorted(p for p in DEPLOY.glob("*.yaml") if p.name != "kustomization.yaml")


def kustomization():
    return yaml.safe_load((DEPLOY / "kustomization.yaml").read_text(encoding="utf-8"))


def applied_resources():
    """kind -> resource, for the manifests kustomization.yaml applies."""
    resources = {}
    for name in kustomization()["resources"]:
        for doc in load_yaml_documents(DEPLOY / name):
            assert doc["kind"] not in resources, f"two {doc['kind']} resources"
            resources[doc["kind"]] = doc
    return resources


def example_secret():
    (doc,) = load_yaml_documents(DEPLOY / EXAMPLE_SECRET)
    return doc


def pod_spec():
    return applied_resources()["Deployment"]["spec"]["template"]["spec"]


def container():
    (only,) = pod_spec()["containers"]
    return only


def dockerfile_instructions(text):
    """(INSTRUCTION, arguments) pairs of a Dockerfile: continuation lines joined, comments dropped."""
    instructions, pending = [], ""
    for line in text.splitlines():
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        if stripped.endswith("\\"):
            pending += stripped[:-1] + " "
            continue
        keyword, _, arguments = (pending + stripped).partition(" ")
        instructions.append((keyword.upper(), arguments.strip()))
        pending = ""
    assert not pending, "the Dockerfile ends in a continuation line"
    return instructions


def dockerfile_stages():
    """The Dockerfile's stages, each a list of (INSTRUCTION, arguments), FROM first."""
    stages = []
    for keyword, arguments in dockerfile_instructions(DOCKERFILE.read_text(encoding="utf-8")):
        if keyword == "FROM":
            stages.append([])
        if stages:
            stages[-1].append((keyword, arguments))
    return stages


def runtime_stage():
    return dockerfile_stages()[-1]


def instruction(stage, keyword):
    """The arguments of the one ``keyword`` instruction of ``stage``."""
    (found,) = [arguments for key, arguments in stage if key == keyword]
    return found


def image_env():
    """The runtime image's ENV variables, ${ARG} references replaced by the ARG's default."""
    env, args = {}, {}
    for key, arguments in runtime_stage():
        if key == "ARG":
            name, _, default = arguments.partition("=")
            args[name] = shlex.split(default)[0] if default.strip() else ""
        if key == "ENV":
            for item in shlex.split(arguments):
                name, _, value = item.partition("=")
                env[name] = re.sub(r"\$\{(\w+)\}", lambda m: args[m[1]], value)
    return env


def image_user():
    """(uid, gid) of the runtime image's USER, which must be numeric."""
    user = instruction(runtime_stage(), "USER")
    assert re.fullmatch(r"[0-9]+(:[0-9]+)?", user), f"USER {user} is not numeric"
    uid, _, gid = user.partition(":")
    return int(uid), int(gid or uid)


def bind_port(bind):
    return int(bind.rsplit(":", 1)[1])


def route_exists(app, path, method="GET"):
    """Whether ``method path`` reaches a view of ``app`` (its url_map)."""
    try:
        app.url_map.bind("localhost").match(path, method=method)
    except (NotFound, MethodNotAllowed):
        return False
    return True


@pytest.fixture(scope="module")
def qbar_app():
    """The application as gunicorn builds it: create_app() with no overrides."""
    return create_app()


# --- the manifests are valid Kubernetes -----------------------------------------------------


@pytest.mark.parametrize("version", KUBERNETES_VERSIONS)
@pytest.mark.parametrize("path", manifest_files(), ids=lambda p: p.name)
def test_manifest_validates_strictly(path, version):
    docs = load_yaml_documents(path)
    assert docs
    for doc in docs:
        # raises ValidationError, or SchemaNotFoundError for a kind it does not know
        assert kubernetes_validate.validate(doc, version, strict=True)


def test_validation_command_passes_every_manifest():
    """The CLI, as a CI job would run it: no error and no WARN (an unknown kind only warns)."""
    versions = [arg for v in KUBERNETES_VERSIONS for arg in ("--kubernetes-version", v)]
    result = subprocess.run(
        [str(Path(sys.executable).with_name("kubernetes-validate")), "--strict", "--quiet", *versions]
        + [str(p) for p in manifest_files()],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert result.returncode == 0, result.stdout + result.stderr
    assert "WARN" not in result.stdout and "ERROR" not in result.stdout, result.stdout


@pytest.mark.parametrize(
    "mutate",
    [
        lambda d: d["spec"]["template"]["spec"]["containers"][0].update(readinesProbe={}),  # misspelt field
        lambda d: d["spec"].update(replicas="2"),  # wrong type
        lambda d: d["spec"]["template"]["spec"]["containers"][0].pop("name"),  # required field
    ],
    ids=["unknown-field", "wrong-type", "missing-name"],
)
def test_strict_validation_rejects_a_broken_deployment(mutate):
    broken = copy.deepcopy(applied_resources()["Deployment"])
    mutate(broken)
    with pytest.raises(kubernetes_validate.ValidationError):
        kubernetes_validate.validate(broken, KUBERNETES_VERSIONS[-1], strict=True)


def test_kustomization_applies_every_manifest_but_the_example_secret():
    listed = kustomization()["resources"]
    assert len(listed) == len(set(listed))
    assert set(listed) == {p.name for p in manifest_files()} - {EXAMPLE_SECRET}


def test_kinds_are_the_expected_ones():
    assert set(applied_resources()) == EXPECTED_KINDS
    assert example_secret()["kind"] == "Secret"


def test_api_versions():
    versions = {kind: doc["apiVersion"] for kind, doc in applied_resources().items()}
    assert versions["HorizontalPodAutoscaler"] == "autoscaling/v2"
    assert versions["PodDisruptionBudget"] == "policy/v1"
    assert versions["Deployment"] == "apps/v1"
    assert versions["NetworkPolicy"] == "networking.k8s.io/v1"


@pytest.mark.parametrize("kind", sorted(EXPECTED_KINDS))
def test_every_resource_carries_the_name_label(kind):
    doc = applied_resources()[kind]
    key, value = NAME_LABEL
    assert doc["metadata"]["labels"][key] == value
    assert "namespace" not in doc["metadata"], "the namespace is the operator's choice"


def test_selectors_select_the_pods():
    resources = applied_resources()
    deployment = resources["Deployment"]
    pod_labels = deployment["spec"]["template"]["metadata"]["labels"]
    selectors = [
        deployment["spec"]["selector"]["matchLabels"],
        resources["Service"]["spec"]["selector"],
        resources["PodDisruptionBudget"]["spec"]["selector"]["matchLabels"],
        resources["NetworkPolicy"]["spec"]["podSelector"]["matchLabels"],
        *(c["labelSelector"]["matchLabels"] for c in pod_spec()["topologySpreadConstraints"]),
    ]
    for selector in selectors:
        assert selector and selector.items() <= pod_labels.items()
    target = resources["HorizontalPodAutoscaler"]["spec"]["scaleTargetRef"]
    assert (target["kind"], target["name"]) == ("Deployment", deployment["metadata"]["name"])


# --- the Deployment against the code ----------------------------------------------------------


def test_deployment_runs_two_replicas_without_dropping_below_them():
    spec = applied_resources()["Deployment"]["spec"]
    assert spec["replicas"] == 2
    assert spec["strategy"]["rollingUpdate"]["maxUnavailable"] == 0


@pytest.mark.parametrize(
    ("probe", "path"),
    [("readinessProbe", "/v1/ready"), ("livenessProbe", "/v1/health"), ("startupProbe", "/v1/health")],
)
def test_probe_paths_exist_in_the_app(qbar_app, probe, path):
    get = container()[probe]["httpGet"]
    assert get["path"] == path
    assert route_exists(qbar_app, get["path"])
    assert get["port"] == "http"


def test_route_check_can_fail(qbar_app):
    assert not route_exists(qbar_app, "/v1/not-a-probe")


def test_container_port_matches_the_image_and_the_gunicorn_bind():
    (port,) = container()["ports"]
    assert port["name"] == "http" and port["protocol"] == "TCP"
    exposed = instruction(runtime_stage(), "EXPOSE")
    bind = app_config.load(environ={"QBAR_BIND": image_env()["QBAR_BIND"]})["QBAR_BIND"]  # as the config reads it
    assert port["containerPort"] == int(exposed) == bind_port(bind) == 8080
    assert bind.startswith("0.0.0.0:"), "the container must listen beyond its loopback"
    assert bind_port(app_config.DEFAULT_BIND) == 8080
    assert app_config.DEFAULT_BIND.startswith("127.0.0.1:"), "`qbar serve` listens on loopback by default"


def test_service_sends_port_80_to_the_container_port():
    (port,) = applied_resources()["Service"]["spec"]["ports"]
    assert (port["name"], port["port"], port["protocol"]) == ("http", 80, "TCP")
    names = {p["name"]: p["containerPort"] for p in container()["ports"]}
    assert names[port["targetPort"]] == 8080


def test_network_policy_admits_only_the_container_port():
    spec = applied_resources()["NetworkPolicy"]["spec"]
    assert "Ingress" in spec["policyTypes"]
    ports = [p for rule in spec["ingress"] for p in rule["ports"]]
    assert ports == [{"protocol": "TCP", "port": container()["ports"][0]["containerPort"]}]
    if "Egress" in spec["policyTypes"]:
        assert spec.get("egress", []) == []  # qbar opens no connections


def test_user_id_matches_the_image():
    uid, gid = image_user()
    assert uid == 10001 and uid != 0
    for context in (pod_spec()["securityContext"], container()["securityContext"]):
        assert context["runAsNonRoot"] is True
        assert context["runAsUser"] == uid
        assert context["runAsGroup"] == gid
        assert context["seccompProfile"] == {"type": "RuntimeDefault"}


def test_container_is_locked_down():
    context = container()["securityContext"]
    assert context["readOnlyRootFilesystem"] is True
    assert context["allowPrivilegeEscalation"] is False
    assert context["privileged"] is False
    assert context["capabilities"] == {"drop": ["ALL"]}
    assert pod_spec()["automountServiceAccountToken"] is False


def test_resources_have_requests_and_limits():
    resources = container()["resources"]
    for kind in ("requests", "limits"):
        assert set(resources[kind]) == {"cpu", "memory"}
    # the CPU limit is the worker count (QBAR_WORKERS through the downward API): whole CPUs, whole workers
    assert float(resources["limits"]["cpu"]).is_integer()
    # CPU-bound work: the request is the limit, so the HPA's utilisation is of what the workers can do
    assert resources["requests"]["cpu"] == resources["limits"]["cpu"]
    (workers,) = [e for e in container()["env"] if e["name"] == "QBAR_WORKERS"]
    assert workers["valueFrom"]["resourceFieldRef"] == {"resource": "limits.cpu", "divisor": "1"}


def test_writable_paths_are_empty_dirs():
    mounts = {m["mountPath"]: m["name"] for m in container()["volumeMounts"]}
    volumes = {v["name"]: v for v in pod_spec()["volumes"]}
    metrics = applied_resources()["ConfigMap"]["data"]["PROMETHEUS_MULTIPROC_DIR"]
    assert metrics == image_env()["PROMETHEUS_MULTIPROC_DIR"]
    writable = ["/tmp", metrics, gunicorn_conf.worker_tmp_dir or "/dev/shm"]
    for path in writable:
        assert "emptyDir" in volumes[mounts[path]], path
    assert volumes[mounts["/dev/shm"]]["emptyDir"]["medium"] == "Memory"


def test_settings_come_from_the_config_map():
    (source,) = container()["envFrom"]
    assert source["configMapRef"]["name"] == applied_resources()["ConfigMap"]["metadata"]["name"]


def test_config_map_settings_are_known_and_valid(tmp_path):
    data = applied_resources()["ConfigMap"]["data"]
    known = set(app_config.SETTINGS) | {"PROMETHEUS_MULTIPROC_DIR"}
    assert set(data) <= known, set(data) - known
    assert all(isinstance(value, str) for value in data.values())
    settings = app_config.load(environ=data)  # raises ConfigError naming a bad variable
    assert settings["QBAR_MAX_POINTS"] == 200_000
    assert settings["QBAR_MAX_BODY_BYTES"] == 8 * 1024 * 1024
    assert settings["QBAR_CORS_ORIGINS"] == ()
    assert settings["QBAR_LOG_LEVEL"] == "INFO"


def test_server_variables_are_known_to_the_app_config():
    """service/config.py reads every QBAR_* setting, the server's too; the gunicorn config only uses them."""
    read_here = set(re.findall(r'"(QBAR_[A-Z_]+)"', CONF_PATH.read_text(encoding="utf-8")))
    assert {"QBAR_WORKERS", "QBAR_CONNECTIONS", "QBAR_BIND"} <= read_here
    assert read_here <= set(app_config.SETTINGS)
    assert "os.environ.get(\"QBAR" not in CONF_PATH.read_text(encoding="utf-8")


def test_metrics_scrape_annotations_point_at_the_metrics_view(qbar_app):
    annotations = applied_resources()["Deployment"]["spec"]["template"]["metadata"]["annotations"]
    assert route_exists(qbar_app, annotations["prometheus.io/path"])
    assert int(annotations["prometheus.io/port"]) == container()["ports"][0]["containerPort"]


def test_api_keys_come_from_a_secret_file(tmp_path):
    env = {e["name"]: e.get("value") for e in container()["env"]}
    keys_file = Path(env["QBAR_API_KEYS_FILE"])
    volumes = {v["name"]: v for v in pod_spec()["volumes"]}
    (mount,) = [m for m in container()["volumeMounts"] if Path(m["mountPath"]) == keys_file.parent]
    assert mount["readOnly"] is True
    secret = volumes[mount["name"]]["secret"]
    assert secret["secretName"] == example_secret()["metadata"]["name"]
    assert [item["path"] for item in secret["items"]] == [keys_file.name]
    (item,) = secret["items"]
    # the example's key file is what the app reads: a placeholder it accepts, clearly not real
    content = example_secret()["stringData"][item["key"]]
    assert "REPLACE-ME" in content
    sample = tmp_path / "api-keys"
    sample.write_text(content, encoding="utf-8")
    keys = app_config.load(environ={"QBAR_API_KEYS_FILE": str(sample)})["API_KEYS"]
    assert len(keys) == 1 and keys[0].startswith("REPLACE-ME")


def test_shutdown_outlasts_the_pause_and_the_graceful_timeout():
    command = container()["lifecycle"]["preStop"]["exec"]["command"]
    assert command[0] == "sleep" and len(command) == 2
    pause = int(command[1])
    assert pause >= 5  # endpoint removal must reach the proxies first (common practice, no source)
    assert pod_spec()["terminationGracePeriodSeconds"] > pause + gunicorn_conf.graceful_timeout


def test_autoscaler_scales_on_cpu_from_two_pods():
    spec = applied_resources()["HorizontalPodAutoscaler"]["spec"]
    assert spec["minReplicas"] == 2 < spec["maxReplicas"]
    (metric,) = spec["metrics"]
    assert metric["type"] == "Resource" and metric["resource"]["name"] == "cpu"
    assert metric["resource"]["target"]["type"] == "Utilization"
    assert 0 < metric["resource"]["target"]["averageUtilization"] <= 100


def test_disruption_budget_keeps_a_pod():
    spec = applied_resources()["PodDisruptionBudget"]["spec"]
    assert spec["minAvailable"] == 1
    assert spec["minAvailable"] < applied_resources()["HorizontalPodAutoscaler"]["spec"]["minReplicas"]


def test_kustomization_sets_the_deployment_image():
    (image,) = kustomization()["images"]
    assert image["name"] == container()["image"]


# --- the Dockerfile ---------------------------------------------------------------------------


def test_dockerfile_is_multi_stage_on_slim_python():
    assert len(dockerfile_stages()) >= 2
    args = {}
    for keyword, arguments in dockerfile_instructions(DOCKERFILE.read_text(encoding="utf-8")):
        if keyword == "ARG" and "=" in arguments:
            name, _, default = arguments.partition("=")
            args[name] = default.strip('"')
    base = instruction(runtime_stage(), "FROM").split()[0]
    if base.startswith("$"):
        base = args[base.strip("${}")]
    assert base == "python:3.11-slim"


def test_builder_makes_wheels_with_the_constraints():
    builder = dockerfile_stages()[0]
    runs = [arguments for keyword, arguments in builder if keyword == "RUN"]
    wheel_runs = [run for run in runs if "pip wheel" in run]
    assert wheel_runs and all("-c constraints.txt" in run for run in wheel_runs)
    # One step downloads (the dependencies); the app's wheel is built from them without an index.
    (download,) = [run for run in wheel_runs if "--no-index" not in run]
    assert wheel_runs[-1].count("--no-index") == 1 and "cp constraints.txt /wheels/" in wheel_runs[-1]


def test_ca_bundle_is_a_secret_of_the_downloading_step_only():
    """Behind a TLS-intercepting proxy pip needs the proxy's CA: a build secret, never a layer."""
    builder = dockerfile_stages()[0]
    runs = [arguments for keyword, arguments in builder if keyword == "RUN"]
    with_secret = [run for run in runs if "type=secret" in run]
    assert len(with_secret) == 1 and "pip wheel" in with_secret[0] and "--no-index" not in with_secret[0]
    assert "id=ca-bundle" in with_secret[0] and "export PIP_CERT=/run/secrets/ca-bundle" in with_secret[0]
    stages = dockerfile_stages()
    assert not any("ca-bundle" in arguments or "PIP_CERT" in arguments
                   for stage in stages[1:] for _, arguments in stage), "the runtime stage never sees the CA bundle"
    assert not any(keyword == "COPY" and "cert" in arguments.lower()
                   for stage in stages for keyword, arguments in stage)


def test_runtime_installs_only_the_wheel_with_the_constraints():
    runs = [arguments for keyword, arguments in runtime_stage() if keyword == "RUN"]
    (install,) = [run for run in runs if "pip install" in run]
    assert "--no-index" in install and "-c /wheels/constraints.txt" in install
    assert "from=builder,source=/wheels,target=/wheels" in install
    name = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))["project"]["name"]
    assert f"/wheels/{name}-*.whl" in install
    copies = [arguments for keyword, arguments in runtime_stage() if keyword == "COPY"]
    # the runtime gets no source: only the builder's list of wheels with their hashes, checked at install
    assert copies == ["--from=builder /wheels/SHA256SUMS /usr/share/qbar/wheels.sha256"]
    assert "sha256sum --check --quiet /usr/share/qbar/wheels.sha256" in install


def test_image_command_is_gunicorn_with_the_config_module():
    cmd = instruction(runtime_stage(), "CMD")
    assert json.loads(cmd) == IMAGE_CMD  # exec form: gunicorn is PID 1 and gets SIGTERM
    assert gunicorn_conf.__name__ == CONF_MODULE
    module, _, call = APP_SPEC.partition(":")
    assert call == "create_app()" and callable(__import__(module).create_app)
    # `qbar serve` runs the same configuration and app
    cli = (REPO / "service" / "cli.py").read_text(encoding="utf-8")
    assert f'"python:{CONF_MODULE}"' in cli and f'"{APP_SPEC}"' in cli


def test_image_environment():
    env = image_env()
    assert env["QBAR_BIND"] == "0.0.0.0:8080"
    assert env["PROMETHEUS_MULTIPROC_DIR"] == "/tmp/qbar-metrics"
    assert "QBAR_API_KEYS" not in env, "no key is baked into the image"
    qbar_variables = {name for name in env if name.startswith("QBAR_")}
    assert qbar_variables <= set(app_config.SETTINGS) | set(app_config.SERVER_SETTINGS)
    assert env["QBAR_COMMIT"] == ""  # unknown unless the build passes --build-arg QBAR_COMMIT=...
    app_config.load(environ={name: env[name] for name in qbar_variables if name != "QBAR_BIND"})


def test_healthcheck_uses_python_on_the_health_path():
    healthcheck = instruction(runtime_stage(), "HEALTHCHECK")
    command = json.loads(healthcheck.split(" CMD ", 1)[1])
    assert command[:2] == ["python", "-c"]
    assert "/v1/health" in command[2] and "curl" not in healthcheck


def test_dockerignore_admits_only_the_build_inputs():
    lines = [
        line.strip()
        for line in (REPO / ".dockerignore").read_text(encoding="utf-8").splitlines()
        if line.strip() and not line.startswith("#")
    ]
    assert lines[0] == "*"
    admitted = {line[1:].rstrip("/") for line in lines if line.startswith("!")}
    assert admitted == {"pyproject.toml", "constraints.txt", "README.md", "service"}
    for name in admitted:
        assert (REPO / name).exists(), f"{name} is needed to build the image"


def test_constraints_pin_every_runtime_dependency():
    dependencies = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))["project"]["dependencies"]
    pins = {}
    for line in (REPO / "constraints.txt").read_text(encoding="utf-8").splitlines():
        line = line.split("#", 1)[0].strip()
        if line:
            name, _, version = line.partition("==")
            pins[re.sub(r"[-_.]+", "-", name.strip().lower())] = version.strip()
    for dependency in dependencies:
        name = re.sub(r"[-_.]+", "-", re.split(r"[<>=!~;\[ ]", dependency, maxsplit=1)[0].lower())
        assert pins.get(name), f"{name} is not pinned (==) in constraints.txt"
    assert {"gunicorn", "prometheus-client"} <= set(pins), "the image's command and its config need these"


# --- the gunicorn configuration --------------------------------------------------------------


def load_conf(monkeypatch, tmp_path, **env):
    """Execute service/gunicorn_conf.py as gunicorn does with a file path, under ``env``; its settings."""
    for name in [n for n in os.environ if n.startswith("QBAR_")]:
        monkeypatch.delenv(name)
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(tmp_path / "metrics"))
    for name, value in env.items():
        monkeypatch.setenv(name, value)
    return runpy.run_path(str(CONF_PATH), run_name="__config__")


def test_settings_defaults(monkeypatch, tmp_path):
    conf = load_conf(monkeypatch, tmp_path)
    assert conf["workers"] == app_config.available_cpus()
    assert conf["worker_connections"] == 1000
    assert conf["bind"] == ["127.0.0.1:8080"]
    assert conf["worker_class"] == "gevent"
    assert 0 < conf["keepalive"] < conf["timeout"]
    assert conf["loglevel"] == "info"
    assert conf["preload_app"] is True
    assert conf["max_requests"] > 0 and 0 < conf["max_requests_jitter"] < conf["max_requests"]
    assert 0 < conf["graceful_timeout"] <= conf["timeout"]
    assert conf["worker_tmp_dir"] == ("/dev/shm" if os.path.isdir("/dev/shm") else None)
    assert conf["accesslog"] is None, "the app writes the one access line per request"
    assert conf["errorlog"] == "-"
    assert conf["reload"] is False and conf["spew"] is False
    assert (tmp_path / "metrics").is_dir(), "the metrics directory exists before the app is preloaded"


def test_settings_from_the_environment(monkeypatch, tmp_path):
    conf = load_conf(monkeypatch, tmp_path, QBAR_WORKERS="5", QBAR_CONNECTIONS="100", QBAR_BIND="[::]:9000",
                     QBAR_LOG_LEVEL="WARNING")
    assert (conf["workers"], conf["worker_connections"], conf["bind"], conf["loglevel"]) == (
        5, 100, ["[::]:9000"], "warning")


def test_empty_variables_count_as_unset(monkeypatch, tmp_path):
    conf = load_conf(monkeypatch, tmp_path, QBAR_WORKERS="", QBAR_CONNECTIONS=" ", QBAR_BIND="")
    assert (conf["worker_connections"], conf["bind"]) == (1000, ["127.0.0.1:8080"])
    assert conf["workers"] == app_config.available_cpus()


def test_gunicorn_accepts_every_setting():
    """Each module-level setting is one gunicorn knows (a misspelt one would be ignored silently)."""
    cfg = gunicorn.config.Config()
    settings = {
        name: value
        for name, value in vars(gunicorn_conf).items()
        if name.islower() and not name.startswith("_") and not isinstance(value, types.ModuleType)
        and (not callable(value) or name in cfg.settings)
    } | {"logger_class": gunicorn_conf.logger_class}
    unknown = {name for name in settings if name not in cfg.settings}
    assert unknown == set()
    for name, value in settings.items():
        cfg.set(name, value)  # gunicorn's own validators
    assert cfg.worker_class_str == "gevent"
    assert cfg.logger_class is server.JsonLogger
    assert cfg.control_socket_disable is True
    for hook in ("on_starting", "when_ready", "post_worker_init", "child_exit"):
        assert getattr(cfg, hook) is getattr(gunicorn_conf, hook)


@pytest.mark.parametrize(
    ("name", "value"),
    [
        ("QBAR_WORKERS", "abc"),
        ("QBAR_WORKERS", "0"),
        ("QBAR_WORKERS", "-2"),
        ("QBAR_WORKERS", "1.5"),
        ("QBAR_WORKERS", "1_000"),
        ("QBAR_WORKERS", "129"),
        ("QBAR_CONNECTIONS", "0"),
        ("QBAR_CONNECTIONS", "many"),
        ("QBAR_CONNECTIONS", "100001"),
        ("QBAR_THREADS", "2"),  # gthread's, gone with the gevent workers
        ("QBAR_BIND", "8080"),
        ("QBAR_BIND", "localhost"),
        ("QBAR_BIND", "0.0.0.0:0"),
        ("QBAR_BIND", "0.0.0.0:65536"),
        ("QBAR_BIND", "300.1.1.1:8080"),
        ("QBAR_BIND", "[::1:8080"),
        ("QBAR_BIND", "[nonsense]:8080"),
        ("QBAR_BIND", "unix:/tmp/qbar.sock"),
        ("QBAR_BIND", "host name:8080"),
        ("QBAR_LOG_LEVEL", "verbose"),
        ("QBAR_MAX_POINTS", "lots"),  # the app's own settings are checked here too
        ("QBAR_API_KEYS", "short"),
        ("QBAR_WORKER", "4"),  # a misspelt name (service/config.py refuses unknown QBAR_* names)
    ],
)
def test_invalid_setting_stops_with_one_line_naming_it(monkeypatch, tmp_path, name, value):
    with pytest.raises(SystemExit) as stopped:
        load_conf(monkeypatch, tmp_path, **{name: value})
    message = str(stopped.value.code)
    assert message.startswith(f"{name}: ") and "\n" not in message


@pytest.mark.parametrize(
    "bind", ["127.0.0.1:8080", "0.0.0.0:80", "[::]:8080", "[::1]:65535", "localhost:8080", "qbar.example.com:8080"]
)
def test_valid_binds(bind):
    assert app_config.load(environ={"QBAR_BIND": bind})["QBAR_BIND"] == bind


def test_long_bad_value_is_shortened_in_the_message():
    with pytest.raises(app_config.ConfigError) as stopped:
        app_config.load(environ={"QBAR_WORKERS": "x" * 500})
    assert len(str(stopped.value)) < 150


def run_quietly(argv, env_overrides, timeout=60):
    env = {k: v for k, v in os.environ.items() if not k.startswith("QBAR_")}
    env.update(env_overrides)
    return subprocess.run(argv, cwd=REPO, env=env, capture_output=True, text=True, timeout=timeout)


@pytest.mark.parametrize(
    ("argv", "name", "value"),
    [
        ([sys.executable, "-c", f"import {CONF_MODULE}"], "QBAR_WORKERS", "abc"),
        ([sys.executable, "-m", "gunicorn", "-c", f"python:{CONF_MODULE}", APP_SPEC], "QBAR_BIND", "nowhere"),
        ([sys.executable, "-m", "gunicorn", "-c", str(CONF_PATH), APP_SPEC], "QBAR_CONNECTIONS", "0"),
        ([sys.executable, "-m", "gunicorn", "-c", f"python:{CONF_MODULE}", APP_SPEC], "QBAR_MAX_POINTS", "lots"),
    ],
    ids=["import", "gunicorn-module", "gunicorn-file", "app-setting"],
)
def test_invalid_setting_stops_the_process_without_a_traceback(tmp_path, argv, name, value):
    result = run_quietly(argv, {name: value, "PROMETHEUS_MULTIPROC_DIR": str(tmp_path / "m")})
    assert result.returncode == 1
    assert "Traceback" not in result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"{name}: "), result.stderr
    assert "Listening at" not in result.stdout + result.stderr


def test_gunicorn_check_config_passes(tmp_path):
    result = run_quietly(
        [sys.executable, "-m", "gunicorn", "--check-config", "-c", f"python:{CONF_MODULE}", APP_SPEC],
        {"PROMETHEUS_MULTIPROC_DIR": str(tmp_path / "m")},
    )
    assert result.returncode == 0, result.stderr


# --- logs -------------------------------------------------------------------------------------


NASTY = 'quote " backslash \\ tab \t bell \x07 non-ASCII \u00e9 brace { percent %s'


class FakeRequest:
    def __init__(self, headers):
        self.headers = headers


class FakeResponse:
    def __init__(self, status, sent, headers):
        self.status, self.sent, self.headers = status, sent, headers


@pytest.fixture
def access_logger(tmp_path):
    """gunicorn's logger as the config sets it up, writing the access log to a file."""
    cfg = gunicorn.config.Config()
    cfg.set("accesslog", str(tmp_path / "access.log"))
    cfg.set("errorlog", str(tmp_path / "error.log"))
    cfg.set("access_log_format", gunicorn_conf.access_log_format)
    logger = gunicorn_conf.logger_class(cfg)
    yield logger, tmp_path
    for log in (logger.access_log, logger.error_log):
        for handler in [h for h in log.handlers if getattr(h, "_gunicorn", False)]:
            handler.close()
            log.removeHandler(handler)


def log_one_request(logger, request_headers, response_headers, status="200 OK", sent=123, query=""):
    environ = {
        "REQUEST_METHOD": "POST",
        "RAW_URI": "/v1/atmosphere" + (f"?{query}" if query else ""),
        "PATH_INFO": "/v1/atmosphere",
        "QUERY_STRING": query,
        "SERVER_PROTOCOL": "HTTP/1.1",
        "REMOTE_ADDR": "10.1.2.3",
        **{"HTTP_" + k.upper().replace("-", "_"): v for k, v in request_headers},
    }
    logger.access(
        FakeResponse(status, sent, response_headers),
        FakeRequest(request_headers),
        environ,
        datetime.timedelta(seconds=1, microseconds=234567),
    )


def read_json_lines(path):
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines() if line.strip()]


def test_access_log_line_is_json_whatever_the_headers_hold(access_logger):
    logger, tmp_path = access_logger
    log_one_request(
        logger,
        [("User-Agent", NASTY), ("X-Forwarded-For", "192.0.2.7")],
        [("Content-Type", "application/json"), ("X-Request-ID", NASTY)],
    )
    (line,) = read_json_lines(tmp_path / "access.log")
    assert line["method"] == "POST" and line["path"] == "/v1/atmosphere" and line["protocol"] == "HTTP/1.1"
    assert line["status"] == 200 and line["bytes"] == 123
    assert line["duration_s"] == pytest.approx(1.234567)
    assert line["user_agent"] == NASTY and line["request_id"] == NASTY
    assert line["remote_addr"] == "10.1.2.3" and line["forwarded_for"] == "192.0.2.7"
    assert line["pid"] == os.getpid() and line["logger"] == "gunicorn.access"
    assert datetime.datetime.fromisoformat(line["time"]).utcoffset() == datetime.timedelta(0)


def test_access_log_writes_null_for_what_is_missing(access_logger):
    logger, tmp_path = access_logger
    log_one_request(logger, [], [], sent=None)
    (line,) = read_json_lines(tmp_path / "access.log")
    assert line["user_agent"] is None and line["request_id"] is None and line["forwarded_for"] is None
    assert line["bytes"] is None and line["status"] == 200


def test_access_log_never_holds_credentials_or_the_query(access_logger):
    logger, tmp_path = access_logger
    secret = "s3cr3t-key-0123456789"
    log_one_request(
        logger,
        [("Authorization", f"Bearer {secret}"), ("X-API-Key", secret)],
        [],
        query=f"api_key={secret}",
    )
    text = (tmp_path / "access.log").read_text(encoding="utf-8")
    assert text.strip() and secret not in text


def test_error_log_is_json(access_logger):
    logger, tmp_path = access_logger
    logger.error("worker %s failed: %s", 42, NASTY)
    (line,) = read_json_lines(tmp_path / "error.log")
    assert line["level"] == "error" and line["message"] == f"worker 42 failed: {NASTY}"


def test_json_formatter_keeps_tracebacks_on_one_line():
    try:
        raise ValueError("boom")
    except ValueError:
        record = logging.LogRecord("x", logging.ERROR, __file__, 1, "failed", None, sys.exc_info())
    text = JsonFormatter().format(record)
    assert "\n" not in text and "ValueError: boom" in json.loads(text)["exception"]


# --- hooks ------------------------------------------------------------------------------------


class FakeArbiter:
    log = logging.getLogger("test_deploy.arbiter")


def test_on_starting_creates_and_empties_the_metrics_directory(monkeypatch, tmp_path):
    metrics = tmp_path / "metrics"
    metrics.mkdir()
    (metrics / "counter_123.db").write_bytes(b"stale")
    (metrics / "keep.txt").write_text("not a metrics file")
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(metrics))
    gunicorn_conf.on_starting(FakeArbiter())
    assert sorted(p.name for p in metrics.iterdir()) == ["keep.txt"]
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(tmp_path / "new" / "metrics"))
    gunicorn_conf.on_starting(FakeArbiter())
    assert (tmp_path / "new" / "metrics").is_dir()


def test_child_exit_archives_the_dead_worker(monkeypatch, tmp_path):
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(tmp_path))
    for name in ("gauge_livesum_4242.db", "gauge_liveall_4242.db", "gauge_livesum_77.db"):
        (tmp_path / name).write_bytes(b"")
    counter = MmapedDict(str(tmp_path / "counter_4242.db"))
    counter.write_value('["c", "c_total", {}, "help"]', 3.0, 0.0)
    counter.close()
    gunicorn_conf.child_exit(FakeArbiter(), types.SimpleNamespace(pid=4242))
    # its live gauges dropped, its counters folded into the archive (tests/test_ops_server.py: the sums)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["counter_archive.db", "gauge_livesum_77.db"]


def test_hooks_do_nothing_without_a_metrics_directory(monkeypatch, tmp_path):
    monkeypatch.delenv("PROMETHEUS_MULTIPROC_DIR", raising=False)
    monkeypatch.chdir(tmp_path)
    gunicorn_conf.on_starting(FakeArbiter())
    gunicorn_conf.child_exit(FakeArbiter(), types.SimpleNamespace(pid=1))
    assert list(tmp_path.iterdir()) == []


# --- a real gunicorn --------------------------------------------------------------------------


def raw_get(base_url, path, headers=None):
    """(status, headers as a list of (name, value), body) over a plain HTTP/1.1 connection."""
    url = urllib.parse.urlsplit(base_url)
    connection = http.client.HTTPConnection(url.hostname, url.port, timeout=10)
    try:
        connection.request("GET", path, headers=headers or {})
        response = connection.getresponse()
        return response.status, response.getheaders(), response.read()
    finally:
        connection.close()


def healthcheck(port):
    """The image's HEALTHCHECK command, run here; its exit status."""
    command = json.loads(instruction(runtime_stage(), "HEALTHCHECK").split(" CMD ", 1)[1])
    command[0] = sys.executable
    return run_quietly(command, {"QBAR_BIND": f"0.0.0.0:{port}"}, timeout=30).returncode


def test_real_gunicorn_with_two_workers(tmp_path):
    metrics = tmp_path / "metrics"
    metrics.mkdir()
    (metrics / "counter_999999.db").write_bytes(b"left by an earlier run")
    logs = tmp_path / "logs"
    env = {"PROMETHEUS_MULTIPROC_DIR": str(metrics), "GUNICORN_CMD_ARGS": "--access-logfile -"}
    with running_gunicorn(env=env, workers=2, logs=logs) as base_url:
        status, headers, body = raw_get(base_url, "/v1/health", {"X-Request-ID": "deploy-test-1"})
        assert status == 200 and json.loads(body)["status"] == "ok"
        names = {name.lower() for name, _ in headers}
        assert "server" not in names, headers  # no "Server: gunicorn" banner
        assert "date" in names  # the rest of gunicorn's own headers are still sent
        for probe in ("readinessProbe", "livenessProbe", "startupProbe"):
            assert raw_get(base_url, container()[probe]["httpGet"]["path"])[0] == 200
        port = urllib.parse.urlsplit(base_url).port
        assert healthcheck(port) == 0
        assert not (metrics / "counter_999999.db").exists(), "on_starting empties the metrics directory"
    assert healthcheck(port) != 0, "the health check fails when nothing answers"

    errors = read_json_lines(logs / "stderr.log")  # every error-log line is JSON
    messages = [line["message"] for line in errors]
    assert sum(m.startswith("Booting worker") for m in messages) == 2
    assert any(m.startswith("qbar ready: 2 gevent workers x 1000 connections") for m in messages)
    assert any("Shutting down" in m for m in messages)
    # gunicorn's access log, turned on: one JSON line per request (the app writes its own too)
    access = [line for line in read_json_lines(logs / "stdout.log") if line["logger"] == "gunicorn.access"]
    health = [line for line in access if line["path"] == "/v1/health"]
    assert len(health) >= 3 and all(line["status"] == 200 for line in health)
    tagged = [line for line in health if line["request_id"] == "deploy-test-1"]
    assert len(tagged) == 1 and tagged[0]["method"] == "GET" and tagged[0]["bytes"] > 0
    booted = {int(m.split("pid: ")[1]) for m in messages if m.startswith("Booting worker")}
    assert {line["pid"] for line in access} <= booted


def test_real_gunicorn_writes_no_access_log_of_its_own_by_default(tmp_path):
    with running_gunicorn(workers=1, logs=tmp_path) as base_url:
        assert raw_get(base_url, "/v1/health")[0] == 200
    lines = read_json_lines(tmp_path / "stdout.log") + read_json_lines(tmp_path / "stderr.log")
    assert lines and not [line for line in lines if line["logger"] == "gunicorn.access"]


def test_live_server_reports_a_failed_start():
    with pytest.raises(RuntimeError, match="QBAR_CONNECTIONS"), running_gunicorn(env={"QBAR_CONNECTIONS": "none"}):
        pass

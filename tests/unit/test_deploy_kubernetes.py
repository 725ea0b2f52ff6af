"""deploy/kubernetes/: valid against pinned Kubernetes schemas, and consistent with each other and the service.

The schemas are the ones kubernetes-validate ships (requirements/test.lock pins its version), checked in
strict mode (no unknown fields) for the oldest and the newest Kubernetes minor versions we deploy to.
"""

from __future__ import annotations

import re
from dataclasses import fields
from pathlib import Path

import kubernetes_validate
import pytest
import yaml

from service.api.settings import PREFIX, Settings

ROOT = Path(__file__).resolve().parents[2]
K8S_DIR = ROOT / "deploy" / "kubernetes"
# Pinned: the oldest Kubernetes minor version the manifests are meant for, and the newest the pinned
# kubernetes-validate ships schemas for. Raise them deliberately, not by a lock refresh.
K8S_VERSIONS = ("1.30.0", "1.37.0")
EXPECTED_KINDS = {"ConfigMap", "Deployment", "Service", "HorizontalPodAutoscaler", "PodDisruptionBudget"}


def _documents() -> list[tuple[str, dict]]:
    docs = []
    for path in sorted(K8S_DIR.glob("*.yaml")):
        for doc in yaml.safe_load_all(path.read_text(encoding="utf-8")):
            if doc:
                docs.append((path.name, doc))
    return docs


DOCS = _documents()


def _one(kind: str) -> dict:
    (doc,) = [d for _, d in DOCS if d["kind"] == kind]
    return doc


@pytest.mark.parametrize("version", K8S_VERSIONS)
@pytest.mark.parametrize("name_doc", DOCS, ids=[f"{n}:{d['kind']}" for n, d in DOCS])
def test_manifest_is_valid_against_the_pinned_schema(name_doc, version):
    _, doc = name_doc
    # Raises ValidationError (an unknown field in strict mode, a wrong type) or SchemaNotFoundError (a kind
    # or apiVersion that version does not have, e.g. a retired autoscaling/v2beta2).
    assert kubernetes_validate.validate(doc, version, strict=True) == version.rsplit(".", 1)[0]


def test_the_strict_schema_refuses_an_unknown_field():
    """The check above is not vacuous: a misspelt probe is refused."""
    container = dict(_one("Deployment")["spec"]["template"]["spec"]["containers"][0])
    container["readinesProbe"] = container.pop("readinessProbe")
    broken = yaml.safe_load(yaml.safe_dump(_one("Deployment")))
    broken["spec"]["template"]["spec"]["containers"][0] = container
    with pytest.raises(kubernetes_validate.ValidationError):
        kubernetes_validate.validate(broken, K8S_VERSIONS[0], strict=True)


def test_every_expected_kind_is_there_once():
    kinds = [d["kind"] for _, d in DOCS]
    assert sorted(kinds) == sorted(EXPECTED_KINDS)


def _container() -> dict:
    (container,) = _one("Deployment")["spec"]["template"]["spec"]["containers"]
    return container


def _settings() -> dict[str, str]:
    return _one("ConfigMap")["data"]


def test_configmap_holds_only_real_settings_and_the_service_accepts_them():
    data = _settings()
    known = {PREFIX + f.name.upper() for f in fields(Settings)}
    assert set(data) <= known, f"not settings of the service: {sorted(set(data) - known)}"
    assert all(isinstance(v, str) for v in data.values())  # ConfigMap data are strings
    settings = Settings.from_env(data)  # raises on a value the service would refuse at start-up
    assert settings.host == "0.0.0.0" and settings.workers == 1


def test_keys_are_on_from_a_mounted_secret_and_the_pods_would_not_start_without_them():
    # issue 21, item 8: the shipped files left keys off on 0.0.0.0, reachable by anyone on the network
    data = _settings()
    settings = Settings.from_env(data)
    assert settings.api_key_hashes_file and not settings.allow_anonymous
    pod = _one("Deployment")["spec"]["template"]["spec"]
    mounts = {m["name"]: m for m in _container()["volumeMounts"]}
    (keys,) = [v for v in pod["volumes"] if "secret" in v]
    mount = mounts[keys["name"]]
    assert mount["readOnly"] is True and keys["secret"]["optional"] is False  # no Secret: no pod, not an open one
    (item,) = keys["secret"]["items"]
    assert settings.api_key_hashes_file == f"{mount['mountPath']}/{item['path']}"
    with pytest.raises(ValueError, match="API keys are off"):  # the same settings with the key file taken out
        Settings.from_env({**data, "AMPLINE_API_KEY_HASHES_FILE": ""})


def test_pod_gets_its_settings_from_the_configmap():
    refs = [e["configMapRef"]["name"] for e in _container()["envFrom"]]
    assert refs == [_one("ConfigMap")["metadata"]["name"]]
    assert "env" not in _container()  # every setting in one place


def test_probes_ports_and_shutdown_fit_the_service():
    c = _container()
    port = int(_settings()["AMPLINE_PORT"])
    (http,) = c["ports"]
    assert http["containerPort"] == port and http["name"] == "http"
    assert c["readinessProbe"]["httpGet"]["path"] == "/readyz"
    assert c["livenessProbe"]["httpGet"]["path"] == "/healthz"
    assert c["startupProbe"]["httpGet"]["path"] == "/readyz"
    for probe in ("readinessProbe", "livenessProbe", "startupProbe"):
        assert c[probe]["httpGet"]["port"] in ("http", port)
    pod = _one("Deployment")["spec"]["template"]["spec"]
    pause = int(c["lifecycle"]["preStop"]["exec"]["command"][-1])
    grace = int(_settings()["AMPLINE_GRACEFUL_SHUTDOWN_S"])
    assert pod["terminationGracePeriodSeconds"] >= pause + grace + 5, "SIGKILL would cut the drain short"


def _cpu(q: str) -> float:
    return float(q[:-1]) / 1000 if q.endswith("m") else float(q)


_MEM = {"Ki": 2**10, "Mi": 2**20, "Gi": 2**30}


def _bytes(q: str) -> int:
    m = re.fullmatch(r"(\d+)(Ki|Mi|Gi)", q)
    assert m, q
    return int(m[1]) * _MEM[m[2]]


def test_requests_and_limits_are_set_and_ordered():
    r = _container()["resources"]
    assert 0 < _cpu(r["requests"]["cpu"]) <= _cpu(r["limits"]["cpu"])
    assert 0 < _bytes(r["requests"]["memory"]) <= _bytes(r["limits"]["memory"])
    # One worker per pod (AMPLINE_WORKERS=1) uses at most one core at a time for Python code.
    assert _cpu(r["requests"]["cpu"]) >= int(_settings()["AMPLINE_WORKERS"]) * 0.5


def test_pod_runs_unprivileged_on_a_read_only_root():
    pod = _one("Deployment")["spec"]["template"]["spec"]
    sc = _container()["securityContext"]
    assert pod["securityContext"]["runAsNonRoot"] is True and pod["securityContext"]["runAsUser"] != 0
    assert sc["runAsNonRoot"] is True
    assert sc["readOnlyRootFilesystem"] is True
    assert sc["allowPrivilegeEscalation"] is False
    assert sc["capabilities"]["drop"] == ["ALL"] and "add" not in sc["capabilities"]
    mounts = {m["mountPath"]: m["name"] for m in _container()["volumeMounts"]}
    (tmp,) = [v for v in pod["volumes"] if v["name"] == mounts["/tmp"]]
    assert "emptyDir" in tmp  # the only writable path


def test_selectors_agree():
    pod_labels = _one("Deployment")["spec"]["template"]["metadata"]["labels"]
    selectors = [
        _one("Deployment")["spec"]["selector"]["matchLabels"],
        _one("Service")["spec"]["selector"],
        _one("PodDisruptionBudget")["spec"]["selector"]["matchLabels"],
    ]
    for selector in selectors:
        assert selector.items() <= pod_labels.items()
    (svc_port,) = _one("Service")["spec"]["ports"]
    assert svc_port["targetPort"] in ("http", int(_settings()["AMPLINE_PORT"]))


def test_autoscaler_scales_the_deployment_on_cpu():
    hpa = _one("HorizontalPodAutoscaler")
    assert hpa["apiVersion"] == "autoscaling/v2"
    target = hpa["spec"]["scaleTargetRef"]
    assert (target["kind"], target["name"]) == ("Deployment", _one("Deployment")["metadata"]["name"])
    (metric,) = hpa["spec"]["metrics"]
    assert metric["type"] == "Resource" and metric["resource"]["name"] == "cpu"
    assert 0 < metric["resource"]["target"]["averageUtilization"] <= 100
    assert 2 <= hpa["spec"]["minReplicas"] <= hpa["spec"]["maxReplicas"]
    # With at least two replicas the budget still leaves one pod serving during a drain.
    pdb = _one("PodDisruptionBudget")["spec"]
    assert pdb.get("maxUnavailable", 0) < hpa["spec"]["minReplicas"]

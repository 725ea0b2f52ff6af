"""Every curl example in the README gets a 200 with cautions from the app, so the README cannot rot."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.settings import Settings

README = Path(__file__).resolve().parents[2] / "README.md"
# curl -s http://127.0.0.1:8000/<path> ... -d '<json>'   (the JSON may span lines)
CURL = re.compile(r"curl -s http://127\.0\.0\.1:8000(?P<path>/v1/[\w/-]+)\s+-H '[^']*'\s*\\?\s*-d '(?P<body>[^']*)'")
EXAMPLES = [(m["path"], m["body"]) for m in CURL.finditer(README.read_text(encoding="utf-8"))]


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


def test_the_readme_has_its_examples():
    assert len(EXAMPLES) >= 5  # the scan finds them (one per calculation endpoint in the README today)


@pytest.mark.parametrize(("path", "body"), EXAMPLES, ids=[p for p, _ in EXAMPLES])
def test_readme_example_answers(client, path, body):
    response = client.post(path, json=json.loads(body))
    assert response.status_code == 200, response.text
    assert response.json()["notes"]["cautions"]  # common practice: every calculation carries cautions

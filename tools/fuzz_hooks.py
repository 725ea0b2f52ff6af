"""schemathesis hooks for tools/fuzz_server.py (loaded through SCHEMATHESIS_HOOKS): the project's own check.

Every error answer is RFC 9457 problem+json with its type, title, status and detail, as
tests/contract/test_schemathesis.py checks in CI's in-process run.
"""

from __future__ import annotations

import schemathesis


@schemathesis.check
def errors_are_problem_json(ctx, response, case):
    if response.status_code >= 400:
        media = response.headers.get("content-type", [""])
        media = media[0] if isinstance(media, list) else media
        assert media.split(";")[0].strip() == "application/problem+json", f"{response.status_code} answered as {media!r}"
        body = response.json()
        assert {"type", "title", "status", "detail"} <= set(body) and body["status"] == response.status_code
    return None

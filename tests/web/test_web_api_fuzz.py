"""Generated requests against the served OpenAPI (schemathesis): every operation, valid and
invalid input, signed in (as an admin, who may do everything) and anonymous. Fails on any 5xx,
any response that does not match its documented schema, and any error body that is not the
one shape. Bounded by count (EXAMPLES per operation and mode) and run on SQLite only; it prints
how many requests it sent and what it saw."""

from __future__ import annotations

import collections
import os
import time

import pytest
import schemathesis
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis.errors import Unsatisfiable
from schemathesis import GenerationMode
from schemathesis.checks import not_a_server_error
from schemathesis.openapi.checks import JsonSchemaError

from .conftest import sign_in

# Examples per operation and mode, signed in; anonymous requests mostly meet the sign-in check,
# so a fifth as many. About 2,300 requests, under three minutes on two cores.
EXAMPLES = int(os.environ.get("CLAMPDOWN_FUZZ_EXAMPLES", "60"))
OPENAPI = "/api/v1/openapi.json"


def _response_schema_conformance():
    from schemathesis.checks import response_schema_conformance

    return response_schema_conformance


def _error_shape(response) -> str | None:
    if response.status_code < 400:
        return None
    try:
        body = response.json()
    except ValueError:
        return "not JSON"
    items = body.get("detail") if isinstance(body, dict) else None
    if set(body) != {"detail"} or not isinstance(items, list) or not items:
        return f"not the error shape: {str(body)[:200]}"
    for item in items:
        if not (
            isinstance(item, dict) and set(item) == {"loc", "msg", "type"} and isinstance(item["loc"], list)
        ):
            return f"not the error shape: {str(item)[:200]}"
    return None


def _run(
    app, headers: dict[str, str], label: str, examples: int, tally: collections.Counter, problems: list[str]
) -> None:
    schema = schemathesis.openapi.from_asgi(OPENAPI, app)
    checks = [not_a_server_error, _response_schema_conformance()]
    for result in schema.get_all_operations():
        operation = result.ok()
        for mode in (GenerationMode.POSITIVE, GenerationMode.NEGATIVE):

            @settings(
                max_examples=examples,
                deadline=None,
                database=None,
                derandomize=True,
                phases=[Phase.explicit, Phase.generate],
                suppress_health_check=list(HealthCheck),
            )
            @given(case=operation.as_strategy(generation_mode=mode))
            def one(case):
                response = case.call(headers=headers)
                tally[f"{label} {response.status_code}"] += 1
                tally["requests"] += 1
                where = f"{label} {case.method} {case.formatted_path} ({mode.value})"  # noqa: B023 - called at once
                if response.status_code >= 500:
                    problems.append(f"{where}: {response.status_code} {response.text[:300]}")
                    return
                shape = _error_shape(response)
                if shape:
                    problems.append(f"{where}: {response.status_code} {shape}")
                try:
                    case.validate_response(response, checks=checks)
                except JsonSchemaError as exc:  # a single failure
                    problems.append(f"{where}: {response.status_code} {str(exc)[:300]}")
                except Exception as exc:  # noqa: BLE001 - a group of failures from the checks
                    problems.append(f"{where}: {response.status_code} {type(exc).__name__}: {str(exc)[:300]}")

            try:
                one()
            except Unsatisfiable:  # no invalid input exists (an operation without parameters)
                tally["operations without invalid input"] += 1


def test_generated_requests_meet_no_server_error_and_match_the_schema(world, engine):
    if engine.dialect.name != "sqlite":
        pytest.skip("the generated-request run is bounded to the SQLite run of the suite")
    admin = sign_in(world, "ari")
    signed_in = {"Cookie": "; ".join(f"{k}={v}" for k, v in admin.cookies.items()), **admin.headers}
    signed_in = {k: v for k, v in signed_in.items() if k.lower() in ("cookie", "x-csrf-token")}
    tally: collections.Counter = collections.Counter()
    problems: list[str] = []
    started = time.monotonic()
    _run(world, signed_in, "signed-in", EXAMPLES, tally, problems)
    _run(world, {}, "anonymous", max(1, EXAMPLES // 5), tally, problems)
    elapsed = time.monotonic() - started
    print(
        f"\ngenerated requests: {tally['requests']} in {elapsed:.0f} s; "
        + ", ".join(f"{k}: {v}" for k, v in sorted(tally.items()) if k != "requests")
    )
    assert tally["requests"] >= 20 * EXAMPLES  # the run really ran
    assert not problems, f"{len(problems)} problems, first ones:\n" + "\n".join(problems[:15])

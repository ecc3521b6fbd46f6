"""Property-based run of the JSON API against its own OpenAPI document (schemathesis), on a live server.

Bounded: a few examples per operation, no shrinking, a deadline per call; the
server is the app under waitress on a free loopback port over its own SQLite
store (the fuzzed POSTs write junk datasets there, with the token).
"""

from __future__ import annotations

import pytest
import schemathesis
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st
from schemathesis import GenerationMode, checks

from levels.catalog import Catalog

from webui import create_app
from webui.openapi import openapi_document

from tests.webui.conftest import TOKEN, LiveServer, fill_store, make_config

CHECKS = [checks.not_a_server_error, checks.status_code_conformance, checks.content_type_conformance,
          checks.response_schema_conformance, checks.response_headers_conformance, checks.negative_data_rejection,
          checks.ignored_auth]


@pytest.fixture(scope="module")
def live_api(tmp_path_factory):
    folder = tmp_path_factory.mktemp("api-schema")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    catalog = Catalog(url, actor="pytest")
    catalog.init()
    fill_store(catalog)
    application = create_app(make_config(url, folder))
    with LiveServer(application) as live:
        yield live
    application.extensions["levels"]["catalog"].close()
    catalog.close()


@pytest.fixture(scope="module")
def api_schema(live_api):
    return schemathesis.openapi.from_url(f"{live_api.url}/api/v1/openapi.json")


OPERATIONS = [(method.upper(), path) for path, ops in openapi_document()["paths"].items() for method in ops]


@pytest.mark.parametrize("method, path", OPERATIONS)
def test_api_conforms_to_its_document(api_schema, method, path):
    operation = api_schema[path][method]
    cases = st.one_of(operation.as_strategy(GenerationMode.POSITIVE), operation.as_strategy(GenerationMode.NEGATIVE))

    @given(case=cases)
    @settings(max_examples=8, deadline=5000, derandomize=True, phases=[Phase.explicit, Phase.generate],
              suppress_health_check=list(HealthCheck), database=None)
    def run(case):
        case.call_and_validate(headers={"Authorization": f"Bearer {TOKEN}"}, checks=CHECKS, timeout=10)

    run()

"""The web form's "Units of the report": the choice reaches the worker, its report and files."""

from __future__ import annotations

import pytest
from _web_server import FAST, TINY, same_origin, wait_final
from starlette.testclient import TestClient
from stowflow.errors import SettingsError
from stowflow.web import ServerConfig, create_app
from stowflow.web.forms import UNITS_FIELD, chosen_units
from stowflow.web.upload import UploadedForm

BASE = "http://127.0.0.1:8000"
#: Seconds a small design may take on a busy two-core machine before the test gives up.
DESIGN_WAIT_S = 90.0


def _form(**fields) -> UploadedForm:
    return UploadedForm(fields=fields, files={})


def test_chosen_units_default_to_metric_and_refuse_other_names():
    assert chosen_units(_form()) == "metric"
    assert chosen_units(_form(**{UNITS_FIELD: "us"})) == "us"
    assert chosen_units(_form(**{UNITS_FIELD: " US "})) == "us"
    with pytest.raises(SettingsError, match="not a unit system"):
        chosen_units(_form(**{UNITS_FIELD: "imperial"}))


@pytest.fixture(scope="module")
def client(tmp_path_factory):
    demo = tmp_path_factory.mktemp("web-units") / "tiny_press.csv"
    demo.write_text(TINY, encoding="utf-8")
    app = create_app(
        ServerConfig(
            workers=1, queue=2, time_limit=60.0, max_rows=200, demo_cycle=demo, warm_up=False
        )
    )
    with TestClient(app, base_url=BASE, headers=same_origin(BASE)) as c:
        yield c


def test_the_form_offers_the_units_and_a_us_study_answers_in_psi(client):
    page = client.get("/").text
    assert "Units of the report" in page and '<option value="us"' in page
    fields = {"use_demo": "1", UNITS_FIELD: "us", **FAST}
    r = client.post(
        "/studies", files={k: (None, v) for k, v in fields.items()}, follow_redirects=False
    )
    assert r.status_code == 303
    location = r.headers["location"]
    status = wait_final(client, location, DESIGN_WAIT_S)
    assert status["state"] == "done", status
    figures = " ".join(text for _label, text in status["summary"]["figures"])
    assert "psi" in figures and " bar" not in figures
    design = client.get(f"{location}/files/design.json").json()
    assert design["display_units"]["system"] == "us"
    assert "precharge_bar_at_20c" in design["accumulator"]  # the metric keys stay
    assert "psi" in client.get(f"{location}/files/spec.csv").text

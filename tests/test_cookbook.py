"""The README's curl scenarios still give the documented answers, number by number.

Each scenario is a ```sh block holding one curl command, followed by a ```json or ```csv block with its output
(in the README sections of SECTIONS: the cookbook, and every other section that shows a request with its answer).
The command is translated for the Flask test client (method, path, headers, -d body); a scenario that sends an
API key runs against an app configured with that key. Every number printed in the output must hold to the
digits printed (half a unit in the last digit shown), every string and flag exactly, and the structure (keys,
lengths, CSV header) must be the service's.
"""

from __future__ import annotations

import csv
import io
import json
import re
import shlex
from dataclasses import dataclass
from decimal import Decimal
from pathlib import Path

import pytest

from service import create_app

README = Path(__file__).resolve().parents[1] / "README.md"
#: The README sections whose curl scenarios are checked (all that show requests with their answers).
SECTIONS = ("A first request", "Airspeeds", "Lift", "Errors", "Cookbook", "For operations systems")
FENCE = re.compile(r"^```(\w*)\n(.*?)^```\n", re.MULTILINE | re.DOTALL)
KEY_HEADERS = ("authorization", "x-api-key")


@dataclass
class Scenario:
    section: str
    command: str
    kind: str  # json or csv
    output: str

    @property
    def name(self) -> str:
        return f"{self.section}: {self.request()['path']}"

    def request(self) -> dict:
        """The curl command as method, path, headers and body."""
        words = shlex.split(self.command.replace("\\\n", " "))
        assert words[0] == "curl", self.command
        method, url, headers, body = None, None, {}, None
        i = 1
        while i < len(words):
            word = words[i]
            if word in ("-H", "--header"):
                name, _, value = words[i + 1].partition(":")
                headers[name.strip()] = value.strip()
                i += 2
            elif word in ("-d", "--data", "--data-raw"):
                body = words[i + 1]
                i += 2
            elif word in ("-X", "--request"):
                method = words[i + 1]
                i += 2
            elif word.startswith("-"):
                assert word in ("-s", "--silent", "--compressed"), f"curl option {word} not translated"
                i += 1
            else:
                url = word
                i += 1
        if body is not None:  # curl -d sends a form unless told otherwise
            headers.setdefault("Content-Type", "application/x-www-form-urlencoded")
        path = "/" + url.split("://")[-1].split("/", 1)[1]
        return {"method": method or ("POST" if body is not None else "GET"), "path": path, "headers": headers,
                "body": body}

    def key(self) -> str | None:
        """The API key the command sends, if any."""
        for name, value in self.request()["headers"].items():
            if name.lower() in KEY_HEADERS:
                return value.removeprefix("Bearer ").strip()
        return None


def section(text: str, title: str) -> str:
    start = text.index(f"\n## {title}\n")
    end = text.find("\n## ", start + 1)
    return text[start:end if end > 0 else len(text)]


def scenarios(text: str | None = None) -> list[Scenario]:
    """Every ```sh block with a curl command in SECTIONS, with the output block right after it."""
    text = README.read_text(encoding="utf-8") if text is None else text
    found = []
    for title in SECTIONS:
        blocks = list(FENCE.finditer(section(text, title)))
        for block, following in zip(blocks, blocks[1:] + [None], strict=True):
            if block.group(1) == "sh" and block.group(2).lstrip().startswith("curl "):
                assert following is not None and following.group(1) in ("json", "csv"), \
                    f"{title}: a curl command without its output:\n{block.group(2)}"
                found.append(Scenario(title, block.group(2), following.group(1), following.group(2)))
    return found


SCENARIOS = scenarios()


# --- comparing numbers to the digits printed ------------------------------------------------------------------

class Printed:
    """A number as the README prints it: its value and half a unit in its last digit."""

    def __init__(self, text: str):
        self.text = text
        self.value = float(text)
        exponent = Decimal(text).as_tuple().exponent
        self.tolerance = 0.5 * 10.0 ** exponent

    def holds(self, actual) -> bool:
        return (isinstance(actual, (int, float)) and not isinstance(actual, bool)
                and abs(actual - self.value) <= self.tolerance * (1 + 1e-9))


def mismatches(documented, actual, where: str = "") -> list[str]:
    """Where ``actual`` differs from the ``documented`` tree (parsed with Printed numbers)."""
    if isinstance(documented, Printed):
        return [] if documented.holds(actual) else [f"{where}: documented {documented.text}, service {actual!r}"]
    if isinstance(documented, dict):
        if not isinstance(actual, dict) or list(documented) != list(actual):
            answered = list(actual) if isinstance(actual, dict) else actual
            return [f"{where}: keys {list(documented)} documented, {answered!r} answered"]
        return [m for key in documented for m in mismatches(documented[key], actual[key], f"{where}/{key}")]
    if isinstance(documented, list):
        if not isinstance(actual, list) or len(documented) != len(actual):
            return [f"{where}: {len(documented)} items documented, {actual!r} answered"]
        return [m for i, (d, a) in enumerate(zip(documented, actual, strict=True))
                for m in mismatches(d, a, f"{where}/{i}")]
    return [] if documented == actual and type(documented) is type(actual) else [
        f"{where}: documented {documented!r}, service {actual!r}"]


def csv_mismatches(documented: str, actual: str) -> list[str]:
    doc_rows = list(csv.reader(io.StringIO(documented)))
    rows = list(csv.reader(io.StringIO(actual)))
    if doc_rows[0] != rows[0]:
        return [f"header: documented {doc_rows[0]}, service {rows[0]}"]
    if len(doc_rows) != len(rows):
        return [f"{len(doc_rows) - 1} rows documented, {len(rows) - 1} answered"]
    found = []
    for r, (doc_row, row) in enumerate(zip(doc_rows[1:], rows[1:], strict=True), 1):
        for header, doc_cell, cell in zip(rows[0], doc_row, row, strict=True):
            try:
                ok = Printed(doc_cell).holds(float(cell))
            except ValueError:
                ok = doc_cell == cell
            if not ok:
                found.append(f"row {r}, {header}: documented {doc_cell!r}, service {cell!r}")
    return found


def answer(scenario: Scenario):
    """The app's answer to the scenario's request."""
    key = scenario.key()
    app = create_app({"TESTING": True, "QBAR_API_KEYS": key or ()})
    request = scenario.request()
    return app.test_client().open(request["path"], method=request["method"], headers=request["headers"],
                                  data=request["body"])


# --- the tests -------------------------------------------------------------------------------------------------


def test_the_cookbook_has_its_scenarios():
    cookbook = [s for s in SCENARIOS if s.section == "Cookbook"]
    assert len(cookbook) >= 8
    assert any(s.key() for s in cookbook), "an API-key request"
    assert any('"type": "/problems/' in s.output for s in cookbook), "a typical error"
    assert any(s.kind == "csv" for s in cookbook), "a table as CSV"


@pytest.mark.parametrize("scenario", SCENARIOS, ids=[s.name for s in SCENARIOS])
def test_scenario_gives_the_documented_answer(scenario):
    response = answer(scenario)
    if scenario.kind == "csv":
        assert response.status_code == 200, response.get_data(as_text=True)
        assert response.mimetype == "text/csv"
        found = csv_mismatches(scenario.output, response.get_data(as_text=True))
    else:
        documented = json.loads(scenario.output, parse_float=Printed, parse_int=Printed)
        expected = 200
        if isinstance(documented, dict) and "type" in documented and "status" in documented:
            expected = int(documented["status"].text)
        assert response.status_code == expected, response.get_data(as_text=True)
        actual = json.loads(response.get_data())
        if isinstance(actual, dict) and "request_id" not in documented:
            actual.pop("request_id", None)  # a new random id, unless the command sends its own X-Request-ID
        found = mismatches(documented, actual)
    assert not found, "\n".join(found)


def test_a_changed_number_is_caught():
    """The comparison can fail: a number off by one in its last printed digit is a mismatch."""
    scenario = next(s for s in SCENARIOS if s.kind == "json" and s.section == "Cookbook")
    actual = json.loads(answer(scenario).get_data())
    documented = json.loads(scenario.output, parse_float=Printed, parse_int=Printed)
    assert not mismatches(documented, actual)
    number = re.search(r"\d\.\d+", scenario.output).group(0)
    last = int(number[-1])
    changed = scenario.output.replace(number, number[:-1] + str((last + 1) % 10), 1)
    assert mismatches(json.loads(changed, parse_float=Printed, parse_int=Printed), actual)


def test_curl_translation():
    scenario = Scenario("x", "curl -s localhost:8080/v1/airspeed -H 'X-API-Key: abc' \\\n     -d '{\"mach\": 0.7}'",
                        "json", "{}")
    assert scenario.request() == {"method": "POST", "path": "/v1/airspeed", "body": '{"mach": 0.7}',
                                  "headers": {"X-API-Key": "abc", "Content-Type": "application/x-www-form-urlencoded"}}
    assert scenario.key() == "abc"

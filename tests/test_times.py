"""A time typed without an offset means the same moment on the command line, in the web form
and in the API: UTC (ISO 8601 times; an offset, when given, is applied). Checked with the
machine's own zone set far from UTC, so a local reading would show."""

import os
import time
from datetime import datetime

import pytest

from registry.formats.common import parse_time
from registry.web.schemas import EventRequest


@pytest.fixture
def far_zone():
    old = os.environ.get("TZ")
    os.environ["TZ"] = "Pacific/Kiritimati"  # UTC+14, the zone farthest ahead
    time.tzset()
    yield
    if old is None:
        os.environ.pop("TZ", None)
    else:
        os.environ["TZ"] = old
    time.tzset()


def test_cli_and_api_read_a_time_without_offset_as_utc(far_zone):
    cli = parse_time("2026-03-01T14:30", "--at")
    api = EventRequest.model_validate({"unit": "NB-0002", "kind": "overvoltage",
                                       "at": "2026-03-01T14:30"}).at
    assert cli == datetime(2026, 3, 1, 14, 30)
    assert api.replace(tzinfo=None) == cli
    # with an offset both convert: 14:30+01:00 is 13:30 UTC (ISO 8601)
    assert parse_time("2026-03-01T14:30+01:00", "--at") == datetime(2026, 3, 1, 13, 30)

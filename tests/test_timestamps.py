"""Times are written one way everywhere: ISO 8601 in UTC, to the second, with "Z" (RFC 3339, section 5.6)."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

from stetline.timestamps import iso_time


def test_a_stored_time_reads_in_utc_to_the_second() -> None:
    assert iso_time(datetime(2025, 3, 1, 9, 30, 5, 987654)) == "2025-03-01T09:30:05Z"


def test_a_time_with_a_zone_is_written_as_the_same_instant_in_utc() -> None:
    at = datetime(2025, 3, 1, 0, 30, tzinfo=timezone(timedelta(hours=2)))
    assert iso_time(at) == "2025-02-28T22:30:00Z"  # never "...+02:00Z"

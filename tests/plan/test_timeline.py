"""Date arithmetic shared by the rules and the documents."""

from __future__ import annotations

from datetime import date

from protolint.plan.model import RaterCertification
from protolint.plan.timeline import add_months, certification_expiry


def test_add_months_clamps_to_the_end_of_the_month():
    assert add_months(date(2026, 1, 31), 1) == date(2026, 2, 28)
    assert add_months(date(2027, 11, 30), 3) == date(2028, 2, 29)   # 2028 is a leap year
    assert add_months(date(2026, 8, 10), 12) == date(2027, 8, 10)


def test_certification_expiry_prefers_the_rostered_date():
    cert = RaterCertification(path=(), instrument="X", date=date(2026, 8, 10))
    assert certification_expiry(cert, 12) == date(2027, 8, 10)
    assert certification_expiry(cert, None) is None
    stated = RaterCertification(path=(), instrument="X", date=date(2026, 8, 10), expires=date(2027, 2, 10))
    assert certification_expiry(stated, 12) == date(2027, 2, 10)

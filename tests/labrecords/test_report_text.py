"""How a report words entered values and moments (pure functions, no database)."""

import datetime
import zoneinfo
from decimal import Decimal

from labrecords.reporting.text import label_and_unit, moment_text, values_lines


def test_unit_endings_become_units():
    assert label_and_unit("detached_share_pct") == ("detached share", "%")
    assert label_and_unit("temperature_c") == ("temperature", "°C")
    assert label_and_unit("force_n") == ("force", "N")
    assert label_and_unit("crosshatch_class") == ("crosshatch class", "")
    assert values_lines(
        {"force_n": 4.5, "strokes": 50, "offset_nm": Decimal("-1.20"), "angle_deg": 45}
    ) == ("force: 4.5 N", "strokes: 50", "offset: -1.20 nm", "angle: 45°")


def test_bench_entries_read_as_sentences():
    lines = values_lines(
        {
            "inspection": {
                "no_defects": False,
                "defects": [
                    {
                        "defect": "stain_discoloration",
                        "zone": "edge",
                        "extent": "about 1 mm",
                        "quantity": 1,
                        "size": 1,
                    }
                ],
                "lighting": "dark field",
                "magnification": "10x",
            },
            "comparison": {
                "new_defects": ["stain discoloration"],
                "worsened": [],
                "convention": "long text that the report states once elsewhere",
            },
            "spectral": [
                {
                    "band_nm": [400.0, 700.0],
                    "quantity": "R",
                    "statistic": "average",
                    "value": 0.3,
                    "unit": "%",
                    "expanded_uncertainty": 0.05,
                }
            ],
            "coating_removed": False,
            "removal_location": "",
        }
    )
    assert lines == (
        "inspection: stain discoloration (edge, about 1 mm) [quantity 1, size 1] (dark field, 10x)",
        "new: stain discoloration",
        "R average 400-700 nm: 0.3 % (U = 0.05 %)",
        "coating removed: no",
    )
    assert values_lines(
        {"inspection": {"no_defects": True}, "comparison": {"new_defects": [], "worsened": []}}
    ) == (
        "inspection: no defects observed",
        "no new or worsened defects against the initial inspection",
    )


def test_moments_carry_their_zone_and_offset():
    # Offsets per the IANA time zone database as shipped with Python's zoneinfo:
    # Berlin is UTC+1 in winter (CET) and UTC+2 in summer (CEST).
    berlin = zoneinfo.ZoneInfo("Europe/Berlin")
    winter = datetime.datetime(2026, 1, 15, 9, 5, tzinfo=berlin)
    summer = datetime.datetime(2026, 7, 15, 9, 5, tzinfo=berlin)
    assert moment_text(winter) == "2026-01-15 09:05 CET (UTC+01:00)"
    assert moment_text(summer) == "2026-07-15 09:05 CEST (UTC+02:00)"
    india = datetime.datetime(2026, 7, 15, 9, 5, tzinfo=zoneinfo.ZoneInfo("Asia/Kolkata"))
    assert moment_text(india) == "2026-07-15 09:05 IST (UTC+05:30)"

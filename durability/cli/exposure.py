"""`python -m durability exposure LOG.csv ...`: check a chamber log against an exposure condition.

Example: a 24 h humidity exposure at 49 ± 2 °C and 95-100 % RH, logged in Berlin local time::

    python -m durability exposure LOG.csv --temp 49 --temp-tol 2 --rh 95:100 --hours 24 \\
        --tz Europe/Berlin
"""

from __future__ import annotations

import argparse
import math
from datetime import timedelta

from durability.errors import InputError
from durability.exposure.logger import DateOrder, read_logger_file
from durability.exposure.verify import (
    DurationRule,
    ExposureCondition,
    Interpolation,
    SensorCorrection,
    SevereSide,
    verify_exposure,
)

HELP = "Check a chamber data-logger CSV against a temperature/RH condition and required hours."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the command's arguments."""
    parser.add_argument("log", metavar="LOG", help="the data logger's CSV export")
    condition = parser.add_argument_group("condition")
    condition.add_argument("--temp", metavar="C", help="temperature set point, °C")
    condition.add_argument("--temp-tol", metavar="K", help="± tolerance around --temp, K")
    condition.add_argument("--temp-min", metavar="C", help="lowest temperature allowed, °C")
    condition.add_argument("--temp-max", metavar="C", help="highest temperature allowed, °C")
    condition.add_argument(
        "--rh", metavar="MIN:MAX", help="RH range in %%, e.g. 95:100 (95: or :100 for one side)"
    )
    condition.add_argument("--hours", metavar="H", required=True, help="required exposure hours")
    condition.add_argument(
        "--continuous",
        action="store_true",
        help="the hours must be one unbroken run (default: cumulative)",
    )
    condition.add_argument(
        "--temp-severe",
        choices=[side.value for side in SevereSide],
        default=SevereSide.HIGHER.value,
        help="which temperature side is the harder test (default: higher; lower for cold tests)",
    )
    condition.add_argument(
        "--rh-severe",
        choices=[side.value for side in SevereSide],
        default=SevereSide.HIGHER.value,
        help="which humidity side is the harder test (default: higher)",
    )
    counting = parser.add_argument_group("counting")
    counting.add_argument(
        "--hold",
        action="store_true",
        help="zero-order hold between readings (default: linear interpolation, exact crossings)",
    )
    counting.add_argument(
        "--start-when-stable",
        action="store_true",
        help="count from the first instant within --stable-within K of the set point (ISO 9022)",
    )
    counting.add_argument(
        "--stable-within", metavar="K", default="3", help="band for --start-when-stable (3 K)"
    )
    counting.add_argument(
        "--interval-min",
        metavar="MIN",
        help="logging interval for the gap rule (default: the median spacing)",
    )
    sensor = parser.add_argument_group("sensor correction (corrected = gain × logged + offset)")
    sensor.add_argument("--temp-offset", metavar="K", default="0", help="temperature offset, K")
    sensor.add_argument("--temp-gain", metavar="G", default="1", help="temperature gain")
    sensor.add_argument("--rh-offset", metavar="PCT", default="0", help="RH offset, %% RH")
    sensor.add_argument("--rh-gain", metavar="G", default="1", help="RH gain")
    reading = parser.add_argument_group("reading the file")
    reading.add_argument(
        "--tz",
        metavar="ZONE",
        help="the chamber's time zone for timestamps without offset (e.g. Europe/Berlin)",
    )
    reading.add_argument(
        "--date-order",
        choices=[order.value for order in DateOrder],
        help="how the logger writes dates, when the file alone does not settle it",
    )
    reading.add_argument(
        "--separator", choices=["comma", "semicolon", "tab"], help="column separator"
    )
    reading.add_argument("--decimal", choices=["point", "comma"], help="decimal mark")
    parser.add_argument(
        "--readings",
        action="store_true",
        help="include every reading (logged and corrected values) in the output",
    )


def _number(text: str | None, option: str) -> float | None:
    if text is None:
        return None
    try:
        value = float(text.strip().replace(",", "."))
    except ValueError:
        raise InputError(f"{option}: {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{option}: {text!r} is not a finite number")
    return value


def _required(text: str | None, option: str) -> float:
    value = _number(text, option)
    if value is None:
        raise InputError(f"{option} is required")
    return value


def _rh_range(text: str | None) -> tuple[float | None, float | None]:
    if text is None:
        return None, None
    low_text, sep, high_text = text.partition(":")
    if not sep:
        raise InputError(f"--rh: {text!r} is not MIN:MAX (e.g. 95:100)")
    low = _number(low_text, "--rh minimum") if low_text.strip() else None
    high = _number(high_text, "--rh maximum") if high_text.strip() else None
    if low is None and high is None:
        raise InputError("--rh: give a minimum, a maximum or both")
    return low, high


def _condition(args: argparse.Namespace) -> ExposureCondition:
    rh_min, rh_max = _rh_range(args.rh)
    temperature_side = SevereSide(args.temp_severe)
    rh_side = SevereSide(args.rh_severe)
    if args.temp is not None:
        if args.temp_min is not None or args.temp_max is not None:
            raise InputError("give --temp with --temp-tol, or --temp-min and --temp-max, not both")
        return ExposureCondition.from_setpoint(
            _required(args.temp, "--temp"),
            _required(args.temp_tol, "--temp-tol"),
            rh_min_percent=rh_min,
            rh_max_percent=rh_max,
            temperature_severe_side=temperature_side,
            rh_severe_side=rh_side,
        )
    if args.temp_tol is not None:
        raise InputError("--temp-tol needs --temp")
    return ExposureCondition(
        temperature_min_c=_required(args.temp_min, "--temp-min"),
        temperature_max_c=_required(args.temp_max, "--temp-max"),
        rh_min_percent=rh_min,
        rh_max_percent=rh_max,
        temperature_severe_side=temperature_side,
        rh_severe_side=rh_side,
    )


def run(args: argparse.Namespace) -> dict[str, object]:
    """Import the log, verify the exposure and return the result with the import's facts."""
    condition = _condition(args)
    correction = SensorCorrection(
        temperature_offset_k=_required(args.temp_offset, "--temp-offset"),
        temperature_gain=_required(args.temp_gain, "--temp-gain"),
        rh_offset_percent=_required(args.rh_offset, "--rh-offset"),
        rh_gain=_required(args.rh_gain, "--rh-gain"),
    )
    interval_min = _number(args.interval_min, "--interval-min")
    if interval_min is not None and interval_min <= 0:
        raise InputError(f"--interval-min: {args.interval_min!r} must be above zero")
    separator = {"comma": ",", "semicolon": ";", "tab": "\t", None: None}[args.separator]
    decimal = {"point": ".", "comma": ",", None: None}[args.decimal]
    imported = read_logger_file(
        args.log,
        time_zone=args.tz,
        date_order=args.date_order,
        separator=separator,
        decimal=decimal,
    )
    result = verify_exposure(
        imported.samples,
        condition,
        required_hours=_required(args.hours, "--hours"),
        duration_rule=DurationRule.CONTINUOUS if args.continuous else DurationRule.CUMULATIVE,
        interpolation=Interpolation.HOLD if args.hold else Interpolation.INTERPOLATED,
        correction=correction,
        start_when_stable=args.start_when_stable,
        stable_within_k=_required(args.stable_within, "--stable-within"),
        logging_interval=timedelta(minutes=interval_min) if interval_min is not None else None,
    )
    output = result.as_dict(include_readings=args.readings)
    output["import"] = imported.as_dict()
    return output

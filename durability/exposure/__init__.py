"""Chamber evidence: read a data logger's CSV export and verify an exposure against its method.

- :mod:`durability.exposure.logger`: :func:`read_logger_csv` / :func:`read_logger_file` turn a
  logger export into UTC :class:`Sample` readings with the format facts found.
- :mod:`durability.exposure.verify`: :func:`verify_exposure` checks the readings against an
  :class:`ExposureCondition` and the required hours and says whether the exposure counts.

Dew point lives in :mod:`durability.dewpoint`.
"""

from durability.exposure.logger import (
    DateOrder,
    LoggerFormat,
    LoggerImport,
    Sample,
    parse_time_zone,
    read_logger_csv,
    read_logger_file,
)
from durability.exposure.verify import (
    CheckedReading,
    DurationRule,
    Excursion,
    ExposureCondition,
    ExposureVerification,
    Interpolation,
    Run,
    SensorCorrection,
    SevereSide,
    WorstValue,
    verify_exposure,
)

__all__ = [
    "CheckedReading",
    "DateOrder",
    "DurationRule",
    "Excursion",
    "ExposureCondition",
    "ExposureVerification",
    "Interpolation",
    "LoggerFormat",
    "LoggerImport",
    "Run",
    "Sample",
    "SensorCorrection",
    "SevereSide",
    "WorstValue",
    "parse_time_zone",
    "read_logger_csv",
    "read_logger_file",
    "verify_exposure",
]

# ISO dates and 24-hour times on every screen: a lab's records are read across countries.
DATE_FORMAT = "Y-m-d"
SHORT_DATE_FORMAT = "Y-m-d"
DATETIME_FORMAT = "Y-m-d H:i T"
SHORT_DATETIME_FORMAT = "Y-m-d H:i"
TIME_FORMAT = "H:i"
DATE_INPUT_FORMATS = ["%Y-%m-%d"]
DATETIME_INPUT_FORMATS = [
    "%Y-%m-%d %H:%M:%S",
    "%Y-%m-%d %H:%M",
    "%Y-%m-%dT%H:%M:%S",
    "%Y-%m-%dT%H:%M",
]
TIME_INPUT_FORMATS = ["%H:%M:%S", "%H:%M"]
DECIMAL_SEPARATOR = "."
THOUSAND_SEPARATOR = "\u2009"
NUMBER_GROUPING = 0

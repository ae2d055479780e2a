"""The method catalogue's seed data: load and validate fixtures/catalogue/methods.json.

The JSON carries the published test methods collected in shared/reference/test-methods.md,
each parameter with its verification status (public summary, from memory, common practice,
to be entered by the lab), plus the lab's own procedures. This module reads it into frozen
dataclasses and refuses anything that does not follow the schema documented in
fixtures/catalogue/README.md, naming the method code and the field that is wrong.

Pure Python: no Django. The Django side copies a :class:`Catalogue` into its models.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType
from typing import Any

from durability.errors import InputError
from durability.grading import DefectType

__all__ = [
    "ACCEPTANCE_RULES",
    "DEFECTS",
    "GROUPS",
    "HAZARDS",
    "KINDS",
    "SCHEMA_VERSION",
    "STATUSES",
    "TEST_KEYS",
    "TYPED_PARAMETERS",
    "Acceptance",
    "Catalogue",
    "CatalogueMethod",
    "Parameter",
    "Standard",
    "load_catalogue",
    "normalise_severity",
    "parse_catalogue",
    "severity_prefix",
    "validate_rule",
]

SCHEMA_VERSION = 1

KINDS: tuple[str, ...] = (
    "adhesion",
    "crosshatch",
    "moderate_abrasion",
    "severe_abrasion",
    "humidity",
    "temperature",
    "thermal_shock",
    "salt_fog",
    "salt_solubility",
    "water_solubility",
    "solvent_solubility",
    "cleanability",
    "inspection",
    "spectral_measurement",
    "other",
)
TEST_KEYS: tuple[str, ...] = (
    "adhesion",
    "humidity",
    "moderate_abrasion",
    "severe_abrasion",
    "temperature",
    "solvent_solubility",
    "salt_solubility",
    "water_solubility",
    "salt_fog",
    "crosshatch",
)
GROUPS: tuple[str, ...] = ("basic", "when_specified", "disputed", "")
HAZARDS: tuple[str, ...] = (
    "solvent",
    "salt_fog",
    "boiling_water",
    "hot_chamber",
    "cold_chamber",
    "laser",
    "sharp_blade",
)
# "confirmed" never appears in the seed file: a lab confirms a value against its own copy of
# the standard in the app, and the planner reads the catalogue back from the database.
STATUSES: tuple[str, ...] = (
    "public_summary",
    "from_memory",
    "common_practice",
    "to_be_entered",
    "confirmed",
)
STANDARD_STATUSES: tuple[str, ...] = ("active", "inactive")
# The defect vocabulary is the grading module's, so a rule can only name what can be observed.
DEFECTS: tuple[str, ...] = tuple(d.value for d in DefectType)
ACCEPTANCE_RULES: tuple[str, ...] = (
    "no_coating_removed",
    "no_listed_defects",
    "crosshatch_max_class",
    "recorded_only",
    "engineer_judgement",
    "spectral_limits",
)

# Typed parameter name -> (value type, unit). "number" accepts int or float, "integer" only
# whole numbers, "text" only strings. Any other name is free and lands in a JSON field.
TYPED_PARAMETERS: dict[str, tuple[str, str]] = {
    "temperature_c": ("number", "°C"),
    "temperature_tolerance_c": ("number", "°C"),
    "temperature_low_c": ("number", "°C"),
    "temperature_high_c": ("number", "°C"),
    "rh_min_pct": ("number", "%"),
    "rh_max_pct": ("number", "%"),
    "duration_h": ("number", "h"),
    "cycles": ("integer", ""),
    "strokes": ("integer", ""),
    "force_n": ("number", "N"),
    "solution": ("text", ""),
    "concentration_pct": ("number", "%"),
}

_STANDARD_KEYS = ("designation", "edition", "title", "status", "note")
_METHOD_KEYS = (
    "code",
    "standard",
    "clause",
    "name",
    "kind",
    "test_key",
    "group",
    "destructive",
    "hazards",
    "parameters",
    "acceptance",
    "note",
)
_PARAMETER_KEYS = ("value", "unit", "status", "placeholder", "note")
_ACCEPTANCE_KEYS = ("text", "rule", "status")
# "severity_06.duration_h": a value that holds only for that degree of severity.
_PARAMETER_NAME = re.compile(r"^(?:severity_(?P<severity>\d{2})\.)?(?P<base>[a-z][a-z0-9_]*)$")

Value = float | int | str | None


def normalise_severity(severity: str | int) -> str:
    """Return a degree of severity as two digits ("6", 6 or "06" -> "06")."""
    text = str(severity).strip()
    if isinstance(severity, bool) or not text.isdigit() or len(text) > 2:
        raise InputError(f"degree of severity {severity!r}: expected one or two digits")
    return f"{int(text):02d}"


def severity_prefix(severity: str | int) -> str:
    """Return the parameter-name prefix of a degree of severity ("6" -> "severity_06.")."""
    return f"severity_{normalise_severity(severity)}."


@dataclass(frozen=True)
class Standard:
    """A published document, or "LAB" for the lab's own procedures."""

    designation: str
    edition: str
    title: str
    status: str
    note: str

    def as_json(self) -> dict[str, object]:
        """Return the standard as in the seed JSON."""
        return {
            "designation": self.designation,
            "edition": self.edition,
            "title": self.title,
            "status": self.status,
            "note": self.note,
        }


@dataclass(frozen=True)
class Parameter:
    """One value of a method with its verification status.

    ``severity`` is the two-digit degree of severity the value belongs to ("" when it holds for
    every severity); ``base_name`` is the name without the ``severity_SS.`` prefix.
    """

    name: str
    value: Value
    unit: str
    status: str
    placeholder: bool
    note: str

    @property
    def severity(self) -> str:
        """The degree of severity this value belongs to, or "" for all of them."""
        match = _PARAMETER_NAME.match(self.name)
        return (match.group("severity") or "") if match else ""

    @property
    def base_name(self) -> str:
        """The name without its ``severity_SS.`` prefix."""
        match = _PARAMETER_NAME.match(self.name)
        return match.group("base") if match else self.name

    @property
    def needs_lab(self) -> bool:
        """True when the lab must enter or confirm the value before it can be relied on."""
        return self.status == "to_be_entered" or self.placeholder

    def as_json(self) -> dict[str, object]:
        """Return the parameter body as in the seed JSON (without its name)."""
        return {
            "value": self.value,
            "unit": self.unit,
            "status": self.status,
            "placeholder": self.placeholder,
            "note": self.note,
        }


@dataclass(frozen=True)
class Acceptance:
    """A method's pass criterion: plain words, a machine rule and its status."""

    text: str
    rule: Mapping[str, Any]
    status: str

    @property
    def rule_name(self) -> str:
        """The rule's name, e.g. "no_listed_defects"."""
        return str(self.rule["rule"])

    def rule_json(self) -> dict[str, object]:
        """Return a plain, mutable copy of the rule."""
        return dict(_plain(self.rule))

    def as_json(self) -> dict[str, object]:
        """Return the acceptance as in the seed JSON."""
        return {"text": self.text, "rule": self.rule_json(), "status": self.status}


@dataclass(frozen=True)
class CatalogueMethod:
    """One test method of a standard, or one lab procedure."""

    code: str
    standard: str
    clause: str
    name: str
    kind: str
    test_key: str | None
    group: str
    destructive: bool
    hazards: tuple[str, ...]
    parameters: tuple[Parameter, ...]
    acceptance: Acceptance
    note: str

    @property
    def key(self) -> str:
        """The part of the code after the designation ("MIL-C-48497A:humidity" -> "humidity")."""
        return self.code[len(self.standard) + 1 :]

    def parameter(self, name: str) -> Parameter | None:
        """Return the parameter of that exact name, or None."""
        for parameter in self.parameters:
            if parameter.name == name:
                return parameter
        return None

    @property
    def severities(self) -> tuple[str, ...]:
        """The degrees of severity that have their own values here, sorted."""
        return tuple(sorted({p.severity for p in self.parameters if p.severity}))

    @property
    def uses_severity(self) -> bool:
        """True when the method's values depend on a degree of severity."""
        return bool(self.severities) or self.parameter("severity_table") is not None

    def parameters_for(self, severity: str = "") -> tuple[Parameter, ...]:
        """Return the parameters that apply at a degree of severity, prefixes stripped.

        Values common to every severity come first; the severity's own values replace any
        common value of the same name. ``severity_table`` (the marker of a table the lab has
        still to enter) and other severities' values are left out.
        """
        wanted = normalise_severity(severity) if severity else ""
        merged: dict[str, Parameter] = {}
        for parameter in self.parameters:
            if parameter.name == "severity_table" or parameter.severity:
                continue
            merged[parameter.name] = parameter
        for parameter in self.parameters:
            if wanted and parameter.severity == wanted:
                merged[parameter.base_name] = Parameter(
                    name=parameter.base_name,
                    value=parameter.value,
                    unit=parameter.unit,
                    status=parameter.status,
                    placeholder=parameter.placeholder,
                    note=f"degree of severity {wanted}; {parameter.note}",
                )
        return tuple(merged.values())

    def as_json(self) -> dict[str, object]:
        """Return the method as in the seed JSON."""
        return {
            "code": self.code,
            "standard": self.standard,
            "clause": self.clause,
            "name": self.name,
            "kind": self.kind,
            "test_key": self.test_key,
            "group": self.group,
            "destructive": self.destructive,
            "hazards": list(self.hazards),
            "parameters": {p.name: p.as_json() for p in self.parameters},
            "acceptance": self.acceptance.as_json(),
            "note": self.note,
        }


@dataclass(frozen=True)
class Catalogue:
    """The whole seed: standards and methods, in file order."""

    schema: int
    standards: tuple[Standard, ...]
    methods: tuple[CatalogueMethod, ...]

    def standard(self, designation: str) -> Standard | None:
        """Return the standard of that designation, or None."""
        for standard in self.standards:
            if standard.designation == designation:
                return standard
        return None

    def method(self, code: str) -> CatalogueMethod | None:
        """Return the method of that code, or None."""
        for method in self.methods:
            if method.code == code:
                return method
        return None

    def methods_of(
        self, designation: str, clause: str | None = None
    ) -> tuple[CatalogueMethod, ...]:
        """Return the methods of a standard, optionally only those of one clause."""
        return tuple(
            m
            for m in self.methods
            if m.standard == designation and (clause is None or m.clause == clause)
        )

    def as_json(self) -> dict[str, object]:
        """Return the catalogue in the seed JSON's shape (loading it again gives an equal one)."""
        return {
            "schema": self.schema,
            "standards": [s.as_json() for s in self.standards],
            "methods": [m.as_json() for m in self.methods],
        }


# ------------------------------------------------------------------------------ loading


def load_catalogue(path: str | Path) -> Catalogue:
    """Read and validate a catalogue JSON file.

    Raises InputError naming the file (and line for JSON syntax errors), or the method code
    and field that break the schema.
    """
    file = Path(path)
    try:
        text = file.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"{file}: cannot read the catalogue ({exc.strerror})") from exc
    except UnicodeDecodeError as exc:
        raise InputError(f"{file}: not UTF-8 text (byte {exc.start})") from exc
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(
            f"{file}: line {exc.lineno}, column {exc.colno}: not valid JSON ({exc.msg})"
        ) from exc
    return parse_catalogue(data, source=str(file))


def parse_catalogue(data: object, source: str = "catalogue") -> Catalogue:
    """Validate an already-decoded catalogue document and return it as dataclasses."""
    top = _mapping(data, source)
    _exact_keys(top, ("schema", "standards", "methods"), source)
    schema = top["schema"]
    if schema != SCHEMA_VERSION or isinstance(schema, bool):
        raise InputError(f"{source}: field 'schema': expected {SCHEMA_VERSION}, got {schema!r}")
    standards = tuple(
        _standard(item, f"{source}: standards[{i}]")
        for i, item in enumerate(_list(top["standards"], f"{source}: field 'standards'"))
    )
    seen: set[str] = set()
    for i, standard in enumerate(standards):
        if standard.designation in seen:
            raise InputError(
                f"{source}: standards[{i}]: designation {standard.designation!r} appears twice"
            )
        seen.add(standard.designation)
    methods: list[CatalogueMethod] = []
    codes: set[str] = set()
    for i, item in enumerate(_list(top["methods"], f"{source}: field 'methods'")):
        method = _method(item, f"{source}: methods[{i}]", seen)
        if method.code in codes:
            raise InputError(f"{source}: methods[{i}] ({method.code}): code appears twice")
        codes.add(method.code)
        methods.append(method)
    return Catalogue(schema=SCHEMA_VERSION, standards=standards, methods=tuple(methods))


def _standard(item: object, where: str) -> Standard:
    body = _mapping(item, where)
    _exact_keys(body, _STANDARD_KEYS, where)
    designation = _text(body["designation"], f"{where}: field 'designation'", required=True)
    where = f"{where} ({designation})"
    status = _text(body["status"], f"{where}: field 'status'")
    _choice(status, STANDARD_STATUSES, f"{where}: field 'status'")
    return Standard(
        designation=designation,
        edition=_text(body["edition"], f"{where}: field 'edition'"),
        title=_text(body["title"], f"{where}: field 'title'", required=True),
        status=status,
        note=_text(body["note"], f"{where}: field 'note'"),
    )


def _method(item: object, where: str, designations: set[str]) -> CatalogueMethod:
    body = _mapping(item, where)
    code = body.get("code")
    if isinstance(code, str) and code.strip():
        where = f"{where} ({code})"
    _exact_keys(body, _METHOD_KEYS, where)
    code = _text(body["code"], f"{where}: field 'code'", required=True)
    standard = _text(body["standard"], f"{where}: field 'standard'", required=True)
    if standard not in designations:
        raise InputError(
            f"{where}: field 'standard': {standard!r} is not in the catalogue's standards"
        )
    if not code.startswith(standard + ":") or len(code) == len(standard) + 1:
        raise InputError(
            f"{where}: field 'code': expected '{standard}:<key>' (designation, colon, key)"
        )
    kind = _text(body["kind"], f"{where}: field 'kind'")
    _choice(kind, KINDS, f"{where}: field 'kind'")
    test_key = body["test_key"]
    if test_key is not None:
        test_key = _text(test_key, f"{where}: field 'test_key'")
        _choice(test_key, TEST_KEYS, f"{where}: field 'test_key'")
    group = _text(body["group"], f"{where}: field 'group'")
    _choice(group, GROUPS, f"{where}: field 'group'")
    destructive = body["destructive"]
    if not isinstance(destructive, bool):
        raise InputError(f"{where}: field 'destructive': expected true or false")
    hazards = _hazards(body["hazards"], f"{where}: field 'hazards'")
    parameters = _parameters(body["parameters"], where)
    acceptance = _acceptance(body["acceptance"], f"{where}: field 'acceptance'")
    return CatalogueMethod(
        code=code,
        standard=standard,
        clause=_text(body["clause"], f"{where}: field 'clause'"),
        name=_text(body["name"], f"{where}: field 'name'", required=True),
        kind=kind,
        test_key=test_key,
        group=group,
        destructive=destructive,
        hazards=hazards,
        parameters=parameters,
        acceptance=acceptance,
        note=_text(body["note"], f"{where}: field 'note'"),
    )


def _hazards(value: object, where: str) -> tuple[str, ...]:
    items = _list(value, where)
    result: list[str] = []
    for i, item in enumerate(items):
        hazard = _text(item, f"{where}[{i}]")
        _choice(hazard, HAZARDS, f"{where}[{i}]")
        if hazard in result:
            raise InputError(f"{where}[{i}]: {hazard!r} appears twice")
        result.append(hazard)
    return tuple(result)


def _parameters(value: object, where: str) -> tuple[Parameter, ...]:
    body = _mapping(value, f"{where}: field 'parameters'")
    return tuple(_parameter(name, item, where) for name, item in body.items())


def _parameter(name: str, item: object, where: str) -> Parameter:
    here = f"{where}: parameters.{name}"
    match = _PARAMETER_NAME.match(name)
    if match is None:
        raise InputError(
            f"{here}: bad parameter name (lowercase letters, digits and underscores, "
            "optionally after 'severity_NN.')"
        )
    body = _mapping(item, here)
    _exact_keys(body, _PARAMETER_KEYS, here)
    status = _text(body["status"], f"{here}: field 'status'")
    _choice(status, STATUSES, f"{here}: field 'status'")
    placeholder = body["placeholder"]
    if not isinstance(placeholder, bool):
        raise InputError(f"{here}: field 'placeholder': expected true or false")
    if placeholder and status != "from_memory":
        raise InputError(
            f"{here}: field 'placeholder': only a from_memory value can be a placeholder "
            f"(status is {status!r})"
        )
    unit = _text(body["unit"], f"{here}: field 'unit'")
    note = _text(body["note"], f"{here}: field 'note'")
    raw = body["value"]
    if isinstance(raw, bool) or not (raw is None or isinstance(raw, int | float | str)):
        raise InputError(f"{here}: field 'value': expected a number, text or null")
    if isinstance(raw, float) and not math.isfinite(raw):
        raise InputError(f"{here}: field 'value': not a finite number")
    if status == "to_be_entered" and raw is not None:
        raise InputError(f"{here}: field 'value': a to_be_entered value must be null")
    if raw is None and not note.strip():
        raise InputError(f"{here}: field 'note': a null value needs a note saying why")
    base = match.group("base")
    if base in TYPED_PARAMETERS:
        kind, typed_unit = TYPED_PARAMETERS[base]
        if unit != typed_unit:
            raise InputError(f"{here}: field 'unit': expected {typed_unit!r}, got {unit!r}")
        if raw is not None:
            if kind == "text" and not isinstance(raw, str):
                raise InputError(f"{here}: field 'value': expected text")
            if kind == "number" and not isinstance(raw, int | float):
                raise InputError(f"{here}: field 'value': expected a number")
            if kind == "integer" and not (
                isinstance(raw, int) or (isinstance(raw, float) and raw.is_integer())
            ):
                raise InputError(f"{here}: field 'value': expected a whole number")
    return Parameter(
        name=name, value=raw, unit=unit, status=status, placeholder=placeholder, note=note
    )


def _acceptance(value: object, where: str) -> Acceptance:
    body = _mapping(value, where)
    _exact_keys(body, _ACCEPTANCE_KEYS, where)
    status = _text(body["status"], f"{where}: field 'status'")
    _choice(status, STATUSES, f"{where}: field 'status'")
    return Acceptance(
        text=_text(body["text"], f"{where}: field 'text'", required=True),
        rule=_freeze(validate_rule(body["rule"], f"{where}: field 'rule'")),
        status=status,
    )


def validate_rule(value: object, where: str = "rule") -> dict[str, object]:
    """Check an acceptance rule against the shared vocabulary and return a plain copy.

    The vocabulary: no_coating_removed; no_listed_defects with ``defects``;
    crosshatch_max_class with ``iso2409_class`` 0-5; recorded_only; engineer_judgement with
    ``text``; spectral_limits with ``limits`` (a list). Raises InputError naming ``where``.
    """
    body = _mapping(value, where)
    name = body.get("rule")
    if not isinstance(name, str):
        raise InputError(f"{where}: missing 'rule' name")
    _choice(name, ACCEPTANCE_RULES, f"{where}: 'rule'")
    extra: dict[str, tuple[str, ...]] = {
        "no_coating_removed": (),
        "no_listed_defects": ("defects",),
        "crosshatch_max_class": ("iso2409_class",),
        "recorded_only": (),
        "engineer_judgement": ("text",),
        "spectral_limits": ("limits",),
    }
    _exact_keys(body, ("rule", *extra[name]), f"{where} ({name})")
    if name == "no_listed_defects":
        defects = _list(body["defects"], f"{where}: 'defects'")
        if not defects:
            raise InputError(f"{where}: 'defects' must name at least one defect")
        seen: list[str] = []
        for i, item in enumerate(defects):
            defect = _text(item, f"{where}: 'defects'[{i}]")
            _choice(defect, DEFECTS, f"{where}: 'defects'[{i}]")
            if defect in seen:
                raise InputError(f"{where}: 'defects'[{i}]: {defect!r} appears twice")
            seen.append(defect)
    elif name == "crosshatch_max_class":
        cls = body["iso2409_class"]
        if isinstance(cls, bool) or not isinstance(cls, int) or not 0 <= cls <= 5:
            raise InputError(f"{where}: 'iso2409_class': expected a whole number 0-5, got {cls!r}")
    elif name == "engineer_judgement":
        _text(body["text"], f"{where}: 'text'", required=True)
    elif name == "spectral_limits":
        _list(body["limits"], f"{where}: 'limits'")
    return dict(_plain(body))


# ------------------------------------------------------------------------------ helpers


def _mapping(value: object, where: str) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        raise InputError(f"{where}: expected an object, got {type(value).__name__}")
    for key in value:
        if not isinstance(key, str):
            raise InputError(f"{where}: key {key!r} is not text")
    return value


def _list(value: object, where: str) -> Sequence[Any]:
    if not isinstance(value, list | tuple):
        raise InputError(f"{where}: expected a list, got {type(value).__name__}")
    return value


def _text(value: object, where: str, *, required: bool = False) -> str:
    if not isinstance(value, str):
        raise InputError(f"{where}: expected text, got {type(value).__name__}")
    if required and not value.strip():
        raise InputError(f"{where}: must not be empty")
    return value


def _choice(value: str, allowed: Sequence[str], where: str) -> None:
    if value not in allowed:
        shown = ", ".join(repr(a) for a in allowed)
        raise InputError(f"{where}: {value!r} is not one of {shown}")


def _exact_keys(body: Mapping[str, Any], keys: Sequence[str], where: str) -> None:
    missing = [k for k in keys if k not in body]
    if missing:
        raise InputError(f"{where}: missing field(s) {', '.join(repr(k) for k in missing)}")
    unknown = [k for k in body if k not in keys]
    if unknown:
        raise InputError(f"{where}: unknown field(s) {', '.join(repr(k) for k in unknown)}")


def _freeze(value: Any) -> Any:
    if isinstance(value, Mapping):
        return MappingProxyType({k: _freeze(v) for k, v in value.items()})
    if isinstance(value, list | tuple):
        return tuple(_freeze(v) for v in value)
    return value


def _plain(value: Any) -> Any:
    if isinstance(value, Mapping):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return value

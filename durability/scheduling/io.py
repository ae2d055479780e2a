"""The JSON workload format of the `schedule` durability command, and its JSON answer.

Times are the lab's local time without an offset ("2026-03-02T08:00"); weekdays
are numbered Monday = 0. See fixtures/workloads/README.md for a worked example.
"""

from __future__ import annotations

import json
from datetime import date, datetime, time
from pathlib import Path
from typing import Any

from durability.errors import InputError
from durability.scheduling.model import (
    BlockedPeriod,
    CalendarKind,
    FixedPlacement,
    LabHours,
    Lot,
    Resource,
    Schedule,
    Step,
    Workload,
)


def read_workload(path: str | Path) -> Workload:
    """Read a workload JSON file; InputError names the line or field at fault."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"{path}: cannot read the file ({exc.strerror})") from exc
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"{path}, line {exc.lineno} column {exc.colno}: {exc.msg}") from exc
    return load_workload(data)


def _field(obj: dict[str, Any], name: str, where: str, required: bool = True) -> Any:
    if name not in obj:
        if required:
            raise InputError(f"{where}: missing field {name!r}")
        return None
    return obj[name]


def _object(value: Any, where: str) -> dict[str, Any]:
    if not isinstance(value, dict):
        raise InputError(f"{where}: expected an object")
    return value


def _list(value: Any, where: str) -> list[Any]:
    if not isinstance(value, list):
        raise InputError(f"{where}: expected a list")
    return value


def _text(value: Any, where: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{where}: expected a non-empty string")
    return value


def _number(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{where}: expected a number, got {value!r}")
    if value != value or value in (float("inf"), float("-inf")):
        raise InputError(f"{where}: expected a finite number")
    if value < 0:
        raise InputError(f"{where}: must be zero or more, got {value}")
    return float(value)


def _integer(value: Any, where: str) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError(f"{where}: expected a whole number, got {value!r}")
    return value


def _datetime(value: Any, where: str) -> datetime:
    if not isinstance(value, str):
        raise InputError(f"{where}: expected a date and time like '2026-03-02T08:00'")
    try:
        moment = datetime.fromisoformat(value)
    except ValueError as exc:
        raise InputError(
            f"{where}: {value!r} is not a date and time like '2026-03-02T08:00'"
        ) from exc
    if moment.tzinfo is not None:
        raise InputError(f"{where}: {value!r} carries an offset; give the lab's local time")
    return moment


def _date(value: Any, where: str) -> date:
    if not isinstance(value, str):
        raise InputError(f"{where}: expected a date like '2026-04-03'")
    try:
        return date.fromisoformat(value)
    except ValueError as exc:
        raise InputError(f"{where}: {value!r} is not a date like '2026-04-03'") from exc


def _time(value: Any, where: str) -> time:
    if not isinstance(value, str):
        raise InputError(f"{where}: expected a time like '08:00'")
    try:
        moment = time.fromisoformat(value)
    except ValueError as exc:
        raise InputError(f"{where}: {value!r} is not a time like '08:00'") from exc
    if moment.tzinfo is not None:
        raise InputError(f"{where}: {value!r} carries an offset; give the lab's local time")
    return moment


def load_workload(data: Any) -> Workload:
    """Build a Workload from parsed JSON; InputError names the field at fault."""
    root = _object(data, "workload")
    start = _datetime(_field(root, "start", "workload"), "start")
    lab = _object(_field(root, "lab_hours", "workload"), "lab_hours")
    days = []
    for i, day in enumerate(_list(_field(lab, "days", "lab_hours"), "lab_hours.days")):
        day = _integer(day, f"lab_hours.days[{i}]")
        if not 0 <= day <= 6:
            raise InputError(f"lab_hours.days[{i}]: {day} is not a weekday number (Monday = 0)")
        days.append(day)
    lab_hours = LabHours(
        days=frozenset(days),
        opens=_time(_field(lab, "from", "lab_hours"), "lab_hours.from"),
        closes=_time(_field(lab, "to", "lab_hours"), "lab_hours.to"),
    )
    holidays = frozenset(
        _date(value, f"holidays[{i}]")
        for i, value in enumerate(_list(root.get("holidays", []), "holidays"))
    )

    resources = []
    for i, item in enumerate(_list(_field(root, "resources", "workload"), "resources")):
        where = f"resources[{i}]"
        obj = _object(item, where)
        rid = _text(_field(obj, "id", where), f"{where}.id")
        where = f"resources[{i}] (id {rid!r})"
        kinds = frozenset(
            _text(k, f"{where}.kinds[{j}]")
            for j, k in enumerate(_list(_field(obj, "kinds", where), f"{where}.kinds"))
        )
        calendar_name = _field(obj, "calendar", where)
        try:
            calendar = CalendarKind(calendar_name)
        except ValueError as exc:
            raise InputError(
                f"{where}.calendar: {calendar_name!r} is neither 'always' nor 'lab_hours'"
            ) from exc
        blocked = []
        for j, period in enumerate(_list(obj.get("blocked", []), f"{where}.blocked")):
            p_where = f"{where}.blocked[{j}]"
            period = _object(period, p_where)
            reason = period.get("reason", "")
            if not isinstance(reason, str):
                raise InputError(f"{p_where}.reason: expected a string")
            blocked.append(
                BlockedPeriod(
                    start=_datetime(_field(period, "from", p_where), f"{p_where}.from"),
                    end=_datetime(_field(period, "to", p_where), f"{p_where}.to"),
                    reason=reason,
                )
            )
        resources.append(
            Resource(
                id=rid,
                kinds=kinds,
                capacity=_integer(_field(obj, "capacity", where), f"{where}.capacity"),
                calendar=calendar,
                blocked=tuple(blocked),
            )
        )

    lots = []
    for i, item in enumerate(_list(root.get("lots", []), "lots")):
        where = f"lots[{i}]"
        obj = _object(item, where)
        lid = _text(_field(obj, "id", where), f"{where}.id")
        where = f"lots[{i}] (id {lid!r})"
        due = obj.get("due")
        lots.append(
            Lot(
                id=lid,
                due=None if due is None else _datetime(due, f"{where}.due"),
                priority=_integer(obj.get("priority", 0), f"{where}.priority"),
            )
        )

    steps = []
    for i, item in enumerate(_list(_field(root, "steps", "workload"), "steps")):
        where = f"steps[{i}]"
        obj = _object(item, where)
        sid = _text(_field(obj, "id", where), f"{where}.id")
        where = f"steps[{i}] (id {sid!r})"
        condition = obj.get("condition", "")
        if condition is None:
            condition = ""
        if not isinstance(condition, str):
            raise InputError(f"{where}.condition: expected a string")
        after = tuple(
            _text(a, f"{where}.after[{j}]")
            for j, a in enumerate(_list(obj.get("after", []), f"{where}.after"))
        )
        allowed = tuple(
            _text(r, f"{where}.resources[{j}]")
            for j, r in enumerate(_list(obj.get("resources", []), f"{where}.resources"))
        )
        fixed = None
        if obj.get("fixed") is not None:
            f_obj = _object(obj["fixed"], f"{where}.fixed")
            fixed = FixedPlacement(
                resource=_text(
                    _field(f_obj, "resource", f"{where}.fixed"), f"{where}.fixed.resource"
                ),
                start=_datetime(_field(f_obj, "start", f"{where}.fixed"), f"{where}.fixed.start"),
            )
        steps.append(
            Step(
                id=sid,
                piece=_text(_field(obj, "piece", where), f"{where}.piece"),
                lot=_text(_field(obj, "lot", where), f"{where}.lot"),
                kind=_text(_field(obj, "kind", where), f"{where}.kind"),
                hours=_number(_field(obj, "hours", where), f"{where}.hours"),
                condition=condition,
                after=after,
                wait_hours=_number(obj.get("wait_hours", 0), f"{where}.wait_hours"),
                fixed=fixed,
                resources=allowed,
            )
        )
    return Workload(
        start=start,
        lab_hours=lab_hours,
        resources=tuple(resources),
        steps=tuple(steps),
        lots=tuple(lots),
        holidays=holidays,
    )


def _stamp(moment: datetime | None) -> str | None:
    return None if moment is None else moment.isoformat(timespec="minutes")


def schedule_to_json(result: Schedule) -> dict[str, Any]:
    """The command's JSON answer for a computed schedule."""
    return {
        "makespan_hours": round(result.makespan_hours, 4),
        "lower_bound_hours": round(result.lower_bound_hours, 4),
        "ratio": round(result.ratio, 4) if result.ratio != float("inf") else None,
        "lower_bound_binding": result.lower_bound.binding,
        "lower_bound_parts": {k: round(v, 4) for k, v in result.lower_bound.parts.items()},
        "assignments": [
            {
                "step": a.step,
                "resource": a.resource,
                "start": _stamp(a.start),
                "end": _stamp(a.end),
                "chamber_run": a.chamber_run,
                "fixed": a.fixed,
            }
            for a in result.assignments
        ],
        "late": [
            {
                "lot": lot.lot,
                "promised": _stamp(lot.promised),
                "due": _stamp(lot.due),
                "late_hours": round(lot.late_hours, 4),
                "reason": lot.reason,
            }
            for lot in result.late
        ],
        "promised": [
            {
                "lot": lot.lot,
                "promised": _stamp(lot.promised),
                "due": _stamp(lot.due),
                "priority": lot.priority,
                "late": lot.late,
            }
            for lot in result.lots
        ],
        "solver": result.solver,
        "passes": result.passes,
        "convention": result.convention,
    }

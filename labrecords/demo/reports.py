"""Demo additions for reports: reviews, issued reports, one amendment and one re-issue,
made through the real services on the injected clock.

Call after the demo lab is built and its lots' results (and chamber logs) are recorded::

    from labrecords.demo import build, reports
    lab = build.build()
    ...                                  # bench results, evidence
    reports.issue_demo_reports(lab)

Lots whose results are complete are reviewed a couple of working hours after their last
record and issued an hour later, oldest first. Then one issued report gets an amendment and
another a re-issue, each after a real correction made at the bench (an inspection's
magnification entered wrongly), a new review and the password again.

Who reviews: the demo reviewer when the rule allows (see labrecords.services.reviews);
recording needs the method's authorisation list, so those lists are never empty, and the
authorisation services list only people with a recording role. The demo therefore adds an
invented second reviewer who is also an engineer, authorised for the methods by the quality
manager, who reviews when the demo reviewer may not (SECOND_REVIEWER, a demo login).
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field

from django.core.exceptions import ValidationError
from django.utils import timezone

from durability.models import Method
from labrecords import clock
from labrecords.demo import scenario
from labrecords.models import ExposureCheck, Lot, Report, StepResult
from labrecords.roles import Role
from labrecords.selectors_reports import LotResults, lot_results
from labrecords.services import authorisations, bench
from labrecords.services import customers as customer_services
from labrecords.services import reports as report_services
from labrecords.services import reviews as review_services

# user name, full name, password: invented, printed with the other demo logins by the lead's
# command when it lists them.
SECOND_REVIEWER = ("rhea", "Rhea Quillfeather", "demo-rhea-reviews")
MAX_REPORTS = 6
REVIEW_AFTER = datetime.timedelta(hours=2)
ISSUE_AFTER = datetime.timedelta(hours=1)


@dataclass
class DemoReports:
    """What the demo issued, and which lots it left alone and why."""

    issued: list[str] = field(default_factory=list)
    amendment: str | None = None
    reissue: str | None = None
    skipped: dict[str, str] = field(default_factory=dict)


def _password(username: str) -> str:
    passwords = {user: password for user, _, _, password in scenario.STAFF}
    passwords[SECOND_REVIEWER[0]] = SECOND_REVIEWER[2]
    return passwords[username]


def _working(moment: datetime.datetime) -> datetime.datetime:
    """The moment, moved to 09:00 of the next weekday when it falls outside 08-17 h."""
    local = timezone.localtime(moment)
    if 8 <= local.hour < 17 and local.weekday() < 5:
        return moment
    day = local.date() + datetime.timedelta(days=0 if local.hour < 8 else 1)
    while day.weekday() >= 5:
        day += datetime.timedelta(days=1)
    start = datetime.datetime.combine(day, datetime.time(9, 0))
    return timezone.make_aware(start, timezone.get_current_timezone())


def _last_activity(lot: Lot, state: LotResults) -> datetime.datetime:
    moments = [row.result.recorded_at for row in state.planned if row.result is not None]
    runs = [
        row.result.chamber_run_id
        for row in state.planned
        if row.result is not None and row.result.chamber_run_id
    ]
    moments += list(
        ExposureCheck.objects.filter(run_id__in=runs).values_list("checked_at", flat=True)
    )
    moments += list(lot.evidence.values_list("uploaded_at", flat=True))
    return max(moments)


def _second_reviewer(lab):
    if "second_reviewer" not in lab.staff:
        username, full_name, password = SECOND_REVIEWER
        lab.staff["second_reviewer"] = customer_services.user_create(
            actor=lab.staff[Role.ADMINISTRATOR],
            username=username,
            password=password,
            full_name=full_name,
            roles=[Role.REVIEWER, Role.ENGINEER],
        )
    return lab.staff["second_reviewer"]


def _reviewer_for(lab, state: LotResults):
    """The demo reviewer if the review rule allows; else the second reviewer, authorised by
    the quality manager for the lot's methods first."""
    reviewer = lab.staff[Role.REVIEWER]
    if not review_services.reviewer_problems(reviewer, state):
        return reviewer
    second = _second_reviewer(lab)
    methods = Method.objects.filter(
        pk__in={row.step.method_version.method_id for row in state.planned}
    )
    for method in methods:
        if not authorisations.is_authorised(second, method):
            authorisations.method_authorisation_grant(
                actor=lab.staff[Role.QUALITY_MANAGER],
                user=second,
                method=method,
                reason="authorised to review this method's results (demo)",
            )
    return None if review_services.reviewer_problems(second, state) else second


def _review_and_issue(
    lab,
    lot: Lot,
    at: datetime.datetime,
    correct: Report | None = None,
    kind: str = "",
    change: str = "",
) -> Report | None:
    state = lot_results(lot)
    with clock.frozen_at(at):
        reviewer = _reviewer_for(lab, state)
    if reviewer is None:
        return None
    password = _password(reviewer.get_username())
    with clock.frozen_at(at):
        review_services.review_sign(
            actor=reviewer,
            lot=lot,
            password=password,
            username=reviewer.get_username(),
            comment="checked against the bench records",
        )
    with clock.frozen_at(at + ISSUE_AFTER):
        if correct is None:
            return report_services.report_issue(
                actor=reviewer, lot=lot, password=password, first_in_session=False
            )
        service = (
            report_services.report_amend if kind == "amendment" else report_services.report_reissue
        )
        return service(
            actor=reviewer,
            report=correct,
            change_description=change,
            password=password,
            first_in_session=False,
        )


def _inspection_correction(report: Report, at: datetime.datetime) -> tuple[StepResult, str]:
    """Correct the last inspection-only result of the report's lot at the bench: the
    magnification was entered wrongly (a 10x loupe was used). The verdict does not change."""
    state = lot_results(report.lot)
    rows = [
        row
        for row in state.planned
        if row.result is not None
        and bench.entry_sections(row.step) == ("inspection",)
        and isinstance(row.result.values.get("inspection"), dict)
    ]
    if not rows:
        raise ValidationError("no inspection-only result to correct")
    row = rows[-1]
    entry = row.result.values["inspection"]
    values = bench.ResultValues(
        inspection=bench.InspectionEntry(
            no_defects=bool(entry.get("no_defects")),
            defects=tuple(entry.get("defects") or ()),
            lighting=entry.get("lighting", ""),
            background=entry.get("background", ""),
            magnification="10x loupe",
        )
    )
    reason = (
        f"the magnification was entered as {entry.get('magnification') or 'blank'!r}; "
        "the inspection was made with a 10x loupe"
    )
    with clock.frozen_at(at):
        corrected = bench.step_result_correct(
            actor=row.result.recorded_by,
            revision=row.result,
            reason=reason,
            values=values,
            instruments=[link.instrument for link in row.result.instrument_links.all()],
            consumables=[link.consumable for link in row.result.consumable_links.all()],
        )
    return corrected, (
        f"Inspection of piece {row.piece.ident} at step {row.step.order} "
        f"({row.step.name}): {reason}. The verdict is unchanged."
    )


def issue_demo_reports(lab, *, now: datetime.datetime | None = None) -> DemoReports:
    """Review and issue reports for the demo's finished lots; amend one, re-issue another."""
    now = now or timezone.now()
    done = DemoReports()
    ready: list[tuple[datetime.datetime, Lot]] = []
    for lot in lab.lots:
        lot.refresh_from_db()
        state = lot_results(lot)
        problems = state.problems()
        if problems:
            done.skipped[lot.number] = f"results not complete: missing {problems[0]}"
            continue
        ready.append((_last_activity(lot, state), lot))
    issued: list[Report] = []
    for last, lot in sorted(ready, key=lambda pair: pair[0])[:MAX_REPORTS]:
        at = _working(last + REVIEW_AFTER)
        if at + ISSUE_AFTER > now:
            done.skipped[lot.number] = "results recorded too recently to be reviewed yet"
            continue
        _review, missing = report_services.report_missing_items(lot)
        missing = [item for item in missing if item != "a signed review of the results"]
        if missing:
            done.skipped[lot.number] = f"not ready for a report: missing {missing[0]}"
            continue
        report = _review_and_issue(lab, lot, at)
        if report is None:
            done.skipped[lot.number] = "no reviewer may review these results"
            continue
        issued.append(report)
        done.issued.append(report.number)
    for report, kind in zip(issued, ("amendment", "reissue"), strict=False):
        at = _working(report.issued_at + datetime.timedelta(days=1))
        later = _working(at + REVIEW_AFTER)
        if later + ISSUE_AFTER > now:
            continue
        _corrected, change = _inspection_correction(report, at)
        if kind == "reissue":
            change = f"Complete re-issue. {change}"
        made = _review_and_issue(lab, report.lot, later, correct=report, kind=kind, change=change)
        if made is not None:
            setattr(done, kind, made.number)
    return done

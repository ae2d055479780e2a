"""What a report prints, as plain frozen dataclasses (strings, numbers, dates, tuples).

`labrecords.selectors_reports.report_content` fills them from the database; the PDF layout
and the HTML preview read them. Nothing here queries anything.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field

from labrecords.models import ReportKind


@dataclass(frozen=True)
class SignatureBlock:
    printed_name: str
    role: str
    meaning: str
    meaning_label: str
    signed_at: datetime.datetime  # aware, in the lab's time zone
    time_zone: str


@dataclass(frozen=True)
class ReportHeader:
    """The document's identity. A preview has `draft` set and no number or code."""

    number: str
    kind: str
    title: str
    issued_at: datetime.datetime | None
    verification_code: str = ""
    verify_url: str = ""
    amends_number: str = ""
    amends_issued_at: datetime.datetime | None = None
    replaces_number: str = ""
    replaces_issued_at: datetime.datetime | None = None
    change_description: str = ""
    draft: bool = False

    @property
    def end_marker(self) -> str:
        if self.draft:
            return "End of draft (not a report: not reviewed, not authorised, not issued)"
        what = "amendment" if self.kind == ReportKind.AMENDMENT else "report"
        return f"End of {what} {self.number}"

    @property
    def page_label(self) -> str:
        return "DRAFT, not issued" if self.draft else f"Report {self.number}"


@dataclass(frozen=True)
class LabBlock:
    name: str
    address: str
    time_zone: str
    accreditation: str = ""


@dataclass(frozen=True)
class CustomerBlock:
    name: str
    contact_name: str
    contact_email: str
    address: str
    order_number: str
    customer_order_number: str


@dataclass(frozen=True)
class PieceLine:
    ident: str
    glass: str
    position: str
    represents: str
    condition_on_receipt: str


@dataclass(frozen=True)
class ItemsBlock:
    lot_number: str
    coater: str
    design: str
    design_detail: str
    glass: str
    parts: str
    quantity: int
    spec: str
    callouts: str
    pieces: tuple[PieceLine, ...]


@dataclass(frozen=True)
class DatesBlock:
    coating_run: datetime.date
    received: datetime.date | None
    tested_from: datetime.date | None
    tested_to: datetime.date | None
    issued: datetime.datetime | None


@dataclass(frozen=True)
class MethodLine:
    code: str
    name: str
    standard: str
    edition: str
    clause: str
    version: int
    parameters: tuple[str, ...]
    deviations: tuple[str, ...]


@dataclass(frozen=True)
class ResultLine:
    piece: str
    step: str
    method: str
    values: tuple[str, ...]
    verdict: str
    verdict_label: str
    reason: str
    clause: str
    uncertainty: str
    observed: datetime.datetime
    revision: int
    external_marker: str = ""
    counts: bool = True
    note: str = ""


@dataclass(frozen=True)
class ExternalLine:
    marker: str
    provider: str
    report_ref: str
    accreditation: str
    covers: tuple[str, ...]
    evidence: tuple[str, ...]


@dataclass(frozen=True)
class ExposureLine:
    run: str
    chamber: str
    condition: str
    loaded: datetime.datetime
    unloaded: datetime.datetime | None
    pieces: tuple[str, ...]
    in_tolerance_hours: float | None
    required_hours: float | None
    counts: bool | None
    convention: str
    checked: bool


@dataclass(frozen=True)
class LimitLine:
    start_nm: float
    end_nm: float
    value: float
    label: str


@dataclass(frozen=True)
class SpectrumPlotData:
    """Before and after curves of one piece, in one unit, with the spec's limits."""

    title: str
    quantity: str
    unit: str
    before: tuple[tuple[float, float], ...]
    after: tuple[tuple[float, float], ...]
    before_label: str
    after_label: str
    limits: tuple[LimitLine, ...]
    notes: tuple[str, ...]


@dataclass(frozen=True)
class ChangeLine:
    """One result that differs from what the amended report covered."""

    piece: str
    step: str
    before: str
    after: str
    why: str


@dataclass(frozen=True)
class ConformityBlock:
    conforms: bool
    statement: str
    covers: str
    specification: str
    decision_rule: str
    decision_rule_text: str
    failing: tuple[str, ...]


@dataclass(frozen=True)
class ReportContent:
    header: ReportHeader
    lab: LabBlock
    customer: CustomerBlock
    items: ItemsBlock
    dates: DatesBlock
    methods: tuple[MethodLine, ...]
    results: tuple[ResultLine, ...]
    externals: tuple[ExternalLine, ...]
    exposures: tuple[ExposureLine, ...]
    spectra: tuple[SpectrumPlotData, ...]
    conformity: ConformityBlock
    statements: tuple[str, ...]
    review_signature: SignatureBlock | None
    authorisation: SignatureBlock | None
    changes: tuple[ChangeLine, ...] = field(default=())
    # Each distinct convention the verdicts state (boundaries, comparisons), once.
    conventions: tuple[str, ...] = field(default=())

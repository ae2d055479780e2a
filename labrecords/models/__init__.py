from labrecords.models.audit import AuditEntry
from labrecords.models.chambers import (
    ChamberRun,
    ChamberRunPiece,
    Consumable,
    ConsumableCheck,
    ConsumableKind,
    ExposureCheck,
)
from labrecords.models.custody import CalendarFeedToken, CustodyEvent, PlaceKind
from labrecords.models.customers import Customer, CustomerUser
from labrecords.models.evidence import Evidence, EvidenceKind
from labrecords.models.lots import (
    Lot,
    LotStage,
    PieceStatus,
    StockMovement,
    WitnessPiece,
)
from labrecords.models.nonconformances import (
    Disposition,
    InstrumentDeviation,
    Nonconformance,
    NonconformanceKind,
)
from labrecords.models.observations import InspectionPoint, Observation
from labrecords.models.orders import (
    CoatingSpec,
    DecisionRule,
    Order,
    Polarization,
    Quantity,
    Statistic,
)
from labrecords.models.plans import PlanSequence, PlanStatus, PlanStep, SequencePiece, TestPlan
from labrecords.models.reports import (
    Report,
    ReportKind,
    Review,
    ReviewedResult,
    Signature,
    SignatureMeaning,
)
from labrecords.models.results import (
    MethodAuthorisation,
    StepResult,
    StepResultConsumable,
    StepResultInstrument,
    Verdict,
)
from labrecords.models.revisions import ImmutableRecordError

__all__ = [
    "AuditEntry",
    "CalendarFeedToken",
    "ChamberRun",
    "ChamberRunPiece",
    "CoatingSpec",
    "Consumable",
    "ConsumableCheck",
    "ConsumableKind",
    "CustodyEvent",
    "Customer",
    "CustomerUser",
    "DecisionRule",
    "Disposition",
    "Evidence",
    "EvidenceKind",
    "ExposureCheck",
    "ImmutableRecordError",
    "InspectionPoint",
    "InstrumentDeviation",
    "Lot",
    "LotStage",
    "MethodAuthorisation",
    "Nonconformance",
    "NonconformanceKind",
    "Observation",
    "Order",
    "PieceStatus",
    "PlaceKind",
    "PlanSequence",
    "PlanStatus",
    "PlanStep",
    "Polarization",
    "Quantity",
    "Report",
    "ReportKind",
    "Review",
    "ReviewedResult",
    "SequencePiece",
    "Signature",
    "SignatureMeaning",
    "Statistic",
    "StepResult",
    "StepResultConsumable",
    "StepResultInstrument",
    "StockMovement",
    "TestPlan",
    "Verdict",
    "WitnessPiece",
]

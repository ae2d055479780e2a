from labrecords.models.audit import AuditEntry
from labrecords.models.customers import Customer, CustomerUser
from labrecords.models.lots import (
    Lot,
    LotStage,
    PieceStatus,
    StockMovement,
    WitnessPiece,
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
from labrecords.models.revisions import ImmutableRecordError

__all__ = [
    "AuditEntry",
    "CoatingSpec",
    "Customer",
    "CustomerUser",
    "DecisionRule",
    "ImmutableRecordError",
    "InspectionPoint",
    "Lot",
    "LotStage",
    "Observation",
    "Order",
    "PieceStatus",
    "Polarization",
    "Quantity",
    "Statistic",
    "StockMovement",
    "WitnessPiece",
]

from durability.models.methods import (
    Method,
    MethodKind,
    MethodVersion,
    ParameterStatus,
    Standard,
    StandardStatus,
)
from durability.models.reference import (
    Coater,
    CoatingDesign,
    CoatingType,
    Glass,
    Instrument,
    WitnessStock,
)

__all__ = [
    "Coater",
    "CoatingDesign",
    "CoatingType",
    "Glass",
    "Instrument",
    "Method",
    "MethodKind",
    "MethodVersion",
    "ParameterStatus",
    "Standard",
    "StandardStatus",
    "WitnessStock",
]

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
    LabProfile,
    WitnessStock,
)
from durability.models.resources import (
    CalendarKind,
    LabHoliday,
    LabHours,
    Resource,
    ResourceBlock,
)

__all__ = [
    "CalendarKind",
    "LabHoliday",
    "LabHours",
    "Resource",
    "ResourceBlock",
    "Coater",
    "CoatingDesign",
    "CoatingType",
    "Glass",
    "Instrument",
    "LabProfile",
    "Method",
    "MethodKind",
    "MethodVersion",
    "ParameterStatus",
    "Standard",
    "StandardStatus",
    "WitnessStock",
]

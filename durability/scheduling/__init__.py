"""The scheduler: steps of witness pieces on chambers and bench stations.

`schedule(workload)` returns a `Schedule`; `read_workload`/`load_workload` read the
JSON workload format; `lower_bound` gives the makespan bound on its own.
"""

from durability.scheduling.io import load_workload, read_workload, schedule_to_json
from durability.scheduling.model import (
    METHOD_KINDS,
    Assignment,
    BlockedPeriod,
    CalendarKind,
    FixedPlacement,
    LabHours,
    Lot,
    LotPromise,
    LowerBound,
    Resource,
    Schedule,
    Step,
    Workload,
)
from durability.scheduling.solver import CONVENTION, SolverOptions, schedule

__all__ = [
    "CONVENTION",
    "METHOD_KINDS",
    "Assignment",
    "BlockedPeriod",
    "CalendarKind",
    "FixedPlacement",
    "LabHours",
    "Lot",
    "LotPromise",
    "LowerBound",
    "Resource",
    "Schedule",
    "SolverOptions",
    "Step",
    "Workload",
    "load_workload",
    "read_workload",
    "schedule",
    "schedule_to_json",
]

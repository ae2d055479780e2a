"""`python -m durability schedule WORKLOAD.json`: plan every step on the lab's resources."""

from __future__ import annotations

import argparse
from typing import Any

from durability.scheduling.io import read_workload, schedule_to_json
from durability.scheduling.solver import SolverOptions, schedule

HELP = "schedule a workload's steps on chambers and bench stations (JSON in, JSON out)"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """The workload file and the search's time budget."""
    parser.add_argument("workload", help="workload JSON file (see fixtures/workloads/README.md)")
    parser.add_argument(
        "--time-budget",
        type=float,
        default=SolverOptions.time_budget_s,
        metavar="SECONDS",
        help="wall time the improvement passes may use (default %(default)s s)",
    )


def run(args: argparse.Namespace) -> dict[str, Any]:
    """Read the workload, schedule it and return the JSON answer."""
    workload = read_workload(args.workload)
    options = SolverOptions(time_budget_s=max(args.time_budget, 0.0))
    return schedule_to_json(schedule(workload, options))

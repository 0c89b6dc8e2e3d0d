"""The front end as a circuit: netlist, solver, the three scenarios and check 10.

Pure: numpy and scipy only (no Flask, SQLAlchemy or pint).
"""

from .check import (CHECK, CONSISTENCY, SOLVE_ERRORS, Conditions, PathReport, analyse,
                    cache_clear, consistency_finding, drawing_marks, netlist_resistance,
                    protection_path_findings, protection_path_report, worst_by_element)
from .cache import SolveStore, solve_key, using_store
from .limits import ElementStress
from .netlist import Netlist, NetworkError, SolveFailed, build_netlist
from .scenarios import DischargeResult
from .solver import COLD, Solution, State, solve

__all__ = ["CHECK", "CONSISTENCY", "COLD", "Conditions", "DischargeResult", "Netlist",
           "NetworkError", "PathReport", "SOLVE_ERRORS", "SolveFailed", "Solution", "State",
           "ElementStress", "analyse",
           "build_netlist", "cache_clear", "consistency_finding", "drawing_marks",
           "netlist_resistance", "protection_path_findings", "protection_path_report",
           "solve", "worst_by_element", "SolveStore", "solve_key", "using_store"]

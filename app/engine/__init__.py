"""The review engine: pure functions from a design file to a report.

Imports nothing from the web app or the database.
"""

ENGINE_VERSION = "2.2.0"

from .design import DESIGN_FORMAT, Design, DesignError, parse_design  # noqa: E402
from .review import REPORT_FORMAT, evaluate, evaluate_many  # noqa: E402

__all__ = [
    "DESIGN_FORMAT",
    "ENGINE_VERSION",
    "REPORT_FORMAT",
    "Design",
    "DesignError",
    "evaluate",
    "evaluate_many",
    "parse_design",
]

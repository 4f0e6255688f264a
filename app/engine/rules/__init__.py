"""The review rules. One rule = one function with its id, title, the formula in its docstring
and the source of any constant, in a module per area (drive, gate, coil, switch, clamp, resistors, contacts). A rule that
makes sense for some switch kinds only names them (``rule(..., kinds=...)``).
``RULES`` is the registry the report and the docs both read; its order is the report's order.

A rule receives the evaluation context (every corner at once, as arrays) and returns a
Finding, or None when it does not apply to this design (e.g. no diode in the clamp).
"""

from .core import RULES, STATUS_ORDER, Context, Finding, Rule, Status, judge, note, rule

# Imported for their registrations; the import order is the report's order.
# isort: off
from . import drive  # noqa: F401
from . import gate  # noqa: F401
from . import coil  # noqa: F401
from . import switch  # noqa: F401
from . import clamp  # noqa: F401
from . import resistors  # noqa: F401
from . import contacts  # noqa: F401
# isort: on

__all__ = ["RULES", "STATUS_ORDER", "Context", "Finding", "Rule", "Status", "judge", "note", "rule"]

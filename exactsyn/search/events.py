"""Progress events of the gate search besides answered queries.

The ``progress`` callback of :func:`exactsyn.synthesise` and
:func:`exactsyn.search.loop.minimise_gates` receives every answered SAT query as a
:class:`~exactsyn.sat.query.Query` (unchanged), and a :class:`SearchEvent` for the other
phases, so a display can show what is going on while nothing is answered yet:

* ``table-start`` / ``table-done``: a distance table is being built and searched, or
  (``table-lookup`` instead of ``table-start``) a cached class table is loaded and looked
  up (``detail`` names it; ``table-done`` carries ``seconds``, and ``value`` the bound or
  optimum it gave, or ``None`` when the deadline stopped it);
* ``objective-start`` / ``optima-start``: the gate count is settled and the search for the
  objective (``detail``) or the listing of optimal circuits begins;
* ``table-bound``: the table excluded every k in ``[low, high]`` (no SAT call for them);
* ``table-scan``: a class table's meet in the middle has scanned ``low`` of the ``high``
  classes of one level (``detail`` names the table and the split);
* ``query-start``: the SAT query for ``k`` gates starts (``seconds`` is the time left, or
  ``None`` without a limit);
* ``fallback``: an upper-bound circuit of ``value`` gates was made (``detail`` says how);
* ``sub-library``: a circuit of ``value`` gates in a smaller library (``detail``) is an
  upper bound here.

Events are plain values: a display may ignore any phase it does not know.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.sat.query import Query

PHASES = (
    "table-start",
    "table-lookup",
    "table-done",
    "table-bound",
    "table-scan",
    "query-start",
    "fallback",
    "sub-library",
    "objective-start",
    "optima-start",
)


@dataclass(frozen=True)
class SearchEvent:
    """One step of the search that is not an answered query (phases in the module docstring)."""

    phase: str
    k: int | None = None
    low: int | None = None
    high: int | None = None
    value: int | None = None
    seconds: float | None = None
    detail: str = ""


SearchProgress = Callable[[Query | SearchEvent], None]
"""What ``progress`` callbacks receive: an answered :class:`Query` or a :class:`SearchEvent`."""


def emit(progress: SearchProgress | None, event: SearchEvent) -> None:
    """Hand ``event`` to ``progress`` when there is one."""
    if progress is not None:
        progress(event)

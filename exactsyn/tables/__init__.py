"""Class tables: every permutation of a few lines synthesised with a proven minimal gate count.

Method: breadth-first search over classes of functions (the ``n!`` line relabellings and
inversion), one canonical key per class, stored level by level up to a depth ``R``; a
function deeper than ``R`` is settled by meet in the middle against level ``R``
(Golubitsky, Falconer & Maslov, "Synthesis of the optimal 4-bit reversible circuits",
DAC 2010).  Libraries: ``mct``, ``nct`` and ``mixed``; line counts: those with compiled
kernels (:func:`~exactsyn.tables.keys.engine_lines`: 2, 3, 4 and 5), 4 by default.

API (importing this package is cheap; numba loads on first use)::

    from exactsyn import tables

    tables.resolve_cache_dir()            # $EXACTSYN_CACHE, else $XDG_CACHE_HOME/exactsyn, else ~/.cache/exactsyn
    tables.build("mct", progress=cb)      # idempotent; cb(description, done, total); returns a TableInfo
    tables.build("nct", lines=3)          # every 3-line function (depth: until a level is empty)
    tables.info()                         # [TableInfo] per library: present, depth, bytes, level counts, hash
    t = tables.load("mct")                # Tables (memory-mapped); ExactsynError naming the fix if absent
    ans = t.synthesise(perm)              # TableAnswer: optimal, gate_count, gates (application order),
                                          #   lower_bound, method, table_hash, seconds, detail
    t.distribution()                      # exact number of functions needing 0..R gates
    tables.verify_table("mct")            # independent re-check of the levels (numpy only)
    tables.check_claim("mct", perm, gate_count, gates)   # independent re-check of one answer
    tables.sample_distribution("mct", n, seed)           # sampled distribution of optima with intervals

Every function takes ``lines=`` (default 4).

Modules (one job each):

* :mod:`~exactsyn.tables.keys` — :class:`KeyLayout`: packed keys, composition, the ``2·n!``
  symmetries (plain Python, the reference), key arrays, and the registration of kernels;
* :mod:`~exactsyn.tables.kernel_api` — :class:`TableKernels`, what the drivers ask of a layout's kernels;
* :mod:`~exactsyn.tables.kernels` — numba kernels of single-word layouts (``n ≤ 4``):
  canonical form, lookup, BFS step, scan;
* :mod:`~exactsyn.tables.kernels5` — the same for 5 lines (160-bit keys, canonical form by
  line profile);
* :mod:`~exactsyn.tables.gate_keys` — a library's gates as keys (the only bridge to the gate model);
* :mod:`~exactsyn.tables.levels` — breadth-first search over classes, level files;
* :mod:`~exactsyn.tables.storage` — cache directory, layout, manifest, hashes, atomic install;
* :mod:`~exactsyn.tables.manage` — :func:`build`, :func:`info`, :func:`remove`;
* :mod:`~exactsyn.tables.engine` — :func:`load`, lookup and meet in the middle;
* :mod:`~exactsyn.tables.verify` with :mod:`~exactsyn.tables.verify_keys` and
  :mod:`~exactsyn.tables.verify_keys5` — the independent checker (imports no kernel or key
  code of the builder);
* :mod:`~exactsyn.tables.sample` — sampled distribution of optima;
* :mod:`~exactsyn.tables.hardest` — families of functions fixed by a symmetry, where large optima are.

What a proof from the tables trusts: the table's levels are exact (re-checkable with
:func:`verify_table`, whose closure test needs no trust in the builder), the content hash
names the table, and the claim for one function is re-run by :func:`check_claim`.

Imports: the base modules and :mod:`exactsyn.core` (gates become keys in
:mod:`~exactsyn.tables.gate_keys`); :mod:`exactsyn.sat`, :mod:`exactsyn.optimise`,
:mod:`exactsyn.search` and :mod:`exactsyn.proof` build on it.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from exactsyn.tables.storage import resolve_cache_dir

if TYPE_CHECKING:  # pragma: no cover
    from exactsyn.tables.engine import TableAnswer, Tables, load
    from exactsyn.tables.manage import TableInfo, build, info, remove
    from exactsyn.tables.sample import sample_distribution
    from exactsyn.tables.verify import check_claim, verify_table

__all__ = [
    "TableAnswer",
    "TableInfo",
    "Tables",
    "build",
    "check_claim",
    "info",
    "load",
    "remove",
    "resolve_cache_dir",
    "sample_distribution",
    "verify_table",
]

_LAZY = {
    "TableAnswer": "engine",
    "Tables": "engine",
    "load": "engine",
    "TableInfo": "manage",
    "build": "manage",
    "info": "manage",
    "remove": "manage",
    "sample_distribution": "sample",
    "check_claim": "verify",
    "verify_table": "verify",
}


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(name)
    import importlib

    return getattr(importlib.import_module(f"exactsyn.tables.{module}"), name)

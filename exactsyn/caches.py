"""Every process-wide cache of the package, behind one decorator, with one :func:`clear`.

Caches hold values that are pure functions of their (hashable) arguments: libraries,
gate tables, commuting pairs, forbidden-window tables, distance tables, Clifford+T
decompositions.  :func:`memo` is :func:`functools.lru_cache` plus registration, so
:func:`clear` can empty them all (tests use it to measure cold runs and to free memory)
and :func:`info` can report their sizes.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any, TypeVar

F = TypeVar("F", bound=Callable[..., Any])

_REGISTRY: dict[str, Any] = {}


def memo(maxsize: int | None = 128) -> Callable[[F], F]:
    """Memoise a pure function (``functools.lru_cache(maxsize)``) and register it for :func:`clear`."""

    def wrap(fn: F) -> F:
        cached = functools.lru_cache(maxsize=maxsize)(fn)
        _REGISTRY[f"{fn.__module__}.{fn.__qualname__}"] = cached
        return cached  # type: ignore[return-value]

    return wrap


def clear() -> None:
    """Empty every registered cache."""
    for cached in _REGISTRY.values():
        cached.cache_clear()


def info() -> dict[str, tuple[int, int | None]]:
    """``{qualified name: (entries, maxsize)}`` of every registered cache."""
    out = {}
    for name, cached in sorted(_REGISTRY.items()):
        ci = cached.cache_info()
        out[name] = (ci.currsize, ci.maxsize)
    return out

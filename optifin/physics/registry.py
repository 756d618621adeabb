"""A registry of the published correlations optifin uses, with their validity ranges.

Each correlation function is declared with :func:`correlation`, which records its source and
the ranges of the dimensionless groups it was published for. The model asks the registry
which designs fall outside a range (a flag column, data inside the search) and the run
record lists the references of every correlation used.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from optifin.errors import ModelError


@dataclass(frozen=True)
class Correlation:
    """A published correlation: function, source and validity ranges.

    ``validity`` maps the name of a group (as the function's keyword, e.g. ``"re_b_star"``)
    to an inclusive ``(low, high)`` range; ``None`` for an open end.
    """

    name: str
    function: Callable
    quantity: str
    reference: str
    doi: str | None = None
    validity: Mapping[str, tuple[float | None, float | None]] = field(default_factory=dict)
    validity_note: str = ""

    def out_of_range(self, **groups) -> np.ndarray:
        """Boolean array, True where any given group lies outside its published range.

        Groups not named in ``validity`` are ignored; groups named there but not given are
        not checked.
        """
        flag = np.zeros(np.broadcast_shapes(*(np.shape(v) for v in groups.values())), bool)
        for key, value in groups.items():
            if key not in self.validity:
                continue
            low, high = self.validity[key]
            value = np.asarray(value, dtype=float)
            if low is not None:
                flag |= value < low
            if high is not None:
                flag |= value > high
        return flag

    def citation(self) -> str:
        return self.reference + (f" doi:{self.doi}" if self.doi else "")


REGISTRY: dict[str, Correlation] = {}


def correlation(
    name: str,
    *,
    quantity: str,
    reference: str,
    doi: str | None = None,
    validity: Mapping[str, tuple[float | None, float | None]] | None = None,
    validity_note: str = "",
):
    """Decorator: register the decorated function as the published correlation ``name``."""

    def wrap(function: Callable) -> Callable:
        entry = Correlation(
            name=name,
            function=function,
            quantity=quantity,
            reference=reference,
            doi=doi,
            validity=dict(validity or {}),
            validity_note=validity_note,
        )
        if name in REGISTRY and REGISTRY[name].function is not function:
            raise RuntimeError(f"correlation {name!r} registered twice")
        REGISTRY[name] = entry
        function.correlation = entry
        return function

    return wrap


def get(name: str) -> Correlation:
    """The registered correlation ``name``; an unknown name lists the nearest valid ones."""
    _load_all()
    try:
        return REGISTRY[name]
    except KeyError:
        near = difflib.get_close_matches(name, REGISTRY, n=3)
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        raise ModelError(
            f"unknown correlation {name!r}{hint} (known: {', '.join(sorted(REGISTRY))})"
        ) from None


_LOADED: list[bool] = []


def _load_all() -> None:
    """Import every physics module (once) so that its correlations are registered."""
    if _LOADED:
        return
    import importlib
    import pkgutil

    import optifin.physics as package

    for info in pkgutil.iter_modules(package.__path__):
        importlib.import_module(f"{package.__name__}.{info.name}")
    _LOADED.append(True)

"""Import SciPy only when an Excel statistics function needs it.

The `formulas` package's statistics module (``formulas.functions.stat``, home of
MAX, AVERAGE, COUNT ...) imports ``scipy.stats``, ``scipy.linalg`` and
``scipy.interpolate`` when it is imported -- most of a ``cellwright calc``
start-up -- although only the distribution, test and regression functions
(NORM.S.DIST, T.TEST, PERCENTILE, ...) use them, and only when they run.

:func:`import_statistics` imports that module with stand-ins for the three
SciPy modules. A stand-in imports the real module on first use of one of its
attributes, so a workbook without those functions never loads SciPy, and one
with them gets exactly SciPy's results. The stand-ins are in ``sys.modules``
only while the statistics module is imported.

>>> import_statistics()
>>> import formulas.functions.stat as stat
>>> type(stat.stats).__name__ in ("DeferredModule", "module")
True
"""

from __future__ import annotations

import importlib
import sys
import threading
import types
from collections.abc import Callable
from typing import Any

__all__ = ["DeferredModule", "import_statistics"]

STATISTICS = "formulas.functions.stat"

#: SciPy modules the statistics module imports, with the names it takes from them
#: by ``from module import name`` (those must exist on the stand-in at import).
DEFERRED: dict[str, tuple[str, ...]] = {
    "scipy.stats": (),
    "scipy.linalg": (),
    "scipy.interpolate": ("interp1d",),
}

_lock = threading.Lock()


class DeferredModule(types.ModuleType):
    """A stand-in for module ``name``: the real module is imported on first attribute use.

    >>> math = DeferredModule("math")
    >>> math.sqrt(16.0)
    4.0
    """

    def __init__(self, name: str, names: tuple[str, ...] = ()) -> None:
        super().__init__(name)
        for attr in names:
            setattr(self, attr, self._forwarder(attr))

    def _real(self) -> types.ModuleType:
        real = self.__dict__.get("_real_module")
        if real is None:
            if sys.modules.get(self.__name__) is self:  # never import ourselves
                del sys.modules[self.__name__]
            real = importlib.import_module(self.__name__)
            self.__dict__["_real_module"] = real
        return real

    def _forwarder(self, attr: str) -> Callable[..., Any]:
        def forward(*args: Any, **kwargs: Any) -> Any:
            return getattr(self._real(), attr)(*args, **kwargs)

        forward.__name__ = attr
        forward.__qualname__ = f"{self.__name__}.{attr}"
        return forward

    def __getattr__(self, attr: str) -> Any:
        if attr.startswith("__"):  # import machinery probing a module: not ours to answer
            raise AttributeError(attr)
        return getattr(self._real(), attr)


def import_statistics() -> None:
    """Import the `formulas` statistics module without importing SciPy (idempotent)."""
    with _lock:
        if STATISTICS in sys.modules:
            return
        if any(name in sys.modules for name in DEFERRED):  # SciPy is loaded already
            importlib.import_module(STATISTICS)
            return
        standins = {name: DeferredModule(name, names) for name, names in DEFERRED.items()}
        sys.modules.update(standins)
        try:
            importlib.import_module(STATISTICS)
        finally:
            for name, module in standins.items():
                if sys.modules.get(name) is module:
                    del sys.modules[name]

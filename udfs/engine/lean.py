"""A lean replay of the engine's compiled pipes (same functions, less bookkeeping).

The `formulas` engine compiles every formula, and a reduced workbook, into
schedula "pipes": the order in which nodes are visited. Replaying such a pipe
through schedula's general dispatcher costs about a millisecond per cell in
bookkeeping alone. :class:`LeanPipe` replays the same plan directly: each
function node is called with the values of its input nodes, filters are applied
as schedula applies them, the first estimation of a data node wins. Only the
plain node kinds the engine uses are supported; anything else raises
:class:`UnsupportedPipeError` when the plan is built, and the caller keeps schedula.

The model only uses a lean pipe after checking that it returns exactly what
the schedula pipe returns for the same inputs (see ``model.py``).

>>> import schedula as sh
>>> dsp = sh.Dispatcher()
>>> _ = dsp.add_function("add", lambda a, b: a + b, ["a", "b"], ["c"])
>>> _ = dsp.add_function("double", lambda c: 2 * c, ["c"], ["d"])
>>> pipe = sh.DispatchPipe(dsp, "f", ["a", "b"], ["d"])
>>> LeanPipe(pipe)(1, 2), pipe(1, 2)
(6, 6)
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import schedula as sh
from formulas.cell import CellWrapper
from formulas.tokens.operand import Error

__all__ = ["LeanPipe", "UnsupportedPipeError", "leanify_cells"]

NONE = sh.NONE
_DATA, _FUNC = 0, 1


class UnsupportedPipeError(Exception):
    """The pipe uses a node kind the lean replay does not handle."""


class _SelfProxy:
    """Stands in for the dispatcher (``sh.SELF``): exposes ``solution`` as a mapping."""

    def __init__(self, env: dict[Any, Any]):
        self.solution = env


def _apply(filters: Sequence[Callable[[Any], Any]], value: Any) -> Any:
    for f in filters:
        value = f(value)
    return value


class LeanPipe:
    """Replays a ``schedula.DispatchPipe`` (see module doc).

    ``mode="cell"`` replays a formula's pipe as the engine's cell wrapper sees
    it: an unknown function gives ``#NAME?``, other exceptions propagate.
    ``mode="model"`` replays a workbook's pipe as the engine's dispatcher does:
    a node whose function fails is left without a value.
    """

    def __init__(self, pipe: Any, mode: str = "model"):
        if getattr(pipe, "output_type", None) not in (None, "list", "values"):
            raise UnsupportedPipeError("output type")
        self.mode = mode
        self.inputs = pipe.inputs
        self._input_ids = list(pipe.inputs or ())
        self.outputs = list(pipe.outputs or ())
        self.single = len(self.outputs) == 1
        steps: list[tuple[Any, ...]] = []
        defaults: dict[Any, Any] = {}
        seen_solution = None
        for task, _nxt_nodes, nxt_dsp in pipe.pipe:
            node_id, sol = task[-1]
            if seen_solution is None:
                seen_solution = sol
            elif sol is not seen_solution or nxt_dsp:
                raise UnsupportedPipeError("sub-dispatchers")
            if node_id is sh.START:
                continue
            attr = sol.nodes[node_id]
            kind = attr["type"]
            if kind == "data":
                if "function" in attr or attr.get("wait_inputs") or "callback" in attr:
                    raise UnsupportedPipeError(f"data node {node_id} with its own function")
                steps.append((_DATA, node_id, tuple(attr.get("filters", ()))))
            elif kind == "function":
                if "input_domain" in attr and not sol.no_domain:
                    raise UnsupportedPipeError("input domain")
                steps.append(
                    (
                        _FUNC,
                        node_id,
                        attr["function"],
                        tuple(attr["inputs"]),
                        tuple(attr["outputs"]),
                        tuple(attr.get("filters", ())),
                    )
                )
            else:
                raise UnsupportedPipeError(f"node kind {kind}")
        if seen_solution is not None:
            for k, v in seen_solution.dsp.default_values.items():
                defaults[k] = v["value"]
        self.steps = steps
        self.defaults = defaults

    def __call__(self, *args: Any) -> Any:
        env: dict[Any, Any] = {}
        est: dict[Any, Any] = dict(self.defaults)
        for k, v in zip(self._input_ids, args, strict=True):
            est[k] = v
        cell = self.mode == "cell"
        for step in self.steps:
            if step[0] == _DATA:
                _, node, filters = step
                if node in est:
                    env[node] = _apply(filters, est[node]) if filters else est[node]
                continue
            _, node, func, inputs, outputs, filters = step
            try:
                values = [env[i] if i is not sh.SELF else _SelfProxy(env) for i in inputs]
            except KeyError:
                continue  # an input has no value: the function does not run
            values = [v for v in values if v is not NONE]
            try:
                res = func(*values)
                if filters:
                    res = _apply(filters, res)
            except NotImplementedError:
                if cell:
                    return Error.errors["#NAME?"]
                continue
            except Exception:
                if cell:
                    raise
                continue
            if len(outputs) == 1:
                if res is not NONE and outputs[0] not in est:
                    est[outputs[0]] = res
            else:
                for o, v in zip(outputs, res, strict=False):
                    if v is not NONE and o not in est:
                        est[o] = v
        if self.single:
            return env.get(self.outputs[0], NONE)
        return [env.get(o, NONE) for o in self.outputs]


def leanify_cells(cells: Any) -> tuple[int, int]:
    """Give every compiled cell of an ExcelModel a lean pipe; returns (done, kept)."""
    done = kept = 0
    for cell in cells:
        wrapper = getattr(cell, "func", None)
        if not isinstance(wrapper, CellWrapper) or isinstance(wrapper.func, LeanPipe):
            continue
        try:
            wrapper.func = LeanPipe(wrapper.func, mode="cell")
            done += 1
        except UnsupportedPipeError:
            kept += 1
    return done, kept

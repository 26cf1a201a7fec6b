"""xlwings' own Windows add-in code, run on Linux with its Windows-only modules
stubbed (there is no Excel here).

``xlwings_windows`` imports the real ``xlwings.udfs`` (the "Import Functions"
button and ``call_udf``), ``xlwings._xlwindows`` (how a cell's COM values are
cleaned, error values included) and ``xlwings.com_server`` (``XLPython.CallUDF``,
what the VBA wrapper of every function calls) with stand-ins for pywin32
(pythoncom, pywintypes, win32api, win32com, ...) and for the Windows-only parts
of ctypes (``windll``, ``oledll`` and pythoncom's DLL; given to that one import
only, ctypes itself is left alone). Our functions are decorated with xlwings'
real ``xlfunc``/``xlarg``/``xlret`` through :func:`udfs.sheet.declare.decorate_for_xlwings`.

:meth:`XlwingsWindows.call` then calls a function as Excel does: positional
COM values, a cell reference as a range object (:class:`FakeRange`, whose
``Value`` is what COM gives: a scalar for one cell, a tuple of row tuples for
several), a missing optional argument as COM's "parameter not found" code.
"""

from __future__ import annotations

import ctypes
import importlib
import sys
import types
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import pytest

from udfs.sheet.declare import build_callable, decorate_for_xlwings
from udfs.sheet.registry import PLANS

#: COM's DISP_E_PARAMNOTFOUND as VBA passes an omitted optional argument (xlwings/udfs.py).
MISSING = -2147352572
#: The interface id by which xlwings recognises an Excel Range (xlwings/_xlwindows.py).
RANGE_IID = "{00020846-0000-0000-C000-000000000046}"


class _Anything:
    """Stands in for a Windows DLL: every attribute and call gives another one."""

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        pass

    def __call__(self, *args: Any, **kwargs: Any) -> _Anything:
        return _Anything()

    def __getattr__(self, name: str) -> _Anything:
        return _Anything()


def _module(name: str, **attrs: Any) -> types.ModuleType:
    module = types.ModuleType(name)
    module.__dict__.update(attrs)
    return module


def _unwrap(obj: object) -> object:
    raise TypeError("not a wrapped Python object")  # FromVariant then uses the value itself


def _windows_modules() -> dict[str, types.ModuleType]:
    py_idispatch = type("PyIDispatch", (), {})
    client = _module(
        "win32com.client",
        Dispatch=lambda *a, **k: None,
        DispatchEx=lambda *a, **k: None,
        CDispatch=type("CDispatch", (), {}),
        CoClassBaseClass=type("CoClassBaseClass", (), {}),
        DispatchBaseClass=type("DispatchBaseClass", (), {}),
    )
    server = _module("win32com.server")
    modules = {
        "pythoncom": _module(
            "pythoncom",
            __file__="pythoncom-stub",
            CoInitialize=lambda: None,
            IID_IDispatch="IDispatch",
            IID_IEnumVARIANT="IEnumVARIANT",
            TypeIIDs={"IDispatch": py_idispatch},
            com_error=type("com_error", (Exception,), {}),
        ),
        "pywintypes": _module(
            "pywintypes",
            com_error=type("com_error", (Exception,), {}),
            error=type("error", (Exception,), {}),
            TimeType=type("TimeType", (), {}),
            IID=lambda text: text,
        ),
        "win32api": _module("win32api"),
        "win32con": _module("win32con"),
        "win32event": _module("win32event"),
        "win32gui": _module("win32gui"),
        "win32timezone": _module("win32timezone"),
        "win32process": _module("win32process", GetWindowThreadProcessId=lambda h: (0, 4242)),
        "win32com": _module("win32com", client=client, server=server),
        "win32com.client": client,
        "win32com.server": server,
        "win32com.server.dispatcher": _module("win32com.server.dispatcher"),
        "win32com.server.policy": _module("win32com.server.policy"),
        "win32com.server.util": _module(
            "win32com.server.util", wrap=lambda obj, **k: obj, unwrap=_unwrap
        ),
    }
    return modules


def _windows_ctypes() -> types.ModuleType:
    """ctypes as xlwings' Windows module sees it on import: the real one plus
    stand-ins for its Windows-only DLL loaders."""
    view = _module("ctypes")
    view.__dict__.update(ctypes.__dict__)
    view.__dict__.update(windll=_Anything(), oledll=_Anything(), PyDLL=_Anything)
    return view


class _TypeAttr:
    iid = RANGE_IID


class _OleObject:
    def GetTypeInfo(self) -> Any:
        return types.SimpleNamespace(GetTypeAttr=_TypeAttr)


_APP = types.SimpleNamespace(Hwnd=1)
_SHEET = types.SimpleNamespace(
    Parent=types.SimpleNamespace(Application=_APP, Name="probe.xlsm"), Name="Sheet1"
)


class FakeRange:
    """A cell reference as COM hands it to the add-in; ``Value`` as COM reads it."""

    _oleobj_ = _OleObject()

    def __init__(self, value: Any):
        self.Value = value
        self.Worksheet = _SHEET
        self.Row = self.Column = 1
        rows = len(value) if isinstance(value, tuple) else 1
        cols = len(value[0]) if isinstance(value, tuple) else 1
        self.Rows = types.SimpleNamespace(Count=rows)
        self.Columns = types.SimpleNamespace(Count=cols)


@dataclass
class XlwingsWindows:
    udfs: types.ModuleType  # xlwings.udfs
    com_server: types.ModuleType  # xlwings.com_server
    windows: types.ModuleType  # xlwings._xlwindows

    def probe_module(self) -> types.ModuleType:
        """A module like ``udfs`` whose functions carry the Windows decoration."""
        xlu = self.udfs
        probe = types.ModuleType("udfs")
        for name, plan in PLANS.items():
            fn = decorate_for_xlwings(build_callable(plan), plan, xlu.xlfunc, xlu.xlarg, xlu.xlret)
            setattr(probe, name, fn)
        return probe

    #: an omitted optional argument, as VBA passes it
    missing = MISSING

    @staticmethod
    def cell(value: Any) -> FakeRange:
        """A reference to cells holding ``value`` (a tuple of row tuples for a range)."""
        return FakeRange(value)

    def call(self, name: str, *args: Any) -> Any:
        """``=name(args)`` as Excel calls it through the add-in's VBA wrapper."""
        server = self.com_server.XLPython()
        return server.CallUDF("udfs", name, args, None, FakeRange(0.0))


@pytest.fixture(scope="module")
def xlwings_windows() -> Iterator[XlwingsWindows]:
    import xlwings
    import xlwings.main

    imported = ("xlwings._xlwindows", "xlwings.com_server", "xlwings.udfs")
    had_windows = hasattr(xlwings, "_xlwindows")
    with pytest.MonkeyPatch.context() as mp:
        for name, module in _windows_modules().items():
            mp.setitem(sys.modules, name, module)
        for name in imported:
            mp.delitem(sys.modules, name, raising=False)
        mp.setitem(sys.modules, "ctypes", _windows_ctypes())
        windows = importlib.import_module("xlwings._xlwindows")
        mp.setitem(sys.modules, "ctypes", ctypes)  # the stand-ins were for that import only
        xlu = importlib.import_module("xlwings.udfs")
        com_server = importlib.import_module("xlwings.com_server")
        engines = xlwings.main.Engines()
        engines.add(xlwings.main.Engine(impl=windows.engine))
        mp.setattr(xlwings, "engines", engines)  # the Excel engine, as on Windows
        env = XlwingsWindows(xlu, com_server, windows)
        mp.setitem(
            xlu.udf_modules,
            "udfs",
            {"filename": "udfs", "filetime": None, "module": env.probe_module()},
        )
        try:
            yield env
        finally:
            for name in imported:
                sys.modules.pop(name, None)
            if not had_windows and hasattr(xlwings, "_xlwindows"):
                delattr(xlwings, "_xlwindows")

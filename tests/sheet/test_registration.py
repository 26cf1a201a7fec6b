"""The functions survive xlwings' own Windows registration code, on Linux.

xlwings/udfs.py is what the add-in's "Import Functions" button runs: it turns
the decorated functions into VBA ``Function`` declarations and calls Excel's
``MacroOptions`` with the help texts. Here it is imported with its Windows-only
modules stubbed (tests/sheet/conftest.py), the spreadsheet functions are
decorated with its real ``xlfunc``/``xlarg``/``xlret`` through the same
declaration code that runs on Windows, and ``import_udfs`` is run against a fake
workbook that records the VBA module and the MacroOptions calls.
"""

from __future__ import annotations

import io
import re
import types
from pathlib import Path
from typing import Any

import pytest

import udfs
from udfs.sheet.declare import PLANS
from udfs.sheet.registry import CATALOGUE_ORDER

# VBA reserved identifiers, case-insensitive. From the VBA language specification
# [MS-VBAL] section 3.3.5.2 "Reserved Identifiers and IDENTIFIER"
# (learn.microsoft.com/openspecs/microsoft_general_purpose_programming_languages/ms-vbal/
# 7df907cb-ab6c-40d3-aa81-272742ce00c3): the start of statement-keyword was checked against
# the page; the rest of that list and the other categories are written from memory. Added:
# the Office VBA language reference page "Keywords (Visual Basic for Applications)"
# (learn.microsoft.com/office/vba/language/reference/keywords-visual-basic-for-applications),
# its first entries checked, the rest from memory.
VBA_RESERVED = frozenset(
    w.lower()
    for w in """
    Call Case Close Const Declare DefBool DefByte DefCur DefDate DefDbl DefInt DefLng DefLngLng
    DefLngPtr DefObj DefSng DefStr DefVar Dim Do Else ElseIf End EndIf Enum Erase Event Exit For
    Friend Function Get Global GoSub GoTo If Implements Input Let Lock Loop LSet Next On Open
    Option Print Private Public Put RaiseEvent ReDim Resume Return RSet Seek Select Set Static
    Stop Sub Type Unlock Wend While With Write
    Any As ByRef ByVal Each In New Shared Until WithEvents Optional ParamArray Preserve Spc Tab
    Then To
    AddressOf And Eqv Imp Is Like Mod Not Or TypeOf Xor
    Array Circle InputB LBound Scale UBound
    Boolean Byte Currency Date Double Integer Long LongLong LongPtr Single String Variant
    Abs CBool CByte CCur CDate CDbl CDec CInt CLng CLngLng CLngPtr CSng CStr CVar CVErr Debug
    DoEvents Fix Int Len LenB Me PSet Sgn
    True False Nothing Empty Null Rem
    Attribute LineInput VB_Base VB_Control VB_Creatable VB_Customizable VB_Description
    VB_Exposed VB_Ext_KEY VB_GlobalNameSpace VB_HelpID VB_Invoke_Func VB_Invoke_Property
    VB_Invoke_PropertyPut VB_Invoke_PropertyPutRef VB_MemberFlags VB_Name VB_PredeclaredId
    VB_ProcData VB_TemplateDerived VB_UserMemId VB_VarDescription VB_VarHelpID
    VB_VarMemberFlags VB_VarProcData VB_VarUserMemId
    CDecl Decimal DefDec
    Binary Error Mid Property PtrSafe Step Time
    """.split()  # noqa: SIM905 - a word list reads better as text
)
# Statement names that are not listed as reserved but that we avoid as argument names anyway.
VBA_AVOIDED = frozenset(("name", "kill", "beep", "chdir", "mkdir", "rmdir", "date", "randomize"))
# A VBA identifier: a Latin letter, then letters, digits or underscores, at most 255 characters.
VBA_IDENTIFIER = re.compile(r"^[A-Za-z][A-Za-z0-9_]{0,254}$")
HELP_LIMIT = 255  # Excel's limit on MacroOptions descriptions


class _Components:
    def __init__(self) -> None:
        self.imported = ""

    def __call__(self, name: str) -> str:
        return name

    def Remove(self, component: object) -> None:
        pass

    def Import(self, path: str) -> None:
        self.imported = Path(path).read_text()


class _Application:
    Version = "16.0"

    def __init__(self) -> None:
        self.options: dict[str, dict[str, Any]] = {}

    def MacroOptions(self, macro: str, **kwargs: Any) -> None:
        self.options[macro] = kwargs


class _Workbook:
    Name = "cellwright_probe.xlsm"

    def __init__(self) -> None:
        self.VBProject = types.SimpleNamespace(VBComponents=_Components())
        self.Application = _Application()


@pytest.fixture(scope="module")
def xlwings_udfs(xlwings_windows: Any) -> types.ModuleType:
    """xlwings.udfs imported on Linux with stubs for the Windows-only modules."""
    return xlwings_windows.udfs


@pytest.fixture(scope="module")
def registered(xlwings_udfs: types.ModuleType) -> tuple[types.ModuleType, _Workbook, str]:
    import xlwings

    assert not xlwings.__pro__, "the PRO branch of import_udfs needs a real workbook"
    probe = xlwings_udfs.udf_modules["udfs"]["module"]
    book = _Workbook()
    xlwings_udfs.import_udfs("udfs", book)
    return probe, book, book.VBProject.VBComponents.imported


def _declarations(vba: str) -> dict[str, list[str]]:
    out = {}
    for m in re.finditer(r"^Function (\w+)\((.*)\)\s*$", vba, flags=re.M):
        out[m.group(1)] = [a.strip() for a in m.group(2).split(",") if a.strip()]
    return out


def test_the_package_exposes_the_same_functions(registered: tuple[Any, Any, str]) -> None:
    probe, _, _ = registered
    names = {n for n in dir(udfs) if n.startswith("CW_")}
    assert names == {n for n in dir(probe) if n.startswith("CW_")} == set(CATALOGUE_ORDER)


def test_every_function_is_declared_with_its_arguments_in_order(
    registered: tuple[Any, Any, str],
) -> None:
    _, _, vba = registered
    declared = _declarations(vba)
    assert set(CATALOGUE_ORDER) <= set(declared)
    for name in CATALOGUE_ORDER:
        plan = PLANS[name]
        expected = [("Optional " if a.optional else "") + a.name for a in plan.args]
        assert declared[name] == expected, name
        call = re.search(rf'XLPy\.CallUDF\("udfs", "{name}", Array\((.*?)\), ThisWorkbook', vba)
        assert call is not None, name
        passed = [a.strip() for a in call.group(1).split(",") if a.strip()]
        assert passed == [a.name for a in plan.args], name


def _template_words(xlu: types.ModuleType) -> set[str]:
    """Identifiers xlwings' VBA wrapper itself uses (Array, Application, XLPy, ...)."""

    def CW_PROBE(zzfirst, zzsecond=None):  # type: ignore[no-untyped-def]
        return None

    probe = types.ModuleType("probe")
    probe.CW_PROBE = xlu.xlfunc(CW_PROBE)  # type: ignore[attr-defined]
    buf = io.StringIO()
    xlu.generate_vba_wrapper("udfs", probe, buf, _Workbook())
    code = re.sub(r'"[^"]*"', "", buf.getvalue())
    return {w.lower() for w in re.findall(r"[A-Za-z_]\w*", code)} - {
        "cw_probe",
        "zzfirst",
        "zzsecond",
    }


def test_argument_names_are_valid_vba_identifiers(xlwings_udfs: types.ModuleType) -> None:
    template = _template_words(xlwings_udfs)
    assert {"array", "application", "xlpy"} <= template  # the probe saw the wrapper
    problems = []
    for name, plan in PLANS.items():
        assert VBA_IDENTIFIER.match(name), name
        for a in plan.args:
            low = a.name.lower()
            if not VBA_IDENTIFIER.match(a.name):
                problems.append(f"{name}.{a.name}: not a VBA identifier")
            if low in VBA_RESERVED:
                problems.append(f"{name}.{a.name}: VBA reserved word")
            if low in VBA_AVOIDED:
                problems.append(f"{name}.{a.name}: VBA statement name")
            if low in template:
                problems.append(f"{name}.{a.name}: clashes with the wrapper's {a.name}")
            if low == name.lower():
                problems.append(f"{name}.{a.name}: same as the function")
    assert problems == []


def test_help_texts_fit_and_reach_excel_untruncated(registered: tuple[Any, _Workbook, str]) -> None:
    probe, book, _ = registered
    for name in CATALOGUE_ORDER:
        xlf = getattr(probe, name).__xlfunc__
        doc = xlf["ret"]["doc"]
        arg_docs = [a["doc"] for a in xlf["args"]]
        assert 0 < len(doc) <= HELP_LIMIT, name
        assert all(0 < len(d) <= HELP_LIMIT for d in arg_docs), name
        options = book.Application.options[f"'{book.Name}'!{name}"]
        assert options["Description"] == doc
        assert options["Category"] == "cellwright"
        assert (options["ArgumentDescriptions"] or []) == arg_docs
        assert doc == PLANS[name].help
        assert arg_docs == [PLANS[name].arg_help(a) for a in PLANS[name].args]


def test_decoration_options(registered: tuple[Any, Any, str]) -> None:
    probe, _, _ = registered
    for name in CATALOGUE_ORDER:
        xlf = getattr(probe, name).__xlfunc__
        assert not xlf["ret"]["options"].get("expand"), name  # 2-D results spill natively
        assert "convert" not in xlf["ret"]["options"], name  # no converter from annotations
        for a in xlf["args"]:
            assert a["options"].get("ndim") == 2, (name, a["name"])
            assert a["options"].get("err_to_str") is True, (name, a["name"])
            assert "convert" not in a["options"], (name, a["name"])
        optional = [a["name"] for a in xlf["args"] if "optional" in a]
        assert optional == [a.name for a in PLANS[name].args if a.optional]
        assert all(a.get("optional", None) is None for a in xlf["args"])  # missing -> None


def test_decorated_functions_still_compute(registered: tuple[Any, Any, str]) -> None:
    probe, _, _ = registered
    assert probe.CW_NERNST([[0.34]], [[2]], [[0.1]], [[1]], None) == udfs.CW_NERNST(0.34, 2, 0.1, 1)

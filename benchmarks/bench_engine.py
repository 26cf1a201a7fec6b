"""Headless engine against LibreOffice, warm re-evaluation, and sweeps (ratios in one run).

1. **End to end against LibreOffice's headless recalculation**, in this run, on the
   same files: benchmark workbooks of 1,500, 15,000 and 100,000 formula cells in two
   forms -- filled-down blocks (5 formula columns filled down) and mostly distinct
   formulas (each cell its own formula: random shapes of arithmetic, IF, ROUND,
   MAX, MIN, ABS, SQRT and SUM over random earlier cells, random constants; no two
   cells share a relative formula) -- and the 1,500 filled-down form with one named
   constant and one whole-column lookup added. Native formulas only, so both
   programs compute every cell; each file carries stale cached values (zeros), and
   LibreOffice runs in a private profile that forces recalculation on load, which
   the cross-check of every value proves. Times are wall-clock medians of fresh
   processes; peak memory is each process's maximum resident set (GNU time).
2. **Warm re-evaluation** after one input change, for each shipped template and the
   15,000-cell filled-down workbook (the model read and planned once).
3. **Workbook sweep** of the cell-sizing template (scenarios per second, computed in
   batches as `cellwright sweep` computes them, and one at a time for comparison).

Goals (reported, never asserted): calc/LibreOffice <= 1.0 at 1,500 and 15,000
filled-down, <= 2.0 at 100,000; mostly distinct <= 1.5 at 1,500 and <= 3.0 at
15,000; peak memory at most LibreOffice's; named-constant and whole-column
variants within 1.2x of the plain 1,500 workbook; warm < 50 ms; sweep >= 300/s.

Run: ``python benchmarks/bench_engine.py [--quick]`` (--quick: 1,500 and 15,000 only).
"""

from __future__ import annotations

import argparse
import random
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import openpyxl
from openpyxl.workbook.defined_name import DefinedName

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from udfs.app.sweep import SWEEP_BATCH  # noqa: E402
from udfs.engine.model import load_model  # noqa: E402
from udfs.xlsx.writer import Edit, package_bytes, write_live  # noqa: E402

COLUMNS = 5
RECALC_PROFILE = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry"
 xmlns:xs="http://www.w3.org/2001/XMLSchema" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load">
<prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
"""


def filled(n_formulas: int, extra: str = "") -> openpyxl.Workbook:
    """5 formula columns filled down over constant inputs (``extra``: "name", "column")."""
    rows = n_formulas // COLUMNS
    wb = openpyxl.Workbook()
    inp = wb.active
    inp.title = "Inputs"
    for i, v in enumerate([12.5, 1.5, 160.0, 3.65, 20.0, 4.0], start=1):
        inp.cell(i, 2, v)
    calc = wb.create_sheet("Calc")
    for r in range(1, rows + 1):
        calc[f"A{r}"] = (r % 97) * 0.5 + 1.0
        calc[f"B{r}"] = f"=A{r}*Inputs!$B$1/10+Inputs!$B$2"
        calc[f"C{r}"] = f"=B{r}*Inputs!$B$3/1000"
        calc[f"D{r}"] = f"=C{r}*Inputs!$B$4"
        calc[f"E{r}"] = f"=IF(D{r}>Inputs!$B$5,ROUNDUP(D{r}/Inputs!$B$6,0),ABS(D{r}-1))"
        calc[f"F{r}"] = f"=IFERROR(C{r}*1000/E{r},0)"
    if extra == "name":
        wb.defined_names["rate"] = DefinedName("rate", attr_text="1.07")
        calc["H1"] = f"=SUM(D1:D{rows})*rate"
    elif extra == "column":
        inp["D1"], inp["E1"] = 1.0, 11.0
        inp["D2"], inp["E2"] = 2.0, 22.0
        calc["H1"] = "=VLOOKUP(2,Inputs!D:E,2,FALSE)+SUM(Calc!B:B)"
    return wb


def distinct(n_formulas: int, seed: int = 7) -> openpyxl.Workbook:
    """Mostly distinct formulas: every cell its own formula (random shape, refs, numbers)."""
    rng = random.Random(seed)  # fixed seed: the same workbook every run
    rows = n_formulas // COLUMNS
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Calc"
    for r in range(1, rows + 1):
        ws[f"A{r}"] = round(rng.uniform(0.5, 50.0), 3)

    def ref(r: int, c: int) -> str:
        rr = rng.randint(max(1, r - 40), r) if c > 2 else rng.randint(1, r)
        col = "A" if rr == r or rng.random() < 0.4 else "ABCDEF"[rng.randint(0, c - 2)]
        return f"{col}{rr}"

    def num() -> str:
        return f"{rng.uniform(0.1, 9.9):.{rng.randint(1, 3)}f}"

    def term(r: int, c: int, depth: int) -> str:
        pick = rng.random()
        if depth == 0 or pick < 0.35:
            return ref(r, c) if rng.random() < 0.7 else num()
        a, b = term(r, c, depth - 1), term(r, c, depth - 1)
        if pick < 0.55:
            return f"({a}{rng.choice('+-*')}{b})"
        if pick < 0.65:
            return f"IF({a}>{num()},{b},{a})"
        if pick < 0.73:
            return f"ROUND({a},{rng.randint(0, 3)})"
        if pick < 0.81:
            return f"{rng.choice(['MAX', 'MIN'])}({a},{b})"
        if pick < 0.88:
            return f"SQRT(ABS({a}))"
        top = max(1, r - rng.randint(2, 6))
        return f"SUM(A{top}:A{r})*{num()}"

    for r in range(1, rows + 1):
        for c in range(2, COLUMNS + 2):
            ws.cell(r, c, "=" + term(r, c, rng.randint(1, 3)))
    return wb


def stale_file(wb: openpyxl.Workbook, path: Path) -> int:
    """Save ``wb`` with every formula's cached value set to 0 (stale); its formula count."""
    tmp = path.with_suffix(".plain.xlsx")
    wb.save(tmp)
    model = load_model(tmp.read_bytes(), tmp.name)
    edits = {model.ref_of(k): Edit(0.0) for k in model.formula_keys}
    path.write_bytes(package_bytes(lambda out: write_live(model.package, edits, out)))
    tmp.unlink()
    return model.formula_count


def timed_run(cmd: list[str], cwd: Path) -> tuple[float, float]:
    """(seconds, peak MiB) of a command in a fresh process (GNU time's maximum RSS)."""
    full = ["/usr/bin/time", "-f", "%M", *cmd]
    t0 = time.perf_counter()
    p = subprocess.run(full, capture_output=True, text=True, cwd=cwd, timeout=3600)
    dt = time.perf_counter() - t0
    if p.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd[:4])} failed: {p.stderr.strip()[-400:]}")
    peak_kib = int(p.stderr.strip().splitlines()[-1])
    return dt, peak_kib / 1024


def median_run(cmd: list[str], cwd: Path, repeats: int) -> tuple[float, float]:
    runs = [timed_run(cmd, cwd) for _ in range(repeats)]
    return statistics.median(r[0] for r in runs), max(r[1] for r in runs)


def cross_check(ours: Path, office: Path, sheet: str = "Calc") -> str:
    a = openpyxl.load_workbook(ours, data_only=True)[sheet]
    b = openpyxl.load_workbook(office, data_only=True)[sheet]
    worst, n = 0.0, 0
    for row_a, row_b in zip(a.iter_rows(), b.iter_rows(), strict=False):
        for ca, cb in zip(row_a, row_b, strict=False):
            x, y = ca.value, cb.value
            if isinstance(x, (int, float)) and isinstance(y, (int, float)):
                n += 1
                worst = max(worst, abs(x - y) / max(abs(y), 1e-300))
            elif x != y:
                return f"differ at {ca.coordinate}: cellwright {x!r}, LibreOffice {y!r}"
    return f"{n:,} numbers agree (largest relative difference {worst:.1e})"


def section_office(work: Path, quick: bool) -> None:
    office = shutil.which("soffice") or shutil.which("libreoffice")
    print("1. End to end: cellwright calc against LibreOffice's forced headless recalculation")
    if office is None:
        print("   LibreOffice is not installed (apt-get install libreoffice-calc-nogui): skipped")
        return
    profile = work / "lo-profile"
    (profile / "user").mkdir(parents=True, exist_ok=True)
    (profile / "user" / "registrymodifications.xcu").write_text(RECALC_PROFILE)
    lo = [office, "--headless", "--norestore", f"-env:UserInstallation=file://{profile}",
          "--convert-to", "xlsx", "--outdir", str(work / "lo")]
    sizes = [1_500, 15_000] if quick else [1_500, 15_000, 100_000]
    cases: list[tuple[str, openpyxl.Workbook]] = []
    for n in sizes:
        cases.append((f"filled {n:,}", filled(n)))
    for n in sizes[:2]:
        cases.append((f"distinct {n:,}", distinct(n)))
    cases.append(("filled 1,500 + named constant", filled(1_500, "name")))
    cases.append(("filled 1,500 + whole-column lookup", filled(1_500, "column")))
    subprocess.run([*lo, str(work / "none.xlsx")], capture_output=True, timeout=600)  # profile
    print(f"   {'workbook':<36}{'formulas':>9}{'calc s':>8}{'LO s':>8}{'ratio':>7}"
          f"{'calc MiB':>10}{'LO MiB':>8}   values")
    plain_1500 = None
    for label, wb in cases:
        src = work / (label.replace(" ", "_").replace(",", "").replace("+", "") + ".xlsx")
        count = stale_file(wb, src)
        out = work / "out" / src.name
        out.parent.mkdir(exist_ok=True)
        repeats = 1 if count >= 100_000 else 3
        calc = [sys.executable, "-m", "udfs.cli", "calc", str(src), "-o", str(out), "--force"]
        ours, ours_mib = median_run(calc, ROOT, repeats)
        theirs, lo_mib = median_run([*lo, str(src)], work, repeats)
        check = cross_check(out, work / "lo" / src.name)
        print(f"   {label:<36}{count:>9,}{ours:>8.2f}{theirs:>8.2f}{ours / theirs:>7.2f}"
              f"{ours_mib:>10.0f}{lo_mib:>8.0f}   {check}")
        if label == "filled 1,500":
            plain_1500 = ours
        elif label.startswith("filled 1,500 +") and plain_1500:
            print(f"      against the plain 1,500 workbook: {ours / plain_1500:.2f}x (goal <= 1.2)")


def section_warm() -> None:
    print("2. Warm re-evaluation after one input change (model read and planned once)")
    cases = [
        (ROOT / "workbook_templates" / "cell_sizing.xlsx", "in_np_ratio", [1.15, 1.2, 1.25]),
        (ROOT / "workbook_templates" / "potentials.xlsx", None, []),
        (ROOT / "workbook_templates" / "electrolysis.xlsx", None, []),
    ]
    for path, target, values in cases:
        model = load_model(path.read_bytes(), path.name)
        model.evaluate()
        if target is None:
            named = [n for n, r in model.named_cells.items() if not model.is_formula(r)]
            numeric = [
                n for n in named if isinstance(model.constant(model.named_cells[n]), float)
            ]
            target = numeric[0]
            base = model.constant(model.named_cells[target])
            assert isinstance(base, float)
            values = [base * 1.01, base * 1.02, base * 1.03]
        times = []
        for v in values * 5:
            t0 = time.perf_counter()
            model.evaluate({target: v})
            times.append(time.perf_counter() - t0)
        print(f"   {path.name:<22} {target:<20} median {1e3 * statistics.median(times[3:]):6.1f} ms"
              f" (goal < 50 ms)")
    wb = filled(15_000)
    with tempfile.TemporaryDirectory() as tmp:
        p = Path(tmp) / "f.xlsx"
        wb.save(p)
        model = load_model(p.read_bytes(), p.name)
    model.evaluate()
    times = []
    for v in [12.0, 12.5, 13.0, 13.5, 14.0, 14.5, 15.0]:
        t0 = time.perf_counter()
        model.evaluate({"Inputs!B1": v})
        times.append(time.perf_counter() - t0)
    print(f"   {'filled 15,000':<22} {'Inputs!B1 (all)':<20} median "
          f"{1e3 * statistics.median(times[2:]):6.1f} ms (goal < 50 ms)")


def section_sweep() -> None:
    print("3. Workbook sweep of the cell-sizing template (300 scenarios, as `cellwright sweep`"
          f" computes them: {SWEEP_BATCH} at a time; one at a time for comparison)")
    data = (ROOT / "workbook_templates" / "cell_sizing.xlsx").read_bytes()
    model = load_model(data, "cell_sizing.xlsx")
    outs = ["out_cost_per_kWh_USD", "out_Wh_kg", "out_Wh_L"]
    for target in ("in_np_ratio", "in_loading"):
        values = [1.05 + 0.001 * i for i in range(300)] if target == "in_np_ratio" else [
            15.0 + 0.05 * i for i in range(300)
        ]
        one = model.scenario_function([target], outs)
        batch = model.scenarios_function([target], outs)
        one(values[0])
        batch([[values[0]], [values[1]]])
        t0 = time.perf_counter()
        for v in values:
            one(v)
        single = len(values) / (time.perf_counter() - t0)
        t0 = time.perf_counter()
        for start in range(0, len(values), SWEEP_BATCH):
            batch([[v] for v in values[start : start + SWEEP_BATCH]])
        rate = len(values) / (time.perf_counter() - t0)
        print(f"   {target:<20} -> {', '.join(outs)}: {rate:7.0f} scenarios/s (goal >= 300;"
              f" one at a time {single:.0f}/s)")


def main() -> None:
    p = argparse.ArgumentParser()
    p.add_argument("--quick", action="store_true", help="1,500 and 15,000 formulas only")
    args = p.parse_args()
    with tempfile.TemporaryDirectory(prefix="cellwright-bench-") as tmp:
        work = Path(tmp)
        wb = openpyxl.Workbook()
        wb.active["A1"] = "=1+1"
        wb.save(work / "none.xlsx")
        section_office(work, args.quick)
    section_warm()
    section_sweep()


if __name__ == "__main__":
    main()

"""The Format sheet of the cell-sizing workbook: where the electrodes go and
what holds them, for the three formats of :mod:`udfs.core.cell_formats`, in
native formulas.

One block per format (stacked pouch, wound cylinder, prismatic can with flat
wound rolls or stacks), each in both sizing modes; a block whose format is not
chosen stays blank. The Archimedean spiral of a wound roll is written out
(``ASINH``); only the inverse of the flat roll (its thickness for a strip
length, prismatic target mode) is ``CW_WOUND_THICKNESS``, and a look-up of
``CW_WOUND_LENGTH`` beside the native spiral shows the two agree. A table
then lists every geometry number per format and the one in use (defined names
``geo_<field>``, the fields of :class:`udfs.core.cell_formats.Geometry`);
below it the cell: pore volume, capacity and energy.
"""

from __future__ import annotations

from collections.abc import Mapping

from openpyxl.workbook.workbook import Workbook

from .layout import Columns, Kind, Ref, SheetWriter, add_name, finish_sheet, style
from .sizing_inputs import in_use_name
from .sizing_sheets import CellCells, ElectrodeCells, ceil_formula, floor_formula

__all__ = ["GEOMETRY_ROWS", "FormatSheet", "build_format"]

TARGET = 'in_sizing_mode="target"'
POUCH, CYL, PRISM = 'in_format="pouch"', 'in_format="cylindrical"', 'in_format="prismatic"'
WOUND = f'AND({PRISM},in_prismatic_core="wound")'
STACKED = f'AND({PRISM},in_prismatic_core="stacked")'

#: The geometry table: (field of udfs.core.cell_formats.Geometry, label, unit, format).
GEOMETRY_ROWS: tuple[tuple[str, str, str, str], ...] = (
    ("cores", "Rolls or stacks", "count", "0"),
    ("cathode_sheets", "Cathode sheets", "sheets", "0"),
    ("anode_sheets", "Anode sheets", "sheets", "0"),
    ("separator_layers", "Separator layers", "layers", "0"),
    ("turns", "Turns of the repeat unit", "turns", "0.0"),
    ("cathode_width_mm", "Cathode coated width (across)", "mm", "0.0"),
    ("cathode_length_mm", "Cathode length (sheet height, strip length)", "mm", "#,##0.0"),
    ("anode_width_mm", "Anode width", "mm", "0.0"),
    ("anode_length_mm", "Anode length", "mm", "#,##0.0"),
    ("separator_width_mm", "Separator width", "mm", "0.0"),
    ("separator_length_mm", "Separator length", "mm", "#,##0.0"),
    ("cathode_coated_area_cm2", "Cathode coated area (both faces)", "cm2", "#,##0.0"),
    ("anode_coated_area_cm2", "Anode coated area (both faces)", "cm2", "#,##0.0"),
    ("separator_area_cm2", "Separator area", "cm2", "#,##0.0"),
    ("cathode_foil_area_cm2", "Cathode foil area", "cm2", "#,##0.0"),
    ("anode_foil_area_cm2", "Anode foil area", "cm2", "#,##0.0"),
    ("stack_thickness_um", "Stack thickness", "um", "#,##0"),
    ("roll_thickness_mm", "Roll thickness (a round roll's diameter)", "mm", "0.00"),
    ("cell_width_mm", "Cell width (outer)", "mm", "0.0"),
    ("cell_height_mm", "Cell height (outer)", "mm", "0.0"),
    ("cell_thickness_mm", "Cell thickness (outer)", "mm", "0.00"),
    ("cell_diameter_mm", "Cell diameter (outer)", "mm", "0.00"),
    ("cell_volume_cm3", "Cell volume", "cm3", "#,##0.0"),
    ("box_volume_cm3", "Bounding box (for a pack)", "cm3", "#,##0.0"),
    ("housing_body_cm3", "Housing body: volume of its material", "cm3", "0.000"),
    ("housing_lid_cm3", "Housing lid or cap: volume of its material", "cm3", "0.000"),
    ("housing_area_cm2", "Pouch laminate area", "cm2", "#,##0.0"),
    ("tab_cm3", "Each tab: volume of its metal", "cm3", "0.0000"),
)


def _u(name: str) -> str:
    """The In use cell of an input (``in_wall`` -> ``use_wall``)."""
    return in_use_name(name)


class FormatSheet:
    """Writes the guarded rows of one block: blank unless ``guard`` holds."""

    def __init__(self, w: SheetWriter, guard: str) -> None:
        self.w = w
        self.guard = guard

    def row(self, label: str, body: str, unit: str, note: str, fmt: str | None = None,
            guard: str | None = None, kind: Kind = "calc") -> Ref:
        cond = self.guard if guard is None else guard
        return self.w.value(label, f'=IF({cond},{body},"")', unit, note, kind, fmt)


def _spiral(r1: str, r0: str, b: str) -> str:
    """Arc length of the spiral r = r0 + b theta from radius r0 to r1 (mm)."""
    def g(r: str) -> str:
        return f"{r}*SQRT({r}*{r}+{b}*{b})+{b}*{b}*ASINH({r}/{b})"
    return f"({g(r1)}-({g(r0)}))/(2*{b})"


def _lanes(lane: str, e: ElectrodeCells) -> str:
    """Height the uncoated lanes add beyond the separator."""
    return f"MAX({lane}-{e.oa}-{e.os},0)+MAX({lane}-{e.os},0)"


def _fit_row(w: SheetWriter, guard: str, checks: list[tuple[str, str]],
             fits: list[Ref]) -> None:
    """``ok`` when every check passes, else the first failure's message; blank
    when the block's format is not chosen."""
    body = '"ok"'
    for cond, message in reversed(checks):
        body = f"IF(IFERROR({cond},FALSE),{message},{body})"
    fits.append(w.value("Fits?", f'=IF({guard},{body},"")', "",
                        "errors name the dimension and the least that fits (err_fit)", "calc"))


def _num(ref: Ref | str) -> str:
    return f"ROUND({ref},3)"


def _pouch(w: SheetWriter, e: ElectrodeCells, fits: list[Ref]) -> dict[str, str]:
    f = FormatSheet(w, POUCH)
    w.section("Stacked pouch")
    seal = f.row("Seal width", _u("in_seal"), "mm", "Inputs (In use)", "0.00")
    wall = f.row("Laminate thickness (wall)", _u("in_wall"), "mm",
                 "Inputs (In use): yours, else the laminate's catalogue thickness", "0.000")
    wd = f.row("Cathode sheet width, w", f"IF({TARGET},{_u('in_width')},"
               f"{_u('in_cell_width')}-2*{seal}-{e.m})", "mm",
               "target: Inputs; envelope: cell width - 2 seals - m", "0.00")
    ht = f.row("Cathode sheet height, h", f"IF({TARGET},{_u('in_height')},"
               f"{_u('in_cell_height')}-2*{seal}-{e.m})", "mm",
               "target: Inputs; envelope: cell height - 2 seals - m", "0.00")
    x = f.row("Cathode sheets needed, unrounded", f"{e.need}/(2*{wd}*{ht}/100)", "sheets",
              "target: area needed / (2 faces x w x h / 100)", "0.000",
              guard=f"AND({POUCH},{TARGET})")
    fit_x = f.row("Cathode sheets that fit, unrounded",
                  f"(({_u('in_cell_thickness')}-2*{wall})*1000-{e.anode.t_foil})/{e.pitch}",
                  "sheets", "envelope: ((T - 2 walls) x 1000 - anode foil) / pitch", "0.000",
                  guard=f"AND({POUCH},NOT({TARGET}))")
    n = f.row("Cathode sheets, n", f"IF({TARGET},MAX(1,{ceil_formula(str(x))}),"
              f"MAX(1,{floor_formula(str(fit_x))}))", "sheets",
              "target: rounded up; envelope: rounded down (within 1e-9 of a whole number "
              "counts as it)", "0")
    wa = f.row("Anode sheet width", f"{wd}+2*{e.oa}", "mm", "w + 2 anode overhangs", "0.00")
    ha = f.row("Anode sheet height", f"{ht}+2*{e.oa}", "mm", "h + 2 anode overhangs", "0.00")
    ws_ = f.row("Separator width", f"{wa}+2*{e.os}", "mm", "anode + 2 separator overhangs",
                "0.00")
    hs = f.row("Separator height", f"{ha}+2*{e.os}", "mm", "anode + 2 separator overhangs",
               "0.00")
    stack = f.row("Stack thickness",
                  f"{n}*{e.cathode.thick}+({n}+1)*{e.anode.t_foil}+2*{n}*{e.anode.t}"
                  f"+2*{n}*{e.t_sep}", "um",
                  "n cathodes + (n + 1) anode foils + 2n anode coatings + 2n separators", "#,##0")
    cw = f.row("Cell width W", f"IF({TARGET},{ws_}+2*{seal},{_u('in_cell_width')})", "mm",
               "target: separator + 2 seals; envelope: Inputs", "0.0")
    ch = f.row("Cell height H", f"IF({TARGET},{hs}+2*{seal},{_u('in_cell_height')})", "mm",
               "target: separator + 2 seals; envelope: Inputs", "0.0")
    ct = f.row("Cell thickness T", f"IF({TARGET},{stack}/1000+2*{wall},"
               f"{_u('in_cell_thickness')})", "mm",
               "target: stack + 2 walls; envelope: Inputs", "0.00")
    area = f.row("Laminate area", f"(2*{cw}*{ch}+2*({ws_}+{hs})*({stack}/1000))/100", "cm2",
                 "two sheets over the outline + the cup's side walls (perimeter x stack)",
                 "#,##0.0")
    body = f.row("Laminate volume", f"{area}*{wall}/10", "cm3", "area x wall", "0.000")
    vol = f.row("Cell volume", f"{cw}*{ch}*{ct}/1000", "cm3", "W x H x T", "#,##0.0")
    _fit_row(w, POUCH, [
        (f"AND(NOT({TARGET}),{wd}<=0)",
         f'"in_cell_width "&{_num(_u("in_cell_width"))}&" mm must be > "&'
         f'{_num(f"2*{seal}+{e.m}")}&" mm (room for the seals and overhangs)"'),
        (f"AND(NOT({TARGET}),{ht}<=0)",
         f'"in_cell_height "&{_num(_u("in_cell_height"))}&" mm must be > "&'
         f'{_num(f"2*{seal}+{e.m}")}&" mm (room for the seals and overhangs)"'),
        (f"AND(NOT({TARGET}),{floor_formula(str(fit_x))}<1)",
         f'"in_cell_thickness "&{_num(_u("in_cell_thickness"))}&" mm must be > "&'
         f'{_num(f"2*{wall}+({e.cathode.thick}+2*{e.anode.t_foil}+2*{e.anode.t}+2*{e.t_sep})/1000")}'
         f'&" mm (two laminate walls and one cathode between two anodes)"'),
    ], fits)
    return {
        "cores": "1", "cathode_sheets": f"{n}", "anode_sheets": f"{n}+1",
        "separator_layers": f"2*{n}", "cathode_width_mm": f"{wd}", "cathode_length_mm": f"{ht}",
        "anode_width_mm": f"{wa}", "anode_length_mm": f"{ha}", "separator_width_mm": f"{ws_}",
        "separator_length_mm": f"{hs}",
        "cathode_coated_area_cm2": f"2*{n}*{wd}*{ht}/100",
        "anode_coated_area_cm2": f"2*{n}*{wa}*{ha}/100",
        "separator_area_cm2": f"2*{n}*{ws_}*{hs}/100",
        "cathode_foil_area_cm2": f"{n}*{wd}*{ht}/100",
        "anode_foil_area_cm2": f"({n}+1)*{wa}*{ha}/100",
        "stack_thickness_um": f"{stack}", "cell_width_mm": f"{cw}", "cell_height_mm": f"{ch}",
        "cell_thickness_mm": f"{ct}", "cell_volume_cm3": f"{vol}", "box_volume_cm3": f"{vol}",
        "housing_body_cm3": f"{body}", "housing_lid_cm3": "0", "housing_area_cm2": f"{area}",
    }


def _cylinder(w: SheetWriter, e: ElectrodeCells, fits: list[Ref]) -> dict[str, str]:
    f = FormatSheet(w, CYL)
    w.section("Wound cylinder")
    dia = f.row("Cell diameter D", _u("in_cell_diameter"), "mm",
                "Inputs (In use): yours, else the class preset (CW_FORMAT_PRESET)", "0.00")
    wall = f.row("Can wall", _u("in_wall"), "mm", "Inputs (In use)", "0.000")
    bottom = f.row("Can bottom", _u("in_bottom"), "mm", "Inputs (In use)", "0.000")
    lid = f.row("Cap (equivalent plate)", _u("in_lid"), "mm", "Inputs (In use)", "0.000")
    head = f.row("Headspace", _u("in_headspace"), "mm", "Inputs (In use)", "0.00")
    core = f.row("Core hole", _u("in_core"), "mm", "Inputs (In use)", "0.00")
    lane = f.row("Uncoated tab lane", _u("in_tab_lane"), "mm", "Inputs (In use)", "0.00")
    roll = f.row("Roll diameter", f"{dia}-2*{wall}", "mm", "D - 2 walls (the roll fills the can)",
                 "0.000")
    b = f.row("Spiral constant b", f"{e.pitch}/1000/(2*PI())", "mm per radian",
              "pitch / (2 pi): each turn adds one pitch", "0.000000")
    r0 = f.row("Core radius r0", f"{core}/2", "mm", "core / 2", "0.000")
    r1 = f.row("Roll radius R", f"{roll}/2", "mm", "roll diameter / 2", "0.000")
    ls = f.row("Separator strip length L_s", _spiral(str(r1), str(r0), str(b)), "mm",
               "[g(R) - g(r0)] / (2b), g(r) = r sqrt(r^2 + b^2) + b^2 asinh(r/b)", "#,##0.00")
    f.row("The same from CW_WOUND_LENGTH", f"CW_WOUND_LENGTH({roll},{core},{e.pitch})", "mm",
          "the core's spiral (a check of the line above)", "#,##0.00", kind="lookup")
    la = f.row("Anode strip length", f"{ls}-2*{e.os}", "mm", "L_s - 2 separator overhangs",
               "#,##0.00")
    lc = f.row("Cathode strip length", f"{la}-2*{e.oa}", "mm", "anode - 2 anode overhangs",
               "#,##0.00")
    extra = f.row("Lanes and overhangs across", f"{_lanes(str(lane), e)}+{e.m}", "mm",
                  "lanes beyond the separator + m", "0.00")
    wc = f.row("Cathode coated width", f"IF({TARGET},{e.need}*100/(2*{lc}),"
               f"({_u('in_cell_height')}-{bottom}-{lid}-{head})-{extra})", "mm",
               "target: area needed x 100 / (2 x cathode length); envelope: height inside - "
               "lanes and overhangs", "0.00")
    ch = f.row("Cell height H", f"IF({TARGET},{wc}+{extra}+{bottom}+{lid}+{head},"
               f"{_u('in_cell_height')})", "mm",
               "target: coated width + lanes and overhangs + bottom + cap + headspace", "0.0")
    wa = f.row("Anode width", f"{wc}+2*{e.oa}", "mm", "cathode + 2 anode overhangs", "0.00")
    ws_ = f.row("Separator width", f"{wa}+2*{e.os}", "mm", "anode + 2 separator overhangs",
                "0.00")
    vol = f.row("Cell volume", f"PI()/4*{dia}*{dia}*{ch}/1000", "cm3", "pi/4 D^2 H", "#,##0.00")
    body = f.row("Can body metal",
                 f"(PI()/4*({dia}*{dia}-{roll}*{roll})*({ch}-{bottom}-{lid})"
                 f"+PI()/4*{dia}*{dia}*{bottom})/1000", "cm3",
                 "wall ring over the body height + bottom disc", "0.000")
    cap = f.row("Cap metal", f"PI()/4*{dia}*{dia}*{lid}/1000", "cm3", "pi/4 D^2 x cap", "0.000")
    _fit_row(w, CYL, [
        (f"{roll}<={core}+2*{e.pitch}/1000",
         f'"in_cell_diameter "&{_num(dia)}&" mm must be > "&'
         f'{_num(f"2*{wall}+{core}+2*{e.pitch}/1000")}&" mm (two walls, the core and one turn)"'),
        (f"{lc}<=0",
         f'"in_cell_diameter "&{_num(dia)}&" mm: the roll is shorter than the overhangs at its '
         'ends"'),
        (f"AND(NOT({TARGET}),{wc}<=0)",
         f'"in_cell_height "&{_num(ch)}&" mm must be > "&{_num(f"{ch}-{wc}")}'
         f'&" mm (bottom, cap, headspace, lanes and overhangs)"'),
    ], fits)
    return {
        "cores": "1", "turns": f"({roll}-{core})/2/({e.pitch}/1000)",
        "cathode_width_mm": f"{wc}", "cathode_length_mm": f"{lc}", "anode_width_mm": f"{wa}",
        "anode_length_mm": f"{la}", "separator_width_mm": f"{ws_}",
        "separator_length_mm": f"{ls}",
        "cathode_coated_area_cm2": f"2*{lc}*{wc}/100", "anode_coated_area_cm2": f"2*{la}*{wa}/100",
        "separator_area_cm2": f"2*{ls}*{ws_}/100",
        "cathode_foil_area_cm2": f"{lc}*({wc}+{lane})/100",
        "anode_foil_area_cm2": f"{la}*({wa}+{lane})/100",
        "roll_thickness_mm": f"{roll}", "cell_height_mm": f"{ch}", "cell_diameter_mm": f"{dia}",
        "cell_volume_cm3": f"{vol}", "box_volume_cm3": f"{dia}*{dia}*{ch}/1000",
        "housing_body_cm3": f"{body}", "housing_lid_cm3": f"{cap}",
    }


def _prismatic(w: SheetWriter, e: ElectrodeCells, fits: list[Ref]
               ) -> tuple[dict[str, str], dict[str, str]]:
    f = FormatSheet(w, PRISM)
    w.section("Prismatic can")
    cw = f.row("Cell width W", _u("in_cell_width"), "mm", "Inputs (In use)", "0.0")
    ch = f.row("Cell height H (body)", _u("in_cell_height"), "mm", "Inputs (In use)", "0.0")
    wall = f.row("Can wall", _u("in_wall"), "mm", "Inputs (In use)", "0.000")
    bottom = f.row("Can bottom", _u("in_bottom"), "mm", "Inputs (In use)", "0.000")
    lid = f.row("Lid (with terminals, as a plate)", _u("in_lid"), "mm", "Inputs (In use)",
                "0.000")
    head = f.row("Headspace", _u("in_headspace"), "mm", "Inputs (In use)", "0.00")
    cores = f.row("Rolls or stacks", _u("in_cores"), "count", "Inputs (In use)", "0")
    w_in = f.row("Width inside", f"{cw}-2*{wall}", "mm", "W - 2 walls", "0.00")
    h_asm = f.row("Height for the electrodes", f"{ch}-{bottom}-{lid}-{head}", "mm",
                  "H - bottom - lid - headspace", "0.00")

    # ---- flat wound rolls
    w.section("Prismatic can: flat wound rolls")
    g = FormatSheet(w, WOUND)
    core = g.row("Flat mandrel", _u("in_core"), "mm", "Inputs (In use)", "0.00")
    lane = g.row("Uncoated tab lane", _u("in_tab_lane"), "mm", "Inputs (In use)", "0.00")
    wc = g.row("Cathode coated width", f"{h_asm}-({_lanes(str(lane), e)})-{e.m}", "mm",
               "height for the electrodes - lanes beyond the separator - m", "0.00")
    lc_t = g.row("Cathode strip per roll, target", f"{e.need}*100/(2*{wc})/{cores}", "mm",
                 "area needed x 100 / (2 x coated width) / rolls", "#,##0.00",
                 guard=f"AND({WOUND},{TARGET})")
    ls_t = g.row("Separator strip per roll, target", f"{lc_t}+{e.m}", "mm", "cathode + m",
                 "#,##0.00", guard=f"AND({WOUND},{TARGET})")
    roll = g.row("Roll thickness", f"IF({TARGET},CW_WOUND_THICKNESS({ls_t},{core},{e.pitch},"
                 f"{w_in}),({_u('in_cell_thickness')}-2*{wall})/{cores})", "mm",
                 "target: the flat spiral that holds the strip (CW_WOUND_THICKNESS); envelope: "
                 "(T - 2 walls) / rolls", "0.000", kind="lookup")
    ct = g.row("Cell thickness T", f"IF({TARGET},{cores}*{roll}+2*{wall},"
               f"{_u('in_cell_thickness')})", "mm", "target: rolls x roll + 2 walls", "0.00")
    b = g.row("Spiral constant b", f"{e.pitch}/1000/(2*PI())", "mm per radian", "pitch / (2 pi)",
              "0.000000")
    r0 = g.row("Mandrel half-thickness r0", f"{core}/2", "mm", "mandrel / 2", "0.000")
    r1 = g.row("Roll half-thickness R", f"{roll}/2", "mm", "roll / 2", "0.000")
    arc = g.row("Spiral part of the strip", _spiral(str(r1), str(r0), str(b)), "mm",
                "[g(R) - g(r0)] / (2b), as for the cylinder", "#,##0.00")
    ls = g.row("Separator strip per roll L_s",
               f"IF({TARGET},{ls_t},{arc}+2*({w_in}-{roll})*({roll}-{core})/2/({e.pitch}/1000))",
               "mm", "envelope: spiral + 2 straights (width inside - roll) per turn", "#,##0.00")
    g.row("The same from CW_WOUND_LENGTH", f"CW_WOUND_LENGTH({roll},{core},{e.pitch},{w_in})",
          "mm", "the core's flat spiral (a check of the line above)", "#,##0.00", kind="lookup")
    la = g.row("Anode strip per roll", f"{ls}-2*{e.os}", "mm", "L_s - 2 separator overhangs",
               "#,##0.00")
    lc = g.row("Cathode strip per roll", f"{la}-2*{e.oa}", "mm", "anode - 2 anode overhangs",
               "#,##0.00")
    wa = g.row("Anode width", f"{wc}+2*{e.oa}", "mm", "cathode + 2 anode overhangs", "0.00")
    ws_ = g.row("Separator width", f"{wa}+2*{e.os}", "mm", "anode + 2 separator overhangs",
                "0.00")
    _fit_row(w, WOUND, [
        (f"{wc}<=0",
         f'"in_cell_height "&{_num(ch)}&" mm must be > "&{_num(f"{ch}-{wc}")}'
         f'&" mm (bottom, lid, headspace, lanes and overhangs)"'),
        (f"AND({TARGET},ISERROR({roll}))",
         '"in_cell_width: the flat rolls that hold the target do not fit this width; give a '
         'wider or taller can, or more rolls"'),
        (f"AND(NOT({TARGET}),{roll}<={core}+2*{e.pitch}/1000)",
         f'"in_cell_thickness "&{_num(ct)}&" mm must be > "&'
         f'{_num(f"2*{wall}+{cores}*({core}+2*{e.pitch}/1000)")}'
         f'&" mm (two walls and one turn around the mandrel per roll)"'),
        (f"AND(NOT({TARGET}),{roll}>{w_in})",
         f'"in_cell_width "&{_num(cw)}&" mm must be >= "&{_num(f"{roll}+2*{wall}")}'
         f'&" mm (a flat roll is at least as wide as it is thick)"'),
    ], fits)
    wound = {
        "cores": f"{cores}", "turns": f"({roll}-{core})/2/({e.pitch}/1000)",
        "cathode_width_mm": f"{wc}", "cathode_length_mm": f"{lc}", "anode_width_mm": f"{wa}",
        "anode_length_mm": f"{la}", "separator_width_mm": f"{ws_}",
        "separator_length_mm": f"{ls}",
        "cathode_coated_area_cm2": f"2*{cores}*{lc}*{wc}/100",
        "anode_coated_area_cm2": f"2*{cores}*{la}*{wa}/100",
        "separator_area_cm2": f"2*{cores}*{ls}*{ws_}/100",
        "cathode_foil_area_cm2": f"{cores}*{lc}*({wc}+{lane})/100",
        "anode_foil_area_cm2": f"{cores}*{la}*({wa}+{lane})/100",
        "roll_thickness_mm": f"{roll}", "cell_thickness_mm": f"{ct}",
    }

    # ---- stacks
    w.section("Prismatic can: stacks of sheets")
    s = FormatSheet(w, STACKED)
    wd = s.row("Cathode sheet width, w", f"{w_in}-{e.m}", "mm", "width inside - m", "0.00")
    ht = s.row("Cathode sheet height, h", f"{h_asm}-{e.m}", "mm", "height for the electrodes - m",
               "0.00")
    x = s.row("Cathode sheets needed, unrounded", f"{e.need}/(2*{wd}*{ht}/100)", "sheets",
              "target: area needed / (2 faces x w x h / 100)", "0.000",
              guard=f"AND({STACKED},{TARGET})")
    total = s.row("Cathode sheets needed, all stacks", f"MAX(1,{ceil_formula(str(x))})", "sheets",
                  "target: rounded up", "0", guard=f"AND({STACKED},{TARGET})")
    fit_x = s.row("Cathode sheets that fit per stack, unrounded",
                  f"(({_u('in_cell_thickness')}-2*{wall})*1000/{cores}-{e.anode.t_foil})"
                  f"/{e.pitch}", "sheets",
                  "envelope: ((T - 2 walls) x 1000 / stacks - anode foil) / pitch", "0.000",
                  guard=f"AND({STACKED},NOT({TARGET}))")
    n = s.row("Cathode sheets per stack, n",
              f"IF({TARGET},{ceil_formula(f'{total}/{cores}')},"
              f"MAX(1,{floor_formula(str(fit_x))}))", "sheets",
              "target: all sheets / stacks, rounded up; envelope: rounded down", "0")
    k = s.row("Cathode sheets, all stacks", f"{n}*{cores}", "sheets", "n x stacks", "0")
    wa = s.row("Anode sheet width", f"{wd}+2*{e.oa}", "mm", "w + 2 anode overhangs", "0.00")
    ha = s.row("Anode sheet height", f"{ht}+2*{e.oa}", "mm", "h + 2 anode overhangs", "0.00")
    ws_ = s.row("Separator width", f"{wa}+2*{e.os}", "mm", "anode + 2 separator overhangs",
                "0.00")
    hs = s.row("Separator height", f"{ha}+2*{e.os}", "mm", "anode + 2 separator overhangs",
               "0.00")
    stack = s.row("Stack thickness",
                  f"{n}*{e.cathode.thick}+({n}+1)*{e.anode.t_foil}+2*{n}*{e.anode.t}"
                  f"+2*{n}*{e.t_sep}", "um", "one stack, as for the pouch", "#,##0")
    ct_s = s.row("Cell thickness T", f"IF({TARGET},{cores}*{stack}/1000+2*{wall},"
                 f"{_u('in_cell_thickness')})", "mm", "target: stacks x stack + 2 walls", "0.00")
    _fit_row(w, STACKED, [
        (f"{wd}<=0", f'"in_cell_width "&{_num(cw)}&" mm must be > "&{_num(f"2*{wall}+{e.m}")}'
                     f'&" mm (two walls and the overhangs)"'),
        (f"{ht}<=0", f'"in_cell_height "&{_num(ch)}&" mm must be > "&{_num(f"{ch}-{ht}")}'
                     f'&" mm (bottom, lid, headspace and overhangs)"'),
        (f"AND(NOT({TARGET}),{floor_formula(str(fit_x))}<1)",
         f'"in_cell_thickness "&{_num(_u("in_cell_thickness"))}&" mm is too thin for one '
         'cathode between two anodes per stack"'),
    ], fits)
    stacked = {
        "cores": f"{cores}", "cathode_sheets": f"{k}", "anode_sheets": f"({n}+1)*{cores}",
        "separator_layers": f"2*{k}", "cathode_width_mm": f"{wd}",
        "cathode_length_mm": f"{ht}", "anode_width_mm": f"{wa}", "anode_length_mm": f"{ha}",
        "separator_width_mm": f"{ws_}", "separator_length_mm": f"{hs}",
        "cathode_coated_area_cm2": f"2*{k}*{wd}*{ht}/100",
        "anode_coated_area_cm2": f"2*{k}*{wa}*{ha}/100",
        "separator_area_cm2": f"2*{k}*{ws_}*{hs}/100",
        "cathode_foil_area_cm2": f"{k}*{wd}*{ht}/100",
        "anode_foil_area_cm2": f"({n}+1)*{cores}*{wa}*{ha}/100",
        "stack_thickness_um": f"{stack}", "cell_thickness_mm": f"{ct_s}",
    }

    # ---- the can, either way
    w.section("Prismatic can: the housing")
    ct = f.row("Cell thickness T", f'IF(in_prismatic_core="wound",{ct},{ct_s})', "mm",
               "from the rolls or the stacks", "0.00")
    t_in = f.row("Thickness inside", f"{ct}-2*{wall}", "mm", "T - 2 walls", "0.00")
    body = f.row("Can body metal",
                 f"({cw}*{ct}*({ch}-{lid})-{w_in}*{t_in}*({ch}-{lid}-{bottom}))/1000", "cm3",
                 "outer box below the lid - the inside above the bottom", "0.000")
    plate = f.row("Lid metal", f"{cw}*{ct}*{lid}/1000", "cm3", "W x T x lid", "0.000")
    vol = f.row("Cell volume", f"{cw}*{ch}*{ct}/1000", "cm3", "W x H x T", "#,##0.0")
    common = {
        "cell_width_mm": f"{cw}", "cell_height_mm": f"{ch}", "cell_thickness_mm": f"{ct}",
        "cell_volume_cm3": f"{vol}", "box_volume_cm3": f"{vol}", "housing_body_cm3": f"{body}",
        "housing_lid_cm3": f"{plate}",
    }
    return {**wound, **common}, {**stacked, **common}


def build_format(wb: Workbook, e: ElectrodeCells) -> CellCells:
    """The three formats, the geometry in use, and the cell's pores, capacity and energy."""
    ws = wb.create_sheet("Format")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 42.0, "C": 16.0, "D": 16.0, "E": 16.0, "F": 16.0,
                     "G": 12.0, "H": 40.0})
    w.title(
        "Format: where the electrodes go and what holds them",
        "One block per format, each in both sizing modes; only the chosen format's block is "
        "filled. The table at the bottom lists every geometry number and the one in use.",
    )
    w.value("Format", "=in_format", "", "Inputs", "result")
    w.value("Sizing mode", "=in_sizing_mode", "", "Inputs", "result")
    fits: list[Ref] = []
    pouch = _pouch(w, e, fits)
    cylinder = _cylinder(w, e, fits)
    wound, stacked = _prismatic(w, e, fits)

    # ---- the geometry table
    w.section("Geometry by format, and in use")
    w.band(["Quantity", "Pouch", "Cylinder", "Prismatic", "In use", "Unit"])
    geo: dict[str, Ref] = {}
    for fld, label, unit, fmt in GEOMETRY_ROWS:
        r = w.row
        style(ws[f"B{r}"], "text").value = label
        prism = (f'IF(in_prismatic_core="wound",{wound.get(fld, chr(34) * 2)},'
                 f'{stacked.get(fld, chr(34) * 2)})')
        if wound.get(fld) == stacked.get(fld):
            prism = wound.get(fld, '""')
        cells: Mapping[str, str] = {"C": pouch.get(fld, '""'), "D": cylinder.get(fld, '""'),
                                    "E": prism}
        if fld == "tab_cm3":
            tab = ('IF(ISBLANK(in_tab_mass),use_tab_width*use_tab_thickness*use_tab_length/1000,'
                   '"")')
            cells = {"C": tab, "D": tab, "E": tab}
        guards = {"C": POUCH, "D": CYL, "E": PRISM}
        for col, body in cells.items():
            style(ws[f"{col}{r}"], "calc", fmt).value = (
                '=""' if body == '""' else f'=IF({guards[col]},{body},"")')
        style(ws[f"F{r}"], "result", fmt).value = f'=IF({POUCH},C{r},IF({CYL},D{r},E{r}))'
        style(ws[f"G{r}"], "unit").value = unit
        geo[fld] = Ref(ws.title, "F", r)
        add_name(wb, f"geo_{fld}", ws, f"$F${r}")
        w.row += 1
    w.text("A blank cell: the number does not apply to that format (sheets of a wound roll, the "
           "diameter of a pouch). Tabs: width x thickness x length of the tab metal, each of the "
           "two (blank when the tab mass is given).", kind="hint", span=6)

    # ---- the cell
    w.section("The cell")
    c, a = e.cathode, e.anode
    pore = w.value(
        "Pore volume",
        f"={geo['cathode_coated_area_cm2']}*{c.t}*1E-4*{c.eps}"
        f"+{geo['anode_coated_area_cm2']}*{a.t}*1E-4*{a.eps}"
        f"+{geo['separator_area_cm2']}*{e.t_sep}*1E-4*{e.eps_sep}",
        "cm3", "coated areas x coating thickness x porosity, + the separator's", "calc",
        "0.00", name="geo_pore_volume_cm3")
    w.value("Electrolyte volume", f"=in_electrolyte_fill*{pore}", "cm3",
            "fill x pore volume", "calc", "0.00")
    cap = w.value("Capacity (reversible)", f"={geo['cathode_coated_area_cm2']}*{e.q_rev}/1000",
                  "Ah", "coated cathode area x Q_rev / 1000", "result", "0.000")
    energy = w.value("Energy", f"={cap}*{e.V}", "Wh", "capacity x nominal voltage", "result",
                     "0.00")
    rho_ct = w.value("Cathode tab metal density", '=CW_MATERIAL(mat_cathode_tab,"density")',
                     "g/cm3", "catalogue", "lookup", "0.00")
    rho_at = w.value("Anode tab metal density",
                     f'=CW_MATERIAL({in_use_name("in_anode_tab")},"density")', "g/cm3",
                     "catalogue (the anode tab in use)", "lookup", "0.00")
    rho_h = w.value("Housing material density",
                    f'=CW_MATERIAL({in_use_name("in_housing")},"density")', "g/cm3",
                    "catalogue (the housing in use)", "lookup", "0.00")
    finish_sheet(ws, freeze="C4")
    return CellCells(geo, pore, cap, energy, rho_ct, rho_at, rho_h, tuple(fits))

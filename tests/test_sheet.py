"""The PDF build sheet: what a person at the bench reads off it, checked through the PDF's text."""

from __future__ import annotations

import dataclasses
import datetime
import re
import shutil
import subprocess
import sys

import pytest
from pypdf import PdfReader
from test_spec import DEMOS, DESIGNS

from fab import sheet
from fab.sheet import RESISTANCE_BAND_PCT, render_pages_png, write_sheet
from layout.balance import (
    Correction,
    DiscBalance,
    PocketAssignment,
    RotorBalance,
    WeighedMagnet,
    balance_rotor,
    nominal_disc_bodies,
)
from layout.design import compute_design
from layout.rotor import disc_count, pocket_marks
from layout.spec import load_spec

DATE = datetime.date(2026, 3, 14)
TERMINALS = {"A": "U", "B": "V", "C": "W"}  # IEC 60034-8 letters for phases A, B, C
# ISO 216: A4 is 210 x 297 mm = 595.3 x 841.9 pt; ANSI letter is 8.5 x 11 in = 612 x 792 pt.
PAGE_PT = {"a4": (595, 842), "letter": (612, 792)}


@pytest.fixture(scope="module")
def designs():
    return {demo: compute_design(load_spec(DESIGNS / f"{demo}.toml")) for demo in DEMOS}


@pytest.fixture(scope="module")
def sheets(designs, tmp_path_factory):
    """Each demo on both papers: (demo, paper) -> (path, reader)."""
    out = {}
    folder = tmp_path_factory.mktemp("sheets")
    for demo, d in designs.items():
        for paper in PAGE_PT:
            path = write_sheet(d, folder / f"{demo}-{paper}.pdf", paper=paper, date=DATE)
            out[demo, paper] = (path, PdfReader(path))
    return out


def page_texts(reader: PdfReader, layout: bool = False) -> list[str]:
    mode = {"extraction_mode": "layout"} if layout else {}
    return [p.extract_text(**mode) for p in reader.pages]


def section(reader: PdfReader, heading: str, layout: bool = False) -> str:
    """Text of the pages from the one whose body starts with `heading` up to the next heading."""
    texts = page_texts(reader, layout)
    plain = page_texts(reader) if layout else texts
    headings = (
        "Magnet map", "Winding checklist", "Wiring diagram", "Curves", "Where it runs", "Balance report",
        "Test plan",
    )  # fmt: skip
    start = next(i for i, t in enumerate(plain) if _first_line(t).startswith(heading))
    end = start + 1
    while end < len(plain) and not _first_line(plain[end]).startswith(headings):
        end += 1
    return "\n".join(texts[start:end])


def _first_line(text: str) -> str:
    """The first line of a page's body (the header with name and date comes last in the text)."""
    return text.strip().splitlines()[0].strip()


def fake_balance(design, weighed: bool = True) -> RotorBalance:
    """A balance plan as the balance command would hand it over, with made-up ids and masses."""
    discs, n = [], 0
    for disc in range(1, disc_count(design.spec) + 1):
        assignment = []
        for m in pocket_marks(design.geometry, disc):
            n += 1
            assignment.append(PocketAssignment(m.pocket, f"MG{n:03d}", m.face_up, 60.0 + 0.01 * n))
        corr = Correction(disc == 1, 1.6, 125.0, 33.75, 30.0, 12.0, 1.7)
        discs.append(DiscBalance(disc, 4.5, 300.0, 40.0, 45.0, tuple(assignment), corr))
    return RotorBalance(
        "G6.3",
        6.3,
        design.spec.target.max_rpm,
        9.0,
        90.0,
        tuple(discs),
        20.0,
        500.0,
        weighed,
        150.0,
        "Weighing pays here.",
        ("Weigh each magnet.", "Place them as the map shows."),
        ("Keep fingers clear when the discs close.",),
    )


# --------------------------------------------------------------------------- paper, fonts, furniture


@pytest.mark.parametrize("paper", PAGE_PT)
@pytest.mark.parametrize("demo", DEMOS)
def test_page_size(sheets, demo, paper):
    _, reader = sheets[demo, paper]
    for page in reader.pages:
        w, h = float(page.mediabox.width), float(page.mediabox.height)
        assert (round(w), round(h)) == PAGE_PT[paper]


@pytest.mark.parametrize("demo", DEMOS)
def test_every_page_has_name_date_and_number(sheets, designs, demo):
    _, reader = sheets[demo, "a4"]
    texts = page_texts(reader)
    total = len(texts)
    # Summary, one map per disc, checklist, wiring, curves, balance and materials, test plan.
    assert total >= 6 + disc_count(designs[demo].spec)
    for n, text in enumerate(texts, start=1):
        assert designs[demo].spec.name in text
        assert DATE.isoformat() in text
        assert f"page {n} of {total}" in text


def _fonts(reader: PdfReader):
    for page in reader.pages:
        for font in page["/Resources"]["/Font"].values():
            yield font.get_object()


@pytest.mark.parametrize("demo", DEMOS)
def test_fonts_are_embedded_truetype(sheets, demo):
    _, reader = sheets[demo, "letter"]
    fonts = list(_fonts(reader))
    assert fonts
    for font in fonts:
        # The standard 14 fonts have no descriptor with a font file: the PDF would rely on
        # the printer's. A TrueType program embedded is /FontFile2 (ISO 32000-1, 9.9).
        descriptor = font["/FontDescriptor"].get_object()
        assert "/FontFile2" in descriptor, font["/BaseFont"]
        assert "/ToUnicode" in font  # text can be searched and copied


def test_symbols_come_through(sheets):
    text = "\n".join(page_texts(sheets["millrace", "a4"][1]))
    for symbol in ("°C", "±", "Ω", "mm²"):
        assert symbol in text


def test_same_inputs_same_bytes(designs, tmp_path):
    a = write_sheet(designs["pedalbox"], tmp_path / "a.pdf", date=DATE)
    b = write_sheet(designs["pedalbox"], tmp_path / "b.pdf", date=DATE)
    assert a.read_bytes() == b.read_bytes()


# --------------------------------------------------------------------------- summary


@pytest.mark.parametrize("demo", DEMOS)
def test_summary_holds_the_predicted_figures(sheets, designs, demo):
    d = designs[demo]
    pr = d.prediction
    text = section(sheets[demo, "a4"][1], d.spec.name)
    assert d.spec.purpose in text
    # The open-circuit voltage with the magnets at room temperature, as on the bench.
    assert f"{pr.open_circuit_line_rms_at(pr.rated_rpm, pr.ambient_c):.1f} V" in text
    if d.spec.target.kind == "battery":  # cut-in is defined for a battery only
        assert f"{pr.cut_in_rpm:.0f} rpm" in text
    assert f"{pr.rated.dc_power_w:.0f} W" in text
    assert f"{pr.rated.efficiency:.0%}" in text
    assert f"{pr.phase_resistance_ohm:.3f} Ω per phase" in text
    for group in ("Magnets.", "Rotating parts.", "Voltage.", "Heat."):
        assert group in text
    assert "local codes" in text and "licensed" in text
    for w in d.warnings:
        assert w.message[:40] in " ".join(text.split())


def test_summary_lists_the_package_files(designs, tmp_path):
    files = [
        ("millrace-disc.dxf", "rotor disc outline", "laser-cut from 8 mm steel"),
        ("millrace-jig.stl", "winding jig", "print in PETG, 40 % infill"),
    ]
    path = write_sheet(designs["millrace"], tmp_path / "s.pdf", files=files, date=DATE)
    text = page_texts(PdfReader(path))[0]
    for name, what, how in files:
        assert name in text and what in text and how in text
    alone = write_sheet(designs["millrace"], tmp_path / "alone.pdf", date=DATE)
    assert "written on its own" in page_texts(PdfReader(alone))[0]


# --------------------------------------------------------------------------- magnet maps


@pytest.mark.parametrize("demo", DEMOS)
def test_a_map_per_disc_to_a_stated_scale(sheets, designs, demo):
    d = designs[demo]
    texts = page_texts(sheets[demo, "a4"][1])
    maps = [t for t in texts if _first_line(t).startswith("Magnet map")]
    assert len(maps) == disc_count(d.spec)
    for text in maps:
        assert "INDEX" in text
        assert re.search(r"scale 1:(1|2|5|10|20|50|100)\b", text)
        assert "check it before using this map as a template" in text
        assert "any magnet may go in any" in text
        numbers = set(re.findall(r"^\s*(\d+)\s*$", text, flags=re.M))
        assert {str(k) for k in range(1, d.spec.magnets.count + 1)} <= numbers
    if disc_count(d.spec) == 2:
        assert "Clocking the second disc" in maps[1]


def test_map_scale_is_the_largest_that_fits():
    mm = sheet.MM
    # A 270 mm disc on a 182 mm wide frame: 1:1 cannot fit, 1:2 (135 mm + labels) can.
    assert sheet._map_scale(270, 182 * mm, 200 * mm) == 2
    assert sheet._map_scale(150, 182 * mm, 200 * mm) == 1
    assert sheet._map_scale(600, 182 * mm, 200 * mm) == 5


def test_map_names_the_magnets_of_the_balance_plan(designs, tmp_path):
    d = designs["millrace"]
    plan = fake_balance(d)
    reader = PdfReader(write_sheet(d, tmp_path / "b.pdf", balance=plan, date=DATE))
    text = "\n".join(page_texts(reader))
    for db in plan.discs:
        for a in db.assignment:
            assert a.magnet in text
            assert f"{a.mass_g:.2f}" in text
    # Disc 1 needs a correction: where it goes, between which magnets.
    assert "add 1.6 g at 125 mm radius" in text
    assert "between places 2 and 3" in text
    assert "G6.3" in text and "90 g·mm" in text
    assert "Weigh each magnet." in text


def test_map_takes_the_plan_of_the_balance_module(designs, tmp_path):
    d = designs["pedalbox"]
    n = d.spec.magnets.count * disc_count(d.spec)
    masses = [WeighedMagnet(f"P{k:02d}", 42.0 + 0.07 * ((5 * k) % 11)) for k in range(1, n + 1)]
    plan = balance_rotor(d, nominal_disc_bodies(d), masses)
    text = "\n".join(page_texts(PdfReader(write_sheet(d, tmp_path / "p.pdf", balance=plan, date=DATE))))
    for db in plan.discs:
        for a in db.assignment:
            assert re.search(rf"^\s*{a.magnet}\s*$", text, re.M), a.magnet  # on the map
    assert "written inside the ring" in " ".join(text.split())
    unweighed = balance_rotor(d, nominal_disc_bodies(d), None)
    text = "\n".join(page_texts(PdfReader(write_sheet(d, tmp_path / "u.pdf", balance=unweighed, date=DATE))))
    assert "any magnet may go in any" in " ".join(text.split())
    assert unweighed.weighing_advice in " ".join(text.split())


def test_correction_angles_are_read_as_marked_on_the_part(designs):
    d = designs["millrace"]  # 16 magnets: a place every 22.5°
    assert sheet._between_pockets(d, 1, 33.75) == (2, 3)
    # Disc 2 is made mirrored: 33.75° on the machine is 326.25° on the part.
    assert sheet._between_pockets(d, 2, 326.25) == (2, 3)
    assert sheet._between_pockets(d, 2, 33.75) == (15, 16)


def test_a_balance_plan_that_disagrees_with_the_design_is_refused(designs, tmp_path):
    d = designs["millrace"]
    plan = fake_balance(d)
    first = plan.discs[0]
    flipped = dataclasses.replace(first.assignment[0], face="S" if first.assignment[0].face == "N" else "N")
    bad_disc = dataclasses.replace(first, assignment=(flipped, *first.assignment[1:]))
    bad = dataclasses.replace(plan, discs=(bad_disc, *plan.discs[1:]))
    with pytest.raises(ValueError, match="pocket 1 of disc 1"):
        write_sheet(d, tmp_path / "bad.pdf", balance=bad, date=DATE)
    short = dataclasses.replace(plan, discs=(dataclasses.replace(first, assignment=first.assignment[1:]),))
    with pytest.raises(ValueError, match="empty"):
        write_sheet(d, tmp_path / "short.pdf", balance=short, date=DATE)
    assert not list(tmp_path.iterdir())  # nothing half written


def test_a_plain_steel_disc_is_fitted_listed_and_balanced(sheets, designs, tmp_path):
    d = designs["hilltop"]  # one magnet disc, a plain 8 mm steel disc across the stator
    reader = sheets["hilltop", "a4"][1]
    summary = " ".join(section(reader, d.spec.name).split())
    assert "one magnet disc facing a plain steel disc across a coreless stator" in summary
    maps = [t for t in page_texts(reader) if _first_line(t).startswith("Magnet map")]
    assert len(maps) == 1  # the plain disc has no magnets to map
    fitting = " ".join(maps[0].split())
    assert "The plain steel disc (disc 2) carries no magnets" in fitting
    assert f"about {d.forces.axial_force_n:.0f} N" in fitting
    materials = " ".join(section(reader, "Balance report").split())
    assert "magnet disc, steel" in materials and "plain disc, steel" in materials
    assert "1 x 290 mm dia. x 8 mm" in materials and f"{d.forces.steel_disc_mass_kg:.2f} kg" in materials
    assert "4 per disc" in materials and "the two discs" in materials
    # A balance plan with the plain disc heavy off centre: its correction is placed by angle
    # from its index mark, as it has no pockets to count between.
    one, two = nominal_disc_bodies(d)
    heavy = dataclasses.replace(two, com_offset_mm=(0.0, 1.0))
    plan = balance_rotor(d, (one, heavy), None)
    assert plan.discs[1].correction.needed
    text = " ".join(
        " ".join(page_texts(PdfReader(write_sheet(d, tmp_path / "b.pdf", balance=plan, date=DATE)))).split()
    )
    assert "the plain steel disc" in text and "static unbalance, both discs" in text
    corr = plan.discs[1].correction
    assert (
        f"add {corr.add_g:.1f} g at {corr.radius_mm:.0f} mm, {corr.angle_deg:.0f}° from the index mark"
        in text
    )


# --------------------------------------------------------------------------- winding checklist


@pytest.mark.parametrize("demo", DEMOS)
def test_checklist_has_a_row_per_coil(sheets, designs, demo):
    d = designs[demo]
    pr, lay = d.prediction, d.layout
    text = section(sheets[demo, "a4"][1], "Winding checklist", layout=True)
    wire = pr.wire.name + (f" x{pr.wire.strands}" if pr.wire.strands > 1 else "")
    lo = pr.coil_resistance_ohm * (1 - RESISTANCE_BAND_PCT / 100)
    hi = pr.coil_resistance_ohm * (1 + RESISTANCE_BAND_PCT / 100)
    for c in lay.coils:
        phase = f"{c.phase} \\({TERMINALS[c.phase]}\\)" if lay.phases == 3 else "single"
        connect = r"REVERSED\s+F / S" if c.polarity < 0 else r"as wound\s+S / F"
        path = rf"\s+{c.path}" if lay.parallel_paths > 1 else ""
        row = (
            rf"^\s*{c.index}\s+{c.angle_deg:.0f}°\s+{phase}{path}\s+CW\s+{connect}\s+{pr.turns_per_coil}\s+"
            rf"{re.escape(wire)}\s+{pr.coil_resistance_ohm:.3f}\s*$"
        )
        assert len(re.findall(row, text, flags=re.M)) == 1, f"coil {c.index}"
    assert text.count(f"{lo:.3f}–{hi:.3f}") == len(lay.coils)
    assert f"±{RESISTANCE_BAND_PCT} %" in text
    assert text.count("REVERSED") == sum(c.polarity < 0 for c in lay.coils)


def test_checklist_carries_parallel_paths_and_reversed_three_phase_coils(tmp_path):
    spec = load_spec(DESIGNS / "millrace.toml")
    # 12 coils under 14 magnets: every phase has reversed coils; two paths per phase.
    spec = dataclasses.replace(
        spec,
        magnets=dataclasses.replace(spec.magnets, count=14),
        connection=dataclasses.replace(spec.connection, parallel_paths=2),
    )
    d = compute_design(spec)
    assert any(c.polarity < 0 for c in d.layout.coils) and d.layout.parallel_paths == 2
    reader = PdfReader(write_sheet(d, tmp_path / "v.pdf", date=DATE))
    text = section(reader, "Winding checklist", layout=True)
    for c in d.layout.coils:
        connect = "REVERSED\\s+F / S" if c.polarity < 0 else "as wound\\s+S / F"
        row = rf"^\s*{c.index}\s+{c.angle_deg:.0f}°\s+{c.phase} \(\w\)\s+{c.path}\s+CW\s+{connect}"
        assert re.search(row, text, re.M), f"coil {c.index}"
    wiring = section(reader, "Wiring diagram")
    assert "2 paths in parallel" in wiring
    assert len(re.findall(r"^REVERSED$", wiring, re.M)) == sum(c.polarity < 0 for c in d.layout.coils)


# --------------------------------------------------------------------------- wiring


@pytest.mark.parametrize("demo", DEMOS)
def test_wiring_names_every_coil_and_the_terminals(sheets, designs, demo):
    d = designs[demo]
    text = section(sheets[demo, "a4"][1], "Wiring diagram")
    tokens = text.split()
    for phase in d.layout.phase_names:
        t = TERMINALS[phase]
        assert f"{t}1" in tokens and f"{t}2" in tokens  # IEC 60034-8 markings
    for c in d.layout.coils:
        assert str(c.index) in tokens
    kind = d.spec.connection.kind
    if kind == "star":
        assert "star point" in text
    elif kind == "delta":
        assert "L1" in tokens and "join U1 to W2, V1 to U2 and W1 to V2" in text
    assert "DC+" in tokens and "DC−" in tokens and "diode bridge" in text
    # Each reversed coil is drawn boxed and labelled (the words above name the mark once).
    assert len(re.findall(r"^REVERSED$", text, re.M)) == sum(c.polarity < 0 for c in d.layout.coils)


# --------------------------------------------------------------------------- curves, materials, test plan


@pytest.mark.parametrize("demo", DEMOS)
def test_curves_mark_cut_in_and_the_battery(sheets, designs, demo):
    d = designs[demo]
    text = section(sheets[demo, "a4"][1], "Curves")
    ta = d.spec.target
    # Cut-in is defined only where a battery or a converter holds the voltage; a resistor draws
    # from the start.
    assert (f"cut-in {d.prediction.cut_in_rpm:.0f} rpm" in text) == (ta.kind == "battery")
    assert (f"converter starts {d.prediction.cut_in_rpm:.0f} rpm" in text) == (ta.kind == "converter")
    summary = " ".join(page_texts(sheets[demo, "a4"][1])[0].split())  # page 1: the summary table
    assert bool(re.search(r"cut-in \d+ rpm: the", summary)) == (ta.kind == "battery")
    assert bool(re.search(r"converter starts \d+ rpm: the", summary)) == (ta.kind == "converter")
    if ta.kind == "battery":
        level = f"battery {ta.battery_v:g} V"
    elif ta.kind == "converter":
        level = f"converter's limit {ta.max_input_v:g} V"
    else:
        level = f"target {ta.voltage_v:g} V"
    assert level in text
    assert "Efficiency" in text and "one period" in text


@pytest.mark.parametrize("demo", DEMOS)
def test_materials_with_margin(sheets, designs, demo):
    d = designs[demo]
    pr = d.prediction
    text = " ".join(section(sheets[demo, "a4"][1], "Balance report").split())
    per_phase_m = pr.wire_length_per_phase_m * (1 + sheet.WIRE_MARGIN_PCT / 100)
    assert f"{per_phase_m:.0f} m and" in text
    n = d.spec.magnets.count * disc_count(d.spec)
    assert f"{n * d.forces.magnet_mass_g / 1000:.2f} kg in all" in text
    assert "cm³" in text and "dowel pins" in text
    assert "No balance plan came with this sheet" in text


@pytest.mark.parametrize("demo", DEMOS)
def test_test_plan_gives_the_expected_readings(sheets, designs, demo):
    d = designs[demo]
    pr, ta = d.prediction, d.spec.target
    text = " ".join(section(sheets[demo, "a4"][1], "Test plan").split())
    # The open-circuit voltage at the rated speed, magnets at room temperature: Br typical,
    # falling by the grade's coefficient per K over 20 °C; the band is the grade's Br span
    # (layout.materials) and ±10 % beyond it.
    from layout.materials import MAGNET_GRADES

    g = MAGNET_GRADES[d.spec.magnets.grade]
    warm = 1 + g.br_temp_coeff_per_k * (ta.ambient_c - 20)
    v = pr.open_circuit_line_rms_v * warm
    lo, hi = 0.9 * v * g.br_range_t[0] / g.remanence_t, 1.1 * v * g.br_range_t[1] / g.remanence_t
    assert f"open circuit at {ta.rated_rpm:g} rpm" in text
    assert f"{v:.1f} V rms ({lo:.1f} to {hi:.1f} V)" in text
    # Electrical frequency = pole pairs x rpm / 60, for reading the speed off a meter.
    assert f"{d.layout.pole_pairs * ta.rated_rpm / 60:.1f} Hz" in text
    r = pr.phase_resistance_ohm
    assert f"{r:.3f} Ω ({0.9 * r:.3f} to {1.1 * r:.3f} Ω)" in text
    for phase in d.layout.phase_names:
        assert f"{TERMINALS[phase]}1 to {TERMINALS[phase]}2" in text
    assert "insulation" in text and "MΩ" in text


def _stated(figures: dict, what: str, rpm: float) -> str:
    """A voltage as both pages print it: one decimal, or whole volts at the highest speed."""
    return f"{figures[what, rpm]:.1f} V"


@pytest.mark.parametrize("toml", sorted(p.stem for p in DESIGNS.glob("*.toml")))
def test_test_plan_expects_the_summary_s_voltages(sheets, designs, toml):
    d = designs[toml]
    ta, rated = d.spec.target, d.prediction.rated
    plan, summary = sheet.bench_voltages(d), sheet.summary_voltages(d)
    both = plan.keys() & summary.keys()
    # Every speed the summary states a voltage at, the plan states one at too, and the same;
    # but a battery's or a converter's voltage under load, which it sets itself and the plan
    # does not check.
    holds = ta.kind in ("battery", "converter")
    assert both == {k for k in summary if k[0] == "open circuit" or not holds}
    assert {("open circuit", ta.rated_rpm), ("open circuit", ta.max_rpm)} <= both
    if holds:
        assert ("open circuit", round(d.prediction.cut_in_rpm)) in both
    else:
        assert ("loaded", rated.rpm) in both
    for key in both:
        assert plan[key] == summary[key], key
    # And the pages print those figures.
    reader = sheets[toml, "a4"][1]
    summary_text = " ".join(section(reader, d.spec.name).split())
    plan_text = " ".join(section(reader, "Test plan").split())
    for what, rpm in both:
        words = (
            f"{summary[what, rpm]:.0f} V at {rpm:g} rpm" if rpm == ta.max_rpm else _stated(summary, what, rpm)
        )
        assert words in summary_text and words in plan_text, (what, rpm, words)


LINE_LOAD = (("target.kind", "ac_line"), ("target.voltage_v", 230.0), ("target.rated_current_a", 0.5))
NO_RECTIFIER = re.compile(r"bridge|rectif|diode|DC\+|DC−", re.I)


@pytest.mark.parametrize("connection", ["star", "delta"])
def test_a_line_load_is_wired_with_no_rectifier(tmp_path, connection):
    from demos import design

    d = design("millrace", *LINE_LOAD, ("connection.kind", connection))
    notes = [sheet._connection_heading(d), *sheet._connection_notes(d)]
    assert not [n for n in notes if NO_RECTIFIER.search(n)], notes
    assert any("AC load" in n for n in notes)
    reader = PdfReader(write_sheet(d, tmp_path / "line.pdf", date=DATE))
    wiring = " ".join(section(reader, "Wiring diagram").split())
    assert not NO_RECTIFIER.search(wiring), wiring
    # The summary and the plan agree for a line load too, with no cut-in in either.
    plan, summary = sheet.bench_voltages(d), sheet.summary_voltages(d)
    assert summary.keys() <= plan.keys() and all(plan[k] == summary[k] for k in summary)
    assert sheet._bench_speeds(d) == [100.0, d.spec.target.rated_rpm]


# --------------------------------------------------------------------------- writing and rendering


def test_written_atomically(designs, tmp_path, monkeypatch):
    target = tmp_path / "sheet.pdf"
    target.write_bytes(b"the old sheet")

    def broken(*args, **kwargs):
        raise RuntimeError("disk full")

    monkeypatch.setattr(sheet, "_build", broken)
    with pytest.raises(RuntimeError):
        write_sheet(designs["hilltop"], target, date=DATE)
    assert target.read_bytes() == b"the old sheet"
    assert [p.name for p in tmp_path.iterdir()] == ["sheet.pdf"]
    monkeypatch.undo()
    write_sheet(designs["hilltop"], target, date=DATE)
    assert target.read_bytes().startswith(b"%PDF")
    assert [p.name for p in tmp_path.iterdir()] == ["sheet.pdf"]


def test_paper_must_be_known(designs, tmp_path):
    with pytest.raises(ValueError, match="a4, letter"):
        write_sheet(designs["hilltop"], tmp_path / "s.pdf", paper="a3")


def test_reportlab_loads_only_when_a_sheet_is_drawn():
    code = "import sys, fab.sheet; print('reportlab' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


NO_PDFTOPPM = "pdftoppm (poppler-utils) is not installed: pages cannot be rendered to PNG"


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason=NO_PDFTOPPM)
def test_every_page_renders_to_png(sheets, tmp_path):
    path, reader = sheets["millrace", "a4"]
    (tmp_path / f"{path.stem}-page-99.png").write_bytes(b"stale")
    pngs = render_pages_png(path, tmp_path, dpi=30)
    assert [p.name for p in pngs] == [
        f"{path.stem}-page-{n:02d}.png" for n in range(1, len(reader.pages) + 1)
    ]
    assert sorted(tmp_path.glob("*.png")) == pngs
    for png in pngs:
        data = png.read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n"
        width, height = int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")
        # A4 at 30 dpi is 248 x 351 pixels; the rasteriser may round a pixel up.
        assert abs(width - 210 / 25.4 * 30) <= 1 and abs(height - 297 / 25.4 * 30) <= 1


def test_render_says_what_is_missing(tmp_path, monkeypatch):
    monkeypatch.setattr(shutil, "which", lambda name: None)
    with pytest.raises(sheet.RenderUnavailable, match="poppler-utils"):
        render_pages_png(tmp_path / "x.pdf", tmp_path)


@pytest.mark.parametrize("demo", DEMOS)
def test_source_page_shows_the_steady_points_and_energy(sheets, designs, demo):
    """The source page: each steady point's speed and output as plan gives them, the energy
    in the same words, the runaway; a design without a [source] has no such page."""
    from fab.report import energy_words

    d = designs[demo]
    text = " ".join(section(sheets[demo, "a4"][1], "Where it runs").split())
    assert " ".join(energy_words(d).split()) in text
    assert f"Runaway: {d.operating.runaway_rpm:.0f} rpm" in text
    for r in d.operating.rows:
        if r.point is not None and (d.operating.source.kind != "wind" or r.condition <= 7):
            assert f"{r.rpm:.0f} " in text and f"{r.output_power_w:.0f} " in text


def test_no_source_no_source_page(tmp_path):
    text = (DESIGNS / "millrace.toml").read_text(encoding="utf-8").split("# The turbine")[0]
    path = tmp_path / "plain.toml"
    path.write_text(text, encoding="utf-8")
    d = compute_design(load_spec(path))
    pdf = write_sheet(d, tmp_path / "plain.pdf", date=DATE)
    assert not any(t.strip().startswith("Where it runs") for t in page_texts(PdfReader(pdf)))

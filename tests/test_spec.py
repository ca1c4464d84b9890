"""Design files: the demos load, and every kind of bad input is one clear line."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from layout.design import compute_design
from layout.spec import DesignError, load_spec

DESIGNS = Path(__file__).resolve().parents[1] / "designs"
DEMOS = ("hilltop", "millrace", "pedalbox", "fieldkit")
BAD_NAME = "creek.toml"


def demo_text(demo: str) -> str:
    return (DESIGNS / f"{demo}.toml").read_text(encoding="utf-8")


def edited(demo: str, old: str, new: str) -> str:
    """The demo's text with `old` (which must occur exactly once) replaced by `new`."""
    text = demo_text(demo)
    assert text.count(old) == 1, f"{old!r} is not unique in {demo}.toml"
    return text.replace(old, new)


# (id, demo, old text, new text, key, value as shown, words of the reason)
BAD_EDITS = [
    ("unknown top-level key", "millrace", 'name = "millrace"', 'name = "millrace"\ncolour = "red"',
     "colour", '"red"', "unknown key"),
    ("unknown key in a table", "millrace", "fill_factor = 0.5", "fil_factor = 0.5",
     "stator.fil_factor", "0.5", "unknown key"),
    ("wrong type", "millrace", "thickness_mm = 15.0", 'thickness_mm = "13"',
     "stator.thickness_mm", '"13"', "must be a number"),
    ("boolean for a number", "millrace", "count = 16", "count = true",
     "magnets.count", "true", "must be a number"),
    ("fraction for a whole number", "millrace", "coil_positions = 12", "coil_positions = 12.5",
     "stator.coil_positions", "12.5", "whole number"),
    ("text not in the list", "millrace", 'binder = "epoxy"', 'binder = "glue"',
     "stator.binder", '"glue"', "must be one of"),
    ("out of range", "millrace", "fill_factor = 0.5", "fill_factor = 0.9",
     "stator.fill_factor", "0.9", "at most 0.75"),
    ("not finite", "millrace", "thickness_mm = 15.0", "thickness_mm = nan",
     "stator.thickness_mm", "nan", "finite"),
    ("odd magnet count", "millrace", "count = 16", "count = 15",
     "magnets.count", "15", "must be even"),
    ("missing required key", "millrace", "thickness_mm = 15.0\n", "",
     "stator.thickness_mm", "(not given)", "required"),
    ("misspelt table", "pedalbox", "[connection]\n", "[conection]\n",
     "conection", "{", "unknown key"),
    ("block without length", "millrace", "length_mm = 40.0      # radial\n", "",
     "magnets.length_mm", "(not given)", 'required for magnets.shape = "block"'),
    ("disc with a length", "pedalbox", "diameter_mm = 30.0", "diameter_mm = 30.0\nlength_mm = 9",
     "magnets.length_mm", "9", 'only for magnets.shape = "block"'),
    ("grade and remanence both", "millrace", 'grade = "N42"', 'grade = "N42"\nremanence_t = 1.3',
     "magnets.grade", '"N42"', "exactly one of magnets.grade and magnets.remanence_t"),
    ("neither grade nor remanence", "hilltop", 'grade = "N45"\n', "",
     "magnets.grade", "(not given)", "exactly one"),
    ("three phases, single-phase connection", "millrace", 'kind = "star"',
     'kind = "single_phase"', "connection.kind", '"single_phase"', "stator.phases = 3"),
    ("one phase, delta connection", "pedalbox", 'kind = "single_phase"', 'kind = "delta"',
     "connection.kind", '"delta"', "stator.phases = 1"),
    ("two phases", "millrace", "phases = 3", "phases = 2",
     "stator.phases", "2", "1 (single phase) or 3"),
    ("empty position above the count", "millrace", "coil_positions = 12",
     "coil_positions = 12\nempty_positions = [3, 13]",
     "stator.empty_positions", "[3, 13]", "numbered 1 to 12"),
    ("empty position zero", "millrace", "coil_positions = 12",
     "coil_positions = 12\nempty_positions = [0]",
     "stator.empty_positions", "[0]", "numbered 1 to 12"),
    ("empty position twice", "millrace", "coil_positions = 12",
     "coil_positions = 12\nempty_positions = [4, 4]",
     "stator.empty_positions", "[4, 4]", "twice"),
    ("empty positions not a list", "millrace", "coil_positions = 12",
     "coil_positions = 12\nempty_positions = 4",
     "stator.empty_positions", "4", "list of whole numbers"),
    ("max_rpm below rated_rpm", "millrace", "max_rpm = 550.0", "max_rpm = 250.0",
     "target.max_rpm", "250.0", "at least target.rated_rpm (300)"),
    ("cut-in above rated", "hilltop", "cut_in_rpm = 140.0", "cut_in_rpm = 400.0",
     "target.cut_in_rpm", "400.0", "below target.rated_rpm (260)"),
    ("battery without its voltage", "millrace", "battery_v = 48.0\n", "",
     "target.battery_v", "(not given)", 'required for target.kind = "battery"'),
    # A converter on the bus: its window, its tracking, its keys on other loads.
    ("converter without its window", "fieldkit", "max_input_v = 30.0\n", "",
     "target.max_input_v", "(not given)", 'required for target.kind = "converter"'),
    ("converter window upside down", "fieldkit", "max_input_v = 30.0", "max_input_v = 6.0",
     "target.max_input_v", "6.0", "must be above target.min_input_v (6.5)"),
    ("fixed tracking without its level", "fieldkit", "input_v = 9.0\n", "",
     "target.input_v", "(not given)", 'required for target.tracking = "fixed"'),
    ("fixed level outside the window", "fieldkit", "input_v = 9.0", "input_v = 40.0",
     "target.input_v", "40.0", "must lie in the converter's input window, 6.5 to 30 V"),
    ("a level with tracking", "fieldkit", 'tracking = "fixed"', 'tracking = "mppt"',
     "target.input_v", "9.0", 'only for target.tracking = "fixed"'),
    ("unknown tracking", "fieldkit", 'tracking = "fixed"', 'tracking = "best"',
     "target.tracking", '"best"', "must be one of mppt, fixed"),
    ("converter efficiency as a percentage", "fieldkit", "efficiency = 0.88", "efficiency = 88",
     "target.efficiency", "88", "at most 0.99"),
    ("converter keys on a battery", "millrace", "battery_v = 48.0", "battery_v = 48.0\nmax_input_v = 150",
     "target.max_input_v", "150", 'only for target.kind = "converter"'),
    ("steel stator without its plate", "millrace", 'topology = "two_discs"',
     'topology = "one_disc_steel_stator"', "rotor.stator_plate_thickness_mm", "(not given)", "required"),
    ("stationary plate behind a plain disc", "hilltop", "steel_disc_thickness_mm = 8.0",
     "steel_disc_thickness_mm = 8.0\nstator_plate_thickness_mm = 8", "rotor.stator_plate_thickness_mm",
     "8", 'only for rotor.topology = "one_disc_steel_stator"'),
    ("plain disc's thickness on two magnet discs", "millrace", "bore_diameter_mm = 35.0",
     "bore_diameter_mm = 35.0\nsteel_disc_thickness_mm = 6", "rotor.steel_disc_thickness_mm", "6",
     'only for rotor.topology = "one_disc_steel_disc"'),
    ("plain disc that is not magnetic", "hilltop", "steel_disc_thickness_mm = 8.0",
     'steel_disc_thickness_mm = 8.0\nsteel_disc_material = "aluminium"', "rotor.steel_disc_material",
     '"aluminium"', "closes the magnets' flux: use a magnetic material (steel)"),
    ("plain disc too thin", "hilltop", "steel_disc_thickness_mm = 8.0", "steel_disc_thickness_mm = 0.2",
     "rotor.steel_disc_thickness_mm", "0.2", "at least 0.5"),
    ("magnets reaching the bore", "millrace", "bore_diameter_mm = 35.0",
     "bore_diameter_mm = 180.0", "magnets.pitch_radius_mm", "105.0", "bore"),
    # Build keys: rotor features, stator rim and lugs, the [fab] table.
    ("pockets in a steel disc", "millrace", "disc_thickness_mm = 8.0",
     "disc_thickness_mm = 8.0\npocket_depth_mm = 5", "rotor.pocket_depth_mm", "5",
     "only for non-magnetic discs"),
    ("pocket deeper than the magnet", "millrace", 'disc_material = "steel"\ndisc_thickness_mm = 8.0',
     'disc_material = "pla"\ndisc_thickness_mm = 12.0\npocket_depth_mm = 10.5',
     "rotor.pocket_depth_mm", "10.5", "at most magnets.thickness_mm (10)"),
    ("pocket leaving no floor", "millrace", 'disc_material = "steel"\ndisc_thickness_mm = 8.0',
     'disc_material = "pla"\ndisc_thickness_mm = 8.0\npocket_depth_mm = 7.5',
     "rotor.pocket_depth_mm", "7.5", "at most 7: leave a floor"),
    ("printed disc too thin for pockets", "millrace", 'disc_material = "steel"\ndisc_thickness_mm = 8.0',
     'disc_material = "petg"\ndisc_thickness_mm = 1.2', "rotor.disc_thickness_mm", "1.2",
     "too thin for magnet pockets"),
    ("pocket clearance too large", "millrace", "bore_diameter_mm = 35.0",
     "bore_diameter_mm = 35.0\npocket_clearance_mm = 5", "rotor.pocket_clearance_mm", "5", "at most 3"),
    ("web too thin", "millrace", "bore_diameter_mm = 35.0", "bore_diameter_mm = 35.0\nmin_web_mm = 0.2",
     "rotor.min_web_mm", "0.2", "at least 0.5"),
    ("two hub bolts", "millrace", "bore_diameter_mm = 35.0", "bore_diameter_mm = 35.0\nhub_bolts = 2",
     "rotor.hub_bolts", "2", "at least 3"),
    ("hub hole of no size", "millrace", "bore_diameter_mm = 35.0",
     "bore_diameter_mm = 35.0\nhub_hole_diameter_mm = 0", "rotor.hub_hole_diameter_mm", "0", "at least 1"),
    ("unknown jacking screw", "millrace", "bore_diameter_mm = 35.0",
     'bore_diameter_mm = 35.0\njacking_screw = "M9"', "rotor.jacking_screw", '"M9"', "must be one of M5, M6"),
    ("two jacking screws", "millrace", "bore_diameter_mm = 35.0",
     "bore_diameter_mm = 35.0\njacking_screws = 2", "rotor.jacking_screws", "2",
     "at least 3 and at most 12 (three or more hold the disc level)"),
    ("two mounting lugs", "millrace", "coil_clearance_mm = 1.5", "coil_clearance_mm = 1.5\nmounting_lugs = 2",
     "stator.mounting_lugs", "2", "at least 3"),
    ("no resin rim", "millrace", "coil_clearance_mm = 1.5", "coil_clearance_mm = 1.5\nresin_rim_mm = 0",
     "stator.resin_rim_mm", "0", "at least 1"),
    ("negative kerf", "millrace", "diode_drop_v = 0.9", "diode_drop_v = 0.9\n\n[fab]\nkerf_mm = -0.1",
     "fab.kerf_mm", "-0.1", "at least 0"),
    ("unknown key in [fab]", "millrace", "diode_drop_v = 0.9", "diode_drop_v = 0.9\n\n[fab]\nkerf = 0.1",
     "fab.kerf", "0.1", "unknown key; allowed: kerf_mm"),
    ("[fab] not a table", "millrace", 'name = "millrace"', 'fab = 3\nname = "millrace"',
     "fab", "3", "must be a table ([fab])"),
    ("template thicker than the magnets", "millrace", "diode_drop_v = 0.9",
     "diode_drop_v = 0.9\n\n[fab]\ntemplate_thickness_mm = 12", "fab.template_thickness_mm", "12",
     "at most magnets.thickness_mm (10)"),
    ("STL tolerance too fine", "millrace", "diode_drop_v = 0.9",
     "diode_drop_v = 0.9\n\n[fab]\nstl_tolerance_mm = 0.001", "fab.stl_tolerance_mm", "0.001",
     "at least 0.005"),
]  # fmt: skip


@pytest.mark.parametrize("demo", DEMOS)
def test_demo_designs_load(demo):
    spec = load_spec(DESIGNS / f"{demo}.toml")
    raw = tomllib.loads(demo_text(demo))
    assert spec.file == f"{demo}.toml"
    assert spec.name == raw["name"] == demo
    assert spec.stator.coil_positions == raw["stator"]["coil_positions"]
    assert spec.stator.phases == raw["stator"]["phases"]
    assert spec.magnets.count == raw["magnets"]["count"]
    assert spec.connection.kind == raw["connection"]["kind"]
    # Keys left out take their defaults.
    assert spec.connection.parallel_paths == raw["connection"].get("parallel_paths", 1)
    assert spec.stator.empty_positions == ()
    # The [fab] table is optional; every key of it has a default.
    assert spec.fab.kerf_mm == raw.get("fab", {}).get("kerf_mm", 0.0)


def one_line_error(path: Path) -> str:
    with pytest.raises(DesignError) as info:
        load_spec(path)
    message = str(info.value)
    assert "\n" not in message and "\r" not in message, message
    assert message.startswith(f"{path.name}: "), message
    return message


@pytest.mark.parametrize(
    ("demo", "old", "new", "key", "shown", "reason"),
    [case[1:] for case in BAD_EDITS],
    ids=[case[0] for case in BAD_EDITS],
)
def test_bad_value_is_one_line_naming_file_key_and_value(tmp_path, demo, old, new, key, shown, reason):
    path = tmp_path / BAD_NAME
    path.write_text(edited(demo, old, new), encoding="utf-8")
    message = one_line_error(path)
    assert message.startswith(f"{BAD_NAME}: {key} = {shown}"), message
    assert reason in message, message


def test_odd_magnet_count_message(tmp_path):
    path = tmp_path / BAD_NAME
    path.write_text(edited("millrace", "count = 16", "count = 15"), encoding="utf-8")
    assert one_line_error(path) == ("creek.toml: magnets.count = 15: must be even (magnets alternate N/S)")


def test_missing_table(tmp_path):
    text = demo_text("millrace")
    path = tmp_path / BAD_NAME
    path.write_text(text[: text.index("[target]")], encoding="utf-8")
    assert "[target]" in one_line_error(path)


# (id, file contents, or None for no file, words of the reason)
BAD_FILES = [
    ("missing file", None, "no such file"),
    ("empty file", b"", "is empty"),
    ("blank file", b"  \n\n\t\n", "is empty"),
    ("broken TOML", edited("millrace", "[stator]", "[stator").encode(), "is not valid TOML"),
    ("not UTF-8", b'name = "caf\xe9"\n', "not UTF-8"),
]


@pytest.mark.parametrize(("contents", "reason"), [c[1:] for c in BAD_FILES],
                         ids=[c[0] for c in BAD_FILES])  # fmt: skip
def test_bad_file_is_one_line_naming_the_file(tmp_path, contents, reason):
    path = tmp_path / BAD_NAME
    if contents is not None:
        path.write_bytes(contents)
    assert reason in one_line_error(path)


def test_folder_is_not_a_design(tmp_path):
    folder = tmp_path / BAD_NAME
    folder.mkdir()
    assert "folder" in one_line_error(folder)


def test_value_with_a_newline_still_gives_one_line(tmp_path):
    path = tmp_path / BAD_NAME
    path.write_text(edited("millrace", 'binder = "epoxy"', 'binder = "ep\\noxy"'), "utf-8")
    one_line_error(path)


HEAD = b'name = "x"\npurpose = "y"\nz = '
HOSTILE = [
    # (id, file contents, words of the reason)
    ("arrays nested a thousand deep", HEAD + b"[" * 1200 + b"]" * 1200, "nested"),
    ("inline tables nested a thousand deep", HEAD + b"{a = " * 1200 + b"1" + b"}" * 1200, "nested"),
    ("a five-thousand-digit integer", HEAD + b"9" * 5000, "thousands of digits"),
]


@pytest.mark.parametrize(("contents", "reason"), [h[1:] for h in HOSTILE], ids=[h[0] for h in HOSTILE])
def test_hostile_toml_is_one_line(tmp_path, contents, reason):
    path = tmp_path / BAD_NAME
    path.write_bytes(contents)
    assert reason in one_line_error(path)


def test_integer_hundreds_of_digits_long_is_one_short_line(tmp_path):
    path = tmp_path / BAD_NAME
    path.write_text(edited("millrace", "count = 16", "count = " + "9" * 400), encoding="utf-8")
    message = one_line_error(path)
    assert message.startswith(f"{BAD_NAME}: magnets.count = (a whole number of 400 digits)")
    assert len(message) < 200


def test_byte_order_mark_is_accepted(tmp_path):
    # Spreadsheets and some Windows editors start UTF-8 files with EF BB BF.
    path = tmp_path / "millrace.toml"
    path.write_bytes(b"\xef\xbb\xbf" + demo_text("millrace").encode("utf-8"))
    assert load_spec(path).name == "millrace"


def test_only_regular_files_are_read(tmp_path):
    import os

    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    assert "not a regular file" in one_line_error(fifo)  # would block for ever if opened
    with pytest.raises(DesignError, match="not a regular file"):
        load_spec("/dev/zero")  # would read without end


def test_oversized_file_is_refused_before_reading(tmp_path):
    from layout.spec import MAX_INPUT_BYTES

    path = tmp_path / BAD_NAME
    path.write_bytes(b"#" * (MAX_INPUT_BYTES + 1))
    assert "at most" in one_line_error(path)


def test_file_name_with_a_newline_gives_one_line(tmp_path):
    path = tmp_path / "two\nlines.toml"
    path.write_text(edited("millrace", "count = 16", "count = 15"), encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_spec(path)
    assert "\n" not in str(info.value) and str(info.value).startswith("two\\nlines.toml: ")


def test_long_name_is_refused_up_front(tmp_path):
    from layout.spec import MAX_NAME_CHARS

    path = tmp_path / BAD_NAME
    path.write_text(edited("millrace", 'name = "millrace"', f'name = "{"a" * 300}"'), encoding="utf-8")
    message = one_line_error(path)
    assert f"at most {MAX_NAME_CHARS} characters" in message and len(message) < 200


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        # Values at which the model means nothing: refused by range, not computed.
        ("rated_current_a = 3.0", "rated_current_a = 1e-12", "target.rated_current_a"),
        ("running_clearance_mm = 1.5", "running_clearance_mm = 1e-6", "rotor.running_clearance_mm"),
        ("running_clearance_mm = 1.5", "running_clearance_mm = 1.7e308", "rotor.running_clearance_mm"),
        ("disc_thickness_mm = 8.0", "disc_thickness_mm = 1e-7", "rotor.disc_thickness_mm"),
    ],
)
def test_values_where_the_model_means_nothing_are_refused(tmp_path, old, new, key):
    path = tmp_path / BAD_NAME
    path.write_text(edited("pedalbox", old, new), encoding="utf-8")
    assert one_line_error(path).startswith(f"{BAD_NAME}: {key} = ")


def test_leg_width_bound_quoted_is_itself_allowed(tmp_path):
    import re

    path = tmp_path / BAD_NAME
    path.write_text(
        edited("millrace", "coil_clearance_mm = 1.5", "coil_clearance_mm = 1.5\nleg_width_mm = 40")
    )
    with pytest.raises(DesignError, match="at most") as info:
        compute_design(load_spec(path))
    bound = re.search(r"at most ([0-9.]+)", str(info.value)).group(1)
    path.write_text(
        edited("millrace", "coil_clearance_mm = 1.5", f"coil_clearance_mm = 1.5\nleg_width_mm = {bound}")
    )
    compute_design(load_spec(path))  # the figure the message gave is accepted


@pytest.mark.parametrize(
    ("old", "new", "hint"),
    [
        # A magnet 1.5 x 0.75 in typed as millimetres: refused with the unit named.
        ("width_mm = 20.0", "width_mm = 0.75", "1 inch is 25.4 mm"),
        # 5 revolutions a second typed as rpm: the machine cannot reach its voltage, and says why.
        ("rated_rpm = 300.0\nmax_rpm = 550.0", "rated_rpm = 5.0\nmax_rpm = 9.0", "revolutions per second"),
        ("battery_v = 48.0", "battery_v = 48000.0", "not millivolts"),
    ],
)
def test_likely_unit_slips_get_a_hint(tmp_path, old, new, hint):
    text = edited("millrace", old, new)
    if "rated_rpm = 5.0" in new:
        text = text.replace("cut_in_rpm = 210.0", "cut_in_rpm = 3.5")
    path = tmp_path / BAD_NAME
    path.write_text(text, encoding="utf-8")
    try:
        d = compute_design(load_spec(path))
    except DesignError as exc:
        assert hint in str(exc)
    else:  # a design that still computes says it as a warning
        assert any(w.code == "input.units" and hint in w.message for w in d.warnings)
